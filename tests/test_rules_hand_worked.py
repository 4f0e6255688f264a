"""Every rule against a calculation written out by hand.

Sources of the constants, named beside each check:
- copper α = 0.00393 /K at 20 °C: IEC 60028 (standard annealed copper);
- V_T = kT/q at 27 °C with k and q the SI defining constants (scipy.constants carries them);
- V_BE(on) falls 2 mV/K: common practice;
- derating defaults (80 % voltage/current, 50 % power, T_J ≤ 125 °C, overdrive ≥ 2,
  pick-up margin 10 %): common practice (DOMAIN brief);
- time to drop-out: ∫ L/(R·i + v_c(i)) di, checked against scipy.integrate.quad.
"""

from __future__ import annotations

import math

import pytest
from scipy import constants, integrate

from app.engine import evaluate, parse_design

from .handbook import DELETE, design

VT = constants.k * 300.15 / constants.e  # kT/q at 27 °C (SI defining constants)
ALPHA = 0.00393  # IEC 60028


def findings(doc):
    report = evaluate(parse_design(doc))
    return {f["rule"]: f for f in report["findings"]}, report


# Operating point of the base design, by hand:
I_C = (12 - 0.2) / 160  # 0.07375 A
I_RB = (5 - 0.9) / (100 + 1000)  # 3.72727 mA through R_b
I_B = I_RB - 0.9 / 10_000  # 3.63727 mA into the base
P_ON = I_C * 0.2 + I_B * 0.9  # 18.0235 mW
T_J = 20 + P_ON * 200  # 23.605 °C
# The lowest V_BE of a conducting base (no vbe_sat_min given): the hot V_BE(on),
# 0.65 − 2 mV/K·(T_J − 25) (−2 mV/K: common practice) = 0.65279 V; it draws the most from the pin.
VBE_LOW = 0.65 - 0.002 * (T_J - 25)
I_PIN = (5 - VBE_LOW) / (100 + 1000)  # 3.95201 mA through R_b
# Stresses take V_CE(sat) at its minimum (no vce_sat_min given: 0 V): I_C = 12/160 = 75 mA.
I_C_STRESS = 12 / 160
# The current the coil carries at turn-off, for the turn-off stresses and the release time at the
# worst corners: the same stress direction, I_0 = (V_cc − V_CE(sat),min)/R_coil = 12/160 = 75 mA.
I_0 = I_C_STRESS


def test_operating_point_by_hand():
    assert I_C == pytest.approx(0.07375)
    assert I_B == pytest.approx(3.63727e-3, rel=1e-5)
    _, report = findings(design())
    nominal = report["nominal"]
    assert nominal["collector_current"] == pytest.approx(I_C, rel=1e-9)
    assert nominal["base_current"] == pytest.approx(I_B, rel=1e-9)
    assert nominal["overdrive"] == pytest.approx(I_B / (I_C / 100), rel=1e-9)
    assert nominal["coil_voltage"] == pytest.approx(11.8)
    assert nominal["junction_temp"] == pytest.approx(T_J, rel=1e-9)


def test_saturation_ok_marginal_and_violation():
    # overdrive = I_B/(I_C/h_FE) = 3.63727 mA / 0.7375 mA = 4.932 ≥ 2 (common practice)
    f, _ = findings(design())
    assert f["drive.saturation"]["value"] == pytest.approx(4.9319, rel=1e-4)
    assert f["drive.saturation"]["status"] == "ok"
    assert (f["drive.saturation"]["rating"], f["drive.saturation"]["limit"]) == (1.0, 2.0)
    # R_b = 3.3 kΩ: I_B = 4.1/3400 − 0.09 mA = 1.11588 mA; overdrive 1.513: marginal
    f, _ = findings(design(**{"base.r_series": "3k3"}))
    assert f["drive.saturation"]["value"] == pytest.approx(1.11588e-3 / 0.7375e-3, rel=1e-4)
    assert f["drive.saturation"]["status"] == "marginal"
    # R_b = 10 kΩ: I_B = 4.1/10100 − 0.09 mA = 0.31594 mA; overdrive 0.428: not saturated
    f, _ = findings(design(**{"base.r_series": "10k"}))
    assert f["drive.saturation"]["value"] == pytest.approx(0.42840, rel=1e-4)
    assert f["drive.saturation"]["status"] == "violation"


