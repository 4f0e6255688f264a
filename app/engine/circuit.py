"""The driver's DC operating point, on and off, over a set of corners (numpy arrays).

Low-side switch: supply → coil (R_coil + L) → collector/drain; emitter/source at ground; the
base/gate driven from a Thevenin source (V_th, R_th) through R_b, with an optional pull-down
R_be. Each switch kind computes its own operating point (app/engine/switches/); the bipolar
kinds (NPN, Darlington array channel) share ``bipolar_operating_point`` here.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np

from .clamps import kind_of
from .design import Coil, DividerDrive
from .physics import COPPER_ALPHA_20, copper_ratio, self_heated_resistance

if TYPE_CHECKING:
    from .corners import Corners
    from .design import Design


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
    switch: dict[str, np.ndarray] = field(default_factory=dict)  # what only one switch kind has


@dataclass(frozen=True)
class Bipolar:
    """What the bipolar operating point needs of a switch: an NPN transistor, or one channel of a
    Darlington array (its built-in input resistor in series with R_b, two base-emitter drops,
    ``channels_on`` channels sharing the package's dissipation)."""

    hfe_min: float
    hfe_max: float | None
    vbe_sat: float  # the input voltage that saturates it, maximum
    vbe_sat_min: float | None
    vce_sat: float
    vce_sat_low: float
    vbe_on: float  # turn-on voltage at 25 °C
    vbe_tempco: float  # V/K
    p_max: float
    rth_ja: float
    tj_max: float
    channels_on: int = 1


def drive_thevenin(design: Design, c: Corners) -> tuple[tuple[np.ndarray, ...], dict[str, np.ndarray] | None]:
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


@dataclass(frozen=True)
class CoilState:
    """The coil as the on-state sees it at every corner (see ``coil_state``)."""

    r_coil: np.ndarray  # carrying the on-current: at ambient (worst corners) or self-heated (nominal)
    r_pickup: np.ndarray  # hot, for the must-operate voltage
    coil_temp_hot: np.ndarray
    heating: str
    rise: float | None
    r_clamp: np.ndarray  # a resistor the clamp puts across the coil while on (inf when none)
    r_load: np.ndarray  # coil ∥ that resistor: the switch's load


def coil_state(
    design: Design, c: Corners, heat_voltage, *, steady_state: bool, assumed_coil_rise: float | None
) -> CoilState:
    """The coil's resistance at every corner, self-heated at ``heat_voltage`` where it is hot.

    ``steady_state`` (the nominal corner) lets the coil heat itself at the corner's supply;
    otherwise the on-current is taken with the coil at ambient (just switched on, highest
    current), and the hot coil for pick-up is self-heated at ``heat_voltage`` (the highest
    supply: conservative). A coil with neither rth nor temp_rise is heated for pick-up by
    ``assumed_coil_rise`` (the profile's)."""
    coil = design.coil
    ambient = c["ambient"]
    r_ambient = c["r_coil"] * copper_ratio(ambient, coil.r_at)
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
    return CoilState(r_coil, r_pickup, coil_temp_hot, heating, rise, r_clamp, r_load)


def operating_point(
    design: Design, c: Corners, *, steady_state: bool, assumed_coil_rise: float | None = None
) -> OperatingPoint:
    """Evaluate the on and off states at every corner, as the design's switch kind does."""
    from .switches import switch_kind

    return switch_kind(design.switch).operating_point(
        design, c, steady_state=steady_state, assumed_coil_rise=assumed_coil_rise
    )


def bipolar_operating_point(
    design: Design,
    c: Corners,
    sw: Bipolar,
    *,
    steady_state: bool,
    assumed_coil_rise: float | None = None,
    r_input: np.ndarray | float = 0.0,
) -> OperatingPoint:
    """Evaluate the on and off states of a bipolar switch at every corner.

    ``steady_state`` (the nominal corner) lets the coil heat itself at the corner's supply;
    otherwise the on-current is taken with the coil at ambient (just switched on, highest
    current), and the hot coil for pick-up is self-heated at the highest supply (a coil that
    has been held on at high supply, then re-energised at low supply: conservative). A coil
    with neither rth nor temp_rise is heated for pick-up by ``assumed_coil_rise`` (the profile's).
    """
    coil = design.coil
    vcc, ambient = c["supply"], c["ambient"]
    v_on = vcc - sw.vce_sat
    # Stresses take the lowest V_CE(sat) (vce_sat_min, else 0 V): the most left for the load.
    v_on_stress = vcc - sw.vce_sat_low
    heat_voltage = v_on if steady_state else design.supply.high - sw.vce_sat_low
    cs = coil_state(design, c, heat_voltage, steady_state=steady_state, assumed_coil_rise=assumed_coil_rise)
    r_coil, r_pickup, coil_temp_hot = cs.r_coil, cs.r_pickup, cs.coil_temp_hot
    heating, rise = cs.heating, cs.rise
    r_clamp, r_load = cs.r_clamp, cs.r_load
    saturated_current = v_on / r_load  # coil plus resistor clamp, at V_CE(sat) max

    (v_th_on, r_th_on, v_th_off, r_th_off), divider = drive_thevenin(design, c)
    r_series = c["r_series"]
    resistors = design.drive_resistors
    r_pulldown = (
        c["r_pulldown"]
        if resistors is not None and resistors.r_pulldown is not None
        else np.full(c.size, np.inf)
    )
    # The input's series resistance: R_b plus any built-in input resistor (0 for an NPN).
    r_input_path = r_series + r_input

    # I_B = (V_th,on − V_BE(sat))/(R_th + R_b) − V_BE(sat)/R_be, and no less than zero.
    through_rb = (v_th_on - sw.vbe_sat) / (r_th_on + r_input_path)
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
    must_operate_hot = c.figure("v_pickup", coil.v_pickup) * r_pickup / c["r_coil"]

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
    # P = I_C·V_CE + I_B·V_BE(sat) (+ I_B²·R_in in a built-in input resistor), for each of the
    # channels conducting at once in one package; T_J = T_A + P·R_θJA.
    dissipation = (on_power + base_current * sw.vbe_sat + base_current**2 * r_input) * sw.channels_on
    junction_temp = ambient + dissipation * sw.rth_ja
    power_allowed = np.minimum(sw.p_max, (sw.tj_max - ambient) / sw.rth_ja)

    # Off: V_BE = V_th,off·R_be/(R_th + R_b + R_be), written so that R_be = ∞ gives V_th,off.
    vbe_off = v_th_off / (1 + (r_th_off + r_input_path) / r_pulldown)
    vbe_on_hot = sw.vbe_on + sw.vbe_tempco * (junction_temp - 25.0)

    # The drive pin and R_b carry the most at the lowest V_BE a conducting base can have
    # (vbe_sat_min, else the hot V_BE(on)); a base that stays below it takes only the divider
    # current into R_be: the base node sits at min(V_BE,low, V_th,on·R_be/(R_th + R_b + R_be)).
    vbe_low = np.full(c.size, sw.vbe_sat_min) if sw.vbe_sat_min is not None else vbe_on_hot
    open_base = v_th_on / (1 + (r_th_on + r_input_path) / r_pulldown)
    base_resistor_current = np.maximum(
        0.0, (v_th_on - np.minimum(vbe_low, open_base)) / (r_th_on + r_input_path)
    )

    sweep_dissipation = sweep_bound = None
    if divider is not None:
        # Over the sensor's sweep from off to on the base current walks from its off value
        # (least: at V_BE(sat)) to its on value (most: at the lowest V_BE).
        off_base = np.maximum(
            0.0, (v_th_off - sw.vbe_sat) / (r_th_off + r_input_path) - sw.vbe_sat / r_pulldown
        )
        on_base = np.maximum(0.0, (v_th_on - vbe_low) / (r_th_on + r_input_path) - vbe_low / r_pulldown)
        sweep_low = np.minimum(saturated_current, sw.hfe_min * off_base)
        sweep_high = (
            saturated_current if sw.hfe_max is None else np.minimum(saturated_current, sw.hfe_max * on_base)
        )
        swept, _, sweep_bound = peak_dissipation(vcc, r_load, sweep_low, sweep_high, sw.vce_sat)
        sweep_dissipation = (swept + on_base * sw.vbe_sat + on_base**2 * r_input) * sw.channels_on
        open_base_off = v_th_off / (1 + (r_th_off + r_input_path) / r_pulldown)
        base_off = np.maximum(
            0.0, (v_th_off - np.minimum(vbe_low, open_base_off)) / (r_th_off + r_input_path)
        )
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
