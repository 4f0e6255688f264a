"""Switch rules: current, breakdown at turn-off, dissipation, junction temperature."""

from __future__ import annotations

import numpy as np

from .core import RULES, Context, Finding, _si, judge, rule, worse


@rule("switch.current", "Switch current")
def switch_current(ctx: Context) -> Finding:
    """I_C,max = (V_cc,max − V_CE(sat),min) / R_coil,min (coldest, lowest-tolerance coil) against the
    I_C rating, derated by the profile's current fraction. V_CE(sat),min is the transistor's
    vce_sat_min, else 0 V: the lowest saturation voltage leaves the most for the load."""
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


def _power_message(op, i: int) -> str:
    text = f"{_si(op.dissipation[i], 'W')}, {_si(op.power_allowed[i], 'W')} allowed at {op.ambient[i]:.0f} °C"
    if op.power_allowed[i] <= 0:
        text += " — the ambient reaches T_J,max: no dissipation is allowed there"
    if op.linear_bound[i]:
        text += (
            "; not saturated: with h_FE anywhere in its range the switch can sit at V_CE = V_cc/2,"
            f" P = V_cc²/(4·R_load) = {_si(op.vcc[i] ** 2 / (4 * op.load_resistance[i]), 'W')}"
            " (give switch.hfe_max if its range cannot reach that)"
        )
    return text


@rule("switch.power", "Switch dissipation")
def switch_power(ctx: Context) -> Finding:
    """P = I_C·V_CE(sat) + I_B·V_BE(sat) when saturated (switching loss negligible at relay rates).
    Not saturated at h_FE(min), the collector current lies anywhere from h_FE(min)·I_B up to
    h_FE(max)·I_B (no upper gain without switch.hfe_max) and saturation; I·(V_cc − I·R_load) peaks
    at V_CE = V_cc/2 with P = V_cc²/(4·R_load), the bound used when that range reaches it.
    Against the allowed power at the ambient, P_allowed(T_A) = min(P_max, (T_J,max − T_A)/R_θJA),
    derated by the profile's power fraction; an ambient at or above T_J,max allows nothing."""
    op = ctx.op
    return judge(
        ctx,
        "switch.power",
        op.dissipation,
        op.power_allowed,
        ctx.profile.power * op.power_allowed,
        "W",
        keep_below=True,
        message=lambda i, s: _power_message(op, i),
    )


@rule("switch.junction_temp", "Junction temperature")
def junction_temp(ctx: Context) -> Finding:
    """T_J = T_A + P·R_θJA against T_J,max; limit min(profile T_J, T_J,max − 25 K). P as in
    switch.power (the V_cc²/(4·R_load) bound for a switch that is not saturated)."""
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


@rule("switch.linear_region", "Linear region on a slow input")
def linear_region(ctx: Context) -> Finding | None:
    """A divider whose sensor changes slowly (drive.transition "slow", the default: photoresistor,
    thermistor) walks the switch through its linear region. Over the sweep from the sensor's off
    to its on value the collector current takes every value from h_FE(min)·I_B,off to
    h_FE(max)·I_B,on (saturation without switch.hfe_max); I·(V_cc − I·R_load) peaks at
    V_CE = V_cc/2, P = V_cc²/(4·R_load) (DOMAIN: worst dissipation of a slow input), plus
    I_B,on·V_BE(sat). Judged like switch.power (against min(P_max, (T_J,max − T_A)/R_θJA),
    derated) and switch.junction_temp (T_A + P·R_θJA against T_J,max); the worse is reported.
    Not for a logic drive or a "snap" sensor (float switch, reed contact)."""
    op, sw, drive = ctx.op, ctx.design.switch, ctx.design.drive
    if getattr(drive, "kind", None) != "divider" or drive.transition != "slow":
        return None
    power = op.sweep_dissipation
    tj = op.ambient + power * sw.rth_ja
    advice = "; hysteresis (a Schmitt stage) or a comparator snaps the switch through it"

    def message(i: int, s) -> str:
        where = (
            f"V_CE = V_cc/2 = {_si(op.vcc[i] / 2, 'V')}"
            if op.sweep_bound[i]
            else "the edge of its gain range"
        )
        text = (
            f"a slow sensor holds the switch at {where}: {_si(power[i], 'W')}, T_J {tj[i]:.0f} °C "
            f"at T_A {op.ambient[i]:.0f} °C while the input dwells there"
        )
        return text + (advice if s != "ok" else "")

    by_power = judge(
        ctx,
        "switch.linear_region",
        power,
        op.power_allowed,
        ctx.profile.power * op.power_allowed,
        "W",
        keep_below=True,
        message=message,
    )
    by_junction = judge(
        ctx,
        "switch.linear_region",
        tj,
        sw.tj_max,
        min(ctx.profile.tj, sw.tj_max - 25.0),
        "°C",
        keep_below=True,
        message=message,
    )
    return worse(by_power, by_junction)
