"""Clamp rules: the flyback clamp's voltage, current and energy ratings.

What differs between clamp kinds (which part carries which rating) is asked of the clamp
kind's module in app/engine/clamps/; the rules here judge it the same way for every kind.
"""

from __future__ import annotations

import numpy as np

from ..clamps import Stress
from .core import Context, Finding, _si, judge, note, rule


def _judge(ctx: Context, rule_id: str, stress: Stress) -> Finding:
    fraction = getattr(ctx.profile, stress.derate)
    return judge(
        ctx,
        rule_id,
        stress.value,
        stress.rating,
        fraction * np.asarray(stress.rating),
        stress.unit,
        keep_below=True,
        message=lambda i, s: stress.message(i),
    )


@rule("clamp.reverse_voltage", "Clamp reverse voltage")
def clamp_reverse(ctx: Context) -> Finding | None:
    """Diode across the coil: reverse voltage when on ≈ V_cc,max − V_CE(sat) against V_RRM.
    TVS from the switch to ground: it sees V_cc,max when the switch is off, against its minimum
    breakdown V_BR. Both derated by the profile's voltage fraction."""
    standoff = ctx.clamp.standoff(ctx)
    if standoff is not None:
        return _judge(ctx, "clamp.reverse_voltage", standoff)
    diode = ctx.clamp.diode(ctx.design.clamp)
    if diode is None:
        return None
    v = ctx.op.vcc - ctx.design.switch.vce_sat
    return judge(
        ctx,
        "clamp.reverse_voltage",
        v,
        diode.vrrm,
        ctx.profile.voltage * diode.vrrm,
        "V",
        keep_below=True,
        message=lambda i, s: f"{_si(v[i], 'V')} reverse on a {_si(diode.vrrm, 'V')} diode",
    )


@rule("clamp.peak_current", "Clamp peak current")
def clamp_peak(ctx: Context) -> Finding | None:
    """Peak forward current through the clamp = I_0 (the coil current at turn-off) against the
    diode's repetitive peak rating, or the TVS's peak pulse current; derated by the profile's
    current fraction."""
    i0 = ctx.turnoff.initial_current
    rated = ctx.clamp.peak_current_rating(ctx.design.clamp)
    if rated is None:
        return None
    rating, _ = rated
    return judge(
        ctx,
        "clamp.peak_current",
        i0,
        rating,
        ctx.profile.current * rating,
        "A",
        keep_below=True,
        message=lambda i, s: f"{_si(i0[i], 'A')} at turn-off, rated {_si(rating, 'A')} peak",
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
    )


@rule("clamp.energy", "Turn-off energy")
def clamp_energy(ctx: Context) -> Finding:
    """Energy stored in the coil at turn-off, E = ½·L·I_0². The clamp device takes
    ∫ v_device(i)·i dt of it; the rest heats the coil's own resistance. With a zener and
    switching.per_hour the zener's average power E_z·f is judged against its P_max (derated by
    the power fraction); with a TVS, the peak pulse power V_TVS(I_0)·I_0 against its P_PP."""
    to = ctx.turnoff
    worst = int(np.argmax(to.energy))
    share = to.clamp_energy[worst] / to.energy[worst] if to.energy[worst] > 0 else 0.0
    text = f"{_si(to.energy[worst], 'J')} per turn-off, {share:.0%} of it into the clamp"
    stress = ctx.clamp.energy_stress(ctx, text)
    if stress is not None:
        return _judge(ctx, "clamp.energy", stress)
    return note(ctx, "clamp.energy", float(to.energy[worst]), "J", text, worst)
