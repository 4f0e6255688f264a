"""The review rules. One rule = one function with its id, title, the formula in its docstring
and the source of any constant. ``RULES`` is the registry the report and the docs both read.

A rule receives the evaluation context (every corner at once, as arrays) and returns a
Finding, or None when it does not apply to this design (e.g. no diode in the clamp).
"""

from __future__ import annotations

import inspect
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Literal

import numpy as np

from .circuit import OperatingPoint
from .corners import Corners
from .design import Design, DividerDrive, LogicDrive, TvsClamp
from .profile import Profile
from .transient import ClampPath, TurnOff
from .units import format_si

Status = Literal["violation", "marginal", "ok", "note"]
STATUS_ORDER: dict[str, int] = {"violation": 3, "marginal": 2, "ok": 1, "note": 0}


@dataclass(frozen=True)
class Finding:
    rule: str
    title: str
    status: Status
    value: float | None
    unit: str
    limit: float | None
    rating: float | None
    corner: dict[str, float]
    message: str
    # "upper": the value must stay at or below the limit (a stress); "lower": at or above it (a
    # margin); None for notes and findings with no limit.
    bound: str | None = None

    def as_dict(self) -> dict:
        def num(x):
            return None if x is None or not np.isfinite(x) else float(x)

        return {
            "rule": self.rule,
            "title": self.title,
            "status": self.status,
            "value": num(self.value),
            "unit": self.unit,
            "limit": num(self.limit),
            "rating": num(self.rating),
            "corner": self.corner,
            "message": self.message,
            "bound": self.bound,
        }


@dataclass
class Context:
    design: Design
    profile: Profile
    corners: Corners
    op: OperatingPoint  # every worst-case corner
    nominal: OperatingPoint
    path: ClampPath  # the clamp at every worst-case corner
    nominal_path: ClampPath
    turnoff: TurnOff  # every worst-case corner
    turnoff_nominal: TurnOff
    extras: dict = field(default_factory=dict)


@dataclass(frozen=True)
class Rule:
    id: str
    title: str
    check: Callable[[Context], Finding | None]

    @property
    def formula(self) -> str:
        return inspect.cleandoc(self.check.__doc__ or "")


RULES: dict[str, Rule] = {}


def rule(rule_id: str, title: str):
    def register(check: Callable[[Context], Finding | None]):
        RULES[rule_id] = Rule(rule_id, title, check)
        return check

    return register


def _at(x: np.ndarray | float, index: int) -> float:
    return float(x[index]) if np.ndim(x) else float(x)


def corner_used(ctx: Context, index: int, *, hot_coil: bool = False) -> dict[str, float]:
    """The corner's parameters as varied (``r_coil`` is the coil's resistance at its reference
    temperature ``r_at``), plus the coil as the rule used it there: ``coil_temp`` (°C) and
    ``r_coil_used`` (Ω), at the corner's ambient, or self-heated for ``hot_coil`` rules."""
    corner = ctx.corners.describe(index)
    if hot_coil:
        temp, resistance = ctx.op.coil_temp_hot, ctx.op.r_coil_hot
    else:
        temp, resistance = ctx.op.ambient, ctx.op.r_coil
    corner["coil_temp"] = float(f"{_at(temp, index):.6g}")
    corner["r_coil_used"] = float(f"{_at(resistance, index):.6g}")
    return corner


def judge(
    ctx: Context,
    rule_id: str,
    value: np.ndarray,
    rating: np.ndarray | float,
    limit: np.ndarray | float,
    unit: str,
    *,
    keep_below: bool,
    message: Callable[[int, Status], str],
    hot_coil: bool = False,
) -> Finding:
    """Pick the worst corner and its status.

    ``keep_below``: the value must stay at or below the limit (a stress); otherwise at or above
    it (a margin). Beyond the absolute rating is a violation, beyond the derated limit marginal.
    The worst corner is the one furthest past the rating if any is, else past the limit.
    ``hot_coil``: the rule uses the self-heated coil (the corner then records that coil).
    """
    n = ctx.corners.size
    value = np.asarray(value, dtype=float)
    if value.shape != (n,):
        value = np.full(n, value)
    with np.errstate(divide="ignore", invalid="ignore"):
        if keep_below:
            over_rating = value / rating
            over_limit = value / limit
            infinite = np.isinf(value)
            if infinite.any():
                over_rating[infinite] = over_limit[infinite] = np.inf
        else:
            over_rating = rating / value
            over_limit = limit / value
            nonpositive = value <= 0
            if nonpositive.any():
                over_rating = np.where(nonpositive, np.inf, over_rating)
                over_limit = np.where(nonpositive, np.inf, over_limit)
    worst_rating = int(np.argmax(over_rating))
    if over_rating[worst_rating] > 1:
        worst, status = worst_rating, "violation"
    else:
        worst = int(np.argmax(over_limit))
        status = "marginal" if over_limit[worst] > 1 else "ok"
    return Finding(
        rule=rule_id,
        title=RULES[rule_id].title,
        status=status,
        value=float(value[worst]),
        unit=unit,
        limit=_at(limit, worst),
        rating=_at(rating, worst),
        corner=corner_used(ctx, worst, hot_coil=hot_coil),
        message=message(worst, status),
        bound="upper" if keep_below else "lower",
    )


