"""No clamp: the switch node rises until the switch itself breaks down."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from ..design import Model
from .base import ClampKind, ClampPath


class NoClamp(Model):
    kind: Literal["none"]


@dataclass(frozen=True)
class AvalanchePath(ClampPath):
    avalanche: float = 0.0  # the switch's breakdown (V_(BR)CEO, V_(BR)DSS): the least the node reaches

    unclamped = True
    supply_in_loop = True

    def loop_voltage(self, i):
        # Unclamped: the node rises to avalanche, at least V_(BR)CEO.
        return np.broadcast_to(self.avalanche - self.vcc[:, None], i.shape)

    def device_voltage(self, i):
        return np.broadcast_to(self.avalanche, i.shape)


class Unclamped(ClampKind):
    kind = "none"
    title = "No clamp"
    model = NoClamp
    unclamped = True

    def path(self, clamp, design, vcc, values):
        from ..switches import switch_kind

        return AvalanchePath(vcc, avalanche=switch_kind(design.switch).breakdown(design.switch))
