"""The one interface every switch kind implements.

A switch kind is one module in this package with one ``SwitchKind`` subclass: its part model
(in app.engine.design, so the parts library validates it the same way), the resistor block it
is driven through (``base`` or ``gate``), its corner factors, its operating point on and off
(an ``OperatingPoint`` the rules read), its ratings (current, breakdown, the voltage left for
a stress), its netlist element and the form fields it needs. Rules that only make sense for
some kinds name them in their registry entry (``rule(..., kinds=...)``) and are skipped for
the others; everything else asks the kind rather than test which kind it is.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any, ClassVar

from ..clamps.base import FormSlot, g

if TYPE_CHECKING:
    from ..circuit import OperatingPoint
    from ..corners import Corners
    from ..design import Design, Model


class SwitchKind:
    """One switch kind. Subclasses set the class attributes and override what applies."""

    kind: ClassVar[str]
    title: ClassVar[str]  # what a reviewer reads: "NPN transistor"
    part_kind: ClassVar[str]  # the parts library's kind for this switch
    model: ClassVar[type[Model]]
    # The design file's resistor block for the control input: "base" or "gate"; whether the
    # design must have it (a Darlington array's input resistor is built in: "base" optional).
    resistors: ClassVar[str] = "base"
    resistors_required: ClassVar[bool] = True
    fields: ClassVar[tuple[FormSlot, ...]] = ()
    breakdown_symbol: ClassVar[str] = "V_(BR)CEO"
    on_voltage_symbol: ClassVar[str] = "V_CE(sat),min"  # the lowest on-voltage, in worked texts
    current_symbol: ClassVar[str] = "I_C"
    # Whether the netlist models the switch's own breakdown, so an unclamped turn-off can be
    # simulated (a MOSFET's avalanche through its body diode).
    simulates_avalanche: ClassVar[bool] = False
    unclamped_verdict: ClassVar[str] = (
        "forces the collector into avalanche above V_(BR)CEO, stressing the junction at every turn-off"
    )

    # ---------------------------------------------------------------- ratings

    def breakdown(self, switch: Any) -> float:
        """The switch's minimum breakdown voltage when off."""
        raise NotImplementedError

    def current_rating(self, switch: Any) -> float:
        raise NotImplementedError

    def on_voltage_low(self, switch: Any) -> float:
        """The lowest voltage across the switch when on: the worst case for a stress (more left
        for the load). 0 V when the part gives no minimum."""
        return 0.0

    def problems(self, design: Design) -> list[str]:
        """Whatever makes this switch unusable in this circuit (field path first)."""
        return []

    # ---------------------------------------------------------------- corners

    def factors(self, switch: Any) -> list[tuple[str, float, float, str]]:
        """(name, low, high, unit) of each switch parameter that varies between corners."""
        return []

    def nominal(self, switch: Any) -> dict[str, float]:
        return {}

    # ---------------------------------------------------------------- behaviour

    def operating_point(
        self, design: Design, c: Corners, *, steady_state: bool, assumed_coil_rise: float | None
    ) -> OperatingPoint:
        raise NotImplementedError

    # ---------------------------------------------------------------- netlist

    def netlist_lines(
        self, design: Design, op: OperatingPoint, index: int, i_switch: float, t_open: float
    ) -> list[str]:
        """SPICE elements of the switch between node ``sw`` and ground: it carries
        ``i_switch`` until t = 0 and is open from ``t_open`` on. The default is an ideal
        current sink that drops to zero (the engine takes the switch as ideal at turn-off)."""
        return [f"ISW sw 0 PWL(0 {g(i_switch)} {g(t_open)} 0)"]


__all__ = ["FormSlot", "SwitchKind"]
