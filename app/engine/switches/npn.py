"""An NPN bipolar transistor, low side: the base driven through R_b with an optional pull-down."""

from __future__ import annotations

from ..circuit import Bipolar, bipolar_operating_point
from ..design import Transistor
from ..physics import VBE_TEMPCO
from .base import FormSlot, SwitchKind


class NpnTransistor(SwitchKind):
    kind = "npn"
    title = "NPN transistor"
    part_kind = "transistor"
    model = Transistor
    resistors = "base"
    fields = (FormSlot("switch", "NPN transistor", part="transistor"),)

    def breakdown(self, switch):
        return switch.vceo

    def current_rating(self, switch):
        return switch.ic_max

    def on_voltage_low(self, switch):
        return switch.vce_sat_low

    def problems(self, design):
        if design.switch.vce_sat >= design.supply.low:
            return [
                f"switch.vce_sat ({design.switch.vce_sat:g} V) must be below the lowest supply "
                f"({design.supply.low:g} V)"
            ]
        return []

    def operating_point(self, design, c, *, steady_state, assumed_coil_rise):
        sw = design.switch
        # One transistor has one gain and one saturation voltage: where the Monte Carlo yield
        # draws a figure (corners.sampled_figures), both its bounds take the drawn value.
        hfe, vbe_sat, vce_sat = c.figure("hfe", None), c.figure("vbe_sat", None), c.figure("vce_sat", None)
        bipolar = Bipolar(
            hfe_min=sw.hfe_min if hfe is None else hfe,
            hfe_max=sw.hfe_max if hfe is None else hfe,
            vbe_sat=sw.vbe_sat if vbe_sat is None else vbe_sat,
            vbe_sat_min=sw.vbe_sat_min if vbe_sat is None else vbe_sat,
            vce_sat=sw.vce_sat if vce_sat is None else vce_sat,
            vce_sat_low=sw.vce_sat_low if vce_sat is None else vce_sat,
            vbe_on=sw.vbe_on,
            vbe_tempco=VBE_TEMPCO,  # about −2 mV/K (common practice)
            p_max=sw.p_max,
            rth_ja=sw.rth_ja,
            tj_max=sw.tj_max,
        )
        return bipolar_operating_point(
            design, c, bipolar, steady_state=steady_state, assumed_coil_rise=assumed_coil_rise
        )
