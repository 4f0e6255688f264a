"""What every review rule shares: the Finding, the evaluation Context, the registry ``RULES`` and
``judge()``, which picks a rule's worst corner and its status.

A rule receives the evaluation context (every corner at once, as arrays) and returns a
Finding, or None when it does not apply to this design (e.g. no diode in the clamp).
"""

from __future__ import annotations

import inspect
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Literal

import numpy as np

from ..circuit import OperatingPoint
from ..clamps import ClampKind, ClampPath, kind_of
from ..corners import Corners
from ..design import Design
from ..profile import Profile
from ..switches import SwitchKind, switch_kind
from ..transient import TurnOff
from ..units import format_si

Status = Literal["violation", "marginal", "ok", "note"]
STATUS_ORDER: dict[str, int] = {"violation": 3, "marginal": 2, "ok": 1, "note": 0}


@dataclass(frozen=True)
class Finding:
    rule: str
    title: str
    status: Status
    value: float | None
    unit: str
    limit: float | None
    rating: float | None
    corner: dict[str, float]
    message: str
    # "upper": the value must stay at or below the limit (a stress); "lower": at or above it (a
    # margin); None for notes and findings with no limit.
    bound: str | None = None
    # The rule's formula with the worst corner's numbers substituted, as checked on paper.
    worked: str | None = None

    def as_dict(self) -> dict:
        def num(x):
            return None if x is None or not np.isfinite(x) else float(x)

        return {
            "rule": self.rule,
            "title": self.title,
            "status": self.status,
            "value": num(self.value),
            "unit": self.unit,
            "limit": num(self.limit),
            "rating": num(self.rating),
            "corner": self.corner,
            "message": self.message,
            "bound": self.bound,
            "worked": self.worked,
        }


@dataclass
class Context:
    design: Design
    profile: Profile
    corners: Corners
    op: OperatingPoint  # every worst-case corner
    nominal: OperatingPoint
    path: ClampPath  # the clamp at every worst-case corner
    nominal_path: ClampPath
    turnoff: TurnOff  # every worst-case corner
    turnoff_nominal: TurnOff
    extras: dict = field(default_factory=dict)
    # Only the findings' statuses are read (an alternative clamp's pass or fail): judge() leaves
    # out the message, the worked formula and the corner.
    verdict_only: bool = False

    @property
    def clamp(self) -> ClampKind:
        """The registry entry of the design's clamp kind (its ratings hooks)."""
        return kind_of(self.design.clamp)

    @property
    def switch(self) -> SwitchKind:
        """The registry entry of the design's switch kind (its ratings)."""
        return switch_kind(self.design.switch)


@dataclass(frozen=True)
class Rule:
    id: str
    title: str
    check: Callable[[Context], Finding | None]
    # The switch kinds the rule makes sense for (app/engine/switches/); None: every kind.
    kinds: tuple[str, ...] | None = None

    @property
    def formula(self) -> str:
        return inspect.cleandoc(self.check.__doc__ or "")

    def applies_to(self, design: Design) -> bool:
        return self.kinds is None or design.switch.kind in self.kinds


RULES: dict[str, Rule] = {}


def rule(rule_id: str, title: str, *, kinds: tuple[str, ...] | None = None):
    """Register a rule; ``kinds`` names the switch kinds it applies to (skipped for the others)."""

    def register(check: Callable[[Context], Finding | None]):
        RULES[rule_id] = Rule(rule_id, title, check, kinds)
        return check

    return register


def _ndim(x) -> int:
    """np.ndim(x), without its dispatch for the plain numbers and arrays judge() is given."""
    if isinstance(x, np.ndarray):
        return x.ndim
    return 0 if isinstance(x, (float, int)) else np.ndim(x)


def _at(x: np.ndarray | float, index: int) -> float:
    return float(x[index]) if _ndim(x) else float(x)


def corner_used(ctx: Context, index: int, *, hot_coil: bool = False) -> dict[str, float]:
    """The corner's parameters as varied (``r_coil`` is the coil's resistance at its reference
    temperature ``r_at``), plus the coil as the rule used it there: ``coil_temp`` (°C) and
    ``r_coil_used`` (Ω), at the corner's ambient, or self-heated for ``hot_coil`` rules."""
    corner = ctx.corners.describe(index)
    if hot_coil:
        temp, resistance = ctx.op.coil_temp_hot, ctx.op.r_coil_hot
    else:
        temp, resistance = ctx.op.ambient, ctx.op.r_coil
    corner["coil_temp"] = float(f"{_at(temp, index):.6g}")
    corner["r_coil_used"] = float(f"{_at(resistance, index):.6g}")
    return corner


