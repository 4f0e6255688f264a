"""Drive rules: does the drive saturate the switch, hold it off, and stay within the source's limits."""

from __future__ import annotations

import numpy as np

from ..design import DividerDrive, LogicDrive
from ..switches.darlington import input_onset
from .core import Context, Finding, Status, _n, _si, _sum_r, judge, note, rule, worse


@rule("drive.saturation", "Saturation overdrive", kinds=("npn", "darlington_array"))
def saturation(ctx: Context) -> Finding:
    """overdrive = I_B / (I_C / h_FE(min)), with
    I_B = (V_th,on − V_BE(sat)) / (R_th + R_b) − V_BE(sat) / R_be and
    I_C = (V_cc − V_CE(sat)) / R_coil(T) (plus V_cc/R_p through a resistor clamp).
    Below 1 the switch is not saturated; the profile asks for ≥ 2 (common practice: forced
    β = I_C/I_B at or below h_FE(min)/2; V_CE(sat) is specified at a forced β of 10).
    A Darlington array channel: R_b includes the built-in input resistor and V_BE(sat) is the
    input's V_I(on) (two base-emitter drops)."""
    op = ctx.op

    def message(i: int, status: Status) -> str:
        forced = op.collector_current[i] / op.base_current[i] if op.base_current[i] > 0 else np.inf
        text = (
            f"I_B {_si(op.base_current[i], 'A')} available, {_si(op.required_base_current[i], 'A')} "
            f"needed for I_C {_si(op.collector_current[i], 'A')}; forced β "
            f"{forced:.0f}"
            if np.isfinite(forced)
            else "no base current: the base never reaches V_BE(sat)"
        )
        if status == "violation":
            text += "; not saturated — lower R_b or pick a higher-gain switch"
        return text

    return judge(
        ctx,
        "drive.saturation",
        op.overdrive,
        1.0,
        ctx.profile.overdrive,
        "×",
        keep_below=False,
        message=message,
        worked=lambda i: _worked_saturation(ctx, i),
    )


def _r_in(ctx: Context, i: int) -> float:
    """A Darlington array's built-in input resistor at a corner (0 for an NPN)."""
    r_input = ctx.corners.values.get("r_input")
    return float(r_input[i]) if r_input is not None else 0.0


def _v_in(sw) -> float:
    """The input voltage that saturates a bipolar switch: V_BE(sat), a Darlington's V_I(on)."""
    return sw.vbe_on if sw.kind == "darlington_array" else sw.vbe_sat


def _base_current_text(ctx: Context, i: int) -> str:
    """I_B = (V_th,on − V_BE(sat))/(R_th + R_b) − V_BE(sat)/R_be with a corner's numbers."""
    op, sw = ctx.op, ctx.design.switch
    text = (
        f"I_B = ({_n(op.v_th_on[i], 'V')} − {_n(_v_in(sw), 'V')})/"
        f"({_sum_r(('R_th', op.r_th_on[i]), ('R_b', op.r_series[i]), ('R_in', _r_in(ctx, i)))})"
    )
    if np.isfinite(op.r_pulldown[i]):
        text += f" − {_n(_v_in(sw), 'V')}/{_n(op.r_pulldown[i], 'Ω')}"
    return text + f" = {_n(op.base_current[i], 'A')}"


def _worked_saturation(ctx: Context, i: int) -> str:
    op, sw = ctx.op, ctx.design.switch
    saturated = op.required_base_current[i] * sw.hfe_min
    load = "R_coil ∥ R_p" if op.load_resistance[i] < op.r_coil[i] else "R_coil"
    return (
        f"{_base_current_text(ctx, i)}; I_C = (V_cc − V_CE(sat))/{load} = ({_n(op.vcc[i], 'V')} − "
        f"{_n(sw.vce_sat, 'V')})/{_n(op.load_resistance[i], 'Ω')} = {_n(saturated, 'A')}; "
        f"overdrive = I_B/(I_C/h_FE(min)) = {_n(op.base_current[i], 'A')}/({_n(saturated, 'A')}/"
        f"{sw.hfe_min:g}) = {_n(op.overdrive[i], '×')}"
    )


