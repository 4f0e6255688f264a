"""Switch rules: current, breakdown at turn-off, dissipation, junction temperature."""

from __future__ import annotations

import numpy as np

from .core import RULES, Context, Finding, _si, judge, rule


@rule("switch.current", "Switch current")
def switch_current(ctx: Context) -> Finding:
    """I_C,max = (V_cc,max − V_CE(sat)) / R_coil,min (coldest, lowest-tolerance coil) against the
    I_C rating, derated by the profile's current fraction."""
    op, sw = ctx.op, ctx.design.switch
    return judge(
        ctx,
        "switch.current",
        op.collector_current,
        sw.ic_max,
        ctx.profile.current * sw.ic_max,
        "A",
        keep_below=True,
        message=lambda i, s: f"{_si(op.collector_current[i], 'A')} against {_si(sw.ic_max, 'A')} rated",
    )


@rule("switch.breakdown", "Turn-off spike against breakdown")
def breakdown(ctx: Context) -> Finding:
    """Peak switch voltage at turn-off, V_cc + v_c(I_0): diode V_cc + V_F(I_0); diode + zener
    V_cc + V_F(I_0) + V_Z(I_0); diode + resistor V_cc + V_F(I_0) + I_0·R_s; resistor
    V_cc + I_0·R_p; TVS to ground V_TVS(I_0) on the line through (I_T, V_BR(max)) and
    (I_clamp, V_clamp); RC snubber: the series RLC response (app/engine/clamps/rc.py). V_F(i) = n·V_T·ln(1 + i/I_S) + i·R_S (Shockley).
    Against V_(BR)CEO, derated by the profile's voltage fraction. Unclamped, the node rises to
    avalanche: a violation for a BJT."""
    sw, to = ctx.design.switch, ctx.turnoff
    if ctx.path.unclamped:
        worst = int(np.argmax(to.initial_current))
        return Finding(
            "switch.breakdown",
            RULES["switch.breakdown"].title,
            "violation",
            None,
            "V",
            ctx.profile.voltage * sw.vceo,
            sw.vceo,
            ctx.corners.describe(worst),
            f"no clamp: {_si(to.initial_current[worst], 'A')} forces the collector into avalanche above V_(BR)CEO, stressing the junction at every turn-off",
        )
    peak = to.peak_switch_voltage
    return judge(
        ctx,
        "switch.breakdown",
        peak,
        sw.vceo,
        ctx.profile.voltage * sw.vceo,
        "V",
        keep_below=True,
        message=lambda i, s: (
            f"spike to {_si(peak[i], 'V')} from {_si(to.initial_current[i], 'A')}, V_(BR)CEO {_si(sw.vceo, 'V')}"
            + ctx.clamp.breakdown_note(ctx.design.clamp)
        ),
    )


@rule("switch.power", "Switch dissipation")
def switch_power(ctx: Context) -> Finding:
    """P = I_C·V_CE(sat) + I_B·V_BE(sat) (switching loss negligible at relay rates) against the
    allowed power at the ambient, P_allowed(T_A) = min(P_max, (T_J,max − T_A)/R_θJA), derated
    by the profile's power fraction."""
    op = ctx.op
    return judge(
        ctx,
        "switch.power",
        op.dissipation,
        op.power_allowed,
        ctx.profile.power * op.power_allowed,
        "W",
        keep_below=True,
        message=lambda i, s: (
            f"{_si(op.dissipation[i], 'W')}, {_si(op.power_allowed[i], 'W')} allowed at {op.ambient[i]:.0f} °C"
        ),
    )


@rule("switch.junction_temp", "Junction temperature")
def junction_temp(ctx: Context) -> Finding:
    """T_J = T_A + P·R_θJA against T_J,max; limit min(profile T_J, T_J,max − 25 K)."""
    op, sw = ctx.op, ctx.design.switch
    limit = min(ctx.profile.tj, sw.tj_max - 25.0)
    return judge(
        ctx,
        "switch.junction_temp",
        op.junction_temp,
        sw.tj_max,
        limit,
        "°C",
        keep_below=True,
        message=lambda i, s: f"T_J {op.junction_temp[i]:.1f} °C at T_A {op.ambient[i]:.0f} °C",
    )
