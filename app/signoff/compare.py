"""Compare two revisions of a channel: what changed in the design, and in the findings."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from app.engine.rules import STATUS_ORDER


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


@dataclass(frozen=True)
class InputChange:
    path: str
    old: Any  # None when added
    new: Any  # None when removed


@dataclass(frozen=True)
class FindingChange:
    rule: str
    title: str
    kind: str  # "new", "resolved", "status", "value"
    old: dict | None
    new: dict | None


@dataclass(frozen=True)
class Comparison:
    inputs: list[InputChange]
    findings: list[FindingChange]

    @property
    def unchanged(self) -> bool:
        return not self.inputs and not self.findings


_PROBLEMS = {"violation", "marginal"}


def _close(a: float | None, b: float | None, rel: float = 1e-9) -> bool:
    if a is None or b is None:
        return a is b
    return abs(a - b) <= rel * max(abs(a), abs(b))


def compare(old_doc: dict, old_report: dict, new_doc: dict, new_report: dict) -> Comparison:
    """Inputs and parts that changed (old → new), and findings that are new problems,
    resolved problems, or changed in status or value."""
    a, b = flatten(old_doc), flatten(new_doc)
    inputs = [InputChange(p, a.get(p), b.get(p)) for p in sorted(a.keys() | b.keys()) if a.get(p) != b.get(p)]
    before = {f["rule"]: f for f in old_report["findings"]}
    after = {f["rule"]: f for f in new_report["findings"]}
    changes = []
    for rule in list(after) + [r for r in before if r not in after]:
        old, new = before.get(rule), after.get(rule)
        title = (new or old)["title"]
        old_bad = old is not None and old["status"] in _PROBLEMS
        new_bad = new is not None and new["status"] in _PROBLEMS
        if new_bad and not old_bad:
            kind = "new"
        elif old_bad and not new_bad:
            kind = "resolved"
        elif old is None or new is None:
            kind = "status"
        elif old["status"] != new["status"]:
            kind = "status"
        elif not _close(old["value"], new["value"]):
            kind = "value"
        else:
            continue
        changes.append(FindingChange(rule, title, kind, old, new))
    changes.sort(
        key=lambda c: (
            ("new", "status", "resolved", "value").index(c.kind),
            -STATUS_ORDER[(c.new or c.old)["status"]],
        )
    )
    return Comparison(inputs, changes)
