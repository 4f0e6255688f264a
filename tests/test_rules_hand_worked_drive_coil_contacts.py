"""Hand-worked checks of the drive, coil, switch and contact rules that take the worst case in
the right direction, with every intermediate number written out.

Sources, named beside each check:
- copper α = 0.00393 /K at 20 °C: IEC 60028 (standard annealed copper);
- V_BE(on) falls 2 mV/K: common practice;
- derating defaults (80 % voltage/current, 50 % power, T_J ≤ 125 °C, overdrive ≥ 2, pick-up
  margin 10 %): common practice (DOMAIN brief);
- worst dissipation of a switch in its linear region V_cc²/(4·R): maximum of I·(V − I·R),
  d/dI = V − 2·I·R = 0 (handbook calculus; DOMAIN brief, "Slow inputs");
- inrush multiples of loads: common practice (motor 5–8×, lamp 10–15×: DOMAIN brief);
- extra-low voltage 50 V AC / 120 V ripple-free DC: IEC 60449 band I.

The base design (tests/handbook.py): 12 V, 160 Ω / 0.12 H coil, R_b 1 kΩ from a 5 V pin with
100 Ω output, R_be 10 kΩ, h_FE(min) 100, V_BE(sat) 0.9 V, V_CE(sat) 0.2 V, V_BE(on) 0.65 V,
R_θJA 200 K/W, T_J,max 150 °C, P_max 0.625 W, ambient 20 °C, no tolerances.
"""

from __future__ import annotations

import math

import pytest

from app.engine import evaluate, parse_design

from .handbook import design

ALPHA = 0.00393  # IEC 60028


def findings(doc):
    report = evaluate(parse_design(doc))
    return {f["rule"]: f for f in report["findings"]}, report


# Base design, saturated: P = 0.07375·0.2 + 3.63727 mA·0.9 = 18.0235 mW, T_J = 23.605 °C.
I_B = (5 - 0.9) / 1100 - 0.9 / 10_000
T_J = 20 + (11.8 / 160 * 0.2 + I_B * 0.9) * 200


# ------------------------------------------------------------------ drive pin and R_b


def test_pin_current_and_rb_power_at_vbe_sat_min_when_given():
    # vbe_sat_min = 0.7 V: I_pin = (5 − 0.7)/(100 + 1000) = 3.90909 mA (not (5 − 0.9)/1100 = 3.72727 mA)
    f, _ = findings(design(**{"switch.vbe_sat_min": 0.7}))
    i_pin = (5 - 0.7) / 1100
    assert i_pin == pytest.approx(3.90909e-3, rel=1e-5)
    assert f["drive.source_current"]["value"] == pytest.approx(i_pin, rel=1e-9)
    # P_Rb = (3.90909 mA)²·1 kΩ = 15.281 mW
    assert f["resistor.power"]["value"] == pytest.approx(i_pin**2 * 1000, rel=1e-9)
    assert i_pin**2 * 1000 == pytest.approx(15.281e-3, rel=1e-4)
    # Saturation still uses the highest V_BE(sat) (0.9 V): overdrive 3.63727/0.7375 = 4.932
    assert f["drive.saturation"]["value"] == pytest.approx(I_B / (11.8 / 160 / 100), rel=1e-9)


def test_vbe_sat_min_above_vbe_sat_is_refused():
    with pytest.raises(ValueError, match="vbe_sat_min"):
        parse_design(design(**{"switch.vbe_sat_min": 1.0}))


# ------------------------------------------------------------------ a switch that is not saturated


def test_not_saturated_switch_takes_the_vcc_squared_over_4r_bound():
    # R_b = 30 kΩ: I_B = 4.1/30100 − 0.9/10k = 136.213 µA − 90 µA = 46.213 µA; h_FE(min)·I_B = 4.6213 mA,
    # saturation at 11.8/160 = 73.75 mA; the peak of I·(12 − 160·I) is at 12/320 = 37.5 mA, inside
    # [4.6213, 73.75] mA (no hfe_max), so P = 12²/(4·160) = 0.225 W, + I_B·0.9 = 41.6 µW.
    i_b = 4.1 / 30_100 - 0.9 / 10_000
    assert i_b == pytest.approx(46.213e-6, rel=1e-4)
    bound = 12**2 / (4 * 160) + i_b * 0.9
    assert bound == pytest.approx(0.2250416, rel=1e-6)
    f, _ = findings(design(**{"base.r_series": "30k"}))
    assert f["switch.power"]["value"] == pytest.approx(bound, rel=1e-9)
    assert "V_cc/2" in f["switch.power"]["message"]
    # T_J = 20 + 0.2250416·200 = 65.008 °C
    assert f["switch.junction_temp"]["value"] == pytest.approx(20 + bound * 200, rel=1e-9)


