"""Resistor rules: the power in the resistors of the drive."""

from __future__ import annotations

from .core import Context, Finding, _n, _si, judge, rule


@rule("resistor.power", "Base resistor power", kinds=("npn", "darlington_array"))
def resistor_power(ctx: Context) -> Finding | None:
    """P_Rb = I_Rb²·R_b with the current through R_b itself (the drop across R_b alone, not the
    source's own resistance), against its rating derated by the profile's power fraction.
    I_Rb is taken at the lowest base voltage a conducting base can have (vbe_sat_min, else the hot
    V_BE(on) = V_BE(on) − 2 mV/K·(T_J − 25), common practice): the most current."""
    op, base = ctx.op, ctx.design.base
    if base is None:  # a Darlington array channel driven straight into its built-in resistor
        return None
    power = op.base_resistor_current**2 * op.r_series
    return judge(
        ctx,
        "resistor.power",
        power,
        base.power_rating,
        ctx.profile.power * base.power_rating,
        "W",
        keep_below=True,
        message=lambda i, s: f"{_si(power[i], 'W')} in R_b {_si(op.r_series[i], 'Ω')}",
        worked=lambda i: (
            f"P = I_Rb²·R_b = ({_n(op.base_resistor_current[i], 'A')})²·{_n(op.r_series[i], 'Ω')} = "
            f"{_n(power[i], 'W')}"
        ),
    )
