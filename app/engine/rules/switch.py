"""Switch rules: current, breakdown at turn-off, dissipation, junction temperature."""

from __future__ import annotations

import numpy as np

from .core import RULES, Context, Finding, _n, _si, judge, rule, worse


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
        worked=lambda i: (
            f"I_C = (V_cc,max − V_CE(sat),min)/{_load_name(op, i)} = ({_n(op.vcc[i], 'V')} − "
            f"{_n(sw.vce_sat_low, 'V')})/{_n(op.load_resistance[i], 'Ω')} = {_n(op.collector_current[i], 'A')}"
        ),
    )


def _load_name(op, i: int) -> str:
    return "(R_coil ∥ R_p)" if op.load_resistance[i] < op.r_coil[i] else "R_coil"


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
            worked=f"I_0 = {_n(to.initial_current[worst], 'A')} with no clamp: L·di/dt drives the node past "
            f"V_(BR)CEO {_n(sw.vceo, 'V')} into avalanche; no finite clamp voltage",
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
        worked=lambda i: _worked_spike(ctx, i),
    )


def _worked_spike(ctx: Context, i: int) -> str:
    to, path = ctx.turnoff, ctx.path
    i0, peak, vcc = to.initial_current[i], to.peak_switch_voltage[i], path.vcc[i]
    if path.supply_in_loop:  # the clamp returns to ground: the switch sees the clamp's own voltage
        return f"V_peak = v_clamp(I_0 = {_n(i0, 'A')}) = {_n(peak, 'V')}"
    return f"V_peak = V_cc + v_c(I_0) = {_n(vcc, 'V')} + v_c({_n(i0, 'A')}) {_n(peak - vcc, 'V')} = {_n(peak, 'V')}"


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
        worked=lambda i: _worked_power(ctx, i),
    )


def _worked_power(ctx: Context, i: int) -> str:
    """P with the worst corner's numbers, and the power allowed at its ambient."""
    op, sw = ctx.op, ctx.design.switch
    base = f"{_n(op.base_current[i], 'A')}·{_n(sw.vbe_sat, 'V')}"
    on_power = op.dissipation[i] - op.base_current[i] * sw.vbe_sat
    if op.linear_bound[i]:
        power = (
            f"P = V_cc²/(4·R_load) + I_B·V_BE(sat) = ({_n(op.vcc[i], 'V')})²/(4·{_n(op.load_resistance[i], 'Ω')})"
            f" + {base} = {_n(op.dissipation[i], 'W')}"
        )
    elif op.overdrive[i] >= 1:
        i_c = op.required_base_current[i] * sw.hfe_min
        power = (
            f"P = I_C·V_CE(sat) + I_B·V_BE(sat) = {_n(i_c, 'A')}·{_n(sw.vce_sat, 'V')} + {base} = "
            f"{_n(op.dissipation[i], 'W')}"
        )
    else:
        power = (
            f"P = I_C·V_CE + I_B·V_BE(sat) = {_n(on_power, 'W')} (not saturated: I_C at the edge of the "
            f"gain range, V_CE = V_cc − I_C·R_load) + {base} = {_n(op.dissipation[i], 'W')}"
        )
    allowed = (
        f"allowed min(P_max, (T_J,max − T_A)/R_θJA) = min({_n(sw.p_max, 'W')}, ({_n(sw.tj_max, '°C')} − "
        f"{_n(op.ambient[i], '°C')})/{_n(sw.rth_ja, 'K/W')}) = {_n(op.power_allowed[i], 'W')}"
    )
    return f"{allowed}; {power}"


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
        worked=lambda i: (
            f"T_J = T_A + P·R_θJA = {_n(op.ambient[i], '°C')} + {_n(op.dissipation[i], 'W')}·"
            f"{_n(sw.rth_ja, 'K/W')} = {_n(op.junction_temp[i], '°C')}"
        ),
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

    def worked_power(i: int) -> str:
        base = op.divider["base_on"][i]
        if op.sweep_bound[i]:
            head = (
                f"P = V_cc²/(4·R_load) + I_B,on·V_BE(sat) = ({_n(op.vcc[i], 'V')})²/"
                f"(4·{_n(op.load_resistance[i], 'Ω')}) + {_n(base, 'A')}·{_n(sw.vbe_sat, 'V')}"
            )
        else:
            head = (
                f"P = I·(V_cc − I·R_load) at the edge of the gain range + I_B,on·V_BE(sat), with "
                f"I_B,on = {_n(base, 'A')}"
            )
        return f"{head} = {_n(power[i], 'W')}"

    def worked_junction(i: int) -> str:
        return (
            f"{worked_power(i)}; T_J = T_A + P·R_θJA = {_n(op.ambient[i], '°C')} + {_n(power[i], 'W')}·"
            f"{_n(sw.rth_ja, 'K/W')} = {_n(tj[i], '°C')}"
        )

    by_power = judge(
        ctx,
        "switch.linear_region",
        power,
        op.power_allowed,
        ctx.profile.power * op.power_allowed,
        "W",
        keep_below=True,
        message=message,
        worked=worked_power,
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
        worked=worked_junction,
    )
    return worse(by_power, by_junction)