def test_hfe_max_keeps_the_current_below_the_bound():
    # h_FE(max) = 150: I_C in [4.6213, 6.9320] mA, below 37.5 mA: the most is at 6.9320 mA,
    # V_CE = 12 − 6.9320 mA·160 = 10.8909 V, P = 75.496 mW, + 41.6 µW in the base.
    i_b = 4.1 / 30_100 - 0.9 / 10_000
    i_c = 150 * i_b
    p = i_c * (12 - i_c * 160) + i_b * 0.9
    assert i_c == pytest.approx(6.9320e-3, rel=1e-4)
    assert p == pytest.approx(75.54e-3, rel=1e-3)
    f, _ = findings(design(**{"base.r_series": "30k", "switch.hfe_max": 150}))
    assert f["switch.power"]["value"] == pytest.approx(p, rel=1e-9)
    assert "V_cc/2" not in f["switch.power"]["message"]


def test_nominal_figures_of_a_non_saturated_switch_are_one_operating_point():
    # R_b = 30 kΩ at the nominal corner: I_C = 100·46.213 µA = 4.6213 mA, V_CE = 12 − 0.73941 = 11.2606 V,
    # coil voltage 0.73941 V, coil current 0.73941/160 = 4.6213 mA = the current at turn-off.
    i_c = 100 * (4.1 / 30_100 - 0.9 / 10_000)
    _, report = findings(design(**{"base.r_series": "30k"}))
    nominal, transient = report["nominal"], report["transient"]
    assert nominal["collector_current"] == pytest.approx(i_c, rel=1e-9)
    assert nominal["coil_voltage"] == pytest.approx(i_c * 160, rel=1e-9)
    assert transient["initial_current"] == pytest.approx(i_c, rel=1e-9)
    # P = I_C·V_CE + I_B·V_BE(sat) = 4.6213 mA·11.2606 V + 41.6 µW = 52.08 mW
    assert nominal["dissipation"] == pytest.approx(i_c * (12 - i_c * 160) + i_c / 100 * 0.9, rel=1e-9)


def test_hfe_max_below_hfe_min_is_refused():
    with pytest.raises(ValueError, match="hfe_max"):
        parse_design(design(**{"switch.hfe_max": 50}))


# ------------------------------------------------------------------ ambient at or above T_J,max


def test_ambient_above_tj_max_allows_no_power():
    # T_A = 160 °C, T_J,max = 150 °C: P_allowed = min(0.625, (150 − 160)/200) = −0.05 W: nothing allowed,
    # so any dissipation is a violation (the old quotient P/P_allowed was negative and passed).
    f, _ = findings(design(**{"ambient.min": 160, "ambient.max": 160}))
    power = f["switch.power"]
    assert power["rating"] == pytest.approx(-0.05)
    assert power["status"] == "violation"
    assert "no dissipation is allowed" in power["message"]


def test_ambient_at_tj_max_is_a_violation_too():
    # T_A = T_J,max = 150 °C: P_allowed = 0 W
    f, _ = findings(design(**{"ambient.min": 150, "ambient.max": 150}))
    assert f["switch.power"]["rating"] == 0
    assert f["switch.power"]["status"] == "violation"


# ------------------------------------------------------------------ coil self-heating


def test_assumed_coil_rise_when_neither_rth_nor_temp_rise_is_given():
    # Profile rise 40 K at nominal voltage (from memory). R_hot = 160·(1 + 0.00393·40) = 185.152 Ω;
    # R_th = 40·185.152/12² = 51.4311 K/W; heated at V_cc,max − V_CE(sat),min = 12 V from 20 °C:
    # R = (160 + √(160² + 4·160·0.00393·51.4311·144))/2 = 185.152 Ω (exactly the 40 K, by construction).
    r_hot = 160 * (1 + ALPHA * 40)
    rth = 40 * r_hot / 144
    assert rth == pytest.approx(51.4311, rel=1e-5)
    r = (160 + math.sqrt(160**2 + 4 * 160 * ALPHA * rth * 144)) / 2
    assert r == pytest.approx(185.152, rel=1e-6)
    # must-operate 8.4·185.152/160 = 9.72058 V, limit ×1.10 = 10.6926 V; 11.8 V on the coil: ok
    f, report = findings(design())
    pickup = f["coil.pickup"]
    assert pickup["rating"] == pytest.approx(8.4 * r / 160, rel=1e-9)
    assert pickup["status"] == "ok"
    assert "ASSUMED" in pickup["message"] and "40 K" in pickup["message"]
    assert report["profile"]["coil_rise"] == 40


