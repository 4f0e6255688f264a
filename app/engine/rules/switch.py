"""Switch rules: current, breakdown at turn-off, dissipation, junction temperature."""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from ..corners import inductance_at
from .core import RULES, Context, Finding, _n, _si, judge, rule, worse


@rule("switch.current", "Switch current")
def switch_current(ctx: Context) -> Finding:
    """I_C,max = (V_cc,max − V_CE(sat),min) / R_coil,min (coldest, lowest-tolerance coil) against the
    I_C rating, derated by the profile's current fraction. V_CE(sat),min is the transistor's
    vce_sat_min, else 0 V: the lowest saturation voltage leaves the most for the load. A MOSFET:
    I_D,max = V_cc,max / R_coil,min (R_DS(on) taken as 0, no minimum being given) against id_max;
    a Darlington array channel: per channel against ic_max."""
    op, sw = ctx.op, ctx.design.switch
    rating = ctx.switch.current_rating(sw)
    return judge(
        ctx,
        "switch.current",
        op.collector_current,
        rating,
        ctx.profile.current * rating,
        "A",
        keep_below=True,
        message=lambda i, s: f"{_si(op.collector_current[i], 'A')} against {_si(rating, 'A')} rated",
        worked=lambda i: _worked_current(ctx, i),
    )


def _worked_current(ctx: Context, i: int) -> str:
    op, sw = ctx.op, ctx.design.switch
    if sw.kind == "nmos":
        return (
            f"I_D = V_cc,max/{_load_name(op, i)} (R_DS(on) taken as 0) = {_n(op.vcc[i], 'V')}/"
            f"{_n(op.load_resistance[i], 'Ω')} = {_n(op.collector_current[i], 'A')}"
        )
    return (
        f"I_C = (V_cc,max − V_CE(sat),min)/{_load_name(op, i)} = ({_n(op.vcc[i], 'V')} − "
        f"{_n(sw.vce_sat_low, 'V')})/{_n(op.load_resistance[i], 'Ω')} = {_n(op.collector_current[i], 'A')}"
    )


def _load_name(op, i: int) -> str:
    return "(R_coil ∥ R_p)" if op.load_resistance[i] < op.r_coil[i] else "R_coil"


