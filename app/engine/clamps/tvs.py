"""A TVS diode from the switch node to ground: the fastest release of the clamps; it stands off
the supply whenever the switch is off.

Its breakdown voltage varies between parts from V_BR(min) to V_BR(max) (at the test current
I_T), so it is a corner factor ``tvs_breakdown``: the spike is taken on the breakdown line
through (I_T, V_BR(max)) and (I_clamp, V_clamp), the release time on the line through
(I_T, V_BR(min)) and (I_clamp, V_clamp) (the lower line gives the slower decay). The nominal
corner takes the middle of the two. Without a datasheet V_BR(max), 1.1 × V_BR(min) is
assumed (from memory: typical of ±5 % parts) and the spike finding says so.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from ..design import Model, Tvs
from ..physics import THERMAL_VOLTAGE
from ..units import format_si
from .base import ClampKind, ClampPath, FormSlot, Stress, g, round12

# V_BR(max)/V_BR(min) assumed when the datasheet's maximum is not given (from memory,
# typical of ±5 % parts).
ASSUMED_MAX_RATIO = 1.1


class TvsClamp(Model):
    kind: Literal["tvs_switch"]
    tvs: Tvs


def v_breakdown_max(tvs: Tvs) -> tuple[float, bool]:
    """(V_BR(max), whether it was assumed)."""
    if tvs.v_breakdown_max is not None:
        return tvs.v_breakdown_max, False
    return round12(ASSUMED_MAX_RATIO * tvs.v_breakdown), True


def line_resistance(tvs: Tvs, v_br):
    """R_S of the breakdown line V(i) = V_BR + V_T·ln(i/I_T) + (i − I_T)·R_S through
    (I_T, V_BR) and (I_clamp, V_clamp); zero when V_BR is already that high (the line then
    passes above (I_clamp, V_clamp): the conservative side)."""
    log_part = THERMAL_VOLTAGE * np.log(tvs.i_clamp / tvs.i_test)
    return np.maximum(
        0.0, (tvs.v_clamp - np.asarray(v_br, dtype=float) - log_part) / (tvs.i_clamp - tvs.i_test)
    )


@dataclass(frozen=True)
class TvsPath(ClampPath):
    v_br: np.ndarray | None = None  # breakdown voltage at I_T per corner
    r_s: np.ndarray | None = None  # line resistance per corner
    i_test: float = 1e-3

    supply_in_loop = True

    def device_voltage(self, i):
        # A coil that carries nothing when on (i = 0) gives log(0) = −inf here: no turn-off to
        # speak of, handled by the turn-off; the warning would only be noise on standard error.
        with np.errstate(divide="ignore"):
            return (
                self.v_br[:, None]
                + THERMAL_VOLTAGE * np.log(i / self.i_test)
                + (i - self.i_test) * self.r_s[:, None]
            )

    def loop_voltage(self, i):
        return self.device_voltage(i) - self.vcc[:, None]


class TvsToGround(ClampKind):
    kind = "tvs_switch"
    title = "TVS from the switch to ground"
    model = TvsClamp
    fields = (FormSlot("tvs", "TVS", part="tvs"),)

    def factors(self, clamp):
        return [("tvs_breakdown", clamp.tvs.v_breakdown, v_breakdown_max(clamp.tvs)[0], "V")]

    def nominal(self, clamp):
        return {"tvs_breakdown": round12((clamp.tvs.v_breakdown + v_breakdown_max(clamp.tvs)[0]) / 2)}

    def path(self, clamp, design, vcc, values):
        v_br = values["tvs_breakdown"]
        return TvsPath(vcc, v_br=v_br, r_s=line_resistance(clamp.tvs, v_br), i_test=clamp.tvs.i_test)

    def netlist_lines(self, path, index):
        v_br, r_s, i_test = float(path.v_br[index]), float(path.r_s[index]), path.i_test
        lines = [f".model dtvs D(BV={g(v_br - i_test * r_s)} IBV={g(i_test)} NBV=1)"]
        if r_s > 0:
            lines += [f"RT sw t {g(r_s)}", "DT 0 t dtvs"]
        else:
            lines.append("DT 0 sw dtvs")
        return lines

    def diode(self, clamp):
        return None

    def peak_current_rating(self, clamp):
        return clamp.tvs.i_clamp, "peak pulse"

    def standoff(self, ctx):
        """V_cc,max against the stand-off voltage V_RWM when given, else V_BR(min)."""
        tvs = ctx.design.clamp.tvs
        v = ctx.op.vcc
        if tvs.v_standoff is not None:
            rating, what = tvs.v_standoff, "stand-off voltage V_RWM"
        else:
            rating, what = tvs.v_breakdown, "minimum breakdown V_BR(min) (no v_standoff given)"
        return Stress(
            v,
            rating,
            "voltage",
            "V",
            lambda i: (
                f"TVS stands off {format_si(float(v[i]), 'V')} while the switch is off; {what} {format_si(rating, 'V')}"
            ),
            lambda i: f"V = V_cc,max = {format_si(float(v[i]), 'V', 4)}",
        )

    def energy_stress(self, ctx, share_text):
        to = ctx.turnoff
        pulse = to.peak_switch_voltage * to.initial_current
        rating = ctx.design.clamp.tvs.p_max
        return Stress(
            pulse,
            rating,
            "power",
            "W",
            lambda i: (
                f"peak pulse {format_si(float(pulse[i]), 'W')} into the TVS, rated {format_si(rating, 'W')} "
                f"(a 10/1000 µs rating; a longer decay allows less); {share_text}"
            ),
            lambda i: (
                f"P_PP = V_TVS(I_0)·I_0 = {format_si(float(to.peak_switch_voltage[i]), 'V', 4)}·"
                f"{format_si(float(to.initial_current[i]), 'A', 4)} = {format_si(float(pulse[i]), 'W', 4)}"
            ),
        )

    def breakdown_note(self, clamp):
        v_max, assumed = v_breakdown_max(clamp.tvs)
        if assumed:
            return (
                f"; TVS V_BR(max) assumed {format_si(v_max, 'V')} = 1.1 × V_BR(min) (no v_breakdown_max given; "
                "from memory, typical of ±5 % parts)"
            )
        return f"; TVS at V_BR(max) {format_si(v_max, 'V')}"