def _nothing_allowed(bound: np.ndarray | float, ratio: np.ndarray, n: int) -> np.ndarray:
    """``ratio`` with ∞ wherever ``bound`` (one number, or one per corner) is zero or less."""
    if _ndim(bound) == 0:  # one number: no array of n copies to compare
        return np.full(n, np.inf) if bound <= 0 else ratio
    return np.where(np.broadcast_to(bound, (n,)) <= 0, np.inf, ratio)


def judge(
    ctx: Context,
    rule_id: str,
    value: np.ndarray,
    rating: np.ndarray | float,
    limit: np.ndarray | float,
    unit: str,
    *,
    keep_below: bool,
    message: Callable[[int, Status], str],
    hot_coil: bool = False,
    worked: Callable[[int], str] | None = None,
) -> Finding:
    """Pick the worst corner and its status.

    ``keep_below``: the value must stay at or below the limit (a stress); otherwise at or above
    it (a margin). Beyond the absolute rating is a violation, beyond the derated limit marginal.
    The worst corner is the one furthest past the rating if any is, else past the limit.
    ``hot_coil``: the rule uses the self-heated coil (the corner then records that coil).
    ``worked``: the formula with the numbers of a corner substituted, ending in the value.
    """
    n = ctx.corners.size
    value = np.asarray(value, dtype=float)
    if value.shape != (n,):
        value = np.full(n, value)
    with np.errstate(divide="ignore", invalid="ignore"):
        if keep_below:
            over_rating = np.asarray(value / rating, dtype=float)
            over_limit = np.asarray(value / limit, dtype=float)
            infinite = np.isinf(value)
            if infinite.any():
                over_rating[infinite] = over_limit[infinite] = np.inf
            # A rating (or limit) of zero or less allows nothing: any stress is past it.
            over_rating = _nothing_allowed(rating, over_rating, n)
            over_limit = _nothing_allowed(limit, over_limit, n)
        else:
            over_rating = rating / value
            over_limit = limit / value
            nonpositive = value <= 0
            if nonpositive.any():
                over_rating = np.where(nonpositive, np.inf, over_rating)
                over_limit = np.where(nonpositive, np.inf, over_limit)
    per_corner = ctx.extras.get("per_corner")
    if per_corner is not None:  # every corner's own outcome, for the Monte Carlo yield
        # "not within" rather than "past": a value that cannot be judged (NaN) is never a pass.
        past = (~(np.asarray(over_rating) <= 1), ~(np.asarray(over_limit) <= 1))
        if rule_id in per_corner:  # a rule judged two ways: past either
            past = (per_corner[rule_id][0] | past[0], per_corner[rule_id][1] | past[1])
        per_corner[rule_id] = past
    worst_rating = int(over_rating.argmax())
    if over_rating[worst_rating] > 1:
        worst, status = worst_rating, "violation"
    else:
        worst = int(over_limit.argmax())
        status = "marginal" if over_limit[worst] > 1 else "ok"
    if ctx.verdict_only:
        return Finding(rule_id, RULES[rule_id].title, status, float(value[worst]), unit, None, None, {}, "")
    return Finding(
        rule=rule_id,
        title=RULES[rule_id].title,
        status=status,
        value=float(value[worst]),
        unit=unit,
        limit=_at(limit, worst),
        rating=_at(rating, worst),
        corner=corner_used(ctx, worst, hot_coil=hot_coil),
        message=message(worst, status),
        bound="upper" if keep_below else "lower",
        worked=worked(worst) if worked is not None else None,
    )


def worse(*findings: Finding | None) -> Finding | None:
    """The finding with the worse status (the first of equals), for a rule judged two ways."""
    present = [f for f in findings if f is not None]
    if not present:
        return None
    return max(present, key=lambda f: STATUS_ORDER[f.status])  # max() keeps the first of equals


def note(
    ctx: Context,
    rule_id: str,
    value: float | None,
    unit: str,
    message: str,
    index: int | None = None,
    worked: str | None = None,
) -> Finding:
    corner = corner_used(ctx, index) if index is not None else {}
    return Finding(
        rule_id, RULES[rule_id].title, "note", value, unit, None, None, corner, message, worked=worked
    )


def _si(x: float, unit: str) -> str:
    return format_si(float(x), unit)


def _n(x: float, unit: str = "") -> str:
    """A number in a worked formula: four significant digits, enough to check by hand; a negative
    number in brackets with a true minus sign, so "150 °C − (−10 °C)" reads right."""
    text = format_si(float(x), unit, digits=4)
    return f"(−{text[1:]})" if text.startswith("-") else text


def _sum_r(*parts: tuple[str, float]) -> str:
    """R_a + R_b written with the numbers, leaving out the parts that are zero."""
    return " + ".join(_n(r, "Ω") for _, r in parts if r) or "0 Ω"
