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

from dataclasses import asdict, dataclass, replace

from .design import Limits


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
