"""Device models shared by the rules, the transient and the SPICE netlist.

All functions take numpy arrays (one element per corner) or floats.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .design import Diode, Tvs, Zener

# Copper resistance temperature coefficient at 20 °C, standard annealed copper (IEC 60028).
COPPER_ALPHA_20 = 0.00393
# Boltzmann constant and elementary charge, SI defining constants (CODATA / SI 2019).
BOLTZMANN = 1.380649e-23
ELEMENTARY_CHARGE = 1.602176634e-19
# Diode models are evaluated at ngspice's default temperature, 27 °C, so both agree.
SPICE_TEMPERATURE_C = 27.0
THERMAL_VOLTAGE = BOLTZMANN * (SPICE_TEMPERATURE_C + 273.15) / ELEMENTARY_CHARGE
# Emission coefficient assumed for a silicon rectifier when only (V_F, I_F) is known (from memory).
DEFAULT_EMISSION = 1.8
# V_BE(on) falls about 2 mV/K as the junction warms (common practice).
VBE_TEMPCO = -0.002


def copper_ratio(temp_c, ref_c):
    """R(T)/R(T_ref) for copper: (1 + α(T − 20)) / (1 + α(T_ref − 20)), α = 0.00393 /K (IEC 60028)."""
    return (1 + COPPER_ALPHA_20 * (np.asarray(temp_c) - 20.0)) / (1 + COPPER_ALPHA_20 * (ref_c - 20.0))


def self_heated_resistance(r_ambient, r_ref, ref_c, voltage, rth):
    """Coil resistance when the coil has heated itself at ``voltage``.

    T = T_A + P·R_th with P = V²/R(T) and R(T) = R_A + R_20·α·(T − T_A) (copper line through
    R_A at T_A). Substituting gives R² − R_A·R − R_20·α·R_th·V² = 0, whose positive root is
    R = (R_A + √(R_A² + 4·R_20·α·R_th·V²)) / 2.
    """
    r20 = r_ref / (1 + COPPER_ALPHA_20 * (ref_c - 20.0))
    k = r20 * COPPER_ALPHA_20 * rth
    return (r_ambient + np.sqrt(r_ambient**2 + 4 * k * np.asarray(voltage) ** 2)) / 2


@dataclass(frozen=True)
class DiodeModel:
    """Shockley diode with series resistance: V_F(i) = n·V_T·ln(1 + i/I_S) + i·R_S."""

    i_s: float
    n: float
    r_s: float

    @classmethod
    def from_part(cls, diode: Diode) -> DiodeModel:
        """Use the SPICE parameters given; fit I_S through (vf, vf_at) when it is absent:
        I_S = I_F / (exp((V_F − I_F·R_S)/(n·V_T)) − 1)."""
        n = diode.n if diode.n is not None else DEFAULT_EMISSION
        r_s = diode.rs if diode.rs is not None else 0.0
        if diode.is_ is not None:
            i_s = diode.is_
        else:
            i_s = diode.vf_at / np.expm1((diode.vf - diode.vf_at * r_s) / (n * THERMAL_VOLTAGE))
        return cls(float(i_s), float(n), float(r_s))

    def voltage(self, current):
        current = np.asarray(current, dtype=float)
        return self.n * THERMAL_VOLTAGE * np.log1p(current / self.i_s) + current * self.r_s


@dataclass(frozen=True)
class BreakdownModel:
    """Zener or TVS in breakdown, the form SPICE uses (BV, IBV, NBV = 1) plus a series resistor:
    V(i) = V_BR + V_T·ln(i / I_T) + (i − I_T)·R_S, so that V(I_T) = V_BR."""

    v_br: float
    i_test: float
    r_s: float

    @classmethod
    def from_zener(cls, zener: Zener, v_z: float) -> BreakdownModel:
        return cls(float(v_z), zener.i_test, zener.rz)

    @classmethod
    def from_tvs(cls, tvs: Tvs) -> BreakdownModel:
        """The dynamic resistance makes the line pass through (i_clamp, v_clamp)."""
        log_part = THERMAL_VOLTAGE * np.log(tvs.i_clamp / tvs.i_test)
        r_s = max(0.0, (tvs.v_clamp - tvs.v_breakdown - log_part) / (tvs.i_clamp - tvs.i_test))
        return cls(tvs.v_breakdown, tvs.i_test, float(r_s))

    def voltage(self, current, v_br=None):
        current = np.asarray(current, dtype=float)
        v_br = self.v_br if v_br is None else v_br
        with np.errstate(divide="ignore"):
            v = v_br + THERMAL_VOLTAGE * np.log(current / self.i_test) + (current - self.i_test) * self.r_s
        # Far below I_T the logarithm would go negative; a breakdown junction never drives the
        # current, so its voltage stays at 0 V or above (no negative energy at tiny currents).
        return np.maximum(v, 0.0)


def temperature_curve(ratio_at_125, temp_c):
    """A normalised temperature curve through 1 at 25 °C and ``ratio_at_125`` at 125 °C:
    ratio^((T − 25)/100) (exponential in T, the shape of a MOSFET's R_DS(on) curve)."""
    return np.power(ratio_at_125, (np.asarray(temp_c, dtype=float) - 25.0) / 100.0)
