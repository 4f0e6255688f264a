"""evaluate(): one design in, one report out. The only entry point the CLI, the web app, the
tests and the benchmarks call."""

from __future__ import annotations

import numpy as np

from . import ENGINE_VERSION
from .circuit import operating_point
from .clamps import kind_of
from .clamps.diode import DiodePath
from .clamps.diode_zener import DiodeZenerPath
from .clamps.resistor import ResistorPath
from .corners import nominal_corner, worst_corners
from .design import Design, Diode
from .physics import BreakdownModel, DiodeModel
from .profile import DEFAULT_PROFILE, Profile
from .rules import RULES, STATUS_ORDER, Context, Finding
from .transient import turn_off

REPORT_FORMAT = "clampdown-report/1"

# A generic silicon rectifier for the "what if" comparisons when the design has no diode
# (1 V at 1 A, n = 1.8: from memory, typical of a 1 A general-purpose rectifier).
_GENERIC_RECTIFIER = Diode(name="generic rectifier", vrrm=100, if_avg=1, i_peak=30, vf=1.0, vf_at=1.0)


def _alternatives(ctx: Context) -> list[dict]:
    """Release time at the nominal corner with other clamps, for comparison: a plain diode,
    and the largest zener or resistor that still keeps the worst spike at the derated
    V_(BR)CEO (the fastest release the switch allows)."""
    design, nom, to = ctx.design, ctx.nominal, ctx.turnoff_nominal
    diode_part = getattr(design.clamp, "diode", None) or _GENERIC_RECTIFIER
    diode = DiodeModel.from_part(diode_part)
    vcc = nom.vcc
    i0_worst = float(np.max(ctx.turnoff.initial_current))
    v_budget = ctx.profile.voltage * design.switch.vceo - design.supply.high
    out = []
    candidates = [("diode", DiodePath(vcc, diode=diode))]
    v_f = float(diode.voltage(i0_worst))
    vz = v_budget - v_f
    if vz > 1:
        candidates.append(
            (
                f"diode + {vz:.0f} V zener",
                DiodeZenerPath(
                    vcc,
                    diode=diode,
                    breakdown=BreakdownModel(vz, 0.005, 0.0),
                    v_br=np.array([vz]),
                ),
            )
        )
    if v_budget > 0:
        r = v_budget / i0_worst
        candidates.append((f"resistor {r:.0f} Ω", ResistorPath(vcc, r=np.array([r]))))
    for label, path in candidates:
        alt = turn_off(
            path, design.coil.inductance, nom.r_coil, to.initial_current, nom.dropout_current, energies=False
        )
        t = float(alt.time_to_dropout[0])
        out.append(
            {
                "clamp": label,
                "time_to_dropout": t if np.isfinite(t) else None,
                "peak_switch_voltage": float(alt.peak_switch_voltage[0]),
            }
        )
    return out


def build_context(design: Design, profile: Profile = DEFAULT_PROFILE) -> Context:
    profile = profile.with_limits(design.limits)
    corners = worst_corners(design)
    nominal_c = nominal_corner(design)
    op = operating_point(design, corners, steady_state=False)
    nom = operating_point(design, nominal_c, steady_state=True)
    kind = kind_of(design.clamp)
    path = kind.path(design.clamp, design, op.vcc, corners.values)
    nominal_path = kind.path(design.clamp, design, nom.vcc, nominal_c.values)
    inductance = design.coil.inductance
    to = turn_off(path, inductance, op.r_coil, op.coil_current, op.dropout_current)
    to_nom = turn_off(nominal_path, inductance, nom.r_coil, nom.coil_current, nom.dropout_current)
    ctx = Context(design, profile, corners, op, nom, path, nominal_path, to, to_nom)
    ctx.extras["alternatives"] = _alternatives(ctx)
    return ctx


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
