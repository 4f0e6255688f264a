"""Design inputs and part parameters in words with their units, for the pages and the record;
the design file's key is shown small beside the words. Read from the form's field list and
the part models' own descriptions, so nothing is spelled twice."""

from __future__ import annotations

import typing
from functools import cache

from pydantic import WithJsonSchema

from .parts import PART_MODELS
from .revision_form import FIELDS


def input_label(path: str) -> tuple[str, str]:
    """("Supply, nominal", "V") for "supply.nominal"; the path itself when the form has no field."""
    field = FIELDS.get(path)
    if field is None:
        return path.replace("_", " ").replace(".", ", "), ""
    return field.label, field.unit


def _unit_of(info) -> str:
    metadata = list(info.metadata)
    for arg in typing.get_args(info.annotation):  # X | None: the quantity sits inside the union
        metadata += list(getattr(arg, "__metadata__", ()))
    for item in metadata:
        if isinstance(item, WithJsonSchema) and isinstance(item.json_schema, dict):
            description = item.json_schema.get("description", "")
            if description.startswith("in "):
                return description[3:]
    return ""


@cache
def _part_labels(kind: str) -> dict[str, tuple[str, str]]:
    model = PART_MODELS.get(kind)
    if model is None:
        return {}
    out = {}
    for attr, info in model.model_fields.items():
        unit = _unit_of(info)
        words = info.description or attr.replace("_", " ")
        if words.startswith("in ") or words == f"in {unit}":
            words = attr.replace("_", " ")
        out[info.alias or attr] = (words[:1].upper() + words[1:], unit)
    return out


def part_label(kind: str, key: str) -> tuple[str, str]:
    """("Coil resistance at r_at", "Ω") for a coil's "r_coil"."""
    return _part_labels(kind).get(key, (key.replace("_", " "), ""))


def labelled_inputs(inputs: list[tuple[str, str]]) -> list[tuple[str, str, str, str]]:
    """(words, unit, key, value as entered) for each design input."""
    return [(*input_label(path), path, value) for path, value in inputs]


def labelled_parts(parts: list[tuple[str, str, dict]]) -> list[tuple[str, str, dict, list]]:
    """(slot, kind, part, [(words, unit, key, value)]) for each frozen part."""
    out = []
    for slot, kind, body in parts:
        rows = [
            (*part_label(kind, key), key, str(value))
            for key, value in body.items()
            if key not in ("name", "kind", "maker_part", "package", "datasheet")
        ]
        out.append((slot, kind, body, rows))
    return out