def note(
    ctx: Context, rule_id: str, value: float | None, unit: str, message: str, index: int | None = None
) -> Finding:
    corner = corner_used(ctx, index) if index is not None else {}
    return Finding(rule_id, RULES[rule_id].title, "note", value, unit, None, None, corner, message)


def _si(x: float, unit: str) -> str:
    return format_si(float(x), unit)


# ---------------------------------------------------------------- drive


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


# ---------------------------------------------------------------- coil


@rule("coil.pickup", "Coil pick-up when hot")
def pickup(ctx: Context) -> Finding:
    """Coil voltage on = V_cc − V_CE(sat) (or h_FE(min)·I_B·R_coil when not saturated) against the
    must-operate voltage at the hot coil, V_pu(T) = V_pu(T_ref)·R(T)/R(T_ref) with
    R(T) = R(20 °C)·(1 + α(T − 20)), α = 0.00393 /K (copper, IEC 60028). The coil temperature is
    the ambient plus self-heating at the highest supply when the coil's R_th is given.
    Limit: must-operate × (1 + pick-up margin)."""
    op = ctx.op
    rating = op.must_operate_hot
    return judge(
        ctx,
        "coil.pickup",
        op.coil_voltage_hot,
        rating,
        rating * (1 + ctx.profile.pickup_margin),
        "V",
        keep_below=False,
        message=lambda i, s: (
            f"{_si(op.coil_voltage_hot[i], 'V')} on the coil at {op.coil_temp_hot[i]:.0f} °C, must-operate {_si(rating[i], 'V')} there"
        ),
        hot_coil=True,
    )


@rule("coil.overvoltage", "Coil over-voltage")
def overvoltage(ctx: Context) -> Finding:
    """Coil voltage V_cc,max − V_CE(sat) against the coil's maximum continuous voltage. The
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
        for a in alternatives
        if a["time_to_dropout"] is not None
    )
    suffix = f" (nominal {_si(nominal, 's')}" + (f"; alternatives at nominal: {alt})" if alt else ")")
    if ctx.path.kind == "none":
        suffix = " — unclamped: an upper bound, with the node held at V_(BR)CEO" + suffix
    if limit is None:
        worst = int(np.argmax(t))
        return note(
            ctx, "coil.release", float(t[worst]), "s", f"slowest release {_si(t[worst], 's')}{suffix}", worst
        )
    return judge(
        ctx,
        "coil.release",
        t,
        limit,
        limit,
        "s",
        keep_below=True,
        message=lambda i, s: f"{_si(t[i], 's')} to drop-out, required ≤ {_si(limit, 's')}{suffix}",
    )


# ---------------------------------------------------------------- switch


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
    V_cc + I_0·R_p; TVS to ground V_TVS(I_0). V_F(i) = n·V_T·ln(1 + i/I_S) + i·R_S (Shockley).
    Against V_(BR)CEO, derated by the profile's voltage fraction. Unclamped, the node rises to
    avalanche: a violation for a BJT."""
    sw, to = ctx.design.switch, ctx.turnoff
    if ctx.path.kind == "none":
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


# ---------------------------------------------------------------- clamp


def _diode(ctx: Context):
    return getattr(ctx.design.clamp, "diode", None)


@rule("clamp.reverse_voltage", "Clamp reverse voltage")
def clamp_reverse(ctx: Context) -> Finding | None:
    """Diode across the coil: reverse voltage when on ≈ V_cc,max − V_CE(sat) against V_RRM.
    TVS from the switch to ground: it sees V_cc,max when the switch is off, against its minimum
    breakdown V_BR. Both derated by the profile's voltage fraction."""
    clamp, op = ctx.design.clamp, ctx.op
    if isinstance(clamp, TvsClamp):
        v = op.vcc
        rating = clamp.tvs.v_breakdown
        return judge(
            ctx,
            "clamp.reverse_voltage",
            v,
            rating,
            ctx.profile.voltage * rating,
            "V",
            keep_below=True,
            message=lambda i, s: f"TVS stands off {_si(v[i], 'V')}, breakdown {_si(rating, 'V')} min",
        )
    diode = _diode(ctx)
    if diode is None:
        return None
    v = op.vcc - ctx.design.switch.vce_sat
    return judge(
        ctx,
        "clamp.reverse_voltage",
        v,
        diode.vrrm,
        ctx.profile.voltage * diode.vrrm,
        "V",
        keep_below=True,
        message=lambda i, s: f"{_si(v[i], 'V')} reverse on a {_si(diode.vrrm, 'V')} diode",
    )