def test_cutoff_with_pulldown_and_without():
    # V_BE,off = 0.4·10k/(100 + 1k + 10k) = 0.36036 V; turn-on at T_J = 0.65 − 2 mV/K·(23.605 − 25)
    # (−2 mV/K: common practice) = 0.65279 V; limit 75 % of it = 0.48959 V
    f, _ = findings(design())
    cut = f["drive.cutoff"]
    assert cut["value"] == pytest.approx(0.36036, rel=1e-4)
    assert cut["rating"] == pytest.approx(0.65 - 0.002 * (T_J - 25), rel=1e-9)
    assert cut["limit"] == pytest.approx(0.75 * cut["rating"])
    assert cut["status"] == "ok"
    assert cut["corner"]["drive_off"] == 0.4
    # No pull-down, low_max 0.8 V: V_BE,off = 0.8 V; P = 0.07375·0.2 + 3.72727 mA·0.9 = 18.1045 mW,
    # T_J = 23.621 °C, turn-on 0.65276 V < 0.8 V: the switch may conduct when it should be off
    f, _ = findings(design(**{"base.r_pulldown": DELETE, "drive.low_max": 0.8}))
    cut = f["drive.cutoff"]
    assert cut["value"] == pytest.approx(0.8)
    t_j = 20 + (I_C * 0.2 + I_RB * 0.9) * 200
    assert cut["rating"] == pytest.approx(0.65 - 0.002 * (t_j - 25), rel=1e-9)
    assert cut["status"] == "violation"
    assert "pull-down" in cut["message"]


def test_source_current_against_pin_rating():
    # I_pin = (5 − 0.65279)/(100 + 1k) = 3.952 mA at the hot V_BE(on) (not 3.727 mA at V_BE(sat));
    # 20 mA rating, 16 mA derated (80 %, common practice)
    assert VBE_LOW == pytest.approx(0.65279, abs=1e-5)
    assert I_PIN == pytest.approx(3.95201e-3, rel=1e-5)
    f, _ = findings(design())
    assert f["drive.source_current"]["value"] == pytest.approx(I_PIN, rel=1e-9)
    assert f["drive.source_current"]["limit"] == pytest.approx(0.016)
    assert f["drive.source_current"]["status"] == "ok"
    f, _ = findings(design(**{"drive.i_max": "2 mA"}))
    assert f["drive.source_current"]["status"] == "violation"


def test_reverse_base_voltage_from_negative_drive():
    # low = −8 V: V_BE = −8·10k/11.1k = −7.207 V, beyond V_(BR)EBO = 6 V (typically 5–6 V, common practice)
    f, _ = findings(design())
    assert f["drive.reverse_base"]["value"] == 0.0
    assert f["drive.reverse_base"]["status"] == "ok"
    f, _ = findings(design(**{"drive.low": -8}))
    assert f["drive.reverse_base"]["value"] == pytest.approx(8 * 10_000 / 11_100, rel=1e-9)
    assert f["drive.reverse_base"]["status"] == "violation"
    # low = −5.5 V: 4.955 V, under the 6 V rating but over 80 % of it (4.8 V): marginal
    f, _ = findings(design(**{"drive.low": -5.5}))
    assert f["drive.reverse_base"]["value"] == pytest.approx(5.5 * 10_000 / 11_100, rel=1e-9)
    assert f["drive.reverse_base"]["status"] == "marginal"


def test_pickup_hot_coil_scales_with_copper_resistance():
    # Ambient up to 60 °C: R(60)/R(20) = 1 + 0.00393·40 = 1.1572 (IEC 60028);
    # must-operate 11 V at 20 °C becomes 12.729 V hot, above the 11.8 V the coil gets.
    # coil.temp_rise 0: the datasheet says it does not heat itself (the assumed rise is tested apart)
    f, _ = findings(design(**{"ambient.max": 60, "coil.v_pickup": 11, "coil.temp_rise": 0}))
    pu = f["coil.pickup"]
    assert pu["value"] == pytest.approx(11.8)
    assert pu["rating"] == pytest.approx(11 * (1 + ALPHA * 40), rel=1e-9)
    assert pu["corner"]["ambient"] == 60
    assert pu["status"] == "violation"
    # Base design: 8.4 V must-operate, limit 8.4·1.10 = 9.24 V; 11.8 V on: ok
    f, _ = findings(design(**{"coil.temp_rise": 0}))
    assert f["coil.pickup"]["limit"] == pytest.approx(9.24)
    assert f["coil.pickup"]["status"] == "ok"


