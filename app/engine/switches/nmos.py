"""An N-channel enhancement MOSFET, low side: the gate driven through R_g with an optional
pull-down R_gs. The gate draws no DC current; the FET conducts as a resistance R_DS(on) that
rises with its junction temperature, and is guaranteed only at the gate voltage its datasheet
states."""

from __future__ import annotations

import numpy as np

from ..circuit import OperatingPoint, coil_state, drive_thevenin
from ..design import NmosFet
from ..physics import temperature_curve
from .base import FormSlot, SwitchKind, g

# V_GS(th) falls as the junction warms; −5 mV/K when the part gives no figure (from memory:
# small-signal and logic-level FETs show −3 to −7 mV/K).
VGS_TH_TEMPCO = -0.005


def threshold_tempco(fet: NmosFet) -> float:
    return fet.vgs_th_tempco if fet.vgs_th_tempco is not None else VGS_TH_TEMPCO


def rds_ratio(fet: NmosFet, tj):
    """R_DS(on)(T_J)/R_DS(on)(25 °C) = h^((T_J − 25)/100), h the datasheet's normalised R_DS(on)
    at 125 °C: the exponential through 1 at 25 °C and h at 125 °C, the shape of the datasheet
    curve (from memory; a straight line through the same points lies above it between them and
    below it beyond 125 °C)."""
    return temperature_curve(fet.rds_on_hot, tj)


