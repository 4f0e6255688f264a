"""Clamp rules: the flyback clamp's voltage, current, energy and power ratings.

What differs between clamp kinds (which part carries which rating) is asked of the clamp
kind's module in app/engine/clamps/; the rules here judge it the same way for every kind.
"""

from __future__ import annotations

import numpy as np

from ..clamps import Stress
from ..corners import inductance_at
from .core import Context, Finding, _n, _si, judge, note, rule


def _judge(ctx: Context, rule_id: str, stress: Stress, suffix: str = "") -> Finding:
    fraction = getattr(ctx.profile, stress.derate)
    return judge(
        ctx,
        rule_id,
        stress.value,
        stress.rating,
        fraction * np.asarray(stress.rating),
        stress.unit,
        keep_below=True,
        message=lambda i, s: stress.message(i) + suffix,
        worked=stress.worked,
    )


@rule("clamp.reverse_voltage", "Clamp reverse voltage")
def clamp_reverse(ctx: Context) -> Finding | None:
    """Diode across the coil: reverse voltage when on ≈ V_cc,max − V_CE(sat),min against V_RRM,
    derated by the profile's voltage fraction. (A TVS to ground is judged by clamp.standoff.)"""
    diode = ctx.clamp.diode(ctx.design.clamp)
    if diode is None:
        return None
    # The lowest on-voltage of the switch (vce_sat_min, else 0 V; 0 V for a MOSFET).
    v = ctx.op.vcc - ctx.switch.on_voltage_low(ctx.design.switch)
    return judge(
        ctx,
        "clamp.reverse_voltage",
        v,
        diode.vrrm,
        ctx.profile.voltage * diode.vrrm,
        "V",
        keep_below=True,
        message=lambda i, s: f"{_si(v[i], 'V')} reverse on a {_si(diode.vrrm, 'V')} diode",
        worked=lambda i: (
            f"V_R = V_cc,max − {ctx.switch.on_voltage_symbol} = {_n(ctx.op.vcc[i], 'V')} − "
            f"{_n(ctx.switch.on_voltage_low(ctx.design.switch), 'V')}"
            f" = {_n(v[i], 'V')}"
        ),
    )


@rule("clamp.standoff", "Clamp stand-off")
def clamp_standoff(ctx: Context) -> Finding | None:
    """A TVS from the switch to ground sits across the supply whenever the switch is off: V_cc,max
    must stay below its stand-off voltage V_RWM when given, else below its minimum breakdown
    V_BR(min); derated by the profile's voltage fraction (a TVS conducts, and heats, once the
    supply reaches its breakdown)."""
    standoff = ctx.clamp.standoff(ctx)
    return None if standoff is None else _judge(ctx, "clamp.standoff", standoff)


@rule("clamp.peak_current", "Clamp peak current")
def clamp_peak(ctx: Context) -> Finding | None:
    """Peak forward current through the clamp = I_0 (the coil current at turn-off) at every
    turn-off: a repetitive peak. Against the diode's repetitive rating I_FRM (``i_frm``; when
    absent ``i_peak`` is taken as the repetitive figure), never its surge rating I_FSM, which
    holds for a single event; for a TVS, its peak pulse current. Derated by the profile's
    current fraction."""
    i0 = ctx.turnoff.initial_current
    clamp = ctx.design.clamp
    rated = ctx.clamp.peak_current_rating(clamp)
    if rated is None:
        return None
    rating, what = rated
    diode = ctx.clamp.diode(clamp)
    surge = ""
    if diode is not None and diode.i_fsm is not None:
        surge = f"; the surge rating I_FSM {_si(diode.i_fsm, 'A')} is for a single event and is not used here"
    return judge(
        ctx,
        "clamp.peak_current",
        i0,
        rating,
        ctx.profile.current * rating,
        "A",
        keep_below=True,
        message=lambda i, s: f"{_si(i0[i], 'A')} at every turn-off, rated {_si(rating, 'A')} {what}{surge}",
        worked=lambda i: (
            f"I_peak = I_0 = (V_cc − {ctx.switch.on_voltage_symbol})/R_coil = ({_n(ctx.op.vcc[i], 'V')} − "
            f"{_n(ctx.switch.on_voltage_low(ctx.design.switch), 'V')})/{_n(ctx.op.r_coil[i], 'Ω')} = {_n(i0[i], 'A')}"
        ),
    )


