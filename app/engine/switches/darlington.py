"""One channel of a Darlington array (seven or eight channels in one package, common emitter):
a built-in series resistor at each input, two base-emitter drops to turn on, a saturation
voltage of around a volt, and one package dissipation shared by every channel that conducts."""

from __future__ import annotations

from ..circuit import Bipolar, bipolar_operating_point
from ..design import DarlingtonArray
from ..physics import VBE_TEMPCO
from .base import FormSlot, SwitchKind, g

# The lowest input voltage at which the pair starts to conduct when the part gives none: two
# base-emitter drops of 0.55 V at small current, 25 °C (from memory).
DEFAULT_VBE_ON_MIN = 1.1


def input_onset(array: DarlingtonArray) -> tuple[float, bool]:
    """(the lowest turn-on voltage of the input at 25 °C, whether it was assumed)."""
    if array.vbe_on_min is not None:
        return array.vbe_on_min, False
    return min(DEFAULT_VBE_ON_MIN, array.vbe_on), True


class DarlingtonChannel(SwitchKind):
    kind = "darlington_array"
    title = "Darlington array channel"
    part_kind = "darlington_array"
    model = DarlingtonArray
    resistors = "base"
    resistors_required = False
    fields = (FormSlot("switch", "Darlington array channel", part="darlington_array"),)

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

    def factors(self, switch):
        lo, hi = (
            switch.r_input * (1 - switch.r_input_tolerance),
            switch.r_input * (1 + switch.r_input_tolerance),
        )
        return [("r_input", float(f"{lo:.12g}"), float(f"{hi:.12g}"), "Ω")]

    def nominal(self, switch):
        return {"r_input": switch.r_input}

    def operating_point(self, design, c, *, steady_state, assumed_coil_rise):
        """As an NPN (app/engine/circuit.py) with the built-in input resistor in series with R_b:
        I_B = (V_th,on − V_I(on))/(R_th + R_b + R_in) − V_I(on)/R_be; saturation needs
        I_C/h_FE(min). The input's turn-on voltage is two base-emitter drops, falling
        2 × 2 mV/K (common practice, per junction); the package dissipates, for each of the
        channels_on channels, I_C·V_CE(sat) + I_B·V_I(on) + I_B²·R_in."""
        arr = design.switch
        onset, _ = input_onset(arr)
        # One pair has one gain: where the Monte Carlo yield draws it, both bounds take it.
        hfe = c.figure("hfe", None)
        bipolar = Bipolar(
            hfe_min=arr.hfe_min if hfe is None else hfe,
            hfe_max=arr.hfe_max if hfe is None else hfe,
            vbe_sat=arr.vbe_on,
            vbe_sat_min=None,
            vce_sat=c.figure("vce_sat", arr.vce_sat),
            vce_sat_low=c.figure("vce_sat", arr.vce_sat_low),
            vbe_on=onset,
            vbe_tempco=2 * VBE_TEMPCO,
            p_max=arr.p_max,
            rth_ja=arr.rth_ja,
            tj_max=arr.tj_max,
            channels_on=arr.channels_on,
        )
        return bipolar_operating_point(
            design,
            c,
            bipolar,
            steady_state=steady_state,
            assumed_coil_rise=assumed_coil_rise,
            r_input=c["r_input"],
        )

    def netlist_lines(self, design, op, index, i_switch, t_open):
        """The channel as a gate-controlled conductance in series with its saturation voltage:
        I = v(g)·(v(sw) − V_CE(sat))/1 mΩ, v(g) falling from 1 to 0 over t_open. The engine's I_0
        at this corner sets V_CE(sat) so that (V_cc − V_CE)/R_coil = I_0 (V_CE(sat) max at the
        nominal corner, the lowest at the worst corners)."""
        vce = float(op.vcc[index] - op.coil_current[index] * op.r_coil[index])
        return [
            f"VGATE g 0 PWL(0 1 {g(t_open)} 0)",
            f"BSW sw 0 I=v(g)*(v(sw)-{g(vce)})/1e-3",
        ]
