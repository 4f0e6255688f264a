"""Gate rules of a MOSFET switch: is it enhanced enough when on, held off when off, and is the
gate within its voltage and its resistor within its power."""

from __future__ import annotations

import numpy as np

from ..switches.nmos import threshold_tempco
from .core import Context, Finding, _si, judge, rule

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

    return judge(ctx, "gate.enhancement", vgs, vth, fet.rds_on_vgs, "V", keep_below=False, message=message)


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
    )


__all__ = ["enhancement", "gate_resistor_power", "gate_voltage", "threshold_off", "threshold_tempco"]
