"""Gate rules of a MOSFET switch: is it enhanced enough when on, held off when off, and is the
gate within its voltage and its resistor within its power."""

from __future__ import annotations

import numpy as np

from ..switches.nmos import threshold_tempco
from .core import Context, Finding, _n, _si, _sum_r, judge, rule

NMOS = ("nmos",)


def _tempco_text(ctx: Context) -> str:
    fet = ctx.design.switch
    if fet.vgs_th_tempco is None:
        return "V_GS(th) taken to move −5 mV/K (default, from memory: give switch.vgs_th_tempco)"
    return f"V_GS(th) moves {fet.vgs_th_tempco * 1e3:g} mV/K (switch.vgs_th_tempco)"


@rule("gate.enhancement", "Gate enhancement when on", kinds=NMOS)
def enhancement(ctx: Context) -> Finding:
    """V_GS,on = V_th,on·R_gs/(R_th + R_g + R_gs) (V_th,on with no pull-down: the gate draws no
    DC current) at the lowest drive, against the gate voltage at which R_DS(on) is guaranteed
    (rds_on_vgs): below it R_DS(on) is not guaranteed (marginal), and below V_GS(th),max at the
    coldest junction the FET need not conduct at all (a violation). V_GS(th),max(T) =
    V_GS(th),max(25 °C) + k·(T − 25), k = vgs_th_tempco, else −5 mV/K (from memory), T the
    ambient (the threshold is highest cold)."""
    op, fet = ctx.op, ctx.design.switch
    vgs = op.switch["vgs_on"]
    vth = op.switch["vth_max_cold"]

    def message(i: int, status) -> str:
        text = (
            f"V_GS {_si(vgs[i], 'V')} when on; R_DS(on) {_si(fet.rds_on, 'Ω')} is guaranteed at "
            f"{_si(fet.rds_on_vgs, 'V')}, V_GS(th),max {_si(vth[i], 'V')} at {op.ambient[i]:.0f} °C; "
            + _tempco_text(ctx)
        )
        if status == "violation":
            text += "; the FET need not turn on: pick a logic-level FET rated at this gate voltage"
        elif status == "marginal":
            text += "; R_DS(on) is not guaranteed here: pick a FET rated at this gate voltage, or drive the gate higher"
        return text

    return judge(
        ctx,
        "gate.enhancement",
        vgs,
        vth,
        fet.rds_on_vgs,
        "V",
        keep_below=False,
        message=message,
        worked=lambda i: (
            f"V_GS(th),max(T_A) = {_n(fet.vgs_th_max, 'V')} + {threshold_tempco(fet) * 1e3:g} mV/K·"
            f"({_n(op.ambient[i], '°C')} − 25 °C) = {_n(vth[i], 'V')}; "
            + _divider_text(ctx, "V_GS,on", op.v_th_on[i], op.r_th_on[i], i, vgs[i])
        ),
    )


def _divider_text(ctx: Context, name: str, v_th: float, r_th: float, i: int, value: float) -> str:
    op = ctx.op
    if not np.isfinite(op.r_pulldown[i]):
        return f"{name} = V_th (no pull-down, no gate current) = {_n(value, 'V')}"
    resistors = _sum_r(("R_th", r_th), ("R_g", op.r_series[i]), ("R_gs", op.r_pulldown[i]))
    return (
        f"{name} = V_th·R_gs/(R_th + R_g + R_gs) = {_n(v_th, 'V')}·{_n(op.r_pulldown[i], 'Ω')}/"
        f"({resistors}) = {_n(value, 'V')}"
    )