def test_datasheet_temperature_rise_is_used_and_named():
    # temp_rise 20 K: R_hot = 160·(1 + 0.00393·20) = 172.576 Ω, R_th = 20·172.576/144 = 23.969 K/W;
    # must-operate 8.4·172.576/160 = 9.06024 V
    f, _ = findings(design(**{"coil.temp_rise": 20}))
    assert f["coil.pickup"]["rating"] == pytest.approx(8.4 * (1 + ALPHA * 20), rel=1e-9)
    assert "datasheet" in f["coil.pickup"]["message"]
    assert "ASSUMED" not in f["coil.pickup"]["message"]


def test_rth_wins_over_temp_rise():
    # rth 50 K/W at 12 V: R = (160 + √(160² + 4·160·0.00393·50·144))/2 = 184.534 Ω
    r = (160 + math.sqrt(160**2 + 4 * 160 * ALPHA * 50 * 144)) / 2
    f, _ = findings(design(**{"coil.rth": 50, "coil.temp_rise": 5}))
    assert f["coil.pickup"]["rating"] == pytest.approx(8.4 * r / 160, rel=1e-9)


# ------------------------------------------------------------------ slow divider inputs

DIVIDER = {
    "kind": "divider",
    "r_fixed": "22k",
    "sensor_position": "top",
    "r_sensor_on": "1k",
    "r_sensor_off": "2M2",
    "tolerance": 0,
}
DIVIDER_BASE = {"base.r_series": "3k3", "base.r_pulldown": "22k"}


def _divider_numbers():
    # On: V_th = 12·22/23 = 11.47826 V, R_th = 1k ∥ 22k = 956.522 Ω;
    # I_B = (11.47826 − 0.9)/(956.522 + 3300) − 0.9/22k = 2.44428 mA (saturated: overdrive 3.31)
    v_on, r_on = 12 * 22 / 23, 1000 * 22_000 / 23_000
    i_b = (v_on - 0.9) / (r_on + 3300) - 0.9 / 22_000
    # P (saturated) = 73.75 mA·0.2 + 2.44428 mA·0.9 = 16.9499 mW, T_J = 20 + 3.38997 = 23.38997 °C;
    # V_BE,low = 0.65 − 0.002·(23.38997 − 25) = 0.653220 V (−2 mV/K, common practice)
    t_j = 20 + (11.8 / 160 * 0.2 + i_b * 0.9) * 200
    vbe_low = 0.65 - 0.002 * (t_j - 25)
    # Most base current on the sweep: (11.47826 − 0.65322)/4256.522 − 0.65322/22k = 2.51347 mA
    on_base = (v_on - vbe_low) / (r_on + 3300) - vbe_low / 22_000
    return v_on, r_on, i_b, t_j, vbe_low, on_base


def test_slow_divider_walks_the_switch_through_its_linear_region():
    v_on, r_on, i_b, t_j, vbe_low, on_base = _divider_numbers()
    assert i_b == pytest.approx(2.44428e-3, rel=1e-5)
    assert vbe_low == pytest.approx(0.653220, rel=1e-5)
    assert on_base == pytest.approx(2.51347e-3, rel=1e-4)
    # Off: V_th = 0.11881 V < V_BE(sat): no base current, so I_C sweeps from 0 to 73.75 mA and
    # passes 12/320 = 37.5 mA: P = 12²/640 + 2.51347 mA·0.9 = 0.225 + 0.002262 = 0.227262 W
    p = 12**2 / (4 * 160) + on_base * 0.9
    assert p == pytest.approx(0.227262, rel=1e-5)
    f, _ = findings(design(drive=DIVIDER, **DIVIDER_BASE))
    lin = f["switch.linear_region"]
    assert lin["unit"] == "W"
    assert lin["value"] == pytest.approx(p, rel=1e-9)
    # allowed min(0.625, (150 − 20)/200 = 0.65) = 0.625 W, half of it 0.3125 W: ok;
    # T_J = 20 + 0.227262·200 = 65.45 °C ≤ 125 °C: ok
    assert lin["status"] == "ok"
    # R_θJA 600 K/W: allowed (150 − 20)/600 = 0.21667 W < 0.227262 W: a violation, and
    # T_J = 20 + 0.227262·600 = 156.4 °C > 150 °C (the power finding comes first among equals)
    f, _ = findings(design(drive=DIVIDER, **DIVIDER_BASE, **{"switch.rth_ja": 600}))
    lin = f["switch.linear_region"]
    assert lin["status"] == "violation"
    assert lin["rating"] == pytest.approx(130 / 600)
    assert "hysteresis" in lin["message"] and "comparator" in lin["message"]


