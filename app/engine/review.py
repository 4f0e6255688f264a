"""evaluate(): one design in, one report out. The only entry point the CLI, the web app, the
tests and the benchmarks call."""

from __future__ import annotations

import dataclasses
from collections.abc import Iterable, Iterator

import numpy as np

from . import ENGINE_VERSION
from .circuit import OperatingPoint, operating_point
from .clamps import ClampKind, DiodeClamp, DiodeZenerClamp, ResistorClamp, kind_of
from .corners import Corners, corners_at_rows, inductance_at, nominal_corner, worst_corners
from .design import QUANTITY_RANGES, Design, Diode, Model, Zener
from .physics import THERMAL_VOLTAGE, DiodeModel
from .profile import DEFAULT_PROFILE, Profile
from .rules import RULES, STATUS_ORDER, Context, Finding
from .transient import TurnOff, turn_off
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


def _clamp_rules() -> list:
    """The rules an alternative clamp must pass: the spike and every clamp rule."""
    return [r for r in RULES.values() if r.id == "switch.breakdown" or r.id.startswith("clamp.")]


def _passes_ctx(ctx: Context, rules: list | None = None) -> bool:
    """Whether every rule passes (ok or a note); stops at the first that does not. The rules are
    judged for their status only (``verdict_only``): no text is written that nobody reads."""
    ctx = dataclasses.replace(ctx, extras={}, verdict_only=True)
    for registered in rules if rules is not None else _clamp_rules():
        if not registered.applies_to(ctx.design):
            continue
        finding = registered.check(ctx)
        if finding is not None and finding.status in ("violation", "marginal"):
            return False
    return True


def _no_parallel_resistance(kind: ClampKind) -> bool:
    return type(kind).parallel_resistance is ClampKind.parallel_resistance


def _shared_operating_point(ctx: Context, corners: Corners) -> tuple[OperatingPoint, OperatingPoint] | None:
    """The design's operating points (worst corners and nominal) for an alternative clamp's
    corners taken from the design's own (corners_at_rows: every value outside the clamp is the
    design's at those corners, and the operating point depends on nothing else but for a
    resistance across the coil, which neither clamp has); None for corners made otherwise."""
    if corners.origin is None or corners.origin[0] is not ctx.corners:
        return None
    return _op_rows(ctx.op, ctx.corners.size, corners.origin[1]), ctx.nominal


def _op_rows(op: OperatingPoint, size: int, index: np.ndarray) -> OperatingPoint:
    """The operating point at some of its corners (``index``, rows may repeat): every per-corner
    array taken at those rows, everything else (scalars, text) as it is."""

    def rows(x):
        if isinstance(x, np.ndarray) and x.ndim >= 1 and x.shape[0] == size:
            return x[index]
        if isinstance(x, dict):
            return {k: rows(v) for k, v in x.items()}
        return x

    return OperatingPoint(**{f.name: rows(getattr(op, f.name)) for f in dataclasses.fields(OperatingPoint)})


def _zener_options(diode_part: Diode, vz: float) -> Iterator[tuple[str, Model]]:
    """The diode + zener candidates: E24 zener voltages from ``vz`` down, three at most."""
    for _ in range(3):
        zener = Zener(vz=vz, tolerance=E24_TOLERANCE, rz=_ZENER_RZ, p_max=_ZENER_WATTS)
        yield (
            f"diode + {vz:g} V zener (E24, ±{E24_TOLERANCE} %, {_ZENER_WATTS:g} W)",
            DiodeZenerClamp(kind="diode_zener", diode=diode_part, zener=zener),
        )
        vz = _e24_below(vz)
        if vz is None:
            return


def _resistor_options(v_high: float, power_fraction: float, r: float) -> Iterator[tuple[str, Model]]:
    """The resistor candidates: E24 values from ``r`` down, three at most, each of the smallest
    power size that holds V_cc,max²/R_min within the derated rating (none once no size does)."""
    for _ in range(3):
        p_on = v_high**2 / (r * (1 - E24_TOLERANCE / 100))
        watts = next((w for w in _RESISTOR_WATTS if p_on <= power_fraction * w), None)
        if watts is None:
            return
        yield (
            f"resistor {format_si(r, 'Ω')} (E24, ±{E24_TOLERANCE} %, {watts:g} W)",
            ResistorClamp(kind="resistor", r=r, tolerance=E24_TOLERANCE, power_rating=watts),
        )
        r = _e24_below(r)
        if r is None:
            return


