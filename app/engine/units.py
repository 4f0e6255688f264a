"""Engineering-notation numbers: "4k7", "4.7 kΩ", "120m", "120 mH", "5 ms", "10%".

Values in the design file are SI base units. A string may carry an SI prefix, an RKM code
(IEC 60062: the prefix letter stands in place of the decimal point, "4k7" = 4.7 k, "4R7" =
4.7) and the unit symbol. A unit symbol, when present, must be the field's own unit.
"""

from __future__ import annotations

import math
import re

PREFIXES: dict[str, float] = {
    "f": 1e-15,
    "p": 1e-12,
    "n": 1e-9,
    "u": 1e-6,
    "µ": 1e-6,
    "μ": 1e-6,
    "m": 1e-3,
    "": 1.0,
    "k": 1e3,
    "K": 1e3,
    "M": 1e6,
    "G": 1e9,
}

# Spellings accepted for each unit the design file uses.
UNIT_SPELLINGS: dict[str, tuple[str, ...]] = {
    "V": ("V",),
    "A": ("A",),
    "Ω": ("Ω", "Ω", "ohm", "ohms", "Ohm", "R"),
    "H": ("H",),
    "F": ("F",),
    "W": ("W",),
    "s": ("s",),
    "J": ("J",),
    "°C": ("°C", "degC", "C"),
    "K/W": ("K/W", "°C/W", "C/W"),
    "/h": ("/h",),
    "V/K": ("V/K", "V/°C"),
    "%": ("%",),
    "": (),
}

_NUMBER = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_PLAIN = re.compile(rf"^\s*(?P<num>{_NUMBER})\s*(?P<rest>.*?)\s*$")
# RKM: digits, one prefix letter (or R for unity), digits; e.g. 4k7, 2M2, 4R7, R47, 1k1.
_RKM = re.compile(r"^\s*(?P<int>\d*)(?P<letter>[pnuµμmRrkKMG])(?P<frac>\d+)\s*(?P<unit>.*?)\s*$")


class UnitError(ValueError):
    """A string that is not a number in the field's unit."""


def _unit_factor(rest: str, unit: str) -> float:
    """Split "kΩ" / "m" / "mH" / "" into a prefix multiplier, checking the unit symbol."""
    rest = rest.strip()
    if rest == "":
        return 1.0
    spellings = UNIT_SPELLINGS.get(unit, ())
    for spelling in sorted(spellings, key=len, reverse=True):
        if rest.endswith(spelling):
            prefix = rest[: -len(spelling)].strip()
            if prefix in PREFIXES:
                # "R" alone is an ohm; "mR" a milliohm. Keep "C" from meaning coulomb prefixes.
                return PREFIXES[prefix]
    if rest in PREFIXES:
        return PREFIXES[rest]
    allowed = f"the unit {unit}" if unit else "no unit"
    raise UnitError(f"has an unknown prefix or unit {rest!r}; expected an SI prefix and {allowed}")


def parse_quantity(value: object, unit: str = "") -> float:
    """Return ``value`` in SI base units; raise UnitError with a message for the user."""
    if isinstance(value, bool):
        raise UnitError("must be a number, not true/false")
    if isinstance(value, (int, float)):
        try:
            number = float(value)
        except OverflowError:
            raise UnitError("is too large to be a number (it overflows a float)") from None
    elif isinstance(value, str):
        number = _parse_string(value, unit)
    else:
        raise UnitError(f'must be a number or a string such as "4k7" or "120 m{unit or ""}"')
    if not math.isfinite(number):
        raise UnitError("must be a finite number")
    return number


def _parse_string(text: str, unit: str) -> float:
    if not text.strip():
        raise UnitError("is empty; expected a number")
    match = _RKM.match(text)
    if match and match["int"] + match["frac"]:
        letter = match["letter"]
        scale = 1.0 if letter in "Rr" else PREFIXES[letter]
        number = float(f"{match['int'] or '0'}.{match['frac']}") * scale
        if match["unit"]:
            factor = _unit_factor(match["unit"], unit)
            if factor != 1.0:
                raise UnitError(f"carries two prefixes in {text!r}")
        return number
    if len(text) > 100:
        raise UnitError("is too long to be a number (at most 100 characters)")
    match = _PLAIN.match(text)
    if match:
        return float(match["num"]) * _unit_factor(match["rest"], unit)
    raise UnitError('is not a number; write e.g. "4700", "4.7k", "4k7" or "4.7 kΩ"')


def parse_percent(value: object) -> float:
    """A tolerance in percent: 10 and "10%" both mean ±10 %. Returns the fraction (0.10)."""
    if isinstance(value, str):
        text = value.strip()
        if text.startswith("±"):
            text = text[1:]
        if text.endswith("%"):
            text = text[:-1]
        return parse_quantity(text, "") / 100.0
    return parse_quantity(value, "") / 100.0


_PLAIN_UNITS = frozenset(("°C", "%", "", "×", "K/W", "/h"))
# exponent -> (prefix, 10**exponent), the same numbers 10**exponent gives each time
_ENGINEERING = {
    e: (p, 10**e)
    for e, p in zip(range(-15, 12, 3), ("f", "p", "n", "µ", "m", "", "k", "M", "G"), strict=True)
}


def format_si(value: float | None, unit: str = "", digits: int = 3) -> str:
    """Engineering notation for people: 0.0734 A -> "73.4 mA"."""
    if value is None:
        return "—"
    if not math.isfinite(value):
        return "∞" if value > 0 else "−∞"
    if unit in _PLAIN_UNITS:
        text = f"{value:.{digits}g}" if abs(value) < 1e4 else f"{value:.0f}"
        return f"{text} {unit}".strip()
    if value == 0:
        return f"0 {unit}".strip()
    exponent = int(math.floor(math.log10(abs(value)) / 3) * 3)
    symbol, scale = _ENGINEERING[max(-15, min(9, exponent))]
    return f"{value / scale:.{digits}g} {symbol}{unit}"
