"""Drive rules: does the drive saturate the switch, hold it off, and stay within the source's limits."""

from __future__ import annotations

import numpy as np

from ..design import DividerDrive, LogicDrive
from .core import Context, Finding, Status, _si, judge, note, rule


@rule("drive.saturation", "Saturation overdrive")
def saturation(ctx: Context) -> Finding:
    """overdrive = I_B / (I_C / h_FE(min)), with
    I_B = (V_th,on − V_BE(sat)) / (R_th + R_b) − V_BE(sat) / R_be and
    I_C = (V_cc − V_CE(sat)) / R_coil(T) (plus V_cc/R_p through a resistor clamp).
    Below 1 the switch is not saturated; the profile asks for ≥ 2 (common practice: forced
    β = I_C/I_B at or below h_FE(min)/2; V_CE(sat) is specified at a forced β of 10)."""
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
    )


@rule("drive.cutoff", "Cutoff when off")
def cutoff(ctx: Context) -> Finding:
    """V_BE,off = V_th,off · R_be / (R_th + R_b + R_be) (V_th,off with no pull-down) against the
    turn-on voltage at the hottest junction, V_BE(on)(T_J) = V_BE(on)(25 °C) − 2 mV/K·(T_J − 25)
    (about −2 mV/K, common practice). Limit: the profile's cutoff fraction of it."""
    op = ctx.op

    def message(i: int, status: Status) -> str:
        text = f"off-state base at {_si(op.vbe_off[i], 'V')}, turn-on {_si(op.vbe_on_hot[i], 'V')} at T_J {op.junction_temp[i]:.0f} °C"
        if status != "ok" and np.isinf(op.r_pulldown[i]):
            text += "; a base pull-down would hold it off"
        return text

    return judge(
        ctx,
        "drive.cutoff",
        op.vbe_off,
        op.vbe_on_hot,
        ctx.profile.cutoff * op.vbe_on_hot,
        "V",
        keep_below=True,
        message=message,
    )


@rule("drive.source_current", "Drive source current")
def source_current(ctx: Context) -> Finding:
    """I_source = (V_th,on − V_BE(sat)) / (R_th + R_b) against the output's i_max (derated by
    the profile's current fraction). A divider has no such limit: reported as a note."""
    op, drive = ctx.op, ctx.design.drive
    current = op.base_resistor_current
    if isinstance(drive, DividerDrive):
        worst = int(np.argmax(current))
        return note(
            ctx,
            "drive.source_current",
            float(current[worst]),
            "A",
            "divider drive: the sensor divider supplies the base current",
            worst,
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
        message=lambda i, s: f"{_si(current[i], 'A')} from the pin, rated {_si(drive.i_max, 'A')}",
    )


@rule("drive.reverse_base", "Reverse base-emitter voltage")
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
    )