def test_snap_sensor_and_logic_drive_have_no_linear_region_finding():
    f, _ = findings(design(drive={**DIVIDER, "transition": "snap"}, **DIVIDER_BASE))
    assert "switch.linear_region" not in f
    f, _ = findings(design())
    assert "switch.linear_region" not in f


def test_divider_source_tolerance_makes_corners():
    # v_source 5 V ± 10 %: the low corner 4.5 V gives V_th = 4.5·22/23 = 4.30435 V,
    # I_B = (4.30435 − 0.9)/4256.522 − 0.9/22k = 799.80 µA − 40.91 µA = 758.89 µA;
    # overdrive = 758.89 µA/(73.75 mA/100) = 1.02900
    drive = {**DIVIDER, "v_source": 5, "v_source_tolerance": 10}
    f, report = findings(design(drive=drive, **DIVIDER_BASE))
    v_th = 4.5 * 22 / 23
    i_b = (v_th - 0.9) / (1000 * 22 / 23 + 3300) - 0.9 / 22_000
    assert i_b == pytest.approx(758.89e-6, rel=1e-4)
    sat = f["drive.saturation"]
    assert sat["corner"]["v_source"] == pytest.approx(4.5)
    assert sat["value"] == pytest.approx(i_b / (11.8 / 160 / 100), rel=1e-9)
    assert report["corners"] == 2  # only v_source varies here (every other tolerance is 0)


def test_v_source_tolerance_without_v_source_is_refused():
    with pytest.raises(ValueError, match="v_source_tolerance needs v_source"):
        parse_design(design(drive={**DIVIDER, "v_source_tolerance": 5}, **DIVIDER_BASE))


def test_divider_power_in_the_fixed_resistor_and_the_sensor():
    v_on, r_on, i_b, t_j, vbe_low, on_base = _divider_numbers()
    # On: the base draws I_Rb = (11.47826 − 0.65322)/4256.522 = 2.54317 mA (the node is held at
    # V_BE,low: the open-circuit base voltage 11.47826/(1 + 4256.522/22k) = 9.6175 V is above it);
    # the divider's middle sits at 11.47826 − 2.54317 mA·956.522 Ω = 9.04571 V;
    # sensor (top): (12 − 9.04571)²/1k = 8.72782 mW; fixed (bottom) at most 11.47826²/22k = 5.98866 mW.
    i_rb = (v_on - vbe_low) / (r_on + 3300)
    assert i_rb == pytest.approx(2.54317e-3, rel=1e-4)
    v_mid = v_on - i_rb * r_on
    p_sensor = (12 - v_mid) ** 2 / 1000
    p_fixed = v_on**2 / 22_000
    assert p_sensor == pytest.approx(8.72782e-3, rel=1e-4)
    assert p_fixed == pytest.approx(5.98866e-3, rel=1e-4)
    # Off (2.2 MΩ): a few µW each, so the on state decides.
    f, _ = findings(design(drive=DIVIDER, **DIVIDER_BASE))
    assert f["drive.divider_power"]["status"] == "note"
    assert f["drive.divider_power"]["value"] == pytest.approx(p_sensor, rel=1e-9)
    # Sensor rated 15 mW: 8.728 mW is over half of it (7.5 mW): marginal
    f, _ = findings(design(drive={**DIVIDER, "sensor_power_rating": "15 mW"}, **DIVIDER_BASE))
    assert f["drive.divider_power"]["status"] == "marginal"
    assert f["drive.divider_power"]["value"] == pytest.approx(p_sensor, rel=1e-9)
    # Fixed resistor rated 10 mW: 5.989 mW > 5 mW: marginal; rated 5 mW: a violation
    f, _ = findings(design(drive={**DIVIDER, "fixed_power_rating": "5 mW"}, **DIVIDER_BASE))
    assert f["drive.divider_power"]["status"] == "violation"
    assert f["drive.divider_power"]["value"] == pytest.approx(p_fixed, rel=1e-9)


