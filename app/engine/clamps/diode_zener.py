"""A rectifier and a zener in series across the coil: a faster release for a higher spike."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from ..design import Diode, Model, Zener
from ..physics import BreakdownModel
from ..units import format_si
from .base import ClampKind, ClampPath, FormSlot, Stress, diode_factors, diode_model, diode_nominal, g, spread
from .diode import diode_model_line


class DiodeZenerClamp(Model):
    kind: Literal["diode_zener"]
    diode: Diode
    zener: Zener


@dataclass(frozen=True)
class DiodeZenerPath(ClampPath):
    breakdown: BreakdownModel | None = None
    v_br: np.ndarray | None = None  # zener voltage per corner

    def loop_voltage(self, i):
        return self.diode.voltage(i) + self.breakdown.voltage(i, self.v_br[:, None])


class DiodeZenerAcrossCoil(ClampKind):
    kind = "diode_zener"
    title = "Diode + zener across the coil"
    model = DiodeZenerClamp
    fields = (FormSlot("diode", "Diode", part="diode"), FormSlot("zener", "Zener", part="zener"))

    def factors(self, clamp):
        return [("vz", *spread(clamp.zener.vz, clamp.zener.tolerance), "V"), *diode_factors(clamp.diode)]

    def nominal(self, clamp):
        return {"vz": clamp.zener.vz, **diode_nominal(clamp.diode)}

    def path(self, clamp, design, vcc, values):
        return DiodeZenerPath(
            vcc,
            diode=diode_model(clamp.diode, values),
            breakdown=BreakdownModel.from_zener(clamp.zener, clamp.zener.vz),
            v_br=values["vz"],
        )

    def netlist_lines(self, path, index):
        b = path.breakdown
        v_br = float(path.v_br[index])
        # SPICE breakdown: V(i) = BV + N_BV·V_T·ln(i/IBV); the series resistor adds i·R_Z, so
        # BV = V_Z − I_ZT·R_Z makes V(I_ZT) = V_Z as in the engine's model.
        lines = [
            diode_model_line(path.diode.at(index)),
            f".model dzener D(BV={g(v_br - b.i_test * b.r_s)} IBV={g(b.i_test)} NBV=1)",
            "D1 sw k dclamp",
        ]
        # A series resistance of zero is left out rather than written as a tiny resistor: a
        # micro-ohm element makes ngspice's matrix so stiff that the run stalls.
        if b.r_s > 0:
            lines += [f"RZ k z {g(b.r_s)}", "DZ vcc z dzener"]
        else:
            lines.append("DZ vcc k dzener")
        return lines

    def energy_stress(self, ctx, share_text):
        """The zener's average power E_z·f against its P_max (needs switching.per_hour)."""
        per_hour = ctx.design.switching.per_hour
        if per_hour is None:
            return None
        to = ctx.turnoff
        # The zener's share: its voltage times the charge (plus its rz loss, counted with it).
        power = (to.clamp_energy - to.diode_energy) * per_hour / 3600.0
        return Stress(
            power,
            ctx.design.clamp.zener.p_max,
            "power",
            "W",
            lambda i: f"zener averages {format_si(float(power[i]), 'W')} at {per_hour:g}/h; {share_text}",
            lambda i: (
                f"P_Z = E_Z·f, E_Z = ∫ V_Z(i)·i dt = {format_si(float(to.clamp_energy[i] - to.diode_energy[i]), 'J', 4)}"
                f" per turn-off from I_0 = {format_si(float(to.initial_current[i]), 'A', 4)}, f = {per_hour:g}/3600 s"
                f" = {format_si(float(power[i]), 'W', 4)}"
            ),
        )
