"""The driver's DC operating point, on and off, over a set of corners (numpy arrays).

Low-side NPN switch: supply → coil (R_coil + L) → collector; emitter at ground; the base
driven from a Thevenin source (V_th, R_th) through R_b, with an optional pull-down R_be.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .clamps import kind_of
from .corners import Corners
from .design import Design, DividerDrive
from .physics import COPPER_ALPHA_20, VBE_TEMPCO, copper_ratio, self_heated_resistance


@dataclass
class OperatingPoint:
    vcc: np.ndarray
    ambient: np.ndarray
    r_coil: np.ndarray  # coil resistance carrying the on-current (cold at switch-on, worst corners)
    r_coil_hot: np.ndarray  # coil resistance when it is hot (for the must-operate voltage)
    coil_temp_hot: np.ndarray
    coil_current: np.ndarray  # inductor current when saturated, = I_0 at turn-off
    collector_current: np.ndarray  # coil plus any resistor clamp drawing current while on
    v_th_on: np.ndarray
    r_th_on: np.ndarray
    v_th_off: np.ndarray
    r_th_off: np.ndarray
    r_series: np.ndarray
    r_pulldown: np.ndarray  # inf when there is none
    base_current: np.ndarray  # available base current when on (0 when the base cannot turn on)
    base_resistor_current: np.ndarray  # through R_b, = drive source current
    required_base_current: np.ndarray
    overdrive: np.ndarray
    coil_voltage: np.ndarray  # across the coil when on (limited by h_FE(min) if not saturated)
    coil_voltage_hot: np.ndarray
    must_operate_hot: np.ndarray
    dissipation: np.ndarray
    junction_temp: np.ndarray
    power_allowed: np.ndarray
    vbe_off: np.ndarray
    vbe_on_hot: np.ndarray
    dropout_current: float


def _drive(design: Design, c: Corners) -> tuple[np.ndarray, ...]:
    drive = design.drive
    if isinstance(drive, DividerDrive):
        v_src = np.full(c.size, drive.v_source) if drive.v_source is not None else c["supply"]
        r_fixed = c["r_fixed"]
        scale = c["sensor_scale"]
        out = []
        for r_sensor in (drive.r_sensor_on * scale, drive.r_sensor_off * scale):
            r_top, r_bottom = (r_sensor, r_fixed) if drive.sensor_position == "top" else (r_fixed, r_sensor)
            # Thevenin equivalent of the divider: V_src·R_bot/(R_top+R_bot), R_top ∥ R_bot.
            out += [v_src * r_bottom / (r_top + r_bottom), r_top * r_bottom / (r_top + r_bottom)]
        return tuple(out)
    r_out = np.full(c.size, drive.r_out)
    return c["drive_on"], r_out, c["drive_off"], r_out


def operating_point(design: Design, c: Corners, *, steady_state: bool) -> OperatingPoint:
    """Evaluate the on and off states at every corner.

    ``steady_state`` (the nominal corner) lets the coil heat itself at the corner's supply;
    otherwise the on-current is taken with the coil at ambient (just switched on, highest
    current), and the hot coil for pick-up is self-heated at the highest supply (a coil that
    has been held on at high supply, then re-energised at low supply: conservative).
    """
    sw, coil = design.switch, design.coil
    vcc, ambient = c["supply"], c["ambient"]
    r_ambient = c["r_coil"] * copper_ratio(ambient, coil.r_at)
    v_on = vcc - sw.vce_sat
    if coil.rth is not None:
        heat_voltage = v_on if steady_state else design.supply.high - sw.vce_sat
        r_hot = self_heated_resistance(r_ambient, coil.r_coil, coil.r_at, heat_voltage, coil.rth)
    else:
        r_hot = r_ambient
    r_coil = r_hot if steady_state else r_ambient
    r_nominal_ref = coil.r_coil
    r_20 = c["r_coil"] / copper_ratio(coil.r_at, 20.0)
    coil_temp_hot = 20.0 + (r_hot / r_20 - 1) / COPPER_ALPHA_20

    coil_current = v_on / r_coil
    r_clamp = kind_of(design.clamp).parallel_resistance(design.clamp, c.values, c.size)
    collector_current = coil_current + v_on / r_clamp

    v_th_on, r_th_on, v_th_off, r_th_off = _drive(design, c)
    r_series = c["r_series"]
    r_pulldown = c["r_pulldown"] if design.base.r_pulldown is not None else np.full(c.size, np.inf)

    # I_B = (V_th,on − V_BE(sat))/(R_th + R_b) − V_BE(sat)/R_be, and no less than zero.
    through_rb = (v_th_on - sw.vbe_sat) / (r_th_on + r_series)
    base_current = np.maximum(0.0, through_rb - sw.vbe_sat / r_pulldown)
    # With the base not turned on, R_b carries only the divider current into R_be.
    base_resistor_current = np.where(
        base_current > 0, through_rb, v_th_on / (r_th_on + r_series + r_pulldown)
    )
    base_resistor_current = np.maximum(base_resistor_current, 0.0)
    required = collector_current / sw.hfe_min
    overdrive = base_current / required

    # Not saturated: I_C = h_FE(min)·I_B through the load, so the coil gets less voltage.
    def coil_volts(r):
        r_load = 1 / (1 / r + 1 / r_clamp)
        return np.minimum(v_on, sw.hfe_min * base_current * r_load)

    coil_voltage = coil_volts(r_coil)
    coil_voltage_hot = coil_volts(r_hot)
    # Pick-up is an ampere-turn threshold: V_pu(T) = V_pu(T_ref)·R(T)/R(T_ref).
    must_operate_hot = coil.v_pickup * r_hot / c["r_coil"]

    load_current = np.minimum(collector_current, sw.hfe_min * base_current)
    r_load = 1 / (1 / r_coil + 1 / r_clamp)
    vce = np.maximum(sw.vce_sat, vcc - load_current * r_load)
    # P = I_C·V_CE + I_B·V_BE(sat); T_J = T_A + P·R_θJA.
    dissipation = load_current * vce + base_current * sw.vbe_sat
    junction_temp = ambient + dissipation * sw.rth_ja
    power_allowed = np.minimum(sw.p_max, (sw.tj_max - ambient) / sw.rth_ja)

    # Off: V_BE = V_th,off·R_be/(R_th + R_b + R_be), written so that R_be = ∞ gives V_th,off.
    vbe_off = v_th_off / (1 + (r_th_off + r_series) / r_pulldown)
    vbe_on_hot = sw.vbe_on + VBE_TEMPCO * (junction_temp - 25.0)

    return OperatingPoint(
        vcc=vcc,
        ambient=ambient,
        r_coil=r_coil,
        r_coil_hot=r_hot,
        coil_temp_hot=coil_temp_hot,
        coil_current=coil_current,
        collector_current=collector_current,
        v_th_on=v_th_on,
        r_th_on=r_th_on,
        v_th_off=v_th_off,
        r_th_off=r_th_off,
        r_series=r_series,
        r_pulldown=r_pulldown,
        base_current=base_current,
        base_resistor_current=base_resistor_current,
        required_base_current=required,
        overdrive=overdrive,
        coil_voltage=coil_voltage,
        coil_voltage_hot=coil_voltage_hot,
        must_operate_hot=must_operate_hot,
        dissipation=dissipation,
        junction_temp=junction_temp,
        power_allowed=power_allowed,
        vbe_off=vbe_off,
        vbe_on_hot=vbe_on_hot,
        dropout_current=coil.v_dropout / r_nominal_ref,
    )
