"""The one interface every clamp kind implements.

A clamp kind is one module in this package with one ``ClampKind`` subclass: its design-file
model, its corner factors, its turn-off behaviour (a ``ClampPath``), its SPICE lines, the
ratings the clamp rules ask it for, and the form fields it needs. Everything that differs
between clamp kinds is here; the rules, the corners, the netlist, the form and the record ask
the kind rather than test which kind it is.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, ClassVar

import numpy as np

from ..physics import DiodeModel
from ..transient import TurnOff, Waveform, integral_turn_off, integral_waveform, one_corner

if TYPE_CHECKING:
    from ..design import Design, Diode, Model
    from ..rules.core import Context


def round12(x: float) -> float:
    """12 significant digits, so a corner reads 26.4 V, not 26.400000000000002 V."""
    return float(f"{x:.12g}")


def spread(nominal: float, tolerance: float) -> tuple[float, float]:
    """The low and high extremes of a toleranced value."""
    return round12(nominal * (1 - tolerance)), round12(nominal * (1 + tolerance))


def g(x: float) -> str:
    """A number as SPICE reads it (nine significant digits)."""
    return f"{float(x):.9g}"


def _forward_varies(diode: Diode) -> bool:
    return diode.vf_min is not None and diode.vf_min < diode.vf


def diode_factors(diode: Diode) -> list[tuple[str, float, float, str]]:
    """The rectifier's forward voltage at vf_at as a corner factor (``diode_vf``, vf_min … vf),
    where the part gives vf_min: the lowest V_F releases the coil slowest, the highest makes the
    highest spike; without vf_min the curve is the part's one curve at every corner."""
    return [("diode_vf", diode.vf_min, diode.vf, "V")] if _forward_varies(diode) else []


def diode_nominal(diode: Diode) -> dict[str, float]:
    """The nominal corner takes the part's curve as given (V_F = vf at vf_at)."""
    return {"diode_vf": diode.vf} if _forward_varies(diode) else {}


def diode_model(diode: Diode, values: dict[str, np.ndarray]) -> DiodeModel:
    """The rectifier's model over a set of corners: one I_S per corner where V_F varies."""
    return DiodeModel.from_part(diode, values["diode_vf"] if _forward_varies(diode) else None)


@dataclass(frozen=True)
class FormSlot:
    """A field the web form shows for this kind, under ``clamp.``: a number, or a library part
    (``part`` names the library's part kind)."""

    name: str
    label: str
    unit: str = ""
    part: str | None = None
    hint: str = ""


@dataclass(frozen=True)
class Stress:
    """What a clamp rule judges for one kind: the value per corner against a rating, derated by
    the profile's ``derate`` fraction ("voltage", "current" or "power")."""

    value: np.ndarray
    rating: np.ndarray | float
    derate: str
    unit: str
    message: Callable[[int], str]
    worked: Callable[[int], str] | None = None  # the formula with a corner's numbers


@dataclass(frozen=True)
class ClampPath:
    """One design's clamp over a set of corners (arrays have one element per corner), as the
    turn-off sees it. Kinds with a current-dependent clamp voltage implement ``loop_voltage``;
    kinds with their own state override ``turn_off``."""

    vcc: np.ndarray
    diode: DiodeModel | None = None

    unclamped: ClassVar[bool] = False
    supply_in_loop: ClassVar[bool] = False  # the clamp returns the current through the supply

    def loop_voltage(self, i: np.ndarray) -> np.ndarray:
        """v_c(i): voltage the clamp path adds around the coil loop; i has shape (N, M)."""
        raise NotImplementedError

    def device_voltage(self, i: np.ndarray) -> np.ndarray:
        """Voltage across the clamp device itself (what it dissipates i·v of)."""
        return self.loop_voltage(i)

    def resistor_energy(self, clamp_energy: np.ndarray, diode_energy: np.ndarray) -> np.ndarray | None:
        """What a clamp resistor takes per turn-off; None for kinds without one."""
        return None

    def turn_off(
        self, inductance, r_coil, initial_current, dropout_current, *, energies: bool = True
    ) -> TurnOff:
        return integral_turn_off(
            self, inductance, r_coil, initial_current, dropout_current, energies=energies
        )

    def waveform(
        self,
        index: int,
        inductance: float,
        r_coil: float,
        initial_current: float,
        dropout_current: float,
        points: int = 160,
    ) -> Waveform:
        """Coil current and switch-node voltage over time at corner ``index``, from the switch
        opening until the current falls to drop-out (``transient.integral_waveform``)."""
        return integral_waveform(
            one_corner(self, index), inductance, r_coil, initial_current, dropout_current, points
        )


