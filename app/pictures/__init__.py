"""The three pictures of a design, drawn on the server as SVG with a caption carrying the key
numbers (the text alternative): the stage as designed (``schematic``), its turn-off over time
(``turnoff``) and its margins over temperature (``temperature``).

Imports run one way: the web app and the CLI call ``draw``; this package reads the engine and
the sign-off's margin, never the other way round.
"""

from __future__ import annotations

import threading
from collections.abc import Callable

from app.engine.clamps import kind_of
from app.engine.design import Design
from app.engine.profile import DEFAULT_PROFILE, Profile
from app.engine.review import build_context
from app.engine.switches import switch_kind
from app.engine.units import format_si

from .schematic import schematic_svg
from .temperature import caption as margins_caption
from .temperature import margins_over_temperature, margins_svg
from .turnoff import caption as turnoff_caption
from .turnoff import turnoff_data, turnoff_svg

# File names and titles, in the order the pages show them.
NAMES = {
    "schematic": "The stage as designed",
    "turnoff": "Turn-off over time",
    "margins": "Margins over temperature",
}


class Picture:
    """One picture: its caption is worked out at once (the engine's numbers, milliseconds), its
    SVG drawn the first time it is asked for (the plotting takes most of a second) and kept."""

    def __init__(self, name: str, title: str, caption: str, render: Callable[[], str]):
        self.name = name  # one of NAMES
        self.title = title
        self.caption = caption
        self._render: Callable[[], str] | None = render
        self._svg: str | None = None
        self._lock = threading.Lock()

    @property
    def drawn(self) -> bool:
        return self._svg is not None

    @property
    def svg(self) -> str:
        if self._svg is None:
            with self._lock:
                if self._svg is None:
                    self._svg = self._render()
                    self._render = None  # the data it closed over is no longer needed
        return self._svg


def schematic_picture(design: Design) -> Picture:
    c = design.coil
    resistors = design.drive_resistors
    through = (
        f"through {'R_g' if design.gate is not None else 'R_b'} {format_si(resistors.r_series, 'Ω')}"
        if resistors is not None
        else "through its built-in input resistor"
    )
    words = (
        f"{switch_kind(design.switch).title} low-side switch {design.switch.name} driving {c.name} "
        f"({format_si(c.r_coil, 'Ω')}, {format_si(c.inductance, 'H')}) from a {design.drive.kind} drive "
        f"{through}. Clamp: {kind_of(design.clamp).title}. Every part is labelled with its value."
    )
    return Picture("schematic", NAMES["schematic"], words, lambda: schematic_svg(design))


def turnoff_picture(design: Design, profile: Profile = DEFAULT_PROFILE) -> Picture:
    data = turnoff_data(build_context(design, profile))
    return Picture("turnoff", NAMES["turnoff"], turnoff_caption(data), lambda: turnoff_svg(data))


def margins_picture(design: Design, profile: Profile = DEFAULT_PROFILE) -> Picture:
    data = margins_over_temperature(design, profile)
    return Picture("margins", NAMES["margins"], margins_caption(data), lambda: margins_svg(data))


def draw(
    design: Design, profile: Profile = DEFAULT_PROFILE, which: tuple[str, ...] = tuple(NAMES)
) -> dict[str, Picture]:
    """The pictures named in ``which``, in that order (captions now, each SVG when first asked for)."""
    makers = {
        "schematic": lambda: schematic_picture(design),
        "turnoff": lambda: turnoff_picture(design, profile),
        "margins": lambda: margins_picture(design, profile),
    }
    return {name: makers[name]() for name in which}


__all__ = ["NAMES", "Picture", "draw", "margins_picture", "schematic_picture", "turnoff_picture"]