# ------------------------------------------------------------------ contacts and the load

CONTACTS = {"current": 10, "voltage_ac": 250, "voltage_dc": 30}


def test_motor_inrush_against_the_contacts():
    # Motor, 230 V AC, 2 A running: inrush 8 × 2 = 16 A (motors often 5–8×, common practice; the upper
    # end). No making rating: judged against the 10 A rated current → violation.
    load = {"kind": "motor", "voltage": 230, "supply": "ac", "current": 2}
    f, report = findings(design(load=load, **{"coil.contacts": CONTACTS}))
    assert f["contacts.current"]["value"] == 2
    assert f["contacts.current"]["limit"] == pytest.approx(8.0)  # 80 % of 10 A
    assert f["contacts.current"]["status"] == "ok"
    assert f["contacts.inrush"]["value"] == pytest.approx(16.0)
    assert f["contacts.inrush"]["status"] == "violation"
    # 230 V on 250 V AC contacts: over 80 % (200 V): marginal
    assert f["contacts.voltage"]["status"] == "marginal"
    # A mains load carries the caution (230 V AC > 50 V AC, IEC 60449 band I)
    assert "IEC 60449" in report["mains_caution"]
    # With a 30 A making rating: 16 A ≤ 24 A: ok; a given multiple of 3: 6 A
    contacts = {**CONTACTS, "inrush": 30}
    f, _ = findings(design(load=load, **{"coil.contacts": contacts}))
    assert f["contacts.inrush"]["status"] == "ok"
    f, _ = findings(design(load={**load, "inrush_multiple": 3}, **{"coil.contacts": contacts}))
    assert f["contacts.inrush"]["value"] == pytest.approx(6.0)


def test_lamp_and_resistive_inrush_defaults():
    # Lamp 15× (10–15×, common practice; the upper end), resistive 1×
    for kind, multiple in (("lamp", 15), ("resistive", 1), ("capacitive", 20), ("inductive", 5)):
        load = {"kind": kind, "voltage": 24, "supply": "dc", "current": 0.5}
        f, report = findings(design(load=load, **{"coil.contacts": CONTACTS}))
        assert f["contacts.inrush"]["value"] == pytest.approx(0.5 * multiple)
        assert report["mains_caution"] is None  # 24 V DC is extra-low voltage


def test_dc_load_on_contacts_without_a_dc_rating_is_not_ok():
    load = {"kind": "inductive", "voltage": 24, "supply": "dc", "current": 1}
    f, _ = findings(design(load=load, **{"coil.contacts": {"current": 10, "voltage_ac": 250}}))
    assert f["contacts.voltage"]["status"] == "marginal"
    assert "no DC rating" in f["contacts.voltage"]["message"]
    # 24 V DC on 30 V DC contacts: over 80 % (24 V is exactly 80 %: not past it) → ok
    f, _ = findings(design(load=load, **{"coil.contacts": CONTACTS}))
    assert f["contacts.voltage"]["status"] == "ok"


def test_elv_limits_decide_the_caution():
    # IEC 60449 band I: above 50 V AC or 120 V ripple-free DC
    for voltage, supply, caution in (
        (50, "ac", False),
        (51, "ac", True),
        (120, "dc", False),
        (121, "dc", True),
    ):
        load = {"kind": "resistive", "voltage": voltage, "supply": supply, "current": 1}
        _, report = findings(design(load=load))
        assert (report["mains_caution"] is not None) is caution, (voltage, supply)


def test_load_without_contact_ratings_says_it_is_not_checked():
    load = {"kind": "resistive", "voltage": 24, "supply": "dc", "current": 1}
    f, _ = findings(design(load=load))
    for rule in ("contacts.current", "contacts.inrush", "contacts.voltage"):
        assert f[rule]["status"] == "note"
        assert "not checked" in f[rule]["message"]
    f, _ = findings(design())
    assert "contacts.current" not in f
