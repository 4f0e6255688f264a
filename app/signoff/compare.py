"""Compare two revisions of a channel: what changed in the design, and in the findings.

Pure: two design documents and their reports in, a Comparison out.

- Inputs are compared as the engine reads them (SI numbers, tolerances as fractions), so a
  notation-only edit ("24 V" → "24", "10 %" → "10") is no change; the values are shown as typed.
- Findings are matched by rule id *and* unit: a rule that reports another quantity in the newer
  revision (an energy against a power) is one finding that disappears and one that appears,
  never a change of value.
- Each matched change says whether it got better or worse, by the rule's direction: the margin
  to the derated limit grew or shrank (a status change decides first).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from app.engine import DesignError, parse_design
from app.engine.rules import STATUS_ORDER

from .margin import margin


def flatten(document: Any, prefix: str = "") -> dict[str, Any]:
    """{"coil.r_coil": 160, "clamp.diode.vf": 1.0, ...}: one entry per leaf value."""
    if isinstance(document, dict):
        out: dict[str, Any] = {}
        for key in sorted(document):
            out.update(flatten(document[key], f"{prefix}.{key}" if prefix else str(key)))
        return out
    if isinstance(document, list):
        out = {}
        for i, item in enumerate(document):
            out.update(flatten(item, f"{prefix}[{i}]"))
        return out
    return {prefix: document}


def normalised(document: Any) -> dict[str, Any] | None:
    """The document's leaves as the engine reads them (SI units, fractions), or None when the
    document does not parse (then the values are compared as typed)."""
    try:
        design = parse_design(document)
    except DesignError:
        return None
    return flatten(design.model_dump(by_alias=True))


@dataclass(frozen=True)
class InputChange:
    path: str
    old: Any  # None when added
    new: Any  # None when removed


@dataclass(frozen=True)
class FindingChange:
    rule: str
    title: str
    # "new" (a problem now), "resolved" (no longer a problem), "status", "value", "limit",
    # "appeared" / "disappeared" (the rule reports this quantity in only one revision)
    kind: str
    old: dict | None
    new: dict | None
    effect: str = ""  # "better", "worse", or "" (no direction to judge by)
    old_margin: float | None = None
    new_margin: float | None = None

    @property
    def value_change(self) -> float | None:
        """New value minus old, in the finding's unit."""
        if self.old is None or self.new is None or self.old["value"] is None or self.new["value"] is None:
            return None
        return self.new["value"] - self.old["value"]

    @property
    def limit_moved(self) -> bool:
        return (
            self.old is not None and self.new is not None and not _close(self.old["limit"], self.new["limit"])
        )


@dataclass(frozen=True)
class Comparison:
    inputs: list[InputChange]
    findings: list[FindingChange]

    @property
    def unchanged(self) -> bool:
        return not self.inputs and not self.findings


_PROBLEMS = {"violation", "marginal"}
KIND_ORDER = ("new", "appeared", "status", "resolved", "disappeared", "limit", "value")
KIND_LABELS = {
    "new": "New problem",
    "appeared": "Appears",
    "status": "Status changed",
    "resolved": "Resolved",
    "disappeared": "Disappears",
    "limit": "Limit moved",
    "value": "Value changed",
}


def _close(a: Any, b: Any, rel: float = 1e-9) -> bool:
    if isinstance(a, (int, float)) and isinstance(b, (int, float)) and not isinstance(a, bool):
        return abs(a - b) <= rel * max(abs(a), abs(b))
    return a == b


def _same_input(path: str, a: dict, b: dict, norm_a: dict | None, norm_b: dict | None) -> bool:
    if norm_a is not None and norm_b is not None and (path in norm_a or path in norm_b):
        return _close(norm_a.get(path), norm_b.get(path))
    return a.get(path) == b.get(path)


def _effect(old: dict, new: dict, old_margin: float | None, new_margin: float | None) -> str:
    """Better or worse: a status nearer "within limits" decides first, then the margin."""
    if "note" not in (old["status"], new["status"]) and old["status"] != new["status"]:
        return "better" if STATUS_ORDER[new["status"]] < STATUS_ORDER[old["status"]] else "worse"
    if old_margin is None or new_margin is None or _close(old_margin, new_margin):
        return ""
    return "better" if new_margin > old_margin else "worse"


def _key(finding: dict) -> tuple[str, str]:
    return finding["rule"], finding.get("unit", "")


def compare(old_doc: dict, old_report: dict, new_doc: dict, new_report: dict) -> Comparison:
    """Inputs and parts that changed (old → new, as typed), and findings that are new problems,
    resolved, appeared or disappeared, or changed in status, value or limit."""
    a, b = flatten(old_doc), flatten(new_doc)
    norm_a, norm_b = normalised(old_doc), normalised(new_doc)
    inputs = [
        InputChange(p, a.get(p), b.get(p))
        for p in sorted(a.keys() | b.keys())
        if not _same_input(p, a, b, norm_a, norm_b)
    ]
    before = {_key(f): f for f in old_report["findings"]}
    after = {_key(f): f for f in new_report["findings"]}
    changes = []
    for key in list(after) + [k for k in before if k not in after]:
        old, new = before.get(key), after.get(key)
        title = (new or old)["title"]
        if old is None or new is None:
            kind = "appeared" if old is None else "disappeared"
            old_margin = margin(old) if old is not None else None
            new_margin = margin(new) if new is not None else None
            changes.append(FindingChange(key[0], title, kind, old, new, "", old_margin, new_margin))
            continue
        old_margin, new_margin = margin(old), margin(new)
        old_bad, new_bad = old["status"] in _PROBLEMS, new["status"] in _PROBLEMS
        if new_bad and not old_bad:
            kind = "new"
        elif old_bad and not new_bad:
            kind = "resolved"
        elif old["status"] != new["status"]:
            kind = "status"
        elif not _close(old["value"], new["value"]):
            kind = "value"
        elif not _close(old["limit"], new["limit"]):
            kind = "limit"
        else:
            continue
        effect = _effect(old, new, old_margin, new_margin)
        changes.append(FindingChange(key[0], title, kind, old, new, effect, old_margin, new_margin))
    changes.sort(key=lambda c: (KIND_ORDER.index(c.kind), -STATUS_ORDER[(c.new or c.old)["status"]]))
    return Comparison(inputs, changes)