def _alternatives(ctx: Context) -> list[dict]:
    """Other clamps, for comparison: a plain diode, and the largest E24 zener (5 %) and E24
    resistor (5 %) that keep the worst spike within the derated V_(BR)CEO (the fastest release
    the switch allows). A suggestion is listed only when it passes the spike and every clamp
    rule at the worst corner; its release time is given at the nominal and the slowest corner.

    Those rules and figures depend on a corner only through the supply, the coil's resistance and
    current when on (its turn-off inputs) and the clamp's own factors, so an alternative is
    evaluated at the design's corners with distinct turn-off inputs, each combined with every
    extreme of the alternative's own factors: the same values as at all its corners, fewer times
    (its worst values, and so its statuses, are the same)."""
    design = ctx.design
    diode_part = kind_of(design.clamp).diode(design.clamp) or _GENERIC_RECTIFIER
    diode = DiodeModel.from_part(diode_part)
    i0_worst = float(np.max(ctx.turnoff.initial_current))
    limit = ctx.profile.voltage * ctx.switch.breakdown(design.switch)
    v_budget = limit - design.supply.high
    # Each kind's candidates, best first, each made only when the one before it failed (the first
    # usually passes).
    tries: list[Iterator[tuple[str, Model]]] = [iter([("diode", DiodeClamp(kind="diode", diode=diode_part))])]
    # Zener: V_Z(1 + tol) + V_T·ln(I_0/I_ZT) + (I_0 − I_ZT)·r_Z + V_F(I_0) within the budget.
    v_f = float(diode.voltage(i0_worst))
    room = (
        v_budget
        - v_f
        - THERMAL_VOLTAGE * np.log(max(i0_worst, 0.005) / 0.005)
        - (i0_worst - 0.005) * _ZENER_RZ
    )
    vz = e24_at_most(room / (1 + E24_TOLERANCE / 100)) if room > 1 else None
    if vz is not None:
        tries.append(_zener_options(diode_part, vz))
    # No larger than a design file may give (QUANTITY_RANGES: 1 GΩ), so a tiny coil current
    # cannot suggest a resistor the design's own model would refuse.
    r_most = (
        min(v_budget / (i0_worst * (1 + E24_TOLERANCE / 100)), QUANTITY_RANGES["Ω"][1]) if v_budget > 0 else 0
    )
    r = e24_at_most(r_most) if r_most > 0 else None
    if r is not None:
        tries.append(_resistor_options(design.supply.high, ctx.profile.power, r))
    # The design's corners with distinct turn-off inputs outside the clamp.
    rows, _ = distinct_rows(_circuit_turn_off_inputs(ctx.op, ctx.corners))
    energies = design.switching.per_hour is not None  # only a rule with a rate uses them
    rules = _clamp_rules()
    # The operating point depends on the clamp only through a resistance it puts across the coil
    # (circuit.coil_state): an alternative without one, beside a design clamp without one, has the
    # design's operating point at the same corners, so it is taken from there, not computed again.
    plain = _no_parallel_resistance(kind_of(design.clamp))
    out = []
    for options in tries:
        for label, clamp in options:
            if clamp == design.clamp:  # the design's own clamp: already evaluated
                alt = ctx
            else:
                other = design.model_copy(update={"clamp": clamp})
                corners = corners_at_rows(other, ctx.corners, rows)
                shared = None
                if plain and _no_parallel_resistance(kind_of(clamp)):
                    shared = _shared_operating_point(ctx, corners)
                # Of the nominal turn-off only the release time and the spike are read here.
                alt = context_at(
                    other,
                    ctx.profile,
                    corners,
                    energies=energies,
                    distinct=True,
                    shared=shared,
                    nominal_energies=False,
                )
            ok = _passes_ctx(alt, rules)
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


