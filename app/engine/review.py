"""evaluate(): one design in, one report out. The only entry point the CLI, the web app, the
tests and the benchmarks call."""

from __future__ import annotations

import numpy as np

from . import ENGINE_VERSION
from .circuit import operating_point
from .clamps import DiodeClamp, DiodeZenerClamp, ResistorClamp, kind_of
from .corners import nominal_corner, worst_corners
from .design import Design, Diode, Zener
from .physics import THERMAL_VOLTAGE, DiodeModel
from .profile import DEFAULT_PROFILE, Profile
from .rules import RULES, STATUS_ORDER, Context, Finding
from .transient import turn_off
from .units import format_si

REPORT_FORMAT = "clampdown-report/1"

# A generic silicon rectifier for the "what if" comparisons when the design has no diode
# (1 V at 1 A, n = 1.8: from memory, typical of a 1 A general-purpose rectifier).
_GENERIC_RECTIFIER = Diode(name="generic rectifier", vrrm=100, if_avg=1, i_peak=30, vf=1.0, vf_at=1.0)
# IEC 60063 E24 series (the 5 % series; zener voltages are usually drawn from it).
E24 = (
    1.0,
    1.1,
    1.2,
    1.3,
    1.5,
    1.6,
    1.8,
    2.0,
    2.2,
    2.4,
    2.7,
    3.0,
    3.3,
    3.6,
    3.9,
    4.3,
    4.7,
    5.1,
    5.6,
    6.2,
    6.8,
    7.5,
    8.2,
    9.1,
)
E24_TOLERANCE = 5  # percent
# The suggested zener: 1 W with a dynamic resistance of 20 Ω at its test current of 5 mA (from
# memory, of the order of a 1 W zener's); the suggested resistor: the smallest of the usual
# power sizes (common practice) that keeps its continuous V²/R within the derated rating.
_ZENER_WATTS, _ZENER_RZ = 1.0, 20.0
_RESISTOR_WATTS = (0.125, 0.25, 0.5, 1.0, 2.0, 3.0, 5.0, 10.0)


def e24_at_most(x: float) -> float | None:
    """The largest E24 value (IEC 60063) not above x, or None below 1."""
    if x < 1.0:
        return None
    decade = 10 ** np.floor(np.log10(x))
    values = [v * decade for v in E24] + [10 * decade]
    return float(f"{max(v for v in values if v <= x * (1 + 1e-12)):.3g}")


def _e24_below(x: float) -> float | None:
    """The E24 value just below x (neighbouring E24 values are at least 7 % apart)."""
    return e24_at_most(x * 0.99)


def _passes(design: Design, profile: Profile) -> tuple[bool, Context]:
    """Whether a design passes the spike and every clamp rule at its worst corner."""
    # The charge and energy integrals only matter to a rule with a switching rate to apply.
    energies = design.switching.per_hour is not None
    ctx = build_context(design, profile, alternatives=False, energies=energies)
    return _passes_ctx(ctx), ctx


def _passes_ctx(ctx: Context) -> bool:
    for registered in RULES.values():
        if registered.id == "switch.breakdown" or registered.id.startswith("clamp."):
            finding = registered.check(ctx)
            if finding is not None and finding.status in ("violation", "marginal"):
                return False
    return True


def _alternatives(ctx: Context, profile: Profile) -> list[dict]:
    """Other clamps, for comparison: a plain diode, and the largest E24 zener (5 %) and E24
    resistor (5 %) that keep the worst spike within the derated V_(BR)CEO (the fastest release
    the switch allows). A suggestion is listed only when it passes the spike and every clamp
    rule at the worst corner; its release time is given at the nominal and the slowest corner."""
    design = ctx.design
    diode_part = kind_of(design.clamp).diode(design.clamp) or _GENERIC_RECTIFIER
    diode = DiodeModel.from_part(diode_part)
    i0_worst = float(np.max(ctx.turnoff.initial_current))
    limit = ctx.profile.voltage * design.switch.vceo
    v_budget = limit - design.supply.high
    tries: list[tuple[str, list]] = [("diode", [("diode", DiodeClamp(kind="diode", diode=diode_part))])]
    # Zener: V_Z(1 + tol) + V_T·ln(I_0/I_ZT) + (I_0 − I_ZT)·r_Z + V_F(I_0) within the budget.
    v_f = float(diode.voltage(i0_worst))
    room = (
        v_budget
        - v_f
        - THERMAL_VOLTAGE * np.log(max(i0_worst, 0.005) / 0.005)
        - (i0_worst - 0.005) * _ZENER_RZ
    )
    zeners = []
    vz = e24_at_most(room / (1 + E24_TOLERANCE / 100)) if room > 1 else None
    while vz is not None and len(zeners) < 3:
        zener = Zener(vz=vz, tolerance=E24_TOLERANCE, rz=_ZENER_RZ, p_max=_ZENER_WATTS)
        zeners.append(
            (
                f"diode + {vz:g} V zener (E24, ±{E24_TOLERANCE} %, {_ZENER_WATTS:g} W)",
                DiodeZenerClamp(kind="diode_zener", diode=diode_part, zener=zener),
            )
        )
        vz = _e24_below(vz)
    if zeners:
        tries.append(("zener", zeners))
    resistors = []
    r = e24_at_most(v_budget / (i0_worst * (1 + E24_TOLERANCE / 100))) if v_budget > 0 else None
    while r is not None and len(resistors) < 3:
        p_on = design.supply.high**2 / (r * (1 - E24_TOLERANCE / 100))
        watts = next((w for w in _RESISTOR_WATTS if p_on <= ctx.profile.power * w), None)
        if watts is None:
            break
        resistors.append(
            (
                f"resistor {format_si(r, 'Ω')} (E24, ±{E24_TOLERANCE} %, {watts:g} W)",
                ResistorClamp(kind="resistor", r=r, tolerance=E24_TOLERANCE, power_rating=watts),
            )
        )
        r = _e24_below(r)
    if resistors:
        tries.append(("resistor", resistors))
    out = []
    for _, options in tries:
        for option in options:
            label, clamp = option
            if clamp == design.clamp:  # the design's own clamp: already evaluated
                ok, alt = _passes_ctx(ctx), ctx
            else:
                ok, alt = _passes(design.model_copy(update={"clamp": clamp}), profile)
            if not ok:
                continue
            # The clamp itself, for the turn-off picture's overlays (not part of the report).
            ctx.extras.setdefault("alternative_clamps", []).append((label, clamp))
            t_nom = float(alt.turnoff_nominal.time_to_dropout[0])
            t_worst = float(np.max(alt.turnoff.time_to_dropout))
            out.append(
                {
                    "clamp": label,
                    "time_to_dropout": t_nom if np.isfinite(t_nom) else None,
                    "time_to_dropout_worst": t_worst if np.isfinite(t_worst) else None,
                    "peak_switch_voltage": float(alt.turnoff_nominal.peak_switch_voltage[0]),
                    "peak_switch_voltage_worst": float(np.max(alt.turnoff.peak_switch_voltage)),
                }
            )
            break
    return out


