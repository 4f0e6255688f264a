"""Design documents: canonical JSON and its hash, parts as design-file objects, form fields."""

from __future__ import annotations

import re
from typing import Any

from app.engine.clamps import part_slots
from app.signoff.canonical import canonical_json as canonical_json  # re-exported
from app.signoff.canonical import sha256_hex

from ..models import Part

_NUMBER = re.compile(r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?")


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
    "switch": "transistor",
    "coil": "coil",
    **part_slots(),
}
NAMED_KINDS = {"transistor", "coil", "diode"}


def part_document(part: Part) -> dict:
    """The frozen copy of a library part as it appears inside a design file."""
    body = dict(part.params)
    if part.kind in NAMED_KINDS:
        body = {"name": part.name, **body}
    if part.kind == "transistor":
        body = {"kind": "npn", **body}
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
