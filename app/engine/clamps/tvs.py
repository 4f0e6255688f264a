"""A TVS diode from the switch node to ground: the fastest release of the clamps; it stands off
the supply whenever the switch is off."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from ..design import Model, Tvs
from ..physics import BreakdownModel
from ..units import format_si
from .base import ClampKind, ClampPath, FormSlot, Stress, g


class TvsClamp(Model):
    kind: Literal["tvs_switch"]
    tvs: Tvs


@dataclass(frozen=True)
class TvsPath(ClampPath):
    breakdown: BreakdownModel | None = None

    supply_in_loop = True

    def loop_voltage(self, i):
        return self.breakdown.voltage(i) - self.vcc[:, None]

    def device_voltage(self, i):
        return self.breakdown.voltage(i)


class TvsToGround(ClampKind):
    kind = "tvs_switch"
    title = "TVS from the switch to ground"
    model = TvsClamp
    fields = (FormSlot("tvs", "TVS", part="tvs"),)

    def path(self, clamp, design, vcc, values):
        return TvsPath(vcc, breakdown=BreakdownModel.from_tvs(clamp.tvs))

    def netlist_lines(self, path, index):
        b = path.breakdown
        lines = [f".model dtvs D(BV={g(b.v_br - b.i_test * b.r_s)} IBV={g(b.i_test)} NBV=1)"]
        if b.r_s > 0:
            lines += [f"RT sw t {g(b.r_s)}", "DT 0 t dtvs"]
        else:
            lines.append("DT 0 sw dtvs")
        return lines

    def diode(self, clamp):
        return None

    def peak_current_rating(self, clamp):
        return clamp.tvs.i_clamp, "peak pulse"

    def standoff(self, ctx):
        v = ctx.op.vcc
        rating = ctx.design.clamp.tvs.v_breakdown
        return Stress(
            v,
            rating,
            "voltage",
            "V",
            lambda i: f"TVS stands off {format_si(float(v[i]), 'V')}, breakdown {format_si(rating, 'V')} min",
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
        )