def junction_with_rds(fet: NmosFet, current, ambient):
    """Solve the junction temperature and R_DS(on) together.

    P = I_D²·R_DS(on)(T_J) with R_DS(on)(T) = R_25·h^((T − 25)/100), and T_J = T_A + P·R_θJA.
    With x = T_J − T_A, a = R_θJA·I_D²·R_25·h^((T_A − 25)/100) and b = ln(h)/100 this is
    x = a·e^(b·x), whose smallest root is x = −W₀(−a·b)/b (W₀ the principal branch of the
    Lambert W function, scipy.special.lambertw): the stable operating point. There is no root
    when a·b > 1/e — each degree raises the dissipation faster than the heat can leave, thermal
    runaway — and T_J and P are then infinite. Returns (T_J, R_DS(on)(T_J), P)."""
    from scipy.special import lambertw  # on first use: scipy.special takes a good part of the CLI's start

    b = np.log(fet.rds_on_hot) / 100.0
    a = fet.rth_ja * np.asarray(current) ** 2 * fet.rds_on * rds_ratio(fet, ambient)
    ab = a * b
    runaway = ab > np.exp(-1.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        w = np.real(lambertw(-np.where(runaway, 0.0, ab), 0))
        rise = np.where(b > 0, -w / np.where(b > 0, b, 1.0), a)
    rise = np.where(runaway, np.inf, rise)
    tj = ambient + rise
    rds = np.where(runaway, np.inf, fet.rds_on * rds_ratio(fet, np.where(runaway, 25.0, tj)))
    power = np.where(runaway, np.inf, np.asarray(current) ** 2 * np.where(runaway, 0.0, rds))
    return tj, rds, power


def op_unclamped(design) -> bool:
    from ..clamps import kind_of

    return kind_of(design.clamp).is_unclamped(design.clamp)


class NmosLowSide(SwitchKind):
    kind = "nmos"
    title = "N-channel MOSFET"
    part_kind = "nmos"
    model = NmosFet
    resistors = "gate"
    fields = (FormSlot("switch", "N-channel MOSFET", part="nmos"),)
    breakdown_symbol = "V_(BR)DSS"
    on_voltage_symbol = "I_D·R_DS(on) taken as 0"
    simulates_avalanche = True
    current_symbol = "I_D"
    unclamped_verdict = "drives the drain into avalanche at V_(BR)DSS or above at every turn-off"

    def breakdown(self, switch):
        return switch.vds_max

    def current_rating(self, switch):
        return switch.id_max

    def operating_point(self, design, c, *, steady_state, assumed_coil_rise):
        """Gate: V_GS,on = V_th,on·R_gs/(R_th + R_g + R_gs) and V_GS,off alike (V_th with no
        pull-down: no gate current flows). Stresses (drain current, coil over-voltage, I_0 at
        the worst corners) take R_DS(on) = 0, the most left for the load (no minimum is given).
        Dissipation: I_D,max²·R_DS(on)(T_J) solved with T_J (``junction_with_rds``) — I_D at
        its highest with R_DS(on) at its hottest, conservative. Below rds_on_vgs R_DS(on) is not
        guaranteed: the FET may sit anywhere in its linear region, P up to V_cc²/(4·R_load).
        Pick-up: V_coil = V_cc·R_load/(R_load + R_DS(on)(T_J)) with the hot coil (0 V where V_GS
        stays below V_GS(th),max: the FET need not conduct). The nominal corner is one
        operating point: I_D = V_cc/(R_coil + R_DS(on)(T_J)), solved by iteration."""
        fet, coil = design.switch, design.coil
        vcc, ambient = c["supply"], c["ambient"]
        heat_voltage = vcc if steady_state else np.full(c.size, design.supply.high)
        cs = coil_state(
            design, c, heat_voltage, steady_state=steady_state, assumed_coil_rise=assumed_coil_rise
        )
        (v_th_on, r_th_on, v_th_off, r_th_off), divider = drive_thevenin(design, c)
        resistors = design.drive_resistors
        r_series = c["r_series"]
        r_pulldown = c["r_pulldown"] if resistors.r_pulldown is not None else np.full(c.size, np.inf)
        vgs_on = v_th_on / (1 + (r_th_on + r_series) / r_pulldown)
        vgs_off = v_th_off / (1 + (r_th_off + r_series) / r_pulldown)
        # The gate draws only what the pull-down takes: V_th,on/(R_th + R_g + R_gs).
        gate_current = v_th_on / (r_th_on + r_series + r_pulldown)
        tempco = threshold_tempco(fet)
        # Turning on, the threshold is highest at the coldest junction (ambient, T_J ≥ T_A).
        # One FET has one threshold: where the Monte Carlo yield draws it, both bounds take it.
        vth_max_cold = c.figure("vgs_th", fet.vgs_th_max) + tempco * (ambient - 25.0)
        guaranteed = vgs_on >= fet.rds_on_vgs
        conducts = vgs_on >= vth_max_cold

        r_load = cs.r_load
        stress_current = vcc / r_load
        power_allowed = np.minimum(fet.p_max, (fet.tj_max - ambient) / fet.rth_ja)
        linear_max = vcc**2 / (4 * r_load)
        if steady_state:
            rds = fet.rds_on * rds_ratio(fet, ambient)
            for _ in range(20):
                current = vcc / (r_load + rds)
                tj = ambient + current**2 * rds * fet.rth_ja
                rds = fet.rds_on * rds_ratio(fet, tj)
            current = vcc / (r_load + rds)
            dissipation = current**2 * rds
            tj = ambient + dissipation * fet.rth_ja
            coil_voltage = current * r_load
            coil_current = coil_voltage / cs.r_coil
            linear_bound = np.zeros(c.size, dtype=bool)
            r_on = rds
        else:
            tj_sat, rds, p_sat = junction_with_rds(fet, stress_current, ambient)
            linear_bound = ~guaranteed & (linear_max > p_sat)
            dissipation = np.where(linear_bound, linear_max, p_sat)
            tj = np.where(linear_bound, ambient + linear_max * fet.rth_ja, tj_sat)
            current = stress_current
            coil_voltage = vcc
            coil_current = vcc / cs.r_coil
            r_on = np.zeros(c.size)
        r_hot_load = 1 / (1 / cs.r_pickup + 1 / cs.r_clamp)
        with np.errstate(invalid="ignore"):
            pickup_voltage = np.where(np.isfinite(rds), vcc * r_hot_load / (r_hot_load + rds), 0.0)
        coil_voltage_hot = np.where(conducts, pickup_voltage, 0.0)
        # Pick-up is an ampere-turn threshold: V_pu(T) = V_pu(T_ref)·R(T)/R(T_ref).
        must_operate_hot = c.figure("v_pickup", coil.v_pickup) * cs.r_pickup / c["r_coil"]
        vth_min_hot = c.figure("vgs_th", fet.vgs_th_min) + tempco * (tj - 25.0)

        sweep_dissipation = sweep_bound = None
        if divider is not None:
            # A slow sensor sweeps V_GS through the threshold: the drain current takes every value
            # from 0 to full on, so the sweep reaches V_DS = V_cc/2, P = V_cc²/(4·R_load).
            sweep_dissipation = linear_max
            sweep_bound = np.ones(c.size, dtype=bool)
            gate_off = v_th_off / (r_th_off + r_series + r_pulldown)
            divider = {**divider, "base_on": gate_current, "base_off": gate_off}

        nan = np.full(c.size, np.nan)
        return OperatingPoint(
            vcc=vcc,
            ambient=ambient,
            r_coil=cs.r_coil,
            r_coil_hot=cs.r_pickup,
            coil_temp_hot=cs.coil_temp_hot,
            coil_heating=cs.heating,
            coil_rise=cs.rise,
            coil_current=coil_current,
            collector_current=current,
            v_th_on=v_th_on,
            r_th_on=r_th_on,
            v_th_off=v_th_off,
            r_th_off=r_th_off,
            r_series=r_series,
            r_pulldown=r_pulldown,
            base_current=gate_current,
            base_resistor_current=gate_current,
            vbe_low=nan,
            required_base_current=nan,
            overdrive=nan,
            coil_voltage=coil_voltage,
            coil_voltage_hot=coil_voltage_hot,
            must_operate_hot=must_operate_hot,
            load_resistance=r_load,
            linear_bound=linear_bound,
            dissipation=dissipation,
            junction_temp=tj,
            power_allowed=power_allowed,
            vbe_off=vgs_off,
            vbe_on_hot=vth_min_hot,
            dropout_current=coil.v_dropout / coil.r_coil,
            divider=divider,
            sweep_dissipation=sweep_dissipation,
            sweep_bound=sweep_bound,
            switch={
                "vgs_on": vgs_on,
                "vgs_off": vgs_off,
                "vth_max_cold": vth_max_cold,
                "vth_min_hot": vth_min_hot,
                "guaranteed": guaranteed,
                "conducts": conducts,
                "rds": rds,
                "r_on": r_on,
                "r_hot_load": r_hot_load,
            },
        )

    def netlist_lines(self, design, op, index, i_switch, t_open):
        """The FET as a gate-controlled conductance: I = v(g)·v(sw)/R_DS(on), v(g) falling from 1
        to 0 over t_open (R_DS(on) as the engine took it at this corner; 1 mΩ where it took 0).
        Unclamped, its body diode with breakdown at V_(BR)DSS (IBV 1 mA) takes the avalanche."""
        r_on = max(float(op.switch["r_on"][index]), 1e-3)
        lines = [
            f"VGATE g 0 PWL(0 1 {g(t_open)} 0)",
            f"BFET sw 0 I=v(g)*v(sw)/{g(r_on)}",
        ]
        if op_unclamped(design):
            lines += [f".model dbody D(BV={g(design.switch.vds_max)} IBV=1e-3)", "DBODY 0 sw dbody"]
        return lines