def test_pickup_with_self_heating():
    # R_th = 50 K/W, hot start at V_cc,max − V_CE(sat),min = 12 − 0 = 12 V:
    # R² − 160·R − 160·0.00393·50·12² = 0 → R = (160 + √(25600 + 18109.44))/2 = 184.534 Ω,
    # i.e. 59.02 °C (P = 144/184.534 = 0.78035 W).
    r_hot = (160 + math.sqrt(160**2 + 4 * 160 * ALPHA * 50 * 12**2)) / 2
    assert r_hot == pytest.approx(184.534, rel=1e-5)
    temperature = 20 + 12**2 / r_hot * 50
    assert 160 * (1 + ALPHA * (temperature - 20)) == pytest.approx(r_hot, rel=1e-9)
    f, _ = findings(design(**{"coil.rth": 50, "coil.v_pickup": 10}))
    assert f["coil.pickup"]["rating"] == pytest.approx(10 * r_hot / 160, rel=1e-9)
    assert f["coil.pickup"]["status"] == "marginal"  # 11.8 V ≥ 11.533 V but < 12.687 V


def test_coil_overvoltage():
    # V_coil = V_cc,max − V_CE(sat),min: 16 − 0 = 16 V (no vce_sat_min), 16 − 0.1 = 15.9 V with it
    f, _ = findings(design(**{"supply.nominal": 16}))
    assert f["coil.overvoltage"]["value"] == pytest.approx(16.0)
    assert f["coil.overvoltage"]["rating"] == 15.6
    assert f["coil.overvoltage"]["status"] == "violation"
    f, _ = findings(design(**{"supply.nominal": 16, "switch.vce_sat_min": 0.1}))
    assert f["coil.overvoltage"]["value"] == pytest.approx(15.9)


def test_switch_current_derated():
    # (12 − 0)/160 = 75 mA on a 80 mA part: under the rating, over 80 % of it (64 mA): marginal
    f, _ = findings(design(**{"switch.ic_max": "80 mA"}))
    assert f["switch.current"]["value"] == pytest.approx(I_C_STRESS)
    assert f["switch.current"]["limit"] == pytest.approx(0.064)
    assert f["switch.current"]["status"] == "marginal"


def test_switch_current_at_the_worst_corner():
    # Supply ±10 %, coil ±10 %, ambient −20…60 °C: the highest current is at 13.2 V with the
    # coldest low-tolerance coil: 144 Ω·(1 + 0.00393·(−40)) = 121.363 Ω → (13.2 − 0)/121.363 = 108.8 mA.
    f, report = findings(
        design(**{"supply.tolerance": 10, "coil.tolerance": 10, "ambient.min": -20, "ambient.max": 60})
    )
    sc = f["switch.current"]
    assert sc["value"] == pytest.approx(13.2 / (144 * (1 - ALPHA * 40)), rel=1e-9)
    assert sc["corner"]["supply"] == pytest.approx(13.2)
    assert sc["corner"]["ambient"] == -20
    assert sc["corner"]["r_coil"] == pytest.approx(144)
    assert report["corners"] == 16  # supply, ambient, coil, logic low: 2⁴


def test_breakdown_with_a_diode():
    # V_F(75 mA) = 1.9·V_T·ln(1 + 0.075/1e-8) + 0.075·0.05 = 0.77796 + 0.00375 = 0.78171 V
    v_f = 1.9 * VT * math.log1p(I_0 / 1e-8) + I_0 * 0.05
    assert v_f == pytest.approx(0.78171, abs=2e-5)
    f, report = findings(design())
    assert f["switch.breakdown"]["value"] == pytest.approx(12 + v_f, rel=1e-9)
    assert f["switch.breakdown"]["limit"] == pytest.approx(32.0)
    assert f["switch.breakdown"]["status"] == "ok"
    # The report's turn-off is the nominal one: the coil at its on-state operating point,
    # I_0 = (12 − 0.2)/160 = 73.75 mA, V_F(73.75 mA) = 0.77712 + 0.00369 = 0.78081 V
    v_f_nominal = 1.9 * VT * math.log1p(I_C / 1e-8) + I_C * 0.05
    assert v_f_nominal == pytest.approx(0.78081, abs=2e-5)
    assert report["transient"]["initial_current"] == pytest.approx(I_C, rel=1e-9)
    assert report["transient"]["peak_switch_voltage"] == pytest.approx(12 + v_f_nominal, rel=1e-9)


