"""The driver's DC operating point, on and off, over a set of corners (numpy arrays).

Low-side NPN switch: supply → coil (R_coil + L) → collector; emitter at ground; the base
driven from a Thevenin source (V_th, R_th) through R_b, with an optional pull-down R_be.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .clamps import kind_of
from .corners import Corners
from .design import Coil, Design, DividerDrive
from .physics import COPPER_ALPHA_20, VBE_TEMPCO, copper_ratio, self_heated_resistance


@dataclass
class OperatingPoint:
    """At the worst-case corners the figures are bounds for their checks (stresses with the
    lowest V_CE(sat), margins with the highest); at the nominal corner they are one operating
    point at h_FE(min) (collector current, coil voltage and turn-off current agree)."""

    vcc: np.ndarray
    ambient: np.ndarray
    r_coil: np.ndarray  # coil resistance carrying the on-current (cold at switch-on, worst corners)
    r_coil_hot: np.ndarray  # coil resistance when it is hot (for the must-operate voltage)
    coil_temp_hot: np.ndarray
    coil_heating: str  # where the coil's self-heating came from: rth, temp_rise or assumed
    coil_rise: float | None  # the temperature rise at nominal voltage (temp_rise or assumed), K
    coil_current: np.ndarray  # inductor current when on, = I_0 at turn-off
    collector_current: np.ndarray  # coil plus any resistor clamp drawing current while on
    v_th_on: np.ndarray
    r_th_on: np.ndarray
    v_th_off: np.ndarray
    r_th_off: np.ndarray
    r_series: np.ndarray
    r_pulldown: np.ndarray  # inf when there is none
    base_current: np.ndarray  # available base current when on (0 when the base cannot turn on)
    base_resistor_current: np.ndarray  # through R_b, = drive source current (at the lowest V_BE)
    vbe_low: np.ndarray  # the lowest base-emitter voltage of a conducting base
    required_base_current: np.ndarray
    overdrive: np.ndarray
    coil_voltage: np.ndarray  # across the coil when on
    coil_voltage_hot: np.ndarray
    must_operate_hot: np.ndarray
    load_resistance: np.ndarray  # coil ∥ any resistor clamp, the switch's load when on
    linear_bound: np.ndarray  # True where the dissipation is the V_cc²/(4·R_load) bound
    dissipation: np.ndarray
    junction_temp: np.ndarray
    power_allowed: np.ndarray
    vbe_off: np.ndarray
    vbe_on_hot: np.ndarray
    dropout_current: float
    divider: dict[str, np.ndarray] | None = None  # divider drive: v_source, r_top/r_bottom on, off
    sweep_dissipation: np.ndarray | None = None  # slow divider: peak over the sensor's sweep
    sweep_bound: np.ndarray | None = None


def _drive(design: Design, c: Corners) -> tuple[tuple[np.ndarray, ...], dict[str, np.ndarray] | None]:
    drive = design.drive
    if isinstance(drive, DividerDrive):
        v_src = c["v_source"] if drive.v_source is not None else c["supply"]
        r_fixed = c["r_fixed"]
        scale = c["sensor_scale"]
        out = []
        parts: dict[str, np.ndarray] = {"v_source": v_src}
        for state, r_sensor in (("on", drive.r_sensor_on * scale), ("off", drive.r_sensor_off * scale)):
            r_top, r_bottom = (r_sensor, r_fixed) if drive.sensor_position == "top" else (r_fixed, r_sensor)
            parts[f"r_top_{state}"], parts[f"r_bottom_{state}"] = r_top, r_bottom
            # Thevenin equivalent of the divider: V_src·R_bot/(R_top+R_bot), R_top ∥ R_bot.
            out += [v_src * r_bottom / (r_top + r_bottom), r_top * r_bottom / (r_top + r_bottom)]
        return tuple(out), parts
    r_out = np.full(c.size, drive.r_out)
    return (c["drive_on"], r_out, c["drive_off"], r_out), None


def coil_thermal_resistance(coil: Coil, assumed_rise: float | None) -> tuple[float | None, str, float | None]:
    """The coil's thermal resistance to ambient, where it came from, and the rise it stands for.

    Given ``rth``, that. Given a temperature rise ΔT at nominal voltage (``temp_rise``, or the
    profile's assumed rise), the R_th that gives exactly ΔT at V_nom from r_at:
    R_hot = R_ref·(1 + α(r_at + ΔT − 20))/(1 + α(r_at − 20)), P = V_nom²/R_hot, R_th = ΔT/P.
    """
    if coil.rth is not None:
        return coil.rth, "rth", None
    if coil.temp_rise is not None:
        rise, source = coil.temp_rise, "temp_rise"
    elif assumed_rise is not None:
        rise, source = assumed_rise, "assumed"
    else:
        return None, "none", None
    r_hot = coil.r_coil * float(copper_ratio(coil.r_at + rise, coil.r_at))
    return rise * r_hot / coil.v_nominal**2, source, rise


def peak_dissipation(vcc, r_load, i_low, i_high, vce_sat):
    """The most I·V_CE can be for a collector current anywhere in [i_low, i_high], with
    V_CE = V_cc − I·R_load (never below V_CE(sat)): I·(V_cc − I·R_load) peaks at I = V_cc/(2·R_load),
    where it is V_cc²/(4·R_load). Returns (power, current, True where the peak is inside)."""
    i_peak = vcc / (2 * r_load)
    i_star = np.clip(i_peak, i_low, np.maximum(i_low, i_high))
    power = i_star * np.maximum(vce_sat, vcc - i_star * r_load)
    return power, i_star, (i_low <= i_peak) & (i_peak <= i_high)


def operating_point(
    design: Design, c: Corners, *, steady_state: bool, assumed_coil_rise: float | None = None
) -> OperatingPoint:
    """Evaluate the on and off states at every corner.

    ``steady_state`` (the nominal corner) lets the coil heat itself at the corner's supply;
    otherwise the on-current is taken with the coil at ambient (just switched on, highest
    current), and the hot coil for pick-up is self-heated at the highest supply (a coil that
    has been held on at high supply, then re-energised at low supply: conservative). A coil
    with neither rth nor temp_rise is heated for pick-up by ``assumed_coil_rise`` (the profile's).
    """
    sw, coil = design.switch, design.coil
    vcc, ambient = c["supply"], c["ambient"]
    r_ambient = c["r_coil"] * copper_ratio(ambient, coil.r_at)
    v_on = vcc - sw.vce_sat
    # Stresses take the lowest V_CE(sat) (vce_sat_min, else 0 V): the most left for the load.
    v_on_stress = vcc - sw.vce_sat_low
    heat_voltage = v_on if steady_state else design.supply.high - sw.vce_sat_low
    rth, heating, rise = coil_thermal_resistance(coil, None)
    if rth is not None:
        r_hot = self_heated_resistance(r_ambient, coil.r_coil, coil.r_at, heat_voltage, rth)
    else:
        r_hot = r_ambient
    r_coil = r_hot if steady_state else r_ambient
    r_pickup = r_hot
    if rth is None:
        assumed_rth, heating, rise = coil_thermal_resistance(coil, assumed_coil_rise)
        if assumed_rth is not None:
            r_pickup = self_heated_resistance(r_ambient, coil.r_coil, coil.r_at, heat_voltage, assumed_rth)
    r_20 = c["r_coil"] / copper_ratio(coil.r_at, 20.0)
    coil_temp_hot = 20.0 + (r_pickup / r_20 - 1) / COPPER_ALPHA_20

    r_clamp = kind_of(design.clamp).parallel_resistance(design.clamp, c.values, c.size)
    r_load = 1 / (1 / r_coil + 1 / r_clamp)
    saturated_current = v_on / r_load  # coil plus resistor clamp, at V_CE(sat) max

    (v_th_on, r_th_on, v_th_off, r_th_off), divider = _drive(design, c)
    r_series = c["r_series"]
    r_pulldown = c["r_pulldown"] if design.base.r_pulldown is not None else np.full(c.size, np.inf)

    # I_B = (V_th,on − V_BE(sat))/(R_th + R_b) − V_BE(sat)/R_be, and no less than zero.
    through_rb = (v_th_on - sw.vbe_sat) / (r_th_on + r_series)
    base_current = np.maximum(0.0, through_rb - sw.vbe_sat / r_pulldown)
    required = saturated_current / sw.hfe_min
    overdrive = base_current / required

    # The collector current lies between h_FE(min)·I_B and h_FE(max)·I_B, never above saturation.
    i_low = np.minimum(saturated_current, sw.hfe_min * base_current)
    i_high = (
        saturated_current if sw.hfe_max is None else np.minimum(saturated_current, sw.hfe_max * base_current)
    )

    def coil_volts(r):
        r_l = 1 / (1 / r + 1 / r_clamp)
        return np.minimum(vcc - sw.vce_sat, sw.hfe_min * base_current * r_l)

    coil_voltage_hot = coil_volts(r_pickup)
    # Pick-up is an ampere-turn threshold: V_pu(T) = V_pu(T_ref)·R(T)/R(T_ref).
    must_operate_hot = coil.v_pickup * r_pickup / c["r_coil"]

    if steady_state:
        # One operating point at h_FE(min): I_C, V_CE, the coil's voltage and current agree.
        collector_current = i_low
        vce = np.maximum(sw.vce_sat, vcc - i_low * r_load)
        coil_voltage = vcc - vce
        coil_current = coil_voltage / r_coil
        on_power = i_low * vce
        linear_bound = np.zeros(c.size, dtype=bool)
    else:
        collector_current = v_on_stress / r_load
        coil_voltage = v_on_stress
        coil_current = v_on_stress / r_coil  # the most current to turn off: V_CE(sat) at its lowest
        # With the gain anywhere in its range a switch that is not saturated can sit at
        # V_CE = V_cc/2: P = V_cc²/(4·R_load), unless h_FE(max) keeps the current below that.
        on_power, _, inside = peak_dissipation(vcc, r_load, i_low, i_high, sw.vce_sat)
        linear_bound = inside & (overdrive < 1)
    # P = I_C·V_CE + I_B·V_BE(sat); T_J = T_A + P·R_θJA.
    dissipation = on_power + base_current * sw.vbe_sat
    junction_temp = ambient + dissipation * sw.rth_ja
    power_allowed = np.minimum(sw.p_max, (sw.tj_max - ambient) / sw.rth_ja)

    # Off: V_BE = V_th,off·R_be/(R_th + R_b + R_be), written so that R_be = ∞ gives V_th,off.
    vbe_off = v_th_off / (1 + (r_th_off + r_series) / r_pulldown)
    vbe_on_hot = sw.vbe_on + VBE_TEMPCO * (junction_temp - 25.0)

    # The drive pin and R_b carry the most at the lowest V_BE a conducting base can have
    # (vbe_sat_min, else the hot V_BE(on)); a base that stays below it takes only the divider
    # current into R_be: the base node sits at min(V_BE,low, V_th,on·R_be/(R_th + R_b + R_be)).
    vbe_low = np.full(c.size, sw.vbe_sat_min) if sw.vbe_sat_min is not None else vbe_on_hot
    open_base = v_th_on / (1 + (r_th_on + r_series) / r_pulldown)
    base_resistor_current = np.maximum(0.0, (v_th_on - np.minimum(vbe_low, open_base)) / (r_th_on + r_series))

    sweep_dissipation = sweep_bound = None
    if divider is not None:
        # Over the sensor's sweep from off to on the base current walks from its off value
        # (least: at V_BE(sat)) to its on value (most: at the lowest V_BE).
        off_base = np.maximum(0.0, (v_th_off - sw.vbe_sat) / (r_th_off + r_series) - sw.vbe_sat / r_pulldown)
        on_base = np.maximum(0.0, (v_th_on - vbe_low) / (r_th_on + r_series) - vbe_low / r_pulldown)
        sweep_low = np.minimum(saturated_current, sw.hfe_min * off_base)
        sweep_high = (
            saturated_current if sw.hfe_max is None else np.minimum(saturated_current, sw.hfe_max * on_base)
        )
        swept, _, sweep_bound = peak_dissipation(vcc, r_load, sweep_low, sweep_high, sw.vce_sat)
        sweep_dissipation = swept + on_base * sw.vbe_sat
        open_base_off = v_th_off / (1 + (r_th_off + r_series) / r_pulldown)
        base_off = np.maximum(0.0, (v_th_off - np.minimum(vbe_low, open_base_off)) / (r_th_off + r_series))
        divider = {**divider, "base_on": base_resistor_current, "base_off": base_off}

    return OperatingPoint(
        vcc=vcc,
        ambient=ambient,
        r_coil=r_coil,
        r_coil_hot=r_pickup,
        coil_temp_hot=coil_temp_hot,
        coil_heating=heating,
        coil_rise=rise,
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
        vbe_low=vbe_low,
        required_base_current=required,
        overdrive=overdrive,
        coil_voltage=coil_voltage,
        coil_voltage_hot=coil_voltage_hot,
        must_operate_hot=must_operate_hot,
        load_resistance=r_load,
        linear_bound=linear_bound,
        dissipation=dissipation,
        junction_temp=junction_temp,
        power_allowed=power_allowed,
        vbe_off=vbe_off,
        vbe_on_hot=vbe_on_hot,
        dropout_current=coil.v_dropout / coil.r_coil,
        divider=divider,
        sweep_dissipation=sweep_dissipation,
        sweep_bound=sweep_bound,
    )