@rule("switch.breakdown", "Turn-off spike against breakdown")
def breakdown(ctx: Context) -> Finding:
    """Peak switch voltage at turn-off, V_cc + v_c(I_0): diode V_cc + V_F(I_0); diode + zener
    V_cc + V_F(I_0) + V_Z(I_0); diode + resistor V_cc + V_F(I_0) + I_0·R_s; resistor
    V_cc + I_0·R_p; TVS to ground V_TVS(I_0) on the line through (I_T, V_BR(max)) and
    (I_clamp, V_clamp); RC snubber: the series RLC response (app/engine/clamps/rc.py). V_F(i) = n·V_T·ln(1 + i/I_S) + i·R_S (Shockley).
    Against the switch's breakdown — V_(BR)CEO (NPN, Darlington array channel), V_(BR)DSS
    (MOSFET) — derated by the profile's voltage fraction. Unclamped, the node rises to
    avalanche: a violation for a bipolar switch; a MOSFET's avalanche is judged by
    switch.avalanche (its energy against E_AS / E_AR), and this finding is a note."""
    sw, to = ctx.design.switch, ctx.turnoff
    v_br, symbol = ctx.switch.breakdown(sw), ctx.switch.breakdown_symbol
    if ctx.path.unclamped:
        worst = int(np.argmax(to.initial_current))
        text = f"no clamp: {_si(to.initial_current[worst], 'A')} {ctx.switch.unclamped_verdict}"
        text += ctx.clamp.breakdown_note(ctx.design.clamp)
        if RULES["switch.avalanche"].applies_to(ctx.design):
            return Finding(
                "switch.breakdown",
                RULES["switch.breakdown"].title,
                "note",
                None,
                "V",
                None,
                v_br,
                ctx.corners.describe(worst),
                text + "; the avalanche energy is judged by switch.avalanche",
                worked=f"I_0 = {_n(to.initial_current[worst], 'A')} with no clamp: L·di/dt drives the drain to "
                f"{symbol} {_n(v_br, 'V')} or above, where the FET avalanches; no finite clamp voltage",
            )
        return Finding(
            "switch.breakdown",
            RULES["switch.breakdown"].title,
            "violation",
            None,
            "V",
            ctx.profile.voltage * v_br,
            v_br,
            ctx.corners.describe(worst),
            text,
            worked=f"I_0 = {_n(to.initial_current[worst], 'A')} with no clamp: L·di/dt drives the node past "
            f"{symbol} {_n(v_br, 'V')} into avalanche; no finite clamp voltage",
        )
    peak = to.peak_switch_voltage
    return judge(
        ctx,
        "switch.breakdown",
        peak,
        v_br,
        ctx.profile.voltage * v_br,
        "V",
        keep_below=True,
        message=lambda i, s: (
            f"spike to {_si(peak[i], 'V')} from {_si(to.initial_current[i], 'A')}, {symbol} {_si(v_br, 'V')}"
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


def _power_message(ctx: Context, i: int) -> str:
    op = ctx.op
    text = f"{_si(op.dissipation[i], 'W')}, {_si(op.power_allowed[i], 'W')} allowed at {op.ambient[i]:.0f} °C"
    if op.power_allowed[i] <= 0:
        text += " — the ambient reaches T_J,max: no dissipation is allowed there"
    kind = ctx.design.switch.kind
    if kind == "darlington_array":
        sw = ctx.design.switch
        text += f"; the package, with {sw.channels_on} of its {sw.channels} channels conducting at once"
    if kind == "nmos":
        return text + _fet_power_text(ctx, i)
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
    derated by the profile's power fraction; an ambient at or above T_J,max allows nothing.
    A Darlington array channel: the package dissipates channels_on × (I_C·V_CE(sat) +
    I_B·V_I(on) + I_B²·R_in), against the package rating. A MOSFET: P = I_D²·R_DS(on)(T_J)
    solved together with T_J (see switch.junction_temp); where V_GS is below the gate voltage
    R_DS(on) is guaranteed at, the FET may sit in its linear region: P = V_cc²/(4·R_load)."""
    op = ctx.op
    return judge(
        ctx,
        "switch.power",
        op.dissipation,
        op.power_allowed,
        ctx.profile.power * op.power_allowed,
        "W",
        keep_below=True,
        message=lambda i, s: _power_message(ctx, i),
        worked=lambda i: _worked_power(ctx, i),
    )


def _input_voltage(sw) -> float:
    """The input voltage of a conducting bipolar switch: V_BE(sat), or a Darlington's V_I(on)."""
    return sw.vbe_on if sw.kind == "darlington_array" else sw.vbe_sat


def _worked_power(ctx: Context, i: int) -> str:
    """P with the worst corner's numbers, and the power allowed at its ambient."""
    op, sw = ctx.op, ctx.design.switch
    allowed = (
        f"allowed min(P_max, (T_J,max − T_A)/R_θJA) = min({_n(sw.p_max, 'W')}, ({_n(sw.tj_max, '°C')} − "
        f"{_n(op.ambient[i], '°C')})/{_n(sw.rth_ja, 'K/W')}) = {_n(op.power_allowed[i], 'W')}"
    )
    if sw.kind == "nmos":
        if op.linear_bound[i] or not np.isfinite(op.dissipation[i]):
            power = (
                f"P = V_cc²/(4·R_load) = ({_n(op.vcc[i], 'V')})²/(4·{_n(op.load_resistance[i], 'Ω')}) = "
                f"{_n(op.dissipation[i], 'W')}"
            )
        else:
            power = (
                f"{_worked_fet_solve(ctx, i)}; P = I_D²·R_DS(on)(T_J) = ({_n(op.collector_current[i], 'A')})²·"
                f"{_n(op.switch['rds'][i], 'Ω')} = {_n(op.dissipation[i], 'W')}"
            )
        return f"{allowed}; {power}"
    if sw.kind == "darlington_array":
        v_in, r_in = sw.vbe_on, ctx.corners["r_input"][i]
        i_b = op.base_current[i]
        per_channel = op.dissipation[i] / sw.channels_on
        on_power = per_channel - i_b * v_in - i_b**2 * r_in
        return (
            f"{allowed}; P = channels_on·(I_C·V_CE + I_B·V_I(on) + I_B²·R_in) = {sw.channels_on}·"
            f"({_n(on_power, 'W')} + {_n(i_b, 'A')}·{_n(v_in, 'V')} + ({_n(i_b, 'A')})²·{_n(r_in, 'Ω')}) = "
            f"{_n(op.dissipation[i], 'W')}"
        )
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
    return f"{allowed}; {power}"


@rule("switch.junction_temp", "Junction temperature")
def junction_temp(ctx: Context) -> Finding:
    """T_J = T_A + P·R_θJA against T_J,max; limit min(profile T_J, T_J,max − 25 K). P as in
    switch.power (the V_cc²/(4·R_load) bound for a switch that is not saturated).
    A MOSFET's R_DS(on) rises with T_J, R_DS(on)(T) = R_25·h^((T − 25)/100) with h the
    normalised R_DS(on) at 125 °C (exponential through the datasheet's two points, from
    memory), so P and T_J are solved together: x = T_J − T_A satisfies x = a·e^(b·x) with
    a = R_θJA·I_D²·R_DS(on)(T_A), b = ln(h)/100, whose stable root is x = −W₀(−a·b)/b (Lambert
    W, scipy.special.lambertw). When a·b > 1/e there is no root: thermal runaway, a violation.
    I_D is the highest drain current, V_cc,max/R_coil,min (conservative)."""
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
        message=lambda i, s: (
            f"T_J {op.junction_temp[i]:.1f} °C at T_A {op.ambient[i]:.0f} °C"
            + (_fet_power_text(ctx, i) if sw.kind == "nmos" else "")
        ),
        worked=lambda i: _worked_junction(ctx, i),
    )


def _worked_junction(ctx: Context, i: int) -> str:
    op, sw = ctx.op, ctx.design.switch
    text = (
        f"T_J = T_A + P·R_θJA = {_n(op.ambient[i], '°C')} + {_n(op.dissipation[i], 'W')}·"
        f"{_n(sw.rth_ja, 'K/W')} = {_n(op.junction_temp[i], '°C')}"
    )
    if sw.kind == "nmos" and not op.linear_bound[i] and np.isfinite(op.junction_temp[i]):
        return f"{_worked_fet_solve(ctx, i)}; {text}"
    return text


def _worked_fet_solve(ctx: Context, i: int) -> str:
    """The R_DS(on)–T_J solution with a corner's numbers (switches/nmos.py junction_with_rds)."""
    op, fet = ctx.op, ctx.design.switch
    b = np.log(fet.rds_on_hot) / 100.0
    a = (
        fet.rth_ja
        * op.collector_current[i] ** 2
        * fet.rds_on
        * fet.rds_on_hot ** ((op.ambient[i] - 25.0) / 100.0)
    )
    return (
        f"a = R_θJA·I_D²·R_DS(on)(T_A) = {_n(fet.rth_ja, 'K/W')}·({_n(op.collector_current[i], 'A')})²·"
        f"{_n(fet.rds_on, 'Ω')}·{fet.rds_on_hot:g}^(({_n(op.ambient[i], '°C')} − 25 °C)/100) = {_n(a, 'K')}, "
        f"b = ln({fet.rds_on_hot:g})/100 = {b:.4g} /K, T_J − T_A = −W₀(−a·b)/b = "
        f"{_n(op.junction_temp[i] - op.ambient[i], 'K')}; R_DS(on)(T_J) = {_n(op.switch['rds'][i], 'Ω')}"
    )


# E_AS falls linearly from its 25 °C figure to zero at T_J,max as the starting junction warms
# (the derating curve datasheets draw; from memory).


@rule("switch.avalanche", "Avalanche energy (unclamped MOSFET)", kinds=("nmos",))
def avalanche(ctx: Context) -> Finding | None:
    """Unclamped, the FET avalanches at about its breakdown and absorbs, per turn-off,
    E = ½·L·I_0²·V_BR/(V_BR − V_cc) (the single-pulse avalanche energy of an inductive load,
    the datasheet test circuit's formula; it neglects the coil's resistance, so it bounds the
    energy from above), with V_BR = V_(BR)DSS (its minimum: the largest energy) and V_cc, I_0
    at each corner. Against the repetitive avalanche rating e_ar when given; else against the
    single-pulse e_as derated for the starting junction, E_AS·(T_J,max − T_J)/(T_J,max − 25 °C)
    (linear derating, from memory) — at best marginal then, since an avalanche at every turn-off
    is a repeated event. Limit: the profile's power fraction (an energy judged like a power,
    our choice). Without either rating: a violation, as for a bipolar switch. Only when
    unclamped."""
    if not ctx.path.unclamped:
        return None
    fet, to, op = ctx.design.switch, ctx.turnoff, ctx.op
    v_br = fet.vds_max
    with np.errstate(divide="ignore"):
        energy = np.where(
            op.vcc < v_br,
            0.5 * inductance_at(ctx.design, ctx.corners) * to.initial_current**2 * v_br / (v_br - op.vcc),
            np.inf,
        )
    worst = int(np.argmax(energy))
    formula = (
        f"½·L·I_0²·V_BR/(V_BR − V_cc) with I_0 {_si(to.initial_current[worst], 'A')}, V_BR {_si(v_br, 'V')}, "
        f"V_cc {_si(op.vcc[worst], 'V')}"
    )

    def worked(i: int) -> str:
        return (
            f"E = ½·L·I_0²·V_BR/(V_BR − V_cc) = ½·{_n(inductance_at(ctx.design, ctx.corners, i), 'H')}·({_n(to.initial_current[i], 'A')})²·"
            f"{_n(v_br, 'V')}/({_n(v_br, 'V')} − {_n(op.vcc[i], 'V')}) = {_n(energy[i], 'J')}"
        )

    if fet.e_ar is None and fet.e_as is None:
        return Finding(
            "switch.avalanche",
            RULES["switch.avalanche"].title,
            "violation",
            float(energy[worst]),
            "J",
            None,
            None,
            ctx.corners.describe(worst),
            f"{_si(energy[worst], 'J')} of avalanche at every turn-off ({formula}) and no avalanche rating "
            "given (switch.e_as, switch.e_ar): add a clamp",
            worked=worked(worst),
        )
    if fet.e_ar is not None:
        rating = np.full(ctx.corners.size, fet.e_ar)
        what = "repetitive E_AR"
    else:
        rating = fet.e_as * np.maximum(0.0, fet.tj_max - op.junction_temp) / (fet.tj_max - 25.0)
        what = "single-pulse E_AS derated for the starting junction"
    finding = judge(
        ctx,
        "switch.avalanche",
        energy,
        rating,
        ctx.profile.power * rating,
        "J",
        keep_below=True,
        message=lambda i, s: f"{_si(energy[i], 'J')} per turn-off ({formula}), {_si(rating[i], 'J')} {what}",
        worked=lambda i: (
            (
                ""
                if fet.e_ar is not None
                else f"E_AS(T_J) = E_AS·(T_J,max − T_J)/(T_J,max − 25 °C) = {_n(fet.e_as, 'J')}·"
                f"({_n(fet.tj_max, '°C')} − {_n(op.junction_temp[i], '°C')})/({_n(fet.tj_max, '°C')} − 25 °C) = "
                f"{_n(rating[i], 'J')}; "
            )
            + worked(i)
        ),
    )
    if fet.e_ar is None and finding.status == "ok":
        return replace(
            finding,
            status="marginal",
            message=finding.message + "; E_AS is a single-pulse rating and this avalanche repeats at "
            "every turn-off: give switch.e_ar, or clamp the coil",
        )
    return finding


@rule("switch.linear_region", "Linear region on a slow input")
def linear_region(ctx: Context) -> Finding | None:
    """A divider whose sensor changes slowly (drive.transition "slow", the default: photoresistor,
    thermistor) walks the switch through its linear region. Over the sweep from the sensor's off
    to its on value the collector current takes every value from h_FE(min)·I_B,off to
    h_FE(max)·I_B,on (saturation without switch.hfe_max); I·(V_cc − I·R_load) peaks at
    V_CE = V_cc/2, P = V_cc²/(4·R_load) (DOMAIN: worst dissipation of a slow input), plus
    I_B,on·V_BE(sat). Judged like switch.power (against min(P_max, (T_J,max − T_A)/R_θJA),
    derated) and switch.junction_temp (T_A + P·R_θJA against T_J,max); the worse is reported.
    Not for a logic drive or a "snap" sensor (float switch, reed contact). A MOSFET: the gate
    sweeps through its threshold, the drain current takes every value from 0 to full on, so the
    V_cc²/(4·R_load) bound always applies."""
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
        bound = f"V_cc²/(4·R_load) = ({_n(op.vcc[i], 'V')})²/(4·{_n(op.load_resistance[i], 'Ω')})"
        if sw.kind == "nmos":
            return f"P = {bound} = {_n(power[i], 'W')}"
        if sw.kind == "darlington_array":
            edge = bound if op.sweep_bound[i] else "I·(V_cc − I·R_load) at the edge of the gain range"
            return (
                f"P = channels_on·({edge} + I_B,on·V_I(on) + I_B,on²·R_in), {sw.channels_on} channels, "
                f"I_B,on up to {_n(base, 'A')} = {_n(power[i], 'W')}"
            )
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


def _fet_power_text(ctx: Context, i: int) -> str:
    op, fet = ctx.op, ctx.design.switch
    rds = op.switch["rds"][i]
    if not np.isfinite(op.junction_temp[i]):
        return (
            f"; thermal runaway: at {_si(op.collector_current[i], 'A')} the rise of R_DS(on) with temperature "
            "outruns the heat path, no steady junction temperature exists"
        )
    if op.linear_bound[i]:
        return (
            f"; V_GS {_si(op.switch['vgs_on'][i], 'V')} is below {_si(fet.rds_on_vgs, 'V')}, where R_DS(on) is "
            f"guaranteed: the FET may sit in its linear region, P up to V_cc²/(4·R_load) = "
            f"{_si(op.dissipation[i], 'W')}"
        )
    return (
        f"; I_D {_si(op.collector_current[i], 'A')}, R_DS(on) {_si(rds, 'Ω')} at T_J {op.junction_temp[i]:.0f} °C "
        f"({_si(fet.rds_on, 'Ω')} at 25 °C × {fet.rds_on_hot:g}^((T_J − 25)/100), solved together)"
    )