def test_breakdown_with_diode_and_zener():
    # V_Z,max = 24·1.05 = 25.2 V at I_ZT 5 mA; at I_0 = 75 mA: 25.2 + V_T·ln(75/5) + (75 − 5) mA·10 Ω
    # = 25.2 + 0.07004 + 0.7 = 25.9700 V; peak = 12 + 0.78171 + 25.9700 = 38.752 V: over 32 V, under 40 V
    v_f = 1.9 * VT * math.log1p(I_0 / 1e-8) + I_0 * 0.05
    v_z = 25.2 + VT * math.log(I_0 / 0.005) + (I_0 - 0.005) * 10
    assert 12 + v_f + v_z == pytest.approx(38.752, abs=1e-3)
    clamp = {
        "kind": "diode_zener",
        "diode": design()["clamp"]["diode"],
        "zener": {"vz": 24, "tolerance": 5, "rz": 10, "p_max": 1},
    }
    f, _ = findings(design(clamp=clamp))
    assert f["switch.breakdown"]["value"] == pytest.approx(12 + v_f + v_z, rel=1e-9)
    assert f["switch.breakdown"]["corner"]["vz"] == pytest.approx(25.2)
    assert f["switch.breakdown"]["status"] == "marginal"


def test_breakdown_with_resistor_and_diode_resistor():
    # resistor across the coil: 12 + 0.075·1000 = 87 V > 40 V; and it draws 12/1000 A while on
    f, report = findings(design(clamp={"kind": "resistor", "r": "1k"}))
    assert f["switch.breakdown"]["value"] == pytest.approx(87.0)
    assert f["switch.breakdown"]["status"] == "violation"
    assert f["switch.current"]["value"] == pytest.approx(12 / 160 + 12 / 1000)  # at V_CE(sat),min = 0 V
    # diode + 220 Ω: 12 + V_F(75 mA) + 0.075·220 = 12 + 0.78171 + 16.5 = 29.282 V: ok
    v_f = 1.9 * VT * math.log1p(I_0 / 1e-8) + I_0 * 0.05
    clamp = {"kind": "diode_resistor", "diode": design()["clamp"]["diode"], "r": 220}
    f, _ = findings(design(clamp=clamp))
    assert f["switch.breakdown"]["value"] == pytest.approx(12 + v_f + I_0 * 220, rel=1e-9)
    assert f["switch.breakdown"]["value"] == pytest.approx(29.282, abs=1e-3)
    assert f["switch.breakdown"]["status"] == "ok"


def test_breakdown_with_tvs_to_ground():
    # TVS: 33 V at 1 mA, 53 V at 1 A → R_S = (53 − 33 − V_T·ln 1000)/0.999 = 19.8412 Ω;
    # V(75 mA) = 33 + V_T·ln 75 + 74 mA·19.8412 Ω = 33 + 0.11167 + 1.46825 = 34.580 V: over 32 V, marginal
    r_s = (53 - 33 - VT * math.log(1000)) / 0.999
    v_tvs = 33 + VT * math.log(I_0 / 0.001) + (I_0 - 0.001) * r_s
    assert v_tvs == pytest.approx(34.580, abs=1e-3)
    # (V_BR(max) given equal to V_BR(min) here; the spread and its assumed default are worked
    # in tests/test_rules_hand_worked_clamps.py)
    clamp = {
        "kind": "tvs_switch",
        "tvs": {"v_breakdown": 33, "v_breakdown_max": 33, "v_clamp": 53, "i_clamp": 1, "p_max": 4},
    }
    f, _ = findings(design(clamp=clamp))
    assert f["switch.breakdown"]["value"] == pytest.approx(v_tvs, rel=1e-9)
    assert f["switch.breakdown"]["status"] == "marginal"
    # peak pulse power 34.580 V · 75 mA = 2.593 W on a 4 W part: over 50 %, marginal
    assert f["clamp.energy"]["value"] == pytest.approx(v_tvs * I_0, rel=1e-9)
    assert f["clamp.energy"]["status"] == "marginal"
    # the TVS stands off 12 V against V_BR(min) 33 V
    assert f["clamp.standoff"]["value"] == 12
    assert f["clamp.standoff"]["status"] == "ok"


def test_unclamped_coil_is_a_violation_with_no_finite_spike():
    f, report = findings(design(clamp={"kind": "none"}))
    assert f["switch.breakdown"]["status"] == "violation"
    assert f["switch.breakdown"]["value"] is None
    assert report["transient"]["peak_switch_voltage"] is None
    assert "clamp.reverse_voltage" not in f


