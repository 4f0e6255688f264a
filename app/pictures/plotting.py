"""What the plots share: matplotlib's SVG canvas (no GUI, no pyplot state), text kept as text,
and styles that read in greyscale and for colour-blind readers (each line differs in dash and
marker as well as colour; the colours are the Okabe–Ito palette)."""

from __future__ import annotations

import io
import math
import threading

import matplotlib
from matplotlib.backends.backend_svg import FigureCanvasSVG
from matplotlib.figure import Figure

# Okabe & Ito, "Color Universal Design" (2008): told apart by the common colour-vision deficiencies.
BLACK, ORANGE, SKY, GREEN, YELLOW, BLUE, VERMILION, PURPLE = (
    "#000000",
    "#E69F00",
    "#56B4E9",
    "#009E73",
    "#F0E442",
    "#0072B2",
    "#D55E00",
    "#CC79A7",
)
# One entry per line in a chart: (colour, dashes, marker); the dashes alone tell them apart in print.
LINE_STYLES = (
    (BLACK, "-", "o"),
    (BLUE, "--", "s"),
    (VERMILION, "-.", "^"),
    (GREEN, ":", "D"),
    (PURPLE, (0, (6, 2, 1, 2, 1, 2)), "v"),
    (ORANGE, (0, (1, 1)), "P"),
    (SKY, (0, (8, 3)), "X"),
)

_RC = {
    "svg.fonttype": "none",  # text stays text: searchable, readable, small
    "svg.hashsalt": "clampdown",  # the same picture gives the same bytes
    "font.size": 9,
    "axes.titlesize": 9.5,
    "axes.labelsize": 9,
    "legend.fontsize": 8,
    "axes.grid": True,
    "grid.color": "#d0d0d0",
    "grid.linewidth": 0.6,
}
# Figures are independent, but matplotlib's text layout caches are shared: draw one at a time.
_LOCK = threading.Lock()


def plain(words: str) -> str:
    """Text for matplotlib with a dollar sign kept literal (a pair would start math mode)."""
    return str(words).replace("$", r"\$")


def new_figure(width: float, height: float) -> Figure:
    figure = Figure(figsize=(width, height), layout="constrained")
    FigureCanvasSVG(figure)
    return figure


def to_svg(figure: Figure) -> str:
    buffer = io.StringIO()
    figure.savefig(buffer, format="svg", metadata={"Date": None, "Creator": None})
    return buffer.getvalue()


def render(draw, *args) -> str:
    """Run ``draw(*args) -> Figure`` under the shared style and return the SVG text."""
    with _LOCK, matplotlib.rc_context(_RC):
        return to_svg(draw(*args))


def time_scale(t_max: float) -> tuple[float, str]:
    """(factor, unit) to show times up to t_max in s, ms or µs."""
    if not math.isfinite(t_max) or t_max >= 1:
        return 1.0, "s"
    if t_max >= 1e-3:
        return 1e3, "ms"
    return 1e6, "µs"
