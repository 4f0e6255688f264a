"""A resistor across the coil: it also draws V/R the whole time the coil is on."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np
from pydantic import Field

from ..design import Model, Ohms, Tolerance, Watts
from .base import ClampKind, ClampPath, g, spread
from .diode_resistor import RESISTOR_FIELDS


class ResistorClamp(Model):
    kind: Literal["resistor"]
    r: Ohms
    tolerance: Tolerance = Field(0.0, description="resistor tolerance, percent")
    power_rating: Watts | None = Field(None, description="the clamp resistor's power rating, in W")


@dataclass(frozen=True)
class ResistorPath(ClampPath):
    r: np.ndarray | None = None  # clamp resistor per corner

    def loop_voltage(self, i):
        return i * self.r[:, None]

    def resistor_energy(self, clamp_energy, diode_energy):
        return clamp_energy


class ResistorAcrossCoil(ClampKind):
    kind = "resistor"
    title = "Resistor across the coil"
    model = ResistorClamp
    fields = RESISTOR_FIELDS

    def factors(self, clamp):
        return [("r_clamp", *spread(clamp.r, clamp.tolerance), "Ω")]

    def nominal(self, clamp):
        return {"r_clamp": clamp.r}

    def path(self, clamp, design, vcc, values):
        return ResistorPath(vcc, r=values["r_clamp"])

    def parallel_resistance(self, clamp, values, size):
        return values["r_clamp"]

    def resistor_power(self, ctx):
        # V²/R the whole time the coil is on; V = V_cc (V_CE(sat) taken as 0, the worst case).
        return ctx.op.vcc**2 / ctx.corners["r_clamp"], ctx.design.clamp.power_rating

    def netlist_lines(self, path, index):
        return [f"RP sw vcc {g(path.r[index])}"]

    def on_current(self, path, index, coil_voltage):
        return coil_voltage / float(path.r[index])