@rule("clamp.average_current", "Clamp average current")
def clamp_average(ctx: Context) -> Finding | None:
    """Average diode current = Q·f, Q = ∫ i dt per turn-off = ∫ L·i/(R·i + v_c(i)) di,
    f = switchings per hour / 3600; against I_F(AV), derated by the current fraction.
    Needs switching.per_hour."""
    diode, per_hour = ctx.clamp.diode(ctx.design.clamp), ctx.design.switching.per_hour
    if diode is None or per_hour is None:
        return None
    avg = ctx.turnoff.charge * per_hour / 3600.0
    return judge(
        ctx,
        "clamp.average_current",
        avg,
        diode.if_avg,
        ctx.profile.current * diode.if_avg,
        "A",
        keep_below=True,
        message=lambda i, s: f"{_si(avg[i], 'A')} average at {per_hour:g}/h",
        worked=lambda i: (
            f"I_avg = Q·f, Q = ∫ L·i/(R·i + v_c(i)) di from I_0/1000 to I_0 = {_n(ctx.turnoff.initial_current[i], 'A')}"
            f" = {_n(ctx.turnoff.charge[i], 'C')}, f = {per_hour:g}/3600 s: {_n(ctx.turnoff.charge[i], 'C')}·"
            f"{_n(per_hour / 3600.0, 'Hz')} = {_n(avg[i], 'A')}"
        ),
    )


@rule("clamp.energy", "Turn-off energy")
def clamp_energy(ctx: Context) -> Finding:
    """Energy stored in the coil at turn-off, E = ½·L·I_0². The turn-off dissipates E plus any
    energy a source adds meanwhile: the supply's V_cc·Q when the clamp returns the current to
    ground (a TVS, or the switch itself when unclamped), or the ½·C·V² a snubber capacitor held.
    The clamp device takes ∫ v_device(i)·i dt of that total, so its share is at most 100 %; the
    rest heats the coil's own resistance. Unclamped, the clamp is the switch: the energy is
    avalanche energy in its junction. With a zener and switching.per_hour the zener's average
    power E_z·f is judged against its P_max (derated by the power fraction); with a TVS, the
    peak pulse power V_TVS(I_0)·I_0 against its P_PP."""
    to = ctx.turnoff
    worst = int(np.argmax(to.energy))
    total = float(to.dissipated_energy[worst])
    absorbed = float(to.clamp_energy[worst])
    share = min(1.0, absorbed / total) if total > 0 else 0.0
    added = total - float(to.energy[worst])
    text = f"{_si(to.energy[worst], 'J')} stored in the coil per turn-off"
    if added > 1e-3 * total:
        source = "the supply" if ctx.path.supply_in_loop else "the snubber capacitor"
        text += f"; with {_si(added, 'J')} from {source}, {_si(total, 'J')} is dissipated"
    if ctx.path.unclamped:
        text += (
            f"; no clamp: {share:.0%} of it ({_si(absorbed, 'J')}, at least {ctx.switch.breakdown_symbol}·Q) goes into the switch "
            "as avalanche energy at every turn-off"
        )
    else:
        text += f", {share:.0%} of it into the clamp"
    stress = ctx.clamp.energy_stress(ctx, text)
    if stress is not None:
        return _judge(ctx, "clamp.energy", stress)
    worked = (
        f"E = ½·L·I_0² = ½·{_n(inductance_at(ctx.design, ctx.corners, worst), 'H')}·"
        f"({_n(to.initial_current[worst], 'A')})² = "
        f"{_n(to.energy[worst], 'J')}"
    )
    return note(ctx, "clamp.energy", float(to.energy[worst]), "J", text, worst, worked=worked)


