"""A rectifier diode across the coil: the slowest release, the lowest spike."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from ..design import Diode, Model
from ..physics import DiodeModel
from .base import ClampKind, ClampPath, FormSlot, diode_factors, diode_model, diode_nominal, g


class DiodeClamp(Model):
    kind: Literal["diode"]
    diode: Diode


@dataclass(frozen=True)
class DiodePath(ClampPath):
    def loop_voltage(self, i):
        return self.diode.voltage(i)


def diode_model_line(diode: DiodeModel) -> str:
    return f".model dclamp D(IS={g(diode.i_s)} N={g(diode.n)} RS={g(diode.r_s)})"


class DiodeAcrossCoil(ClampKind):
    kind = "diode"
    title = "Diode across the coil"
    model = DiodeClamp
    fields = (FormSlot("diode", "Diode", part="diode"),)

    def factors(self, clamp):
        return diode_factors(clamp.diode)

    def nominal(self, clamp):
        return diode_nominal(clamp.diode)

    def path(self, clamp, design, vcc, values):
        return DiodePath(vcc, diode=diode_model(clamp.diode, values))

    def netlist_lines(self, path, index):
        return [diode_model_line(path.diode.at(index)), "D1 sw vcc dclamp"]
