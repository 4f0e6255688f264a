"""A rectifier and a resistor in series across the coil."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np
from pydantic import Field

from ..design import Diode, Model, Ohms, Tolerance, Watts
from .base import ClampKind, ClampPath, FormSlot, diode_factors, diode_model, diode_nominal, g, spread
from .diode import diode_model_line


class DiodeResistorClamp(Model):
    kind: Literal["diode_resistor"]
    diode: Diode
    r: Ohms
    tolerance: Tolerance = Field(0.0, description="resistor tolerance, percent")
    power_rating: Watts | None = Field(None, description="the clamp resistor's power rating, in W")


@dataclass(frozen=True)
class DiodeResistorPath(ClampPath):
    r: np.ndarray | None = None  # clamp resistor per corner

    def loop_voltage(self, i):
        return self.diode.voltage(i) + i * self.r[:, None]

    def resistor_energy(self, clamp_energy, diode_energy):
        return clamp_energy - diode_energy


RESISTOR_FIELDS = (
    FormSlot("r", "Clamp resistor", "Ω"),
    FormSlot("tolerance", "Clamp tolerance", "%"),
    FormSlot("power_rating", "Clamp resistor power rating", "W", hint="blank: not judged"),
)


class DiodeResistorAcrossCoil(ClampKind):
    kind = "diode_resistor"
    title = "Diode + resistor across the coil"
    model = DiodeResistorClamp
    fields = (FormSlot("diode", "Diode", part="diode"), *RESISTOR_FIELDS)

    def factors(self, clamp):
        return [("r_clamp", *spread(clamp.r, clamp.tolerance), "Ω"), *diode_factors(clamp.diode)]

    def nominal(self, clamp):
        return {"r_clamp": clamp.r, **diode_nominal(clamp.diode)}

    def path(self, clamp, design, vcc, values):
        return DiodeResistorPath(vcc, diode=diode_model(clamp.diode, values), r=values["r_clamp"])

    def resistor_power(self, ctx):
        # Nothing while on (the diode blocks); its turn-off share only.
        return np.zeros(ctx.corners.size), ctx.design.clamp.power_rating

    def netlist_lines(self, path, index):
        return [diode_model_line(path.diode.at(index)), "D1 sw k dclamp", f"RS k vcc {g(path.r[index])}"]