@rule("drive.cutoff", "Cutoff when off", kinds=("npn", "darlington_array"))
def cutoff(ctx: Context) -> Finding:
    """V_BE,off = V_th,off · R_be / (R_th + R_b + R_be) (V_th,off with no pull-down) against the
    turn-on voltage at the hottest junction, V_BE(on)(T_J) = V_BE(on)(25 °C) − 2 mV/K·(T_J − 25)
    (about −2 mV/K, common practice). Limit: the profile's cutoff fraction of it. A Darlington
    array channel: its input's onset (vbe_on_min, else two drops of 0.55 V, from memory), falling
    2 × 2 mV/K, with the built-in input resistor in series with R_b."""
    op = ctx.op

    def message(i: int, status: Status) -> str:
        text = f"off-state base at {_si(op.vbe_off[i], 'V')}, turn-on {_si(op.vbe_on_hot[i], 'V')} at T_J {op.junction_temp[i]:.0f} °C"
        if status != "ok" and np.isinf(op.r_pulldown[i]):
            text += "; a base pull-down would hold it off"
        if ctx.design.switch.kind == "darlington_array" and ctx.design.switch.vbe_on_min is None:
            text += "; the input's onset ASSUMED 1.1 V at 25 °C (two drops of 0.55 V, from memory): give switch.vbe_on_min"
        return text

    def worked(i: int) -> str:
        if np.isfinite(op.r_pulldown[i]):
            resistors = _sum_r(
                ("R_th", op.r_th_off[i]),
                ("R_b", op.r_series[i]),
                ("R_in", _r_in(ctx, i)),
                ("R_be", op.r_pulldown[i]),
            )
            off = (
                f"V_BE,off = V_th,off·R_be/(R_th + R_b + R_be) = {_n(op.v_th_off[i], 'V')}·"
                f"{_n(op.r_pulldown[i], 'Ω')}/({resistors})"
            )
        else:
            off = "V_BE,off = V_th,off (no pull-down)"
        sw = ctx.design.switch
        if sw.kind == "darlington_array":
            onset, _ = input_onset(sw)
            return (
                f"turn-on of the input's two junctions {_n(onset, 'V')} − 2·2 mV/K·"
                f"({_n(op.junction_temp[i], '°C')} − 25 °C) = {_n(op.vbe_on_hot[i], 'V')}; "
                f"{off} = {_n(op.vbe_off[i], 'V')}"
            )
        return (
            f"turn-on V_BE(on)(T_J) = {_n(ctx.design.switch.vbe_on, 'V')} − 2 mV/K·"
            f"({_n(op.junction_temp[i], '°C')} − 25 °C) = {_n(op.vbe_on_hot[i], 'V')}; "
            f"{off} = {_n(op.vbe_off[i], 'V')}"
        )

    return judge(
        ctx,
        "drive.cutoff",
        op.vbe_off,
        op.vbe_on_hot,
        ctx.profile.cutoff * op.vbe_on_hot,
        "V",
        keep_below=True,
        message=message,
        worked=worked,
    )


@rule("drive.source_current", "Drive source current", kinds=("npn", "darlington_array"))
def source_current(ctx: Context) -> Finding:
    """I_source = (V_th,on − V_BE,low) / (R_th + R_b) against the output's i_max (derated by
    the profile's current fraction). V_BE,low is the lowest base voltage a conducting base can
    have — the transistor's vbe_sat_min, else the hot V_BE(on) = V_BE(on) − 2 mV/K·(T_J − 25)
    (common practice) — which draws the most current; a base held below it by R_be carries
    V_th,on/(R_th + R_b + R_be). A divider has no such limit: reported as a note."""
    op, drive = ctx.op, ctx.design.drive
    current = op.base_resistor_current

    def worked(i: int) -> str:
        r = op.r_th_on[i] + op.r_series[i] + _r_in(ctx, i)
        v_base = op.v_th_on[i] - current[i] * r
        if np.isfinite(op.r_pulldown[i]):
            open_base = op.v_th_on[i] / (1 + r / op.r_pulldown[i])
            base = (
                f"V_B = min(V_BE,low, V_th,on·R_be/(R_th + R_b + R_be)) = min({_n(op.vbe_low[i], 'V')}, "
                f"{_n(open_base, 'V')}) = {_n(v_base, 'V')}"
            )
        else:
            base = f"V_B = V_BE,low = {_n(v_base, 'V')}"
        return (
            f"{base}; I = (V_th,on − V_B)/(R_th + R_b) = ({_n(op.v_th_on[i], 'V')} − {_n(v_base, 'V')})/"
            f"({_sum_r(('R_th', op.r_th_on[i]), ('R_b', op.r_series[i]), ('R_in', _r_in(ctx, i)))}) = {_n(current[i], 'A')}"
        )

    if isinstance(drive, DividerDrive):
        worst = int(np.argmax(current))
        return note(
            ctx,
            "drive.source_current",
            float(current[worst]),
            "A",
            "divider drive: the sensor divider supplies the base current",
            worst,
            worked=worked(worst),
        )
    assert isinstance(drive, LogicDrive)
    return judge(
        ctx,
        "drive.source_current",
        current,
        drive.i_max,
        ctx.profile.current * drive.i_max,
        "A",
        keep_below=True,
        message=lambda i, s: (
            f"{_si(current[i], 'A')} from the pin with the base at {_si(op.vbe_low[i], 'V')}, "
            f"rated {_si(drive.i_max, 'A')}"
        ),
        worked=worked,
    )


