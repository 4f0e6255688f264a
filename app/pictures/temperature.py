"""Margins over temperature: each rule's margin (how far inside its derated limit, %) across the
design's ambient range.

At each ambient temperature T the design is judged with its ambient range closed to T alone:
every other factor (the supply, the tolerances, the drive levels) still takes the extreme that
is worst for each rule, so a rule's line is its worst case at that temperature, and the lowest
point of a line is the margin the report gives. Margins as the pages read them
(``app.signoff.margin``): (limit − value)/limit for a stress, (value − limit)/limit for a
figure that must stay above its limit; positive inside, negative past.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from app.engine.design import Ambient, Design
from app.engine.profile import DEFAULT_PROFILE, Profile
from app.engine.review import build_context
from app.engine.rules import RULES
from app.engine.units import format_si
from app.signoff.margin import margin

from .plotting import BLACK, LINE_STYLES, new_figure, plain, render

AREAS = {
    "drive": "Drive",
    "coil": "Coil",
    "switch": "Switch",
    "clamp": "Clamp",
    "resistor": "Resistors",
    "contacts": "Contacts",
}
# Margins beyond these are drawn at the edge (the chart is about where headroom runs out).
SHOWN_RANGE = (-100.0, 300.0)


@dataclass
class RuleLine:
    rule: str
    title: str
    margins: list[float | None] = field(default_factory=list)  # fraction per temperature


@dataclass(frozen=True)
class MarginData:
    temperatures: np.ndarray
    lines: dict[str, RuleLine]

    def smallest(self) -> tuple[RuleLine, float, float] | None:
        """(line, margin, temperature) of the smallest margin anywhere."""
        best = None
        for line in self.lines.values():
            for t, m in zip(self.temperatures, line.margins, strict=True):
                if m is not None and (best is None or m < best[1]):
                    best = (line, m, float(t))
        return best


def margins_over_temperature(
    design: Design, profile: Profile = DEFAULT_PROFILE, points: int = 21
) -> MarginData:
    low, high = design.ambient.min, design.ambient.max
    temperatures = np.linspace(low, high, points) if high > low else np.array([low])
    lines: dict[str, RuleLine] = {}
    for n, t in enumerate(temperatures):
        at_t = design.model_copy(update={"ambient": Ambient(min=float(t), max=float(t))})
        ctx = build_context(at_t, profile, alternatives=False)
        for registered in RULES.values():
            if not registered.applies_to(design):
                continue
            finding = registered.check(ctx)
            value = None if finding is None else margin(finding.as_dict())
            if value is None:
                continue
            line = lines.setdefault(registered.id, RuleLine(registered.id, registered.title))
            line.margins.extend([None] * (n - len(line.margins)))
            line.margins.append(value)
    for line in lines.values():
        line.margins.extend([None] * (len(temperatures) - len(line.margins)))
    return MarginData(temperatures, lines)


def _percent(x: float) -> str:
    value = round(x * 100)
    return "0 %" if value == 0 else f"{value:+d} %".replace("-", "−")


def caption(data: MarginData) -> str:
    t = data.temperatures
    span = f"{t[0]:g} to {t[-1]:g} °C" if len(t) > 1 else f"{t[0]:g} °C"
    smallest = data.smallest()
    if smallest is None:
        return f"Margins over {span}: no rule with a limit applies."
    line, value, temp = smallest
    past = sorted(
        {ln.title for ln in data.lines.values() if any(m is not None and m < 0 for m in ln.margins)}
    )
    words = [
        f"Margins over {span}, each rule with the supply and tolerances at their worst for it.",
        f"Smallest: {line.title} {_percent(value)} at {format_si(temp, '°C')}.",
        "Past the derated limit somewhere in the range: " + (", ".join(past) if past else "none") + ".",
    ]
    ends = []
    for ln in data.lines.values():
        first, last = ln.margins[0], ln.margins[-1]
        if first is not None and last is not None and len(t) > 1 and abs(first - last) >= 0.05:
            ends.append(f"{ln.title} {_percent(first)} cold, {_percent(last)} hot")
    if ends:
        words.append("Changing most with temperature: " + "; ".join(ends[:4]) + ".")
    return " ".join(words)


def _draw(data: MarginData):
    areas = [a for a in AREAS if any(r.split(".")[0] == a for r in data.lines)]
    columns = min(3, max(1, len(areas)))
    rows = max(1, -(-len(areas) // columns))
    figure = new_figure(7.6, 2.5 * rows + 0.4)
    axes = np.atleast_1d(figure.subplots(rows, columns, sharex=True, squeeze=False).ravel())
    t = data.temperatures
    low, high = SHOWN_RANGE
    for ax, area in zip(axes, areas, strict=False):
        ruled = [ln for r, ln in data.lines.items() if r.split(".")[0] == area]
        for n, line in enumerate(ruled):
            colour, dashes, marker = LINE_STYLES[n % len(LINE_STYLES)]
            y = np.array([np.nan if m is None else 100 * m for m in line.margins])
            ax.plot(
                t,
                np.clip(y, low, high),
                color=colour,
                linestyle=dashes,
                marker=marker,
                markersize=3.5,
                markevery=max(1, len(t) // 6),
                linewidth=1.5,
                label=plain(line.title),
            )
        ax.axhline(0, color=BLACK, linewidth=1.6)
        ax.axhspan(low, 0, facecolor="#e6e6e6", edgecolor="#9a9a9a", hatch="..", linewidth=0, zorder=0)
        values = [100 * m for ln in ruled for m in ln.margins if m is not None]
        top = min(high, max(max(values, default=10) * 1.1, 10))
        bottom = max(low, min(min(values, default=0) * 1.1, -10))
        ax.set_ylim(bottom, top)
        ax.set_title(f"{AREAS[area]} (0 % = derated limit)")
        ax.legend(loc="best", fontsize=7, framealpha=0.9)
        ax.set_ylabel("margin (%)")
    for ax in axes[len(areas) :]:
        ax.set_visible(False)
    for ax in axes[: len(areas)]:
        ax.set_xlabel("ambient (°C)")
    figure.suptitle(
        "Margin to the derated limit over the ambient range (shaded: past derating)", fontsize=9.5
    )
    return figure


def margins_svg(data: MarginData) -> str:
    return render(_draw, data)
