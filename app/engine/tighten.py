"""What to tighten: for each rule, which tolerances decide its worst corner and by how much
halving each one moves the rule's margin.

Every tolerance the design gives (a field named ``tolerance`` or ``*_tolerance`` anywhere in
the design, and a supply given as min/max, whose spread about nominal is halved instead) is
halved in turn, with everything else as designed, and the design is evaluated again. A rule's
margin is how far its value sits inside (+) or past (−) its derated limit, as a fraction of the
limit (app/signoff/margin.py reads it the same way for the pages). Quantities that do not move
a rule's margin do not decide its worst corner and are left out of its list.
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from dataclasses import dataclass

from pydantic import BaseModel

from .design import Design, Supply
from .profile import DEFAULT_PROFILE, Profile
from .review import evaluate

# A margin change below this (0.05 percentage points of the limit) is not a lever worth naming.
NEGLIGIBLE = 5e-4


@dataclass(frozen=True)
class Lever:
    """One tolerance: where it is in the design file, its value now and halved."""

    path: tuple[str, ...]
    now: str
    halved: str

    @property
    def name(self) -> str:
        return ".".join(self.path)


def margin_of(finding: dict) -> float | None:
    """(limit − value)/|limit| for an upper bound, (value − limit)/|limit| for a lower one."""
    value, limit, bound = finding.get("value"), finding.get("limit"), finding.get("bound")
    if bound not in ("upper", "lower") or value is None or limit is None or limit == 0:
        return None
    if not (math.isfinite(value) and math.isfinite(limit)):
        return None
    return (limit - value if bound == "upper" else value - limit) / abs(limit)


def _percent(fraction: float) -> str:
    return f"{fraction * 100:.3g} %"


def _levers(model: BaseModel, path: tuple[str, ...] = ()) -> Iterator[tuple[Lever, BaseModel]]:
    """Every tolerance in the design with the halved copy of the design it stands for."""
    for name in type(model).model_fields:
        value = getattr(model, name)
        here = (*path, name)
        if isinstance(value, BaseModel):
            for lever, changed in _levers(value, here):
                yield lever, model.model_copy(update={name: changed})
        elif (name == "tolerance" or name.endswith("_tolerance")) and isinstance(value, float) and value > 0:
            yield (
                Lever(here, _percent(value), _percent(value / 2)),
                model.model_copy(update={name: value / 2}),
            )
    if isinstance(model, Supply) and model.min is not None and model.max is not None:
        low = model.nominal - (model.nominal - model.min) / 2
        high = model.nominal + (model.max - model.nominal) / 2
        if (low, high) != (model.min, model.max):
            yield (
                Lever((*path, "min/max"), f"{model.min:g}…{model.max:g} V", f"{low:g}…{high:g} V"),
                model.model_copy(update={"min": low, "max": high}),
            )


def what_to_tighten(
    design: Design, profile: Profile = DEFAULT_PROFILE, report: dict | None = None
) -> list[dict]:
    """Per rule with a margin: its margin now and, for each tolerance that moves it, the margin and
    status with that tolerance halved — largest gain first. Rules no tolerance moves are left out."""
    base = report if report is not None else evaluate(design, profile)
    now = {f["rule"]: f for f in base["findings"]}
    trials = []
    for lever, changed in _levers(design):
        trials.append((lever, {f["rule"]: f for f in evaluate(changed, profile)["findings"]}))
    out = []
    for rule, finding in now.items():
        before = margin_of(finding)
        if before is None:
            continue
        moves = []
        for lever, findings in trials:
            after_finding = findings.get(rule)
            after = margin_of(after_finding) if after_finding else None
            if after is None or abs(after - before) < NEGLIGIBLE:
                continue
            moves.append(
                {
                    "quantity": lever.name,
                    "now": lever.now,
                    "halved": lever.halved,
                    "margin": after,
                    "change": after - before,
                    "status": after_finding["status"],
                }
            )
        if moves:
            moves.sort(key=lambda m: -m["change"])
            out.append(
                {
                    "rule": rule,
                    "title": finding["title"],
                    "status": finding["status"],
                    "margin": before,
                    "levers": moves,
                }
            )
    out.sort(key=lambda r: r["margin"])
    return out


def tighten_lines(entries: list[dict]) -> list[str]:
    """The advice as lines for a terminal or a page: tightest rule first."""
    lines = []
    for entry in entries:
        lines.append(f"{entry['rule']} ({entry['status']}, margin {entry['margin'] * 100:+.1f} %):")
        for m in entry["levers"]:
            lines.append(
                f"  halve {m['quantity']} ({m['now']} → {m['halved']}): margin {m['change'] * 100:+.1f} points"
                f" to {m['margin'] * 100:+.1f} % ({m['status']})"
            )
    return lines
