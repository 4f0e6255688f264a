"""The design window: for each value a designer chooses, the interval over which every rule holds.

For the base resistor, the pull-down, the zener voltage, the clamp resistor and the snubber
capacitor, with every other value as designed: the interval of that value over which no rule is
past its derated limit at any worst-case corner (no violation, no marginal finding), found by
evaluating the design with the value changed — a bracket by factors of two from the designed
value, then bisection in log(value) to 1e-4 relative. Each edge is the last value found to
pass, with a failing value within 1e-4 beyond it; both are evaluated, so an edge is never a
guess. The search stays within ``span`` times the designed value each way (and the design
file's allowed range); an edge not met there is reported as the search limit.

Inside the window: the standard values (IEC 60063: E24 for resistors, with the E12 values
marked; E24 for zener voltages; E12 for capacitors), each evaluated with its tightest margin
(the smallest (limit − value)/limit, or (value − limit)/limit for a lower bound, over the
judged findings). Where no value passes, the two rules that pull against each other: the
rule that needs the value at least some amount and the rule that needs it at most a smaller
one, read off a grid of 8 values per decade over the search range.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

from .design import QUANTITY_RANGES, Design
from .profile import DEFAULT_PROFILE, Profile
from .review import E24, build_context
from .rules import RULES, Finding
from .units import format_si

# IEC 60063 E12 series (the 10 % series), a subset of E24.
E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)
RELATIVE_PRECISION = 1e-4
GRID_PER_DECADE = 8
FAILING = ("violation", "marginal")


@dataclass(frozen=True)
class Choice:
    """A value the designer chooses: where it sits in the design, and how to change it."""

    key: str  # design-file path: "base.r_series"
    label: str  # its symbol: "R_b"
    title: str  # what a reviewer reads: "Base resistor"
    unit: str
    series: str  # "E24" (resistors, zeners) or "E12" (capacitors)
    span: float  # searched from value/span to value·span
    value: Callable[[Design], float | None]
    change: Callable[[Design, float], Design]


def _nested(design: Design, path: tuple[str, ...], x: float):
    """A copy of the design with the value at ``path`` replaced (no other value touched)."""
    if len(path) == 1:
        return design.model_copy(update={path[0]: x})
    inner = getattr(design, path[0])
    return design.model_copy(update={path[0]: _nested(inner, path[1:], x)})


def _choice(key: str, label: str, title: str, unit: str, series: str, span: float) -> Choice:
    path = tuple(key.split("."))

    def value(design: Design) -> float | None:
        node = design
        for name in path:
            node = getattr(node, name, None)
            if node is None:
                return None
        return float(node)

    return Choice(key, label, title, unit, series, span, value, lambda d, x: _nested(d, path, x))


CHOICES: tuple[Choice, ...] = (
    _choice("base.r_series", "R_b", "Base resistor", "Ω", "E24", 1000.0),
    _choice("base.r_pulldown", "R_be", "Base pull-down", "Ω", "E24", 1000.0),
    _choice("gate.r_series", "R_g", "Gate resistor", "Ω", "E24", 1000.0),
    _choice("gate.r_pulldown", "R_gs", "Gate pull-down", "Ω", "E24", 1000.0),
    _choice("clamp.zener.vz", "V_Z", "Zener voltage", "V", "E24", 10.0),
    _choice("clamp.r", "R_clamp", "Clamp resistor", "Ω", "E24", 1000.0),
    _choice("clamp.c", "C_clamp", "Snubber capacitor", "F", "E12", 1000.0),
)


def judged(design: Design, profile: Profile) -> list[Finding]:
    """Every finding of the design (no alternatives)."""
    ctx = build_context(design, profile, alternatives=False)
    rules = [r for r in RULES.values() if r.applies_to(design)]
    return [f for f in (r.check(ctx) for r in rules) if f is not None]


def _failing(findings: list[Finding]) -> set[str]:
    return {f.rule for f in findings if f.status in FAILING}


def tightest_margin(findings: list[Finding]) -> tuple[float | None, str | None]:
    """(margin, rule) of the judged finding closest to its limit: (limit − value)/limit for an
    upper bound, (value − limit)/limit for a lower one; positive inside."""
    best: tuple[float | None, str | None] = (None, None)
    for f in findings:
        if f.bound is None or f.value is None or f.limit is None:
            continue
        if not (math.isfinite(f.value) and math.isfinite(f.limit)) or f.limit <= 0:
            continue
        margin = (f.limit - f.value) / f.limit if f.bound == "upper" else (f.value - f.limit) / f.limit
        if best[0] is None or margin < best[0]:
            best = (margin, f.rule)
    return best


def standard_values(series: str, low: float, high: float) -> list[float]:
    """The values of an IEC 60063 series (E12 or E24) from low to high, both included."""
    mantissas = E24 if series == "E24" else E12
    out = []
    for decade in range(math.floor(math.log10(low)) - 1, math.ceil(math.log10(high)) + 1):
        for m in mantissas:
            v = float(f"{m * 10.0**decade:.3g}")
            if low <= v <= high:
                out.append(v)
    return out


class _Probe:
    """Evaluations of one design with one value changed, remembered by value. ``ignored``: rules
    that fail at every value on the grid, which this value cannot fix (reported, not judged)."""

    def __init__(self, design: Design, profile: Profile, choice: Choice):
        self.design, self.profile, self.choice = design, profile, choice
        self.seen: dict[float, list[Finding]] = {}
        self.ignored: set[str] = set()

    def findings(self, x: float) -> list[Finding]:
        if x not in self.seen:
            self.seen[x] = judged(self.choice.change(self.design, x), self.profile)
        return self.seen[x]

    def failing(self, x: float) -> set[str]:
        return _failing(self.findings(x)) - self.ignored

    def passes(self, x: float) -> bool:
        return not self.failing(x)


def _edge(probe: _Probe, inside: float, outside: float) -> tuple[float, float]:
    """Bisect in log(value) between a passing and a failing value: (last pass, first fail)."""
    while abs(math.log(outside / inside)) > RELATIVE_PRECISION:
        middle = math.sqrt(inside * outside)
        if probe.passes(middle):
            inside = middle
        else:
            outside = middle
    return inside, outside


def _grid(low: float, high: float) -> list[float]:
    count = max(2, round(math.log10(high / low) * GRID_PER_DECADE) + 1)
    return [low * (high / low) ** (k / (count - 1)) for k in range(count)]


def _conflict(probe: _Probe, grid: list[float]) -> dict:
    """Why no value passes: the rule needing the value at least a and the rule needing it at
    most b < a (read off the grid); else the rules that fail on the grid."""
    failing = [probe.failing(x) for x in grid]
    rules = sorted(set().union(*failing), key=list(RULES).index)
    needs_more: dict[str, float] = {}  # passes only from some value up
    needs_less: dict[str, float] = {}  # passes only up to some value
    for rule in rules:
        passing = [x for x, bad in zip(grid, failing, strict=True) if rule not in bad]
        if passing and rule in failing[0] and rule not in failing[-1]:
            needs_more[rule] = min(passing)
        elif passing and rule not in failing[0] and rule in failing[-1]:
            needs_less[rule] = max(passing)
    label, unit = probe.choice.label, probe.choice.unit
    if needs_more and needs_less:
        low_rule = max(needs_more, key=needs_more.get)
        high_rule = min(needs_less, key=needs_less.get)
        if needs_more[low_rule] > needs_less[high_rule]:
            return {
                "rules": [low_rule, high_rule],
                "text": (
                    f"{low_rule} needs {label} ≥ {format_si(needs_more[low_rule], unit)}, "
                    f"{high_rule} needs {label} ≤ {format_si(needs_less[high_rule], unit)}"
                ),
            }
    return {"rules": rules, "text": f"no {label} on the grid passes {', '.join(rules)} together"}


def window(design: Design, choice: Choice, profile: Profile = DEFAULT_PROFILE) -> dict | None:
    """The window of one chosen value (None when the design has no such value)."""
    designed = choice.value(design)
    if designed is None or not designed > 0:
        return None
    probe = _Probe(design, profile, choice)
    allowed_low, allowed_high = QUANTITY_RANGES[choice.unit]
    search_low = max(designed / choice.span, allowed_low if allowed_low > 0 else 0.0, 1e-15)
    search_high = min(designed * choice.span, allowed_high)
    grid = sorted({*_grid(search_low, search_high), designed})
    # Rules that fail at every value on the grid: this value cannot fix them.
    probe.ignored = set.intersection(*(_failing(probe.findings(x)) for x in grid))
    out: dict = {
        "value": choice.key,
        "label": choice.label,
        "title": choice.title,
        "unit": choice.unit,
        "designed": designed,
        "designed_passes": probe.passes(designed),
        "fail_at_every_value": sorted(probe.ignored, key=list(RULES).index),
        "searched": [search_low, search_high],
        "low": None,
        "high": None,
        "low_outside": None,  # the failing value just beyond each edge (None: the search limit)
        "high_outside": None,
        "series": choice.series,
        "standard": [],
        "best": None,
        "conflict": None,
    }
    passing = [k for k, x in enumerate(grid) if probe.passes(x)]
    if not passing:
        out["conflict"] = _conflict(probe, grid)
        out["evaluations"] = len(probe.seen)
        return out
    # The run of passing grid values around the designed value (or nearest to it).
    start = min(passing, key=lambda k: abs(math.log(grid[k] / designed)))
    low_k = high_k = start
    while low_k > 0 and probe.passes(grid[low_k - 1]):
        low_k -= 1
    while high_k < len(grid) - 1 and probe.passes(grid[high_k + 1]):
        high_k += 1
    if low_k > 0:
        out["low"], out["low_outside"] = _edge(probe, grid[low_k], grid[low_k - 1])
    else:
        out["low"] = grid[0]
    if high_k < len(grid) - 1:
        out["high"], out["high_outside"] = _edge(probe, grid[high_k], grid[high_k + 1])
    else:
        out["high"] = grid[-1]
    for value in standard_values(choice.series, out["low"], out["high"]):
        margin, rule = tightest_margin([f for f in probe.findings(value) if f.rule not in probe.ignored])
        out["standard"].append(
            {
                "value": value,
                "e12": choice.series == "E24" and _in_e12(value),
                "passes": probe.passes(value),
                "margin": margin,
                "rule": rule,
            }
        )
    passing_standard = [s for s in out["standard"] if s["passes"] and s["margin"] is not None]
    if passing_standard:
        # The largest tightest margin; among equals (a rule this value does not move sets it),
        # the one nearest the middle of the window (in log), the farthest from both edges.
        middle = math.sqrt(out["low"] * out["high"])
        out["best"] = max(
            passing_standard, key=lambda s: (round(s["margin"], 9), -abs(math.log(s["value"] / middle)))
        )["value"]
    if any(not s["passes"] for s in out["standard"]):
        out["note"] = (
            "some standard values inside fail: the rules are not monotonic in this value, so the "
            "interval has gaps (each value's own result is listed)"
        )
    out["evaluations"] = len(probe.seen)
    return out


def _in_e12(value: float) -> bool:
    mantissa = value / 10 ** math.floor(math.log10(value) + 1e-12)
    return any(abs(mantissa - m) < 1e-9 for m in E12)


def design_windows(design: Design, profile: Profile = DEFAULT_PROFILE) -> list[dict]:
    """The window of every value this design lets the designer choose, in CHOICES order."""
    return [w for w in (window(design, c, profile) for c in CHOICES) if w is not None]


def describe(w: dict) -> str:
    """One line for the terminal: "R_b: 180 Ω … 1.15 kΩ; E12 inside: 220, 270, … (best margin at 470 Ω)"."""
    unit, label = w["unit"], w["label"]
    if w["low"] is None:
        text = f"{label}: no value passes — {w['conflict']['text']}"
    else:
        low = format_si(w["low"], unit)
        high = format_si(w["high"], unit)
        if w["low_outside"] is None:
            low = f"≤ {low} (search limit)"
        if w["high_outside"] is None:
            high = f"≥ {high} (search limit)"
        text = f"{label}: {low} … {high}"
        e12 = w["series"] == "E24" and unit != "V"
        shown = [s for s in w["standard"] if s["passes"] and (s["e12"] or not e12)]
        if shown:
            values = [format_si(s["value"], unit) for s in shown]
            if len(values) > 8:
                values = values[:3] + ["…"] + values[-3:]
            text += f"; {'E12' if e12 else w['series']} inside: {', '.join(values)}"
        if w["best"] is not None:
            text += f" (best margin at {format_si(w['best'], unit)})"
        if not w["designed_passes"]:
            text += f"; the designed {format_si(w['designed'], unit)} is outside"
    if w["fail_at_every_value"]:
        text += f"; fail whatever {label}: {', '.join(w['fail_at_every_value'])}"
    return text