def test_dissipation_and_junction_temperature():
    # P = 0.07375·0.2 + 3.63727e-3·0.9 = 18.02 mW; allowed min(0.625, (150 − 20)/200) = 0.625 W
    f, _ = findings(design())
    assert f["switch.power"]["value"] == pytest.approx(P_ON, rel=1e-9)
    assert f["switch.power"]["rating"] == pytest.approx(0.625)
    assert f["switch.junction_temp"]["value"] == pytest.approx(T_J, rel=1e-9)
    assert f["switch.junction_temp"]["limit"] == 125
    # R_θJA = 6000 K/W: T_J = 20 + 0.018024·6000 = 128.1 °C: over 125 °C, under 150 °C;
    # allowed power (150 − 20)/6000 = 21.67 mW, 18.02 mW is over half of it
    f, _ = findings(design(**{"switch.rth_ja": 6000}))
    assert f["switch.junction_temp"]["value"] == pytest.approx(20 + P_ON * 6000, rel=1e-9)
    assert f["switch.junction_temp"]["status"] == "marginal"
    assert f["switch.power"]["rating"] == pytest.approx(130 / 6000)
    assert f["switch.power"]["status"] == "marginal"


def test_junction_limit_is_tj_max_less_25_when_lower():
    f, _ = findings(design(**{"switch.tj_max": 125}))
    assert f["switch.junction_temp"]["limit"] == 100


def test_clamp_diode_reverse_voltage_and_peak_current():
    # reverse: V_cc − V_CE(sat),min = 12 − 0 = 12 V on a 12 V diode: at the rating, over 80 % (9.6 V)
    f, _ = findings(design(**{"clamp.diode.vrrm": 12}))
    assert f["clamp.reverse_voltage"]["value"] == pytest.approx(12.0)
    assert f["clamp.reverse_voltage"]["status"] == "marginal"
    # with vce_sat_min = 0.1 V: 11.9 V
    f, _ = findings(design(**{"clamp.diode.vrrm": 12, "switch.vce_sat_min": 0.1}))
    assert f["clamp.reverse_voltage"]["value"] == pytest.approx(11.9)
    assert f["clamp.reverse_voltage"]["status"] == "marginal"
    # peak = I_0 = 75 mA on a 70 mA rating
    f, _ = findings(design(**{"clamp.diode.i_peak": 0.07}))
    assert f["clamp.peak_current"]["value"] == pytest.approx(I_0)
    assert f["clamp.peak_current"]["status"] == "violation"


def _decay_integrand(i):
    # L / (R·i + V_F(i)) for the base design's diode clamp
    return 0.12 / (160 * i + 1.9 * VT * math.log1p(i / 1e-8) + i * 0.05)


def test_release_time_is_the_integral_and_matches_the_check_value():
    # t = ∫ from I_do = 1.2/160 = 7.5 mA to I_0 = 75 mA of L/(R·i + V_F(i)) di (scipy.quad as reference)
    expected, _ = integrate.quad(_decay_integrand, 1.2 / 160, I_0, epsabs=0, epsrel=1e-12)
    f, report = findings(design())
    assert f["coil.release"]["value"] == pytest.approx(expected, rel=1e-8)
    assert f["coil.release"]["status"] == "note"
    # the report's (nominal) turn-off starts from I_0 = 73.75 mA
    nominal, _ = integrate.quad(_decay_integrand, 1.2 / 160, I_C, epsabs=0, epsrel=1e-12)
    assert report["transient"]["time_to_dropout"] == pytest.approx(nominal, rel=1e-8)
    # Check value (DOMAIN brief, checked with ngspice): 0.12 H / 160 Ω from 73.4 mA to 7.5 mA ≈ 1.41 ms
    check_value, _ = integrate.quad(_decay_integrand, 0.0075, 0.0734)
    assert check_value == pytest.approx(1.41e-3, rel=0.01)
    # With a requirement it is judged: 1 ms is too little for a plain diode
    f, _ = findings(design(**{"requirements": {"max_release_time": "1 ms"}}))
    assert f["coil.release"]["status"] == "violation"


def test_release_time_constant_clamp_closed_form():
    # Resistor clamp: v_c = i·R_p, so t = τ'·ln(I_0/I_do) with τ' = L/(R + R_p) (closed form)
    f, _ = findings(design(clamp={"kind": "resistor", "r": 200}))
    assert f["coil.release"]["value"] == pytest.approx(0.12 / 360 * math.log(I_0 / 0.0075), rel=1e-9)