@rule("drive.reverse_base", "Reverse base-emitter voltage", kinds=("npn",))
def reverse_base(ctx: Context) -> Finding:
    """|V_BE| when the drive goes below 0 V: −V_BE,off against V_(BR)EBO (derated by the profile's
    voltage fraction). V_(BR)EBO is typically 5–6 V (common practice)."""
    op, sw = ctx.op, ctx.design.switch
    reverse = np.maximum(0.0, -op.vbe_off) + 0.0  # + 0.0 turns −0.0 into 0.0
    return judge(
        ctx,
        "drive.reverse_base",
        reverse,
        sw.vebo,
        ctx.profile.voltage * sw.vebo,
        "V",
        keep_below=True,
        message=lambda i, s: (
            "the drive never goes below 0 V"
            if reverse[i] == 0
            else f"base reverse-biased by {_si(reverse[i], 'V')}"
        ),
        worked=lambda i: (
            f"V_R = max(0, −V_BE,off) = max(0, −({_n(op.vbe_off[i], 'V')})) = {_n(reverse[i], 'V')}"
        ),
    )


@rule("drive.divider_power", "Divider resistor power")
def divider_power(ctx: Context) -> Finding | None:
    """Power in the divider's fixed resistor and its sensor, in both sensor states: the divider's
    middle node sits at V_m = V_th − I_Rb·R_th (Thevenin, with the base drawing I_Rb at the lowest
    conducting V_BE, or only the current into R_be when it stays below that), so P_top = (V_src − V_m)²/R_top; the lower resistor is bounded by the
    unloaded node, P_bottom = V_th²/R_bottom. V_src takes its tolerance (v_source_tolerance, or
    the supply's). Each part with a rating (drive.fixed_power_rating, drive.sensor_power_rating)
    is judged against it, derated by the profile's power fraction; the worse is reported.
    Without either rating: a note with both powers."""
    op, drive = ctx.op, ctx.design.drive
    if not isinstance(drive, DividerDrive):
        return None
    d = op.divider
    powers = {"fixed": [], "sensor": []}
    texts = {"fixed": [], "sensor": []}
    for state, v_th, r_th, i_rb in (
        ("on", op.v_th_on, op.r_th_on, d["base_on"]),
        ("off", op.v_th_off, op.r_th_off, d["base_off"]),
    ):
        v_mid = v_th - i_rb * r_th
        p_top = (d["v_source"] - v_mid) ** 2 / d[f"r_top_{state}"]
        p_bottom = v_th**2 / d[f"r_bottom_{state}"]
        top, bottom = ("sensor", "fixed") if drive.sensor_position == "top" else ("fixed", "sensor")
        powers[top].append(p_top)
        powers[bottom].append(p_bottom)
        texts[top].append(
            lambda i, state=state, v_mid=v_mid, p=p_top: (
                f"{state}: (V_src − V_m)²/R_top = ({_n(d['v_source'][i], 'V')} − {_n(v_mid[i], 'V')})²/"
                f"{_n(d[f'r_top_{state}'][i], 'Ω')} = {_n(p[i], 'W')}"
            )
        )
        texts[bottom].append(
            lambda i, state=state, v_th=v_th, p=p_bottom: (
                f"{state}: V_th²/R_bottom = ({_n(v_th[i], 'V')})²/{_n(d[f'r_bottom_{state}'][i], 'Ω')} = "
                f"{_n(p[i], 'W')}"
            )
        )

    def worked_part(part: str, i: int) -> str:
        value = np.maximum(*powers[part])[i]
        return f"{part}: " + "; ".join(t(i) for t in texts[part]) + f"; the larger = {_n(value, 'W')}"

    fixed = np.maximum(*powers["fixed"])
    sensor = np.maximum(*powers["sensor"])
    ratings = {"fixed": drive.fixed_power_rating, "sensor": drive.sensor_power_rating}
    values = {"fixed": fixed, "sensor": sensor}
    label = {"fixed": "fixed resistor", "sensor": "sensor"}
    found = []
    for part, rating in ratings.items():
        if rating is None:
            continue
        value = values[part]
        found.append(
            judge(
                ctx,
                "drive.divider_power",
                value,
                rating,
                ctx.profile.power * rating,
                "W",
                keep_below=True,
                message=lambda i, s, part=part, value=value, rating=rating: (
                    f"{_si(value[i], 'W')} in the {label[part]}, rated {_si(rating, 'W')}; "
                    f"fixed {_si(fixed[i], 'W')}, sensor {_si(sensor[i], 'W')}"
                ),
                worked=lambda i, part=part: worked_part(part, i),
            )
        )
    if found:
        return worse(*found)
    worst = int(np.argmax(np.maximum(fixed, sensor)))
    return note(
        ctx,
        "drive.divider_power",
        float(max(fixed[worst], sensor[worst])),
        "W",
        f"fixed resistor {_si(fixed[worst], 'W')}, sensor {_si(sensor[worst], 'W')}; no power rating "
        "entered, so neither is checked (drive.fixed_power_rating, drive.sensor_power_rating)",
        worst,
        worked=worked_part("fixed", worst)
        + "; "
        + worked_part("sensor", worst)
        + f"; the larger of the two = {_n(max(fixed[worst], sensor[worst]), 'W')}",
    )