@rule("clamp.resistor_power", "Clamp resistor power")
def clamp_resistor_power(ctx: Context) -> Finding | None:
    """Power in a clamp resistor. A resistor across the coil carries V²/R the whole time the coil
    is on (V = V_cc,max, V_CE(sat) taken as 0: the worst case for this stress; R at its lowest).
    A clamp resistor also takes its share of every turn-off, E_R = ∫ i²·R dt (for an RC snubber
    R/(R + R_coil) of the ½·L·I_0² + ½·C·V² the turn-off releases, plus the ½·C·V² lost in
    charging C at every turn-on), which averages E_R·f with f = switching.per_hour / 3600.
    Against ``power_rating``, derated by the profile's power fraction. Without per_hour only
    the continuous part is judged and the finding says so; a diode + resistor or RC clamp
    (no continuous part) is then a note giving E_R per turn-off, not judged. Without
    ``power_rating`` a note gives the power, not judged."""
    hook = ctx.clamp.resistor_power(ctx)
    if hook is None:
        return None
    continuous, rating = hook
    energy = ctx.turnoff.resistor_energy
    per_hour = ctx.design.switching.per_hour
    if per_hour is not None:
        power = continuous + energy * per_hour / 3600.0
        how = f"V²/R while on plus {_si(float(np.max(energy)), 'J')} per turn-off at {per_hour:g}/h"
    else:
        power = continuous
        how = "V²/R while on; the turn-off share is not included (no switching.per_hour given)"
    worst = int(np.argmax(power))
    r_clamp = ctx.corners.values.get("r_clamp")

    def worked(i: int) -> str:
        parts = []
        if continuous[i] > 0 and r_clamp is not None:
            parts.append(
                f"V²/R = ({_n(ctx.op.vcc[i], 'V')})²/{_n(r_clamp[i], 'Ω')} = {_n(continuous[i], 'W')} while on"
            )
        if per_hour is not None:
            parts.append(
                f"E_R·f = {_n(energy[i], 'J')}·{per_hour:g}/3600 s = {_n(energy[i] * per_hour / 3600.0, 'W')}"
            )
        else:
            parts.append(f"per turn-off E_R = ∫ i²·R dt = {_n(energy[i], 'J')}")
        return "; ".join(parts) + (
            f"; P = {_n(power[i], 'W')}" if per_hour is not None or continuous[i] > 0 else ""
        )

    if per_hour is None and not np.any(continuous > 0):
        w = int(np.argmax(energy))
        return note(
            ctx,
            "clamp.resistor_power",
            float(energy[w]),
            "J",
            f"{_si(energy[w], 'J')} into the clamp resistor per switching cycle; its average power is not "
            "judged: give switching.per_hour",
            w,
            worked=worked(w),
        )
    if rating is None:
        return note(
            ctx,
            "clamp.resistor_power",
            float(power[worst]),
            "W",
            f"{_si(power[worst], 'W')} in the clamp resistor ({how}); not judged: give the clamp's power_rating",
            worst,
            worked=worked(worst),
        )
    return judge(
        ctx,
        "clamp.resistor_power",
        power,
        rating,
        ctx.profile.power * rating,
        "W",
        keep_below=True,
        message=lambda i, s: f"{_si(power[i], 'W')} in a {_si(rating, 'W')} resistor ({how})",
        worked=worked,
    )


@rule("clamp.capacitor_voltage", "Snubber capacitor voltage")
def clamp_capacitor_voltage(ctx: Context) -> Finding | None:
    """An RC snubber's capacitor holds the coil voltage while the coil is on and swings the other
    way at turn-off: the largest |v_C| of the two (from the series RLC response) against
    ``c_voltage_rating``, derated by the profile's voltage fraction."""
    stress = ctx.clamp.capacitor_voltage(ctx)
    return None if stress is None else _judge(ctx, "clamp.capacitor_voltage", stress)
