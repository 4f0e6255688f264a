"""The switch kinds: one module per kind behind the interface in ``base``.

``KINDS`` is the registry; the design file's ``Switch`` union, ``SWITCH_KINDS``, the operating
point, the switch ratings the rules ask for, the netlist's switch element and the parts
library's switch kinds are all derived from it. Adding a switch kind (a P-channel high side,
say) is one new module, one line below, its part model in app.engine.design, and its tests.

Import order as for app.engine.clamps: app.engine.design imports this package part-way
through (after the part and drive models, before ``Design``).
"""

from __future__ import annotations

from typing import Annotated, Any, Union

from pydantic import Discriminator, Tag

from .base import SwitchKind
from .darlington import DarlingtonChannel
from .nmos import NmosLowSide
from .npn import NpnTransistor

KINDS: dict[str, SwitchKind] = {k.kind: k for k in (NpnTransistor(), NmosLowSide(), DarlingtonChannel())}
SWITCH_KINDS: tuple[str, ...] = tuple(KINDS)


def _tag(value: Any) -> str:
    """A switch without a "kind" is an NPN transistor (design files written before the kinds)."""
    kind = value.get("kind", "npn") if isinstance(value, dict) else getattr(value, "kind", "npn")
    return kind if isinstance(kind, str) else repr(kind)


# The design file's switch: a union of every kind's part model, told apart by "kind".
Switch = Annotated[
    Union[tuple(Annotated[k.model, Tag(k.kind)] for k in KINDS.values())],  # noqa: UP007
    Discriminator(_tag),
]


def switch_kind(switch: Any) -> SwitchKind:
    """The registry entry of a design's switch."""
    return KINDS[switch.kind]


def part_kinds() -> dict[str, SwitchKind]:
    """The parts library's kind of each switch kind -> the registry entry."""
    return {k.part_kind: k for k in KINDS.values()}


__all__ = ["KINDS", "SWITCH_KINDS", "Switch", "SwitchKind", "part_kinds", "switch_kind"]
