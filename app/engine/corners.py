"""Worst-case corners: every combination of the extremes of each varying parameter.

With k parameters that vary there are 2**k corners; each parameter becomes one numpy array
of length 2**k, so every rule is evaluated over all corners at once. The nominal corner is a
separate set of arrays of length 1.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from .clamps import kind_of
from .design import Design, DividerDrive
from .switches import switch_kind


@dataclass(frozen=True)
class Factor:
    """One parameter that varies between two extremes; ``unit`` for describing a corner."""

    name: str
    low: float
    high: float
    unit: str


@dataclass(frozen=True)
class Corners:
    factors: tuple[Factor, ...]
    values: dict[str, np.ndarray]
    size: int
    # (base, index): every value outside the clamp is base's at corners ``index`` (corners_at_rows).
    origin: tuple[Corners, np.ndarray] | None = field(default=None, compare=False, repr=False)

    def describe(self, index: int) -> dict[str, float]:
        """The parameter values of one corner, for a finding's ``corner``."""
        return {name: float(array[index]) for name, array in self.values.items()}

    def __getitem__(self, name: str) -> np.ndarray:
        return self.values[name]

    def figure(self, name: str, default):
        """A part's figure at every corner where these corners vary it (the Monte Carlo yield's
        draws, ``sampled_figures``), else the design's single number ``default``."""
        return self.values.get(name, default)


def _round(x: float) -> float:
    """12 significant digits, so a corner reads 26.4 V, not 26.400000000000002 V."""
    return float(f"{x:.12g}")


def _spread(nominal: float, tolerance: float) -> tuple[float, float]:
    return _round(nominal * (1 - tolerance)), _round(nominal * (1 + tolerance))


def factors(design: Design) -> list[Factor]:
    """The parameters of this design that vary, with their low and high extremes."""
    return circuit_factors(design) + clamp_factors(design)


def clamp_factors(design: Design) -> list[Factor]:
    """The clamp's own parameters that vary."""
    return [Factor(*f) for f in kind_of(design.clamp).factors(design.clamp)]


def circuit_factors(design: Design) -> list[Factor]:
    """Every varying parameter but the clamp's: supply, ambient, coil, base resistors, drive."""
    out = [
        Factor("supply", _round(design.supply.low), _round(design.supply.high), "V"),
        Factor("ambient", design.ambient.min, design.ambient.max, "°C"),
        Factor("r_coil", *_spread(design.coil.r_coil, design.coil.tolerance), "Ω"),
    ]
    if design.coil.inductance_tolerance > 0:  # absent, the inductance is one number, as given
        out.append(
            Factor("inductance", *_spread(design.coil.inductance, design.coil.inductance_tolerance), "H")
        )
    resistors = design.drive_resistors
    if resistors is not None:
        out.append(Factor("r_series", *_spread(resistors.r_series, resistors.tolerance), "Ω"))
        if resistors.r_pulldown is not None:
            out.append(Factor("r_pulldown", *_spread(resistors.r_pulldown, resistors.tolerance), "Ω"))
    else:  # no resistor of its own at the input (a Darlington array's is built in)
        out.append(Factor("r_series", 0.0, 0.0, "Ω"))
    drive = design.drive
    if isinstance(drive, DividerDrive):
        out.append(Factor("r_fixed", *_spread(drive.r_fixed, drive.tolerance), "Ω"))
        out.append(Factor("sensor_scale", 1 - drive.tolerance, 1 + drive.tolerance, ""))
        if drive.v_source is not None:
            out.append(Factor("v_source", *_spread(drive.v_source, drive.source_tolerance), "V"))
    else:
        out.append(Factor("drive_on", drive.high_min, drive.high, "V"))
        out.append(Factor("drive_off", drive.low, drive.low_max, "V"))
    # The switch's own factors (a Darlington array's input resistor) reach the operating point only.
    out += [Factor(*f) for f in switch_kind(design.switch).factors(design.switch)]
    return out


def inductance_at(design: Design, c: Corners, index: int | None = None):
    """The coil's inductance: one per corner where the corners vary it (inductance_tolerance),
    else the one number the design gives; at corner ``index`` alone when given."""
    inductance = c.figure("inductance", design.coil.inductance)
    if index is None:
        return inductance
    return float(inductance[index]) if isinstance(inductance, np.ndarray) else float(inductance)


@dataclass(frozen=True)
class PartFigure:
    """A part figure the worst corners take at its own worst end and the Monte Carlo yield draws,
    one value per sample, between the two bounds the design gives; ``held`` says what stands in
    for it when a bound is missing."""

    name: str
    unit: str
    kinds: tuple[str, ...]  # the switch kinds it belongs to; () for a coil's figure
    bounds: Callable[[Design], tuple[float | None, float | None]]
    held: str