def build_context(
    design: Design, profile: Profile = DEFAULT_PROFILE, *, alternatives: bool = True, energies: bool = True
) -> Context:
    given = profile
    profile = profile.with_limits(design.limits)
    corners = worst_corners(design)
    nominal_c = nominal_corner(design)
    op = operating_point(design, corners, steady_state=False, assumed_coil_rise=profile.coil_rise)
    nom = operating_point(design, nominal_c, steady_state=True, assumed_coil_rise=profile.coil_rise)
    kind = kind_of(design.clamp)
    path = kind.path(design.clamp, design, op.vcc, corners.values)
    nominal_path = kind.path(design.clamp, design, nom.vcc, nominal_c.values)
    inductance = design.coil.inductance
    to = turn_off(path, inductance, op.r_coil, op.coil_current, op.dropout_current, energies=energies)
    to_nom = turn_off(nominal_path, inductance, nom.r_coil, nom.coil_current, nom.dropout_current)
    ctx = Context(design, profile, corners, op, nom, path, nominal_path, to, to_nom)
    ctx.extras["alternatives"] = _alternatives(ctx, given) if alternatives else []
    return ctx


def mains_caution(design: Design) -> str | None:
    """The caution a load above extra-low voltage carries (IEC 60449 band I: 50 V AC, 120 V
    ripple-free DC), or None."""
    load = design.load
    if load is None or not load.above_elv:
        return None
    return (
        f"Mains-voltage load: {load.voltage:g} V {load.supply.upper()} is above extra-low voltage "
        "(IEC 60449 band I: 50 V AC, 120 V ripple-free DC). This review checks the contact ratings "
        "only; isolation, creepage, clearance, protection and wiring must follow the applicable "
        "local codes and licensed practice."
    )


def _num(x) -> float | None:
    x = float(np.asarray(x).reshape(-1)[0])
    return x if np.isfinite(x) else None


def evaluate(design: Design, profile: Profile = DEFAULT_PROFILE) -> dict:
    """Evaluate every rule at its worst corner; return the report (format clampdown-report/1)."""
    ctx = build_context(design, profile)
    findings: list[Finding] = []
    for registered in RULES.values():
        finding = registered.check(ctx)
        if finding is not None:
            findings.append(finding)
    verdict = max((f.status for f in findings), key=STATUS_ORDER.__getitem__, default="ok")
    if verdict == "note":
        verdict = "ok"
    nom, to = ctx.nominal, ctx.turnoff_nominal
    return {
        "format": REPORT_FORMAT,
        "engine_version": ENGINE_VERSION,
        "design": design.name,
        "verdict": verdict,
        "mains_caution": mains_caution(design),
        "profile": ctx.profile.as_dict(),
        "corners": ctx.corners.size,
        "findings": [f.as_dict() for f in findings],
        "nominal": {
            "supply": _num(nom.vcc),
            "ambient": _num(nom.ambient),
            "coil_resistance": _num(nom.r_coil),
            "collector_current": _num(nom.collector_current),
            "base_current": _num(nom.base_current),
            "overdrive": _num(nom.overdrive),
            "forced_beta": _num(nom.collector_current / nom.base_current)
            if nom.base_current[0] > 0
            else None,
            "coil_voltage": _num(nom.coil_voltage),
            "dissipation": _num(nom.dissipation),
            "junction_temp": _num(nom.junction_temp),
        },
        "transient": {
            "clamp": design.clamp.kind,
            "initial_current": _num(to.initial_current),
            "peak_switch_voltage": _num(to.peak_switch_voltage),
            "time_to_dropout": _num(to.time_to_dropout),
            "dropout_current": float(nom.dropout_current),
            "energy": _num(to.energy),
            "clamp_energy": _num(to.clamp_energy),
            "alternatives": ctx.extras["alternatives"],
        },
    }
