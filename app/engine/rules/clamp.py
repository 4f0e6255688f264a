"""Clamp rules: the flyback clamp's voltage, current and energy ratings."""

from __future__ import annotations

import numpy as np

from ..design import TvsClamp
from .core import Context, Finding, _si, judge, note, rule


def _diode(ctx: Context):
    return getattr(ctx.design.clamp, "diode", None)


@rule("clamp.reverse_voltage", "Clamp reverse voltage")
def clamp_reverse(ctx: Context) -> Finding | None:
    """Diode across the coil: reverse voltage when on ≈ V_cc,max − V_CE(sat),min against V_RRM.
    TVS from the switch to ground: it sees V_cc,max when the switch is off, against its minimum
    breakdown V_BR. Both derated by the profile's voltage fraction."""
    clamp, op = ctx.design.clamp, ctx.op
    if isinstance(clamp, TvsClamp):
        v = op.vcc
        rating = clamp.tvs.v_breakdown
        return judge(
            ctx,
            "clamp.reverse_voltage",
            v,
            rating,
            ctx.profile.voltage * rating,
            "V",
            keep_below=True,
            message=lambda i, s: f"TVS stands off {_si(v[i], 'V')}, breakdown {_si(rating, 'V')} min",
        )
    diode = _diode(ctx)
    if diode is None:
        return None
    v = op.vcc - ctx.design.switch.vce_sat_low  # lowest V_CE(sat) (vce_sat_min, else 0 V)
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
    clamp = ctx.design.clamp
    if isinstance(clamp, TvsClamp):
        rating = clamp.tvs.i_clamp
    elif _diode(ctx) is not None:
        rating = _diode(ctx).i_peak
    else:
        return None
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
    diode, per_hour = _diode(ctx), ctx.design.switching.per_hour
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
    to, clamp = ctx.turnoff, ctx.design.clamp
    worst = int(np.argmax(to.energy))
    share = to.clamp_energy[worst] / to.energy[worst] if to.energy[worst] > 0 else 0.0
    text = f"{_si(to.energy[worst], 'J')} per turn-off, {share:.0%} of it into the clamp"
    per_hour = ctx.design.switching.per_hour
    if isinstance(clamp, TvsClamp):
        pulse = to.peak_switch_voltage * to.initial_current
        rating = clamp.tvs.p_max
        return judge(
            ctx,
            "clamp.energy",
            pulse,
            rating,
            ctx.profile.power * rating,
            "W",
            keep_below=True,
            message=lambda i, s: (
                f"peak pulse {_si(pulse[i], 'W')} into the TVS, rated {_si(rating, 'W')} (a 10/1000 µs rating; a longer decay allows less); {text}"
            ),
        )
    if getattr(clamp, "zener", None) is not None and per_hour is not None:
        # The zener's share: its voltage times the charge (plus its rz loss, counted with it).
        zener_energy = to.clamp_energy - to.diode_energy
        power = zener_energy * per_hour / 3600.0
        rating = clamp.zener.p_max
        return judge(
            ctx,
            "clamp.energy",
            power,
            rating,
            ctx.profile.power * rating,
            "W",
            keep_below=True,
            message=lambda i, s: f"zener averages {_si(power[i], 'W')} at {per_hour:g}/h; {text}",
        )
    return note(ctx, "clamp.energy", float(to.energy[worst]), "J", text, worst)