PART_FIGURES = (
    PartFigure(
        "hfe",
        "",
        ("npn", "darlington_array"),
        lambda d: (d.switch.hfe_min, d.switch.hfe_max),
        "h_FE at hfe_min (give switch.hfe_max to draw it)",
    ),
    PartFigure(
        "vbe_sat",
        "V",
        ("npn",),
        lambda d: (d.switch.vbe_sat_min, d.switch.vbe_sat),
        "V_BE(sat) at its maximum (give switch.vbe_sat_min to draw it)",
    ),
    PartFigure(
        "vce_sat",
        "V",
        ("npn", "darlington_array"),
        lambda d: (d.switch.vce_sat_min, d.switch.vce_sat),
        "V_CE(sat) at each check's worst end (give switch.vce_sat_min to draw it)",
    ),
    PartFigure("vgs_th", "V", ("nmos",), lambda d: (d.switch.vgs_th_min, d.switch.vgs_th_max), ""),
    PartFigure(
        "v_pickup",
        "V",
        (),
        lambda d: (d.coil.v_pickup_min, d.coil.v_pickup),
        "the pick-up voltage at v_pickup (give coil.v_pickup_min to draw it)",
    ),
)


def _part_figures(design: Design) -> list[tuple[PartFigure, float | None, float | None]]:
    return [(f, *f.bounds(design)) for f in PART_FIGURES if not f.kinds or design.switch.kind in f.kinds]


def sampled_figures(design: Design) -> list[Factor]:
    """The part figures (PART_FIGURES) this design gives between two bounds, as factors for the
    Monte Carlo yield: h_FE (hfe_min … hfe_max), V_CE(sat) and V_BE(sat) (their minimum …
    maximum), a MOSFET's V_GS(th), the coil's pick-up voltage (v_pickup_min … v_pickup)."""
    return [
        Factor(f.name, low, high, f.unit)
        for f, low, high in _part_figures(design)
        if low is not None and high is not None and low != high
    ]


def held_figures(design: Design) -> list[str]:
    """What stands in for each part figure this design gives with one bound only."""
    return [f.held for f, low, high in _part_figures(design) if low is None or high is None]


def _extremes(all_factors: list[Factor]) -> tuple[dict[str, np.ndarray], int]:
    """Every combination of the factors' extremes: one array per factor, and their length."""
    # A factor whose extremes coincide would double the corners and add nothing.
    varying = [f for f in all_factors if f.low != f.high]
    fixed = [f for f in all_factors if f.low == f.high]
    size = 2 ** len(varying)
    bits = (np.arange(size)[:, None] >> np.arange(len(varying))[None, :]) & 1
    values = {}
    for j, factor in enumerate(varying):
        values[factor.name] = np.where(bits[:, j] == 1, factor.high, factor.low).astype(float)
    for factor in fixed:
        values[factor.name] = np.full(size, factor.low, dtype=float)
    return values, size


def worst_corners(design: Design) -> Corners:
    all_factors = factors(design)
    values, size = _extremes(all_factors)
    return Corners(tuple(all_factors), values, size)


def corners_at_rows(design: Design, base: Corners, rows: np.ndarray) -> Corners:
    """Some of ``design``'s worst corners: the corners ``rows`` of ``base`` (the worst corners of a
    design that differs from this one in its clamp alone), each combined with every combination
    of the extremes of this design's clamp factors. Every corner here is one of the design's
    worst corners, with the same values."""
    circuit, clamp = circuit_factors(design), clamp_factors(design)
    own, count = _extremes(clamp)
    index = np.tile(rows, count)
    values = {f.name: base.values[f.name][index] for f in circuit}
    values.update({name: np.repeat(array, len(rows)) for name, array in own.items()})
    return Corners(tuple(circuit + clamp), values, len(rows) * count, origin=(base, index))


def nominal_corner(design: Design) -> Corners:
    """Nominal supply and tolerances, 25 °C clamped into the ambient range."""
    ambient = min(max(25.0, design.ambient.min), design.ambient.max)
    values = {
        "supply": design.supply.nominal,
        "ambient": ambient,
        "r_coil": design.coil.r_coil,
    }
    if design.coil.inductance_tolerance > 0:
        values["inductance"] = design.coil.inductance
    resistors = design.drive_resistors
    values["r_series"] = resistors.r_series if resistors is not None else 0.0
    if resistors is not None and resistors.r_pulldown is not None:
        values["r_pulldown"] = resistors.r_pulldown
    if isinstance(design.drive, DividerDrive):
        values["r_fixed"] = design.drive.r_fixed
        values["sensor_scale"] = 1.0
        if design.drive.v_source is not None:
            values["v_source"] = design.drive.v_source
    else:
        values["drive_on"] = design.drive.high
        values["drive_off"] = design.drive.low
    values.update(kind_of(design.clamp).nominal(design.clamp))
    values.update(switch_kind(design.switch).nominal(design.switch))
    arrays = {k: np.array([float(v)]) for k, v in values.items()}
    return Corners((), arrays, 1)
