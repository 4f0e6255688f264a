"""The derating profile: how far below its rating each part must be kept.

Default values are common practice (see DEVELOPERS.md): voltage ≤ 80 % of rating, current
≤ 80 %, power ≤ 50 %, junction ≤ 125 °C or T_J,max − 25 K (whichever is lower), saturation
overdrive ≥ 2, pick-up margin ≥ 10 % above the hot must-operate voltage. The cutoff fraction
(off-state base voltage at most 75 % of the hot turn-on voltage) is this project's default.
``coil_rise`` is the self-heating assumed for a coil whose design gives neither its thermal
resistance nor its temperature rise: 40 K at nominal voltage (from memory: small relay coils
rise some 20–50 K at nominal voltage in makers' data; the upper part of that range is taken
so the must-operate voltage is not underestimated).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, fields, replace

from .design import Limits
from .units import UnitError, parse_percent


@dataclass(frozen=True)
class Profile:
    name: str = "default"
    voltage: float = 0.80
    current: float = 0.80
    power: float = 0.50
    tj: float = 125.0
    overdrive: float = 2.0
    pickup_margin: float = 0.10
    cutoff: float = 0.75
    coil_rise: float = 40.0

    def with_limits(self, limits: Limits) -> Profile:
        overrides = {k: v for k, v in limits.model_dump().items() if v is not None}
        if not overrides:
            return self
        return replace(
            self, name=f"{self.name} + design overrides ({', '.join(sorted(overrides))})", **overrides
        )

    def as_dict(self) -> dict[str, float | str]:
        return asdict(self)


DEFAULT_PROFILE = Profile()


# ---------------------------------------------------------------- named profiles

# What each figure means and what is allowed, for forms, files and error messages.
FIGURES: dict[str, tuple[str, str]] = {
    "voltage": ("voltage ≤ this fraction of the rating", "fraction"),
    "current": ("current ≤ this fraction of the rating", "fraction"),
    "power": ("dissipation ≤ this fraction of the allowed power at the ambient", "fraction"),
    "tj": ("junction temperature ≤ this (°C), and never above T_J,max − 25 K", "celsius"),
    "overdrive": ("saturation overdrive (forced beta against h_FE,min) ≥ this", "overdrive"),
    "pickup_margin": ("the supply's low end ≥ the hot must-operate voltage plus this fraction", "margin"),
    "cutoff": ("off-state base voltage ≤ this fraction of the hot turn-on voltage", "fraction"),
}


class ProfileError(ValueError):
    """A profile that cannot be used; ``problems`` holds (field, message) pairs."""

    def __init__(self, problems: list[tuple[str, str]]):
        super().__init__("; ".join(f"{f}: {m}" for f, m in problems))
        self.problems = problems


def _figure(name: str, value: object) -> float:
    """One figure of a profile, or ValueError saying what is allowed. Fractions take 0.8 or "80 %"."""
    kind = FIGURES[name][1]
    if isinstance(value, bool) or not isinstance(value, int | float | str):
        raise ValueError(f"{value!r} is not a number")
    try:
        if kind in ("fraction", "margin") and isinstance(value, str) and value.strip().endswith("%"):
            number = parse_percent(value)
        else:
            number = float(value)
    except (UnitError, ValueError):
        raise ValueError(f"{value!r} is not a number") from None
    if not math.isfinite(number):
        raise ValueError(f"{value!r} is not a finite number")
    if kind == "fraction" and not 0 < number <= 1:
        raise ValueError(
            f"{value!r} is outside the allowed range: a fraction above 0 and at most 1 (or 1–100 %)"
        )
    if kind == "margin" and not 0 <= number < 1:
        raise ValueError(f"{value!r} is outside the allowed range: a fraction from 0 to below 1 (or 0–99 %)")
    if kind == "celsius" and not 25 < number <= 300:
        raise ValueError(f"{value!r} is outside the allowed range: above 25 °C and at most 300 °C")
    if kind == "overdrive" and not 1 <= number <= 100:
        raise ValueError(f"{value!r} is outside the allowed range: from 1 to 100")
    return number


def profile_from_dict(values: dict, base: Profile | None = None) -> Profile:
    """A profile from a mapping (a profile file, a form); figures left out come from ``base``
    (the general preset). Raises ProfileError naming every bad field."""
    base = base or PRESETS["general"]
    if not isinstance(values, dict):
        raise ProfileError([("(profile)", "must be a JSON object of figures")])
    allowed = {"format", "name", *FIGURES}
    problems = [
        (key, f"is not a profile field; allowed: {', '.join(['name', *FIGURES])}")
        for key in values
        if key not in allowed
    ]
    if "format" in values and values["format"] != PROFILE_FORMAT:
        problems.append(("format", f"{values['format']!r} is not {PROFILE_FORMAT!r}"))
    name = values.get("name", base.name)
    if not isinstance(name, str) or not name.strip() or len(name) > 120:
        problems.append(("name", "must be text of 1 to 120 characters"))
    figures = {}
    for key in FIGURES:
        if key in values:
            try:
                figures[key] = _figure(key, values[key])
            except ValueError as exc:
                problems.append((key, str(exc)))
    if problems:
        raise ProfileError(problems)
    return replace(base, name=name.strip(), **figures)


def figures_of(profile: Profile) -> dict[str, float]:
    return {f.name: getattr(profile, f.name) for f in fields(profile) if f.name in FIGURES}


PROFILE_FORMAT = "clampdown-profile/1"

# Two starting points for a team's profile.
PRESETS: dict[str, Profile] = {
    # Today's default values (common practice; see the module docstring).
    "general": replace(DEFAULT_PROFILE, name="general"),
    # Stricter limits in the manner of the derating standards for space and defence parts,
    # ECSS-Q-ST-30-11 and NASA EEE-INST-002 (figures from memory, for bipolar transistors and
    # diodes): voltage ≤ 75 % of the rating, current ≤ 75 %, dissipation ≤ 50 % (both give
    # about half the rated power, as general practice does; the lower junction ceiling is what
    # tightens dissipation), junction ≤ 110 °C. Overdrive, pick-up margin and cutoff are not
    # in those standards and stay at the common-practice values.
    "high reliability": replace(
        DEFAULT_PROFILE, name="high reliability", voltage=0.75, current=0.75, tj=110.0
    ),
}
