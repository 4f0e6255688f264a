"""The clamp kinds: one module per kind behind the interface in ``base``.

``KINDS`` is the registry; the design file's ``Clamp`` union, ``CLAMP_KINDS``, the corner
factors, the turn-off, the netlist, the clamp rules' ratings and the web form's clamp fields
are all derived from it. Adding a clamp kind is one new module and one line below.

Import order: this package imports the part models from ``app.engine.design``, which imports
this package part-way through (after the parts, before ``Design``); ``app.engine`` loads
``design`` first, so the cycle resolves the same way whoever imports first.
"""

from __future__ import annotations

from typing import Annotated, Any, Union

from pydantic import Discriminator, Tag

from .array_diode import ArrayDiode, ArrayDiodeClamp
from .base import ClampKind, ClampPath, FormSlot, Stress
from .diode import DiodeAcrossCoil, DiodeClamp
from .diode_resistor import DiodeResistorAcrossCoil, DiodeResistorClamp
from .diode_zener import DiodeZenerAcrossCoil, DiodeZenerClamp
from .none import NoClamp, Unclamped
from .rc import RcAcrossCoil, RcClamp
from .resistor import ResistorAcrossCoil, ResistorClamp
from .tvs import TvsClamp, TvsToGround

KINDS: dict[str, ClampKind] = {
    k.kind: k
    for k in (
        Unclamped(),
        DiodeAcrossCoil(),
        DiodeZenerAcrossCoil(),
        DiodeResistorAcrossCoil(),
        ResistorAcrossCoil(),
        TvsToGround(),
        RcAcrossCoil(),
        ArrayDiode(),
    )
}
CLAMP_KINDS: tuple[str, ...] = tuple(KINDS)

# The design file's clamp: a union of every kind's model, told apart by "kind".
Clamp = Annotated[
    Union[tuple(Annotated[k.model, Tag(k.kind)] for k in KINDS.values())],  # noqa: UP007
    Discriminator("kind"),
]


def kind_of(clamp: Any) -> ClampKind:
    """The registry entry of a design's clamp."""
    return KINDS[clamp.kind]


def part_slots() -> dict[str, str]:
    """Design-file path of every library part a clamp holds -> the part kind: {"clamp.diode": "diode"}."""
    return {f"clamp.{s.name}": s.part for k in KINDS.values() for s in k.fields if s.part}


__all__ = [
    "ArrayDiodeClamp",
    "CLAMP_KINDS",
    "KINDS",
    "Clamp",
    "ClampKind",
    "ClampPath",
    "DiodeClamp",
    "DiodeResistorClamp",
    "DiodeZenerClamp",
    "FormSlot",
    "NoClamp",
    "RcClamp",
    "ResistorClamp",
    "Stress",
    "TvsClamp",
    "kind_of",
    "part_slots",
]