@rule("clamp.peak_current", "Clamp peak current")
def clamp_peak(ctx: Context) -> Finding | None:
    """Peak forward current through the clamp = I_0 (the coil current at turn-off) against the
    diode's repetitive peak rating, or the TVS's peak pulse current; derated by the profile's
    current fraction."""
    i0 = ctx.turnoff.initial_current
    clamp = ctx.design.clamp
    if isinstance(clamp, TvsClamp):
        rating = clamp.tvs.i_clamp
    elif _diode(ctx) is not None:
        rating = _diode(ctx).i_peak
    else:
        return None
    return judge(
        ctx,
        "clamp.peak_current",
        i0,
        rating,
        ctx.profile.current * rating,
        "A",
        keep_below=True,
        message=lambda i, s: f"{_si(i0[i], 'A')} at turn-off, rated {_si(rating, 'A')} peak",
    )


@rule("clamp.average_current", "Clamp average current")
def clamp_average(ctx: Context) -> Finding | None:
    """Average diode current = Q·f, Q = ∫ i dt per turn-off = ∫ L·i/(R·i + v_c(i)) di,
    f = switchings per hour / 3600; against I_F(AV), derated by the current fraction.
    Needs switching.per_hour."""
    diode, per_hour = _diode(ctx), ctx.design.switching.per_hour
    if diode is None or per_hour is None:
        return None
    avg = ctx.turnoff.charge * per_hour / 3600.0
    return judge(
        ctx,
        "clamp.average_current",
        avg,
        diode.if_avg,
        ctx.profile.current * diode.if_avg,
        "A",
        keep_below=True,
        message=lambda i, s: f"{_si(avg[i], 'A')} average at {per_hour:g}/h",
    )


@rule("clamp.energy", "Turn-off energy")
def clamp_energy(ctx: Context) -> Finding:
    """Energy stored in the coil at turn-off, E = ½·L·I_0². The clamp device takes
    ∫ v_device(i)·i dt of it; the rest heats the coil's own resistance. With a zener and
    switching.per_hour the zener's average power E_z·f is judged against its P_max (derated by
    the power fraction); with a TVS, the peak pulse power V_TVS(I_0)·I_0 against its P_PP."""
    to, clamp = ctx.turnoff, ctx.design.clamp
    worst = int(np.argmax(to.energy))
    share = to.clamp_energy[worst] / to.energy[worst] if to.energy[worst] > 0 else 0.0
    text = f"{_si(to.energy[worst], 'J')} per turn-off, {share:.0%} of it into the clamp"
    per_hour = ctx.design.switching.per_hour
    if isinstance(clamp, TvsClamp):
        pulse = to.peak_switch_voltage * to.initial_current
        rating = clamp.tvs.p_max
        return judge(
            ctx,
            "clamp.energy",
            pulse,
            rating,
            ctx.profile.power * rating,
            "W",
            keep_below=True,
            message=lambda i, s: (
                f"peak pulse {_si(pulse[i], 'W')} into the TVS, rated {_si(rating, 'W')} (a 10/1000 µs rating; a longer decay allows less); {text}"
            ),
        )
    if getattr(clamp, "zener", None) is not None and per_hour is not None:
        # The zener's share: its voltage times the charge (plus its rz loss, counted with it).
        zener_energy = to.clamp_energy - to.diode_energy
        power = zener_energy * per_hour / 3600.0
        rating = clamp.zener.p_max
        return judge(
            ctx,
            "clamp.energy",
            power,
            rating,
            ctx.profile.power * rating,
            "W",
            keep_below=True,
            message=lambda i, s: f"zener averages {_si(power[i], 'W')} at {per_hour:g}/h; {text}",
        )
    return note(ctx, "clamp.energy", float(to.energy[worst]), "J", text, worst)


# ---------------------------------------------------------------- resistors


@rule("resistor.power", "Base resistor power")
def resistor_power(ctx: Context) -> Finding:
    """P_Rb = I_Rb²·R_b with the current through R_b itself (the drop across R_b alone, not the
    source's own resistance), against its rating derated by the profile's power fraction."""
    op, base = ctx.op, ctx.design.base
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
    )