@rule("gate.threshold_off", "Gate held off", kinds=NMOS)
def threshold_off(ctx: Context) -> Finding:
    """V_GS,off = V_th,off·R_gs/(R_th + R_g + R_gs) against V_GS(th),min at the hottest junction,
    V_GS(th),min(T_J) = V_GS(th),min(25 °C) + k·(T_J − 25), k = vgs_th_tempco, else −5 mV/K
    (from memory: the threshold falls as the junction warms). T_J is the junction's temperature
    when on (it is no cooler just after turn-off). Limit: the profile's cutoff fraction of it."""
    op = ctx.op
    vgs_off = op.switch["vgs_off"]
    vth = op.switch["vth_min_hot"]

    def message(i: int, status) -> str:
        text = (
            f"V_GS {_si(vgs_off[i], 'V')} when off, V_GS(th),min {_si(vth[i], 'V')} at T_J "
            f"{op.junction_temp[i]:.0f} °C; " + _tempco_text(ctx)
        )
        if status != "ok" and np.isinf(op.r_pulldown[i]):
            text += "; a gate pull-down would hold it off"
        return text

    return judge(
        ctx,
        "gate.threshold_off",
        vgs_off,
        vth,
        ctx.profile.cutoff * vth,
        "V",
        keep_below=True,
        message=message,
        worked=lambda i: (
            f"V_GS(th),min(T_J) = {_n(ctx.design.switch.vgs_th_min, 'V')} + "
            f"{threshold_tempco(ctx.design.switch) * 1e3:g} mV/K·({_n(op.junction_temp[i], '°C')} − 25 °C) = "
            f"{_n(vth[i], 'V')}; "
            + _divider_text(ctx, "V_GS,off", op.v_th_off[i], op.r_th_off[i], i, vgs_off[i])
        ),
    )


@rule("gate.voltage", "Gate-source voltage", kinds=NMOS)
def gate_voltage(ctx: Context) -> Finding:
    """|V_GS| on and off, max(|V_GS,on|, |V_GS,off|), against the maximum gate-source voltage
    vgs_max, derated by the profile's voltage fraction."""
    op, fet = ctx.op, ctx.design.switch
    value = np.maximum(np.abs(op.switch["vgs_on"]), np.abs(op.switch["vgs_off"]))
    return judge(
        ctx,
        "gate.voltage",
        value,
        fet.vgs_max,
        ctx.profile.voltage * fet.vgs_max,
        "V",
        keep_below=True,
        message=lambda i, s: f"|V_GS| up to {_si(value[i], 'V')}, rated ±{_si(fet.vgs_max, 'V')}",
        worked=lambda i: (
            f"|V_GS| = max(|V_GS,on|, |V_GS,off|) = max({_n(abs(op.switch['vgs_on'][i]), 'V')}, "
            f"{_n(abs(op.switch['vgs_off'][i]), 'V')}) = {_n(value[i], 'V')}"
        ),
    )


@rule("gate.resistor_power", "Gate resistor power", kinds=NMOS)
def gate_resistor_power(ctx: Context) -> Finding:
    """P = I_g²·R_g with the DC gate-path current I_g = |V_th|/(R_th + R_g + R_gs), on or off
    (none without a pull-down: the gate draws no DC current; its charge flows only at the
    switching edges, negligible at relay rates), against gate.power_rating derated by the
    profile's power fraction."""
    op, gate = ctx.op, ctx.design.gate
    through = op.r_th_on + op.r_series + op.r_pulldown
    current = np.maximum(
        np.abs(op.v_th_on) / through, np.abs(op.v_th_off) / (op.r_th_off + op.r_series + op.r_pulldown)
    )
    power = current**2 * op.r_series
    return judge(
        ctx,
        "gate.resistor_power",
        power,
        gate.power_rating,
        ctx.profile.power * gate.power_rating,
        "W",
        keep_below=True,
        message=lambda i, s: (
            f"{_si(power[i], 'W')} in R_g {_si(op.r_series[i], 'Ω')} ({_si(current[i], 'A')} DC)"
        ),
        worked=lambda i: (
            f"I_g = |V_th|/(R_th + R_g + R_gs) = {_n(current[i], 'A')}; P = I_g²·R_g = "
            f"({_n(current[i], 'A')})²·{_n(op.r_series[i], 'Ω')} = {_n(power[i], 'W')}"
        ),
    )


__all__ = ["enhancement", "gate_resistor_power", "gate_voltage", "threshold_off", "threshold_tempco"]