class ClampKind:
    """One clamp kind. Subclasses set the class attributes and override what applies."""

    kind: ClassVar[str]
    title: ClassVar[str]  # what a reviewer reads: "Diode across the coil"
    model: ClassVar[type[Model]]
    fields: ClassVar[tuple[FormSlot, ...]] = ()
    unclamped: ClassVar[bool] = False

    def is_unclamped(self, clamp: Any) -> bool:
        """Whether this clamp leaves the switch to avalanche (no clamp at all)."""
        return self.unclamped

    def problems(self, design: Design) -> list[str]:
        """Whatever makes this clamp unusable with this design's switch (field path first)."""
        return []

    # ---------------------------------------------------------------- corners

    def factors(self, clamp: Any) -> list[tuple[str, float, float, str]]:
        """(name, low, high, unit) of each clamp parameter that varies between corners."""
        return []

    def nominal(self, clamp: Any) -> dict[str, float]:
        """The same parameters at their nominal values."""
        return {}

    # ---------------------------------------------------------------- behaviour

    def path(self, clamp: Any, design: Design, vcc: np.ndarray, values: dict[str, np.ndarray]) -> ClampPath:
        raise NotImplementedError

    def parallel_resistance(self, clamp: Any, values: dict[str, np.ndarray], size: int) -> np.ndarray:
        """A resistance the clamp puts across the coil while the switch is on (∞ when none)."""
        return np.full(size, np.inf)

    # ---------------------------------------------------------------- netlist

    def netlist_lines(self, path: ClampPath, index: int) -> list[str]:
        """SPICE elements between nodes ``sw`` (the switch), ``vcc`` and ``0``."""
        raise ValueError("an unclamped coil has no finite turn-off to simulate")

    def on_current(self, path: ClampPath, index: int, coil_voltage: float) -> float:
        """DC current the clamp draws from the switch node while on (added to the switch's sink)."""
        return path.diode.at(index).i_s if path.diode is not None else 0.0

    def dropout_measure(self, dropout_current: float) -> list[str]:
        """The ``.meas`` of the time to drop-out (a monotonic decay: its first fall)."""
        return [f".meas tran time_to_dropout WHEN i(VSENSE)={g(dropout_current)} FALL=1"]

    # ---------------------------------------------------------------- ratings hooks

    def diode(self, clamp: Any) -> Diode | None:
        """The rectifier in series with the clamp, if any (reverse voltage, peak, average current)."""
        return getattr(clamp, "diode", None)

    def peak_current_rating(self, clamp: Any) -> tuple[float, str] | None:
        """(rating, what it is) for the clamp's peak current at every turn-off."""
        diode = self.diode(clamp)
        if diode is None:
            return None
        if diode.i_frm is not None:
            return diode.i_frm, "repetitive peak I_FRM"
        return diode.i_peak, "peak (i_peak, taken as the repetitive rating)"

    def energy_stress(self, ctx: Context, share_text: str) -> Stress | None:
        """A power the kind's energy rating limits (TVS peak pulse, zener average), if any."""
        return None

    def standoff(self, ctx: Context) -> Stress | None:
        """A clamp from the switch to ground stands off the supply while the switch is off."""
        return None

    def resistor_power(self, ctx: Context) -> tuple[np.ndarray, float | None] | None:
        """(power the clamp resistor dissipates continuously while the coil is on, its power
        rating or None) for kinds with a clamp resistor; its turn-off share comes from the
        turn-off's ``resistor_energy``."""
        return None

    def capacitor_voltage(self, ctx: Context) -> Stress | None:
        return None

    def breakdown_note(self, clamp: Any) -> str:
        """Anything the spike finding must say about how the peak was taken (assumptions)."""
        return ""
