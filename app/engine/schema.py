"""JSON Schema of the design file, generated from the pydantic models (``clampdown schema``)."""

from __future__ import annotations

from .design import DESIGN_FORMAT, Design
from .switches import KINDS as SWITCH_KINDS


def design_schema() -> dict:
    schema = Design.model_json_schema(by_alias=True, mode="validation")
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    schema["$id"] = "clampdown-design-1.schema.json"
    schema["title"] = f"Clampdown design file ({DESIGN_FORMAT})"
    schema["description"] = (
        "One relay-driver design. Numbers are SI base units (V, A, Ω, H, F, W, s, °C, K/W); a "
        'string may carry SI prefixes, RKM codes and unit symbols ("4k7", "4.7 kΩ", "120 mH"). '
        'Tolerances are in percent (10 or "10%").'
    )
    # Which resistor block each switch kind is driven through (the registry's ``resistors``):
    # required, optional, or not allowed. A switch without a kind is an NPN transistor.
    rules = []
    for kind in SWITCH_KINDS.values():
        other = "gate" if kind.resistors == "base" else "base"
        then: dict = {"not": {"required": [other]}}
        if kind.resistors_required:
            then["required"] = [kind.resistors]
        switch: dict = {"properties": {"kind": {"const": kind.kind}}}
        if kind.model.model_fields["kind"].default != kind.kind:  # only the default kind may omit it
            switch["required"] = ["kind"]
        rules.append({"if": {"properties": {"switch": switch}}, "then": then})
    schema["allOf"] = rules
    return schema
