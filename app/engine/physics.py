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
    """Shockley diode with series resistance: V_F(i) = n·V_T·ln(1 + i/I_S) + i·R_S. ``i_s`` is
    one number, or one per corner where the corners vary the forward voltage (``diode_vf``)."""

    i_s: float | np.ndarray
    n: float
    r_s: float

    @classmethod
    def from_part(cls, diode: Diode, forward=None) -> DiodeModel:
        """Use the SPICE parameters given; fit I_S through (vf, vf_at) when it is absent:
        I_S = I_F / (exp((V_F − I_F·R_S)/(n·V_T)) − 1).

        ``forward``: the forward voltage at vf_at per corner (the corner factor ``diode_vf``,
        from vf_min to vf). The curve keeps n and R_S and moves I_S so that it passes, at
        vf_at, ``vf − forward`` below the part's own curve (through ``forward`` itself when I_S
        is fitted): a diode whose V_F sits lower across the whole working range."""
        n = diode.n if diode.n is not None else DEFAULT_EMISSION
        r_s = diode.rs if diode.rs is not None else 0.0
        if diode.is_ is not None:
            i_s = diode.is_
        else:
            i_s = diode.vf_at / np.expm1((diode.vf - diode.vf_at * r_s) / (n * THERMAL_VOLTAGE))
        if forward is None:
            return cls(float(i_s), float(n), float(r_s))
        given = n * THERMAL_VOLTAGE * np.log1p(diode.vf_at / i_s) + diode.vf_at * r_s
        target = given - (diode.vf - np.asarray(forward, dtype=float))
        per_corner = diode.vf_at / np.expm1((target - diode.vf_at * r_s) / (n * THERMAL_VOLTAGE))
        return cls(per_corner, float(n), float(r_s))

    def at(self, index: int) -> DiodeModel:
        """The model at corner ``index`` alone (one I_S): for one corner's SPICE netlist."""
        if isinstance(self.i_s, np.ndarray):
            return DiodeModel(float(self.i_s[index]), self.n, self.r_s)
        return self

    def rows(self, index) -> DiodeModel:
        """The model at some corners (an index or a slice), keeping one I_S per corner."""
        if isinstance(self.i_s, np.ndarray):
            return DiodeModel(self.i_s[index], self.n, self.r_s)
        return self

    def voltage(self, current):
        current = np.asarray(current, dtype=float)
        i_s = self.i_s
        if isinstance(i_s, np.ndarray) and current.ndim == 2:  # (corners × grid)
            i_s = i_s[:, None]
        return self.n * THERMAL_VOLTAGE * np.log1p(current / i_s) + current * self.r_s


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
