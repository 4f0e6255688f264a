"""Coil rules: pick-up when hot, over-voltage, release time."""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from ..corners import inductance_at
from .core import Context, Finding, _n, _si, judge, note, rule


@rule("coil.pickup", "Coil pick-up when hot")
def pickup(ctx: Context) -> Finding:
    """Coil voltage on = V_cc − V_CE(sat) (or h_FE(min)·I_B·R_coil when not saturated) against the
    must-operate voltage at the hot coil, V_pu(T) = V_pu(T_ref)·R(T)/R(T_ref) with
    R(T) = R(20 °C)·(1 + α(T − 20)), α = 0.00393 /K (copper, IEC 60028). The coil temperature is
    the ambient plus self-heating at the highest supply (V_cc,max − V_CE(sat),min): from the coil's
    R_th, else from its temperature rise ΔT at nominal voltage (R_th = ΔT·R_hot/V_nom²), else from
    the derating profile's assumed rise (from memory), which the finding then says.
    Limit: must-operate × (1 + pick-up margin). A MOSFET: V_coil = V_cc·R_coil/(R_coil + R_DS(on)(T_J)),
    0 V where V_GS stays below V_GS(th),max (it need not conduct); where V_GS is below the gate
    voltage R_DS(on) is guaranteed at, the result is at best marginal (R_DS(on) is not known there)."""
    op = ctx.op
    rating = op.must_operate_hot
    if op.coil_heating == "rth":
        heating = "self-heated by the coil's R_th"
    elif op.coil_heating == "temp_rise":
        heating = f"self-heated by the datasheet's {op.coil_rise:g} K rise"
    elif op.coil_heating == "assumed":
        heating = (
            f"self-heating ASSUMED: a {op.coil_rise:g} K rise at nominal voltage (profile value, "
            "from memory; give coil.rth or coil.temp_rise)"
        )
    else:
        heating = "no self-heating"
    finding = judge(
        ctx,
        "coil.pickup",
        op.coil_voltage_hot,
        rating,
        rating * (1 + ctx.profile.pickup_margin),
        "V",
        keep_below=False,
        message=lambda i, s: (
            f"{_si(op.coil_voltage_hot[i], 'V')} on the coil at {op.coil_temp_hot[i]:.0f} °C, must-operate {_si(rating[i], 'V')} there; {heating}"
            + _gate_text(ctx, i)
        ),
        hot_coil=True,
        worked=lambda i: _worked_pickup(ctx, i),
    )
    guaranteed = op.switch.get("guaranteed")
    if guaranteed is not None and finding.status == "ok" and not np.all(guaranteed):
        # A MOSFET below the gate voltage its R_DS(on) is guaranteed at: the coil voltage above
        # assumes the rated R_DS(on), which this gate voltage does not promise.
        i = int(np.argmin(guaranteed))
        return replace(
            finding,
            status="marginal",
            message=finding.message
            + f"; at {_si(op.switch['vgs_on'][i], 'V')} on the gate R_DS(on) is not guaranteed "
            f"(rated at {_si(ctx.design.switch.rds_on_vgs, 'V')}): this coil voltage assumes it",
        )
    return finding


def _gate_text(ctx: Context, i: int) -> str:
    conducts = ctx.op.switch.get("conducts")
    if conducts is None or conducts[i]:
        return ""
    return (
        f"; V_GS {_si(ctx.op.switch['vgs_on'][i], 'V')} is below V_GS(th),max "
        f"{_si(ctx.op.switch['vth_max_cold'][i], 'V')} there: the FET need not conduct at all"
    )


def _worked_pickup(ctx: Context, i: int) -> str:
    op, sw, coil = ctx.op, ctx.design.switch, ctx.design.coil
    r_ref = op.must_operate_hot[i] and coil.v_pickup * op.r_coil_hot[i] / op.must_operate_hot[i]
    rating = (
        f"must-operate V_pu(T) = V_pu·R(T)/R(T_ref) = {_n(coil.v_pickup, 'V')}·{_n(op.r_coil_hot[i], 'Ω')}/"
        f"{_n(r_ref, 'Ω')} = {_n(op.must_operate_hot[i], 'V')} at {_n(op.coil_temp_hot[i], '°C')}"
    )
    if sw.kind == "nmos":
        if not op.switch["conducts"][i]:
            value = (
                f"V_GS {_n(op.switch['vgs_on'][i], 'V')} below V_GS(th),max {_n(op.switch['vth_max_cold'][i], 'V')}: "
                f"the FET need not conduct, V_coil = {_n(op.coil_voltage_hot[i], 'V')}"
            )
        else:
            r_load = op.switch["r_hot_load"][i]
            value = (
                f"V_coil = V_cc·R_load(T)/(R_load(T) + R_DS(on)(T_J)) = {_n(op.vcc[i], 'V')}·{_n(r_load, 'Ω')}/"
                f"({_n(r_load, 'Ω')} + {_n(op.switch['rds'][i], 'Ω')}) = {_n(op.coil_voltage_hot[i], 'V')}"
            )
        return f"{rating}; {value}"
    saturated = op.vcc[i] - sw.vce_sat
    if op.coil_voltage_hot[i] < saturated:
        value = (
            f"V_coil = h_FE(min)·I_B·R_coil(T) = {sw.hfe_min:g}·{_n(op.base_current[i], 'A')}·"
            f"{_n(op.r_coil_hot[i], 'Ω')} = {_n(op.coil_voltage_hot[i], 'V')} (not saturated)"
        )
    else:
        value = (
            f"V_coil = V_cc − V_CE(sat) = {_n(op.vcc[i], 'V')} − {_n(sw.vce_sat, 'V')} = "
            f"{_n(op.coil_voltage_hot[i], 'V')}"
        )
    return f"{rating}; {value}"