def test_energy_and_average_current():
    # E = ½·0.12·0.075² = 337.5 µJ
    f, _ = findings(design())
    assert f["clamp.energy"]["value"] == pytest.approx(337.5e-6, rel=1e-12)
    assert f["clamp.energy"]["status"] == "note"
    assert "clamp.average_current" not in f  # needs switching.per_hour
    # Average current at 3600/h (1 Hz): Q = ∫ L·i/(R·i + V_F(i)) di from I_0/1000 to I_0 (scipy.quad)
    charge, _ = integrate.quad(lambda i: i * _decay_integrand(i), I_0 / 1000, I_0, epsrel=1e-12)
    f, _ = findings(design(**{"switching": {"per_hour": 3600}, "clamp.diode.if_avg": charge * 0.9}))
    assert f["clamp.average_current"]["value"] == pytest.approx(charge, rel=1e-6)
    assert f["clamp.average_current"]["status"] == "violation"


def test_zener_average_power():
    # Zener energy per turn-off = ∫ V_Z(i)·i dt = ∫ L·i·V_Z(i)/(R·i + V_F(i) + V_Z(i)) di (scipy.quad)
    clamp = {
        "kind": "diode_zener",
        "diode": design()["clamp"]["diode"],
        "zener": {"vz": 24, "tolerance": 0, "rz": 10, "p_max": 1},
    }

    def v_z(i):
        return 24 + VT * math.log(i / 0.005) + (i - 0.005) * 10

    def v_f(i):
        return 1.9 * VT * math.log1p(i / 1e-8) + i * 0.05

    energy, _ = integrate.quad(
        lambda i: 0.12 * i * v_z(i) / (160 * i + v_f(i) + v_z(i)), I_0 / 1000, I_0, epsrel=1e-12
    )
    f, _ = findings(design(clamp=clamp, switching={"per_hour": 36_000}))
    assert f["clamp.energy"]["value"] == pytest.approx(energy * 10, rel=1e-5)
    assert f["clamp.energy"]["unit"] == "W"


def test_base_resistor_power():
    # P = I_Rb²·R_b = (3.95201 mA)²·1 kΩ = 15.618 mW at the hot V_BE(on) (13.89 mW at V_BE(sat))
    # on a 20 mW resistor: over 50 %, marginal
    f, _ = findings(design(**{"base.power_rating": "20 mW"}))
    assert f["resistor.power"]["value"] == pytest.approx(I_PIN**2 * 1000, rel=1e-9)
    assert I_PIN**2 * 1000 == pytest.approx(15.618e-3, rel=1e-4)
    assert f["resistor.power"]["status"] == "marginal"


def test_divider_drive_thevenin():
    # Sensor on top (1 kΩ lit, 2.2 MΩ dark), 22 kΩ fixed below, fed from the 12 V supply:
    # V_th,on = 12·22/23 = 11.478 V, R_th = 1k ∥ 22k = 956.52 Ω;
    # I_B = (11.478 − 0.9)/(956.52 + 3300) − 0.9/22k = 2.44428 mA
    # Off: V_th = 12·22k/2.222M = 0.11881 V, R_th = 21.782 kΩ; V_BE = 0.11881·22k/(21.782k + 3.3k + 22k) = 55.5 mV
    drive = {
        "kind": "divider",
        "r_fixed": "22k",
        "sensor_position": "top",
        "r_sensor_on": "1k",
        "r_sensor_off": "2M2",
        "tolerance": 0,
    }
    f, report = findings(design(drive=drive, **{"base.r_series": "3k3", "base.r_pulldown": "22k"}))
    v_on, r_on = 12 * 22 / 23, 1000 * 22000 / 23000
    i_b = (v_on - 0.9) / (r_on + 3300) - 0.9 / 22000
    assert report["nominal"]["base_current"] == pytest.approx(i_b, rel=1e-9)
    v_off, r_off = 12 * 22e3 / 2.222e6, 2.2e6 * 22e3 / 2.222e6
    assert f["drive.cutoff"]["value"] == pytest.approx(v_off * 22e3 / (r_off + 3300 + 22e3), rel=1e-9)
    assert f["drive.source_current"]["status"] == "note"


def test_profile_overrides_are_used_and_named():
    f, report = findings(design(limits={"voltage": 0.5}))
    assert f["switch.breakdown"]["limit"] == pytest.approx(20.0)
    assert "voltage" in report["profile"]["name"]
