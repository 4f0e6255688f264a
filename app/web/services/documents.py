"""Design documents: canonical JSON and its hash, parts as design-file objects, form fields."""

from __future__ import annotations

import re
from typing import Any

from app.engine.clamps import part_slots
from app.engine.design import PART_DETAILS
from app.engine.switches import part_kinds
from app.signoff.canonical import canonical_json as canonical_json  # re-exported
from app.signoff.canonical import sha256_hex

from ..models import Part

_NUMBER = re.compile(r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?")


# What a design document may hold: a design file is a few levels deep, with everyday numbers.
MAX_DEPTH = 12
MAX_NODES = 5000
MAX_STRING = 20000
MAX_INTEGER = 2**53  # beyond this JSON readers disagree on the value (RFC 8259, section 6)


def check_shape(document: Any, prefix: str = "") -> None:
    """Refuse, naming the field, what no design file holds and what would break storing or
    hashing it: nesting deeper than MAX_DEPTH, more than MAX_NODES values, integers beyond
    ±2**53, numbers that are not finite, text longer than MAX_STRING. Iterative: a deep
    document cannot exhaust the stack here."""
    import math

    from .errors import InputProblems

    stack = [(prefix, document, 0)]
    seen = 0
    while stack:
        path, node, depth = stack.pop()
        seen += 1
        where = path or "(design)"
        if seen > MAX_NODES:
            raise InputProblems(
                [(prefix or "(design)", f"holds more than {MAX_NODES} values; a design file holds far fewer")]
            )
        if depth > MAX_DEPTH:
            raise InputProblems(
                [(where, f"is nested more than {MAX_DEPTH} levels deep; a design file is a few levels deep")]
            )
        if isinstance(node, dict):
            for key, value in node.items():
                stack.append((f"{path}.{key}" if path else str(key), value, depth + 1))
        elif isinstance(node, list):
            for index, value in enumerate(node):
                stack.append((f"{path}.{index}" if path else str(index), value, depth + 1))
        elif isinstance(node, bool) or node is None:
            continue
        elif isinstance(node, int):
            if abs(node) > MAX_INTEGER:
                raise InputProblems([(where, f"is too large a number (at most {MAX_INTEGER:,} in size)")])
        elif isinstance(node, float):
            if not math.isfinite(node):
                raise InputProblems([(where, "must be a finite number")])
        elif isinstance(node, str) and len(node) > MAX_STRING:
            raise InputProblems([(where, f"is too long (at most {MAX_STRING} characters)")])


def load_json_file(raw: bytes, field: str = "file") -> Any:
    """An uploaded JSON file; InputProblems naming ``field`` when it is not UTF-8 JSON, uses the
    non-standard NaN/Infinity, or nests so deep the parser gives up."""
    import json

    from .errors import InputProblems

    def refuse_constant(name: str):
        raise ValueError(f"{name} is not a JSON number")

    try:
        return json.loads(raw.decode("utf-8"), parse_constant=refuse_constant)
    except UnicodeDecodeError:
        raise InputProblems([(field, "not UTF-8 text")]) from None
    except RecursionError:
        raise InputProblems([(field, "nested too deeply to be a design file")]) from None
    except ValueError as exc:  # JSONDecodeError is a ValueError
        raise InputProblems([(field, f"not JSON ({exc})")]) from None


def finite_json(value: Any) -> Any:
    """``value`` with every number that is not finite replaced by None (JSON has no infinity;
    PostgreSQL refuses it, and so does the API's encoder). Used on reports before storing."""
    import math

    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, dict):
        return {k: finite_json(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [finite_json(v) for v in value]
    return value


def content_hash(document: Any) -> str:
    """SHA-256 of the canonical JSON; the one function the trail's verification also uses."""
    return sha256_hex(document)


def typed_value(text: str) -> Any:
    """A form value as the design file would hold it: plain numbers as numbers, the rest
    (engineering notation such as "4k7" or "120 mH") as the text the engine parses."""
    text = text.strip()
    if _NUMBER.fullmatch(text):
        number = float(text)
        return int(number) if number.is_integer() and "e" not in text.lower() and "." not in text else number
    return text


# Where each part kind goes in a design file; zeners and TVSs have no name field there.
SLOT_KINDS = {
    "switch": "switch",  # any switch part kind (parts.kinds_for)
    "coil": "coil",
    **part_slots(),
}
NAMED_KINDS = {*part_kinds(), "coil", "diode"}


def part_kind_in(slot: str, slot_kind: str, body: Any) -> str:
    """The library part kind of the part copied into a slot: for the switch, from its "kind"
    in the design file (none: an NPN transistor)."""
    if slot_kind != "switch":
        return slot_kind
    kind = body.get("kind", "npn") if isinstance(body, dict) else "npn"
    return next((part for part, k in part_kinds().items() if k.kind == kind), "transistor")


def part_document(part: Part) -> dict:
    """The frozen copy of a library part as it appears inside a design file."""
    body = dict(part.params)
    for key in PART_DETAILS:  # maker part number, package, datasheet: only when given
        if getattr(part, key, ""):
            body[key] = getattr(part, key)
    if part.kind in NAMED_KINDS:
        body = {"name": part.name, **body}
    if part.kind in part_kinds():  # a switch: its kind in the design file ("npn", "nmos"…)
        body = {"kind": part_kinds()[part.kind].kind, **body}
    return body


def get_path(document: dict, path: str) -> Any:
    node: Any = document
    for key in path.split("."):
        if not isinstance(node, dict) or key not in node:
            return None
        node = node[key]
    return node


def set_path(document: dict, path: str, value: Any) -> None:
    keys = path.split(".")
    node = document
    for key in keys[:-1]:
        node = node.setdefault(key, {})
    node[keys[-1]] = value