@rule("coil.overvoltage", "Coil over-voltage")
def overvoltage(ctx: Context) -> Finding:
    """Coil voltage V_cc,max − V_CE(sat),min (vce_sat_min, else 0 V) against the coil's maximum
    continuous voltage. The
    maker's figure already carries the coil's thermal margin, so the limit is the rating."""
    op, coil = ctx.op, ctx.design.coil
    return judge(
        ctx,
        "coil.overvoltage",
        op.coil_voltage,
        coil.v_max,
        coil.v_max,
        "V",
        keep_below=True,
        message=lambda i, s: (
            f"{_si(op.coil_voltage[i], 'V')} on a coil rated {_si(coil.v_max, 'V')} continuous"
        ),
        worked=lambda i: (
            f"V_coil = V_cc,max − {ctx.switch.on_voltage_symbol} = {_n(op.vcc[i], 'V')} − "
            f"{_n(ctx.switch.on_voltage_low(ctx.design.switch), 'V')}"
            f" = {_n(op.coil_voltage[i], 'V')}"
        ),
    )


def _forward_curve_held(ctx: Context) -> str:
    """What a judged release must say when its clamp diode's forward voltage is one number: a
    diode with a lower V_F than that (a datasheet's V_F is usually a maximum) releases slower."""
    diode = ctx.clamp.diode(ctx.design.clamp)
    if diode is None or ctx.path.unclamped or diode.vf_min is not None:
        return ""
    if ctx.design.clamp.kind == "array_diode":
        return (
            f"; the array's clamp diode taken at V_F = {_si(diode.vf, 'V')} at {_si(diode.vf_at, 'A')} "
            "as given: one with a lower V_F releases slower"
        )
    return (
        f"; the clamp diode taken at V_F = {_si(diode.vf, 'V')} at {_si(diode.vf_at, 'A')} as given: "
        "one with a lower V_F releases slower (give clamp.diode.vf_min to judge it at the lowest)"
    )


@rule("coil.release", "Release time")
def release(ctx: Context) -> Finding:
    """Time for the coil current to fall from I_0 to the drop-out current I_do = V_do/R_coil(T_ref):
    t = ∫ from I_do to I_0 of L / (R·i + v_c(i)) di (for a constant v_c,
    t = τ·ln((I_0 + v_c/R)/(I_do + v_c/R)), τ = L/R). A note unless max_release_time is set."""
    t = ctx.turnoff.time_to_dropout
    limit = ctx.design.requirements.max_release_time
    nominal = float(ctx.turnoff_nominal.time_to_dropout[0])
    alternatives = ctx.extras.get("alternatives", [])
    alt = "; ".join(
        f"{a['clamp']} {_si(a['time_to_dropout'], 's')}"
        + (
            f" (slowest corner {_si(a['time_to_dropout_worst'], 's')})"
            if a.get("time_to_dropout_worst")
            else ""
        )
        for a in alternatives
        if a["time_to_dropout"] is not None
    )
    suffix = f" (nominal {_si(nominal, 's')}" + (
        f"; alternatives passing the clamp rules at the worst corner, at nominal: {alt})" if alt else ")"
    )
    if ctx.path.unclamped:
        suffix = f" — unclamped: an upper bound, with the node held at {ctx.switch.breakdown_symbol}" + suffix
    to, coil = ctx.turnoff, ctx.design.coil

    clamp_voltage = (
        f"v_c = {ctx.switch.breakdown_symbol} − V_cc, the node held at breakdown"
        if ctx.path.unclamped
        else f"v_c(i) of the clamp ({ctx.clamp.title})"
    )

    def worked(i: int) -> str:
        return (
            f"I_do = V_do/R_coil(T_ref) = {_n(coil.v_dropout, 'V')}/{_n(coil.r_coil, 'Ω')} = "
            f"{_n(ctx.op.dropout_current, 'A')}; I_0 = {_n(to.initial_current[i], 'A')}; "
            f"L = {_n(inductance_at(ctx.design, ctx.corners, i), 'H')}; R = {_n(ctx.op.r_coil[i], 'Ω')}; "
            f"{clamp_voltage}; "
            f"t = ∫ from I_do to I_0 of L/(R·i + v_c(i)) di = {_n(t[i], 's')}"
        )

    if limit is None:
        worst = int(np.argmax(t))
        return note(
            ctx,
            "coil.release",
            float(t[worst]),
            "s",
            f"slowest release {_si(t[worst], 's')}{suffix}",
            worst,
            worked=worked(worst),
        )
    suffix += _forward_curve_held(ctx)
    return judge(
        ctx,
        "coil.release",
        t,
        limit,
        limit,
        "s",
        keep_below=True,
        message=lambda i, s: f"{_si(t[i], 's')} to drop-out, required ≤ {_si(limit, 's')}{suffix}",
        worked=worked,
    )
