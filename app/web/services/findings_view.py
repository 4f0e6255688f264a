"""How findings read on the pages: the worst corner in words with units and the values the rule
used, the limit's direction, the margin, and the order the reviewer asked for."""

from __future__ import annotations

from app.engine.units import UnitError, format_si, parse_quantity
from app.signoff.margin import SIGNS, bound_of, margin

from .errors import InputProblems

# A corner's parameters (app/engine/corners.py) in words, with their units.
CORNER_WORDS: dict[str, tuple[str, str]] = {
    "supply": ("supply", "V"),
    "ambient": ("ambient", "°C"),
    "r_series": ("base resistor", "Ω"),
    "r_pulldown": ("base pull-down", "Ω"),
    "r_fixed": ("divider fixed resistor", "Ω"),
    "sensor_scale": ("sensor resistance ×", ""),
    "drive_on": ("drive high", "V"),
    "drive_off": ("drive low", "V"),
    "vz": ("zener voltage", "V"),
    "diode_vf": ("clamp diode V_F at its vf_at", "V"),
    "r_clamp": ("clamp resistor", "Ω"),
    "r_input": ("array input resistor", "Ω"),
}
# A MOSFET's series resistor and pull-down sit at its gate (the report has gate rules).
_GATE_WORDS = {"r_series": ("gate resistor", "Ω"), "r_pulldown": ("gate pull-down", "Ω")}


def resistor_words(findings: list | None) -> dict[str, tuple[str, str]]:
    """CORNER_WORDS for a report: the gate's words when its findings are a MOSFET's."""
    rules = (f.get("rule", "") if isinstance(f, dict) else getattr(f, "rule", "") for f in findings or ())
    if any(str(rule).startswith("gate.") for rule in rules):
        return {**CORNER_WORDS, **_GATE_WORDS}
    return CORNER_WORDS


# Shown as one phrase: the coil as the rule used it.
_COIL_KEYS = {"r_coil", "r_coil_used", "coil_temp"}

SORTS = {"": "report order", "margin": "smallest margin first"}


def sort_key(value: str | None) -> str:
    value = (value or "").strip()
    if value not in SORTS:
        raise InputProblems(
            [("sort", f"{value!r} is not a sort order; allowed: margin, or empty for report order")]
        )
    return value


def _number(value: float, unit: str) -> str:
    if unit == "°C":
        return f"{value:.4g} °C"
    if unit == "":
        return f"{value:.4g}"
    return format_si(value, unit, 4)


def coil_reference_temp(document: dict) -> float:
    """The coil's r_at (the temperature its r_coil holds at), 20 °C when not given."""
    coil = document.get("coil") if isinstance(document, dict) else None
    raw = coil.get("r_at", 20.0) if isinstance(coil, dict) else 20.0
    try:
        return parse_quantity(raw, "°C")
    except (UnitError, TypeError, ValueError):
        return 20.0


def corner_words(
    corner: dict, r_at: float = 20.0, findings: list | None = None
) -> list[tuple[str, str, str]]:
    """(words, value with unit, key) for each parameter of a worst corner, e.g.
    ("coil resistance", "132.7 Ω at 0 °C (144 Ω at 20 °C)", "r_coil"); ``findings``, the
    report's, tell a MOSFET's gate resistor from a base resistor."""
    out = []
    table = resistor_words(findings)
    for key, value in corner.items():
        if key in _COIL_KEYS:
            continue
        words, unit = table.get(key, (key.replace("_", " "), ""))
        out.append((words, _number(value, unit), key))
    if "r_coil" in corner:
        nominal = f"{_number(corner['r_coil'], 'Ω')} at {r_at:.4g} °C"
        if "r_coil_used" in corner and "coil_temp" in corner:
            text = f"{_number(corner['r_coil_used'], 'Ω')} at {corner['coil_temp']:.4g} °C ({nominal})"
        else:
            text = nominal
        out.insert(min(2, len(out)), ("coil resistance", text, "r_coil"))
    return out


def direction(finding: dict) -> str:
    """ "≤" or "≥": which side of the limit (and rating) the value must stay; "" when none."""
    bound = bound_of(finding)
    return SIGNS[bound] if bound else ""


def margin_text(finding: dict) -> str:
    m = margin(finding)
    if m is None:
        return "—"
    return f"{m * 100:+.1f} %"


def ordered(findings: list[dict], sort: str) -> list[dict]:
    """Report order, or smallest margin first (furthest past the limit on top); findings
    without a margin (notes) keep their order at the end."""
    if sort != "margin":
        return list(findings)
    with_margin = [f for f in findings if margin(f) is not None]
    without = [f for f in findings if margin(f) is None]
    return sorted(with_margin, key=margin) + without