def distinct_rows(columns: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """(first, inverse): the index of the first row of each distinct row of the columns, and
    for every row the number of its distinct row, so ``x[first][inverse]`` is ``x`` for any
    per-row x computed from those columns alone. Rows are compared by their bytes: rows that
    differ only by the sign of a zero or a NaN's payload are kept apart, never merged."""
    table = np.ascontiguousarray(np.column_stack(columns), dtype=float)
    keys = table.view(np.dtype((np.void, table.dtype.itemsize * table.shape[1]))).ravel()
    _, first, inverse = np.unique(keys, return_index=True, return_inverse=True)
    return first, inverse.reshape(-1)


def _circuit_turn_off_inputs(op, corners: Corners) -> list[np.ndarray]:
    """What a corner's turn-off depends on outside the clamp: the supply, the coil's resistance
    and current when on, and the inductance where the corners vary it."""
    inputs = [op.vcc, op.r_coil, op.coil_current]
    if "inductance" in corners.values:
        inputs.append(corners["inductance"])
    return inputs


def turn_offs(
    design: Design,
    corners: Corners,
    op,
    nominal_c: Corners,
    nom,
    *,
    energies: bool = True,
    distinct: bool = False,
    nominal_energies: bool = True,
) -> tuple[TurnOff, TurnOff]:
    """The turn-off at every worst-case corner and at the nominal corner, in one computation.

    The turn-off of a corner depends only on the supply, the coil's resistance and current when
    on, and the clamp's own corner factors (the drive's factors do not reach it), so most corners
    share their turn-off with others (1 in 16 is distinct with a logic drive and a pull-down).
    Each distinct corner is computed once, from the very same inputs, with the nominal corner as
    one more row, and copied to the corners that share it: every figure is the one a
    corner-by-corner computation gives, bit for bit (each row is computed on its own).
    ``energies=False`` leaves the worst corners' charge and energies NaN (the nominal corner's
    are computed unless ``nominal_energies=False`` too). ``distinct``: the corners are known to
    differ in their turn-off inputs (``corners_at_rows``), so none is looked for."""
    kind = kind_of(design.clamp)
    names = [f[0] for f in kind.factors(design.clamp)]
    if distinct:
        first = inverse = np.arange(corners.size)
    else:
        first, inverse = distinct_rows([*_circuit_turn_off_inputs(op, corners), *(corners[n] for n in names)])
    rows = first.size

    def both(worst: np.ndarray, nominal: np.ndarray) -> np.ndarray:
        return np.concatenate((worst[first], nominal))

    if not energies and nominal_energies:  # the nominal corner needs them: compute it apart
        worst = _turn_off_at(
            design, kind, op.vcc[first], {n: corners[n][first] for n in names}, op, first, False, corners
        )
        nominal = _turn_off_at(
            design, kind, nom.vcc, {n: nominal_c[n] for n in names}, nom, None, True, nominal_c
        )
        return _take(worst, inverse), nominal
    path = kind.path(
        design.clamp, design, both(op.vcc, nom.vcc), {n: both(corners[n], nominal_c[n]) for n in names}
    )
    inductance = inductance_at(design, corners)
    if isinstance(inductance, np.ndarray):
        inductance = both(inductance, inductance_at(design, nominal_c))
    to = turn_off(
        path,
        inductance,
        both(op.r_coil, nom.r_coil),
        both(op.coil_current, nom.coil_current),
        op.dropout_current,
        energies=energies,
    )
    # Distinct corners are the first rows as they are (a slice, no copy by index).
    return _take(to, slice(0, rows) if distinct else inverse), _take(to, np.array([rows]))


def _turn_off_at(design, kind, vcc, values, op, rows, energies, corners) -> TurnOff:
    path = kind.path(design.clamp, design, vcc, values)
    r_coil = op.r_coil if rows is None else op.r_coil[rows]
    current = op.coil_current if rows is None else op.coil_current[rows]
    inductance = inductance_at(design, corners)
    if isinstance(inductance, np.ndarray) and rows is not None:
        inductance = inductance[rows]
    return turn_off(path, inductance, r_coil, current, op.dropout_current, energies=energies)


def _take(turnoff: TurnOff, rows: np.ndarray) -> TurnOff:
    """Some rows of a turn-off, in the order given (rows may repeat)."""
    return TurnOff(
        **{
            f.name: None if (x := getattr(turnoff, f.name)) is None else x[rows]
            for f in dataclasses.fields(TurnOff)
        }
    )


def context_at(
    design: Design,
    profile: Profile,
    corners: Corners,
    *,
    energies: bool = True,
    distinct: bool = False,
    shared: tuple[OperatingPoint, OperatingPoint] | None = None,
    nominal_energies: bool = True,
) -> Context:
    """The evaluation context over a given set of corners (``profile`` already holds the design's
    limits); no alternatives. ``distinct``, ``energies``, ``nominal_energies``: see turn_offs.
    ``shared``: the operating points at these corners and at the nominal corner, already known
    (an alternative clamp's)."""
    nominal_c = nominal_corner(design)
    if shared is not None:
        op, nom = shared
    else:
        op = operating_point(design, corners, steady_state=False, assumed_coil_rise=profile.coil_rise)
        nom = operating_point(design, nominal_c, steady_state=True, assumed_coil_rise=profile.coil_rise)
    kind = kind_of(design.clamp)
    path = kind.path(design.clamp, design, op.vcc, corners.values)
    nominal_path = kind.path(design.clamp, design, nom.vcc, nominal_c.values)
    to, to_nom = turn_offs(
        design,
        corners,
        op,
        nominal_c,
        nom,
        energies=energies,
        distinct=distinct,
        nominal_energies=nominal_energies,
    )
    return Context(design, profile, corners, op, nom, path, nominal_path, to, to_nom)


def build_context(
    design: Design, profile: Profile = DEFAULT_PROFILE, *, alternatives: bool = True, energies: bool = True
) -> Context:
    ctx = context_at(design, profile.with_limits(design.limits), worst_corners(design), energies=energies)
    ctx.extras["alternatives"] = _alternatives(ctx) if alternatives else []
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


def evaluate(
    design: Design,
    profile: Profile = DEFAULT_PROFILE,
    *,
    windows: bool = False,
    tighten: bool = False,
    samples: int | None = None,
    seed: int = 1,
) -> dict:
    """Evaluate every rule at its worst corner; return the report (format clampdown-report/1).

    Asked for, because each evaluates the design many times: ``windows`` adds ``windows``, the
    design window of every value the designer chose (app/engine/window.py); ``tighten`` adds
    ``tighten``, which tolerance moves each rule's margin (app/engine/tighten.py); ``samples``
    adds ``yield``, the Monte Carlo yield of that many draws with ``seed`` (app/engine/montecarlo.py)."""
    ctx = build_context(design, profile)
    findings: list[Finding] = []
    for registered in RULES.values():
        if not registered.applies_to(design):
            continue
        finding = registered.check(ctx)
        if finding is not None:
            findings.append(finding)
    verdict = max((f.status for f in findings), key=STATUS_ORDER.__getitem__, default="ok")
    if verdict == "note":
        verdict = "ok"
    nom, to = ctx.nominal, ctx.turnoff_nominal
    report = {
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
    if windows:
        from .window import design_windows

        report["windows"] = design_windows(design, profile)
    if tighten:
        from .tighten import what_to_tighten

        report["tighten"] = what_to_tighten(design, profile, report)
    if samples is not None:
        from .montecarlo import monte_carlo

        report["yield"] = monte_carlo(design, profile, samples, seed)
    return report


def evaluate_many(designs: Iterable[Design], profile: Profile = DEFAULT_PROFILE) -> list[dict]:
    """Evaluate many designs with one profile in one call: their reports, in order.

    For a batch in one process (a CI job, a script): the engine's import and set-up are paid
    once, not once per design. Each report is exactly what ``evaluate(design, profile)`` gives;
    the designs are evaluated one after another (each already evaluates all its corners at once).
    """
    return [evaluate(design, profile) for design in designs]
