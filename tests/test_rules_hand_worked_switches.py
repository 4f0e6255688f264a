"""The MOSFET and Darlington array rules against calculations written out by hand.

Sources of the constants, named beside each check:
- V_T = kT/q at 27 °C with k and q the SI defining constants (scipy.constants carries them);
- V_GS(th) falls about 5 mV/K when the part gives no figure: from memory (small-signal and
  logic-level FETs show −3 to −7 mV/K);
- R_DS(on) at 125 °C normalised to 25 °C, here 1.6: from memory, typical values 1.5–1.8; the
  curve between taken as h^((T − 25)/100) (the shape of the datasheet curve, from memory);
- the avalanche energy of an unclamped inductive turn-off, E = ½·L·I_0²·V_BR/(V_BR − V_cc):
  the textbook formula of the datasheet test circuit (coil resistance neglected);
- E_AS derated linearly to zero at T_J,max with the starting junction: from memory;
- two base-emitter drops of a Darlington input, each falling 2 mV/K: common practice; the onset
  of 2 × 0.55 V when the part gives none: from memory;
- derating defaults (80 % voltage/current, 50 % power, T_J ≤ 125 °C, overdrive ≥ 2, cutoff
  75 %): common practice (DOMAIN brief);
- the junction temperature with R_DS(on)(T_J) solved by scipy.optimize.brentq on
  T = T_A + R_θJA·I²·R_25·h^((T − 25)/100), independently of the engine's Lambert W.
"""

from __future__ import annotations

import math

import pytest
from scipy import constants, optimize

from app.engine import DesignError, evaluate, parse_design

from .handbook import BASE
from .handbook import design as npn_design
from .test_worked_formulas import _last_number

VT = constants.k * 300.15 / constants.e  # kT/q at 27 °C (SI defining constants)
DIODE = BASE["clamp"]  # I_S = 1e-8 A, n = 1.9, R_S = 0.05 Ω

NMOS = {
    "format": "clampdown-design/1",
    "name": "hand-worked MOSFET",
    "supply": {"nominal": 12, "tolerance": 0},
    "ambient": {"min": 25, "max": 25},
    "drive": {"kind": "logic", "high": 5, "high_min": 5, "low": 0, "low_max": 0.4, "r_out": 100, "i_max": "20 mA"},
    "gate": {"r_series": "1k", "r_pulldown": "10k", "tolerance": 0, "power_rating": "125 mW"},
    "switch": {
        "kind": "nmos", "name": "hand FET", "vds_max": 30, "id_max": 0.5, "rds_on": 1.0, "rds_on_vgs": 4.5,
        "rds_on_hot": 1.6, "vgs_th_min": 1.0, "vgs_th_max": 2.0, "vgs_max": 20, "p_max": 0.35,
        "rth_ja": 350, "tj_max": 150,
    },
    "coil": {
        "name": "hand coil", "v_nominal": 12, "r_coil": 160, "tolerance": 0, "r_at": 25, "inductance": 0.12,
        "v_pickup": 8.4, "v_dropout": 1.2, "v_max": 15.6, "temp_rise": 0,
    },
    "clamp": DIODE,
}  # fmt: skip

DARLINGTON = {
    **{k: NMOS[k] for k in ("format", "supply", "ambient", "drive", "coil")},
    "name": "hand-worked Darlington array channel",
    "switch": {
        "kind": "darlington_array", "name": "hand array", "channels": 7, "channels_on": 4, "r_input": 2700,
        "vce_sat": 1.0, "vbe_on": 2.0, "vbe_on_min": 1.2, "hfe_min": 1000, "vceo": 50, "ic_max": 0.5,
        "p_max": 1.0, "rth_ja": 80, "tj_max": 150,
    },
    "clamp": {"kind": "array_diode", "common_to": "supply", "vf": 1.0, "vf_at": 0.1, "i_peak": 0.5, "vrrm": 50, "if_avg": 0.5},
}  # fmt: skip


def _doc(base: dict, **changes) -> dict:
    import copy

    doc = copy.deepcopy(base)
    for path, value in changes.items():
        *parents, leaf = path.split(".")
        node = doc
        for key in parents:
            node = node[key]
        node[leaf] = value
    return doc


def findings(doc):
    report = evaluate(parse_design(doc))
    return {f["rule"]: f for f in report["findings"]}, report


# The MOSFET's operating point, by hand:
I_D = 12 / 160  # 75 mA: R_DS(on) taken as 0 for the stresses (no minimum is given)
VGS_ON = 5 * 10_000 / (100 + 1000 + 10_000)  # 4.504505 V: no gate current, the pull-down divides
VGS_OFF = 0.4 * 10_000 / 11_100  # 0.360360 V
# R_DS(on) and T_J together: a = R_θJA·I_D²·R_25·1.6^0 = 350·0.005625·1 = 1.96875 K,
# b = ln(1.6)/100 = 0.00470004 /K, a·b = 0.00925320, W₀(−0.00925320) = −0.00934003,
# T_J − T_A = 0.00934003/0.00470004 = 1.98722 K -> T_J = 26.98722 °C
T_J = 26.98722
RDS_HOT = 1.6 ** ((T_J - 25) / 100)  # 1.009384 Ω
P_FET = I_D**2 * RDS_HOT  # 5.67778 mW


def test_mosfet_junction_and_rds_solved_together():
    # Independent check: brentq on T = T_A + R_θJA·I²·R_25·1.6^((T − 25)/100) (from memory: 1.6).
    t = optimize.brentq(lambda t: 25 + 350 * I_D**2 * 1.6 ** ((t - 25) / 100) - t, 25, 100, xtol=1e-12)
    assert t == pytest.approx(T_J, abs=1e-5)
    f, _ = findings(NMOS)
    assert f["switch.junction_temp"]["value"] == pytest.approx(t, rel=1e-9)
    assert f["switch.junction_temp"]["status"] == "ok"
    assert f["switch.power"]["value"] == pytest.approx(I_D**2 * 1.6 ** ((t - 25) / 100), rel=1e-9)
    assert P_FET == pytest.approx(5.67778e-3, rel=1e-5)
    # allowed min(0.35 W, (150 − 25)/350 = 0.357 W) = 0.35 W; limit 50 % of it (common practice)
    assert (f["switch.power"]["rating"], f["switch.power"]["limit"]) == (
        pytest.approx(0.35),
        pytest.approx(0.175),
    )
    assert "R_DS(on) 1.01 Ω" in f["switch.power"]["message"]


def test_mosfet_thermal_runaway_is_a_violation():
    # R_25 = 20 Ω, R_θJA = 1000 K/W: a = 1000·0.075²·20 = 112.5 K, a·b = 112.5·0.0047 = 0.5288 > 1/e
    # = 0.3679: no root of T = T_A + a·1.6^((T − T_A)/100) (from memory: 1.6) — runaway.
    assert 112.5 * math.log(1.6) / 100 > math.exp(-1)
    f, _ = findings(_doc(NMOS, **{"switch.rds_on": 20, "switch.rth_ja": 1000}))
    assert f["switch.junction_temp"]["status"] == "violation"
    assert f["switch.junction_temp"]["value"] is None  # infinite: reported as no number
    assert "thermal runaway" in f["switch.junction_temp"]["message"]
    assert f["switch.power"]["status"] == "violation"


def test_gate_enhancement_ok_marginal_and_violation():
    # V_GS,on = 5·10k/(100 + 1k + 10k) = 4.5045 V ≥ 4.5 V, where R_DS(on) is guaranteed: ok
    f, _ = findings(NMOS)
    g = f["gate.enhancement"]
    assert g["value"] == pytest.approx(VGS_ON, rel=1e-9)
    assert (g["status"], g["limit"], g["rating"]) == ("ok", 4.5, pytest.approx(2.0))
    # high_min 4 V: 4·10k/11.1k = 3.6036 V, below 4.5 V but above V_GS(th),max 2 V: marginal
    f, _ = findings(_doc(NMOS, **{"drive.high_min": 4}))
    assert f["gate.enhancement"]["value"] == pytest.approx(3.6036036, rel=1e-6)
    assert f["gate.enhancement"]["status"] == "marginal"
    # high_min 2 V: 1.8018 V, below V_GS(th),max 2 V: the FET need not conduct: violation
    f, _ = findings(_doc(NMOS, **{"drive.high_min": 2}))
    assert f["gate.enhancement"]["value"] == pytest.approx(1.8018018, rel=1e-6)
    assert f["gate.enhancement"]["status"] == "violation"


def test_gate_enhancement_threshold_is_highest_cold():
    # At −40 °C: V_GS(th),max = 2.0 V − 5 mV/K·(−40 − 25) = 2.325 V (−5 mV/K, from memory)
    f, _ = findings(_doc(NMOS, **{"ambient.min": -40}))
    assert f["gate.enhancement"]["rating"] == pytest.approx(2.325, rel=1e-9)
    # with the part's own −3 mV/K: 2.0 + 0.003·65 = 2.195 V
    f, _ = findings(_doc(NMOS, **{"ambient.min": -40, "switch.vgs_th_tempco": -0.003}))
    assert f["gate.enhancement"]["rating"] == pytest.approx(2.195, rel=1e-9)


def test_gate_threshold_off_at_the_hottest_junction():
    # V_GS,off = 0.4·10k/11.1k = 0.36036 V; V_GS(th),min(T_J) = 1.0 − 5 mV/K·(26.98722 − 25)
    # = 0.990064 V (−5 mV/K, from memory); limit 75 % of it = 0.742548 V (common practice)
    f, _ = findings(NMOS)
    g = f["gate.threshold_off"]
    assert g["value"] == pytest.approx(VGS_OFF, rel=1e-9)
    assert g["rating"] == pytest.approx(1.0 - 0.005 * (T_J - 25), abs=1e-7)
    assert g["limit"] == pytest.approx(0.75 * 0.990064, rel=1e-5)
    assert g["status"] == "ok"
    assert "−5 mV/K (default, from memory" in g["message"]
    # No pull-down, the off level 0.8 V reaches the gate unchanged: 0.8 > 0.742548 V: marginal
    f, _ = findings(_doc(NMOS, **{"drive.low_max": 0.8, "gate.r_pulldown": None}))
    assert f["gate.threshold_off"]["value"] == pytest.approx(0.8)
    assert f["gate.threshold_off"]["status"] == "marginal"
    assert "a gate pull-down would hold it off" in f["gate.threshold_off"]["message"]


def test_gate_voltage_against_vgs_max():
    # 4.5045 V against ±20 V, limit 80 % = 16 V (common practice): ok
    f, _ = findings(NMOS)
    assert f["gate.voltage"]["value"] == pytest.approx(VGS_ON, rel=1e-9)
    assert (f["gate.voltage"]["status"], f["gate.voltage"]["limit"]) == ("ok", pytest.approx(16))
    # A 15 V drive: 15·10k/11.1k = 13.5135 V against ±12 V: violation
    f, _ = findings(_doc(NMOS, **{"drive.high": 15, "drive.high_min": 15, "switch.vgs_max": 12}))
    assert f["gate.voltage"]["value"] == pytest.approx(13.513514, rel=1e-6)
    assert f["gate.voltage"]["status"] == "violation"


def test_gate_resistor_power():
    # I_g = 5/(100 + 1k + 10k) = 0.450450 mA; P = I_g²·1 kΩ = 0.202906 mW against 125 mW
    f, _ = findings(NMOS)
    assert f["gate.resistor_power"]["value"] == pytest.approx((5 / 11_100) ** 2 * 1000, rel=1e-9)
    assert f["gate.resistor_power"]["status"] == "ok"


def test_mosfet_switch_current_and_breakdown_with_a_diode():
    f, _ = findings(NMOS)
    # I_D = 12/160 = 75 mA (R_DS(on) taken as 0) against 0.5 A, limit 0.4 A
    assert f["switch.current"]["value"] == pytest.approx(I_D, rel=1e-12)
    assert f["switch.current"]["limit"] == pytest.approx(0.4)
    # peak = 12 + V_F(75 mA) = 12 + 1.9·V_T·ln(1 + 0.075/1e-8) + 0.075·0.05 = 12.78171 V (Shockley,
    # V_T from the SI defining constants), against V_(BR)DSS 30 V, limit 24 V
    v_f = 1.9 * VT * math.log1p(I_D / 1e-8) + I_D * 0.05
    assert 12 + v_f == pytest.approx(12.78171, abs=1e-5)
    b = f["switch.breakdown"]
    assert b["value"] == pytest.approx(12 + v_f, rel=1e-9)
    assert (b["rating"], b["limit"], b["status"]) == (30, pytest.approx(24), "ok")
    assert "V_(BR)DSS 30 V" in b["message"]


def test_mosfet_pickup_with_rds_hot():
    # V_coil = 12·160/(160 + 1.009384) = 11.92477 V against must-operate 8.4 V (coil at 25 °C)
    f, _ = findings(NMOS)
    assert f["coil.pickup"]["value"] == pytest.approx(12 * 160 / (160 + RDS_HOT), rel=1e-6)
    assert f["coil.pickup"]["status"] == "ok"
    # V_GS 3.6 V: R_DS(on) not guaranteed there, so the same coil voltage is at best marginal
    f, _ = findings(_doc(NMOS, **{"drive.high_min": 4}))
    assert f["coil.pickup"]["status"] == "marginal"
    assert "R_DS(on) is not guaranteed" in f["coil.pickup"]["message"]
    # V_GS 1.8 V, below V_GS(th),max: the FET need not conduct, 0 V on the coil
    f, _ = findings(_doc(NMOS, **{"drive.high_min": 2}))
    assert (f["coil.pickup"]["value"], f["coil.pickup"]["status"]) == (0.0, "violation")


def test_mosfet_below_rated_gate_voltage_may_sit_in_its_linear_region():
    # V_GS 3.6 V < 4.5 V: P up to V_cc²/(4·R_coil) = 144/640 = 225 mW, T_J = 25 + 0.225·350 = 103.75 °C
    f, _ = findings(_doc(NMOS, **{"drive.high_min": 4}))
    assert f["switch.power"]["value"] == pytest.approx(0.225, rel=1e-12)
    assert f["switch.power"]["status"] == "marginal"  # above 175 mW, below 350 mW
    assert f["switch.junction_temp"]["value"] == pytest.approx(103.75, rel=1e-12)
    assert "linear region" in f["switch.power"]["message"]


def test_mosfet_slow_divider_linear_region():
    # A slow photoresistor divider sweeps V_GS through the threshold: P = V_cc²/(4·R_coil)
    # = 144/640 = 225 mW against 350 mW (limit 175 mW): marginal; T_J = 103.75 °C < 125 °C
    divider = {"kind": "divider", "v_source": 5, "r_fixed": "10k", "sensor_position": "top",
               "r_sensor_on": "1k", "r_sensor_off": "1M", "tolerance": 0}  # fmt: skip
    f, _ = findings(_doc(NMOS, drive=divider))
    lin = f["switch.linear_region"]
    assert lin["value"] == pytest.approx(0.225, rel=1e-12)
    assert lin["status"] == "marginal"
    f, _ = findings(_doc(NMOS, drive=divider | {"transition": "snap"}))
    assert "switch.linear_region" not in f


def test_unclamped_mosfet_avalanche():
    unclamped = _doc(NMOS, clamp={"kind": "none"})
    # E = ½·0.12·0.075²·30/(30 − 12) = 0.3375 mJ·1.6667 = 0.5625 mJ (datasheet test-circuit formula)
    energy = 0.5 * 0.12 * I_D**2 * 30 / (30 - 12)
    assert energy == pytest.approx(0.5625e-3)
    f, _ = findings(unclamped)
    assert f["switch.breakdown"]["status"] == "note"
    assert "switch.avalanche" in f["switch.breakdown"]["message"]
    # No rating given: a violation, as for a bipolar switch
    assert f["switch.avalanche"]["status"] == "violation"
    assert f["switch.avalanche"]["value"] == pytest.approx(energy, rel=1e-9)
    # E_AS 10 mJ derated for the start at T_J 26.98722 °C: 10·(150 − 26.98722)/125 = 9.84102 mJ
    # (linear derating, from memory); limit 50 % = 4.92051 mJ; within it, but a single-pulse
    # rating for an avalanche at every turn-off: marginal at best
    f, _ = findings(_doc(unclamped, **{"switch.e_as": "10 mJ"}))
    a = f["switch.avalanche"]
    assert a["rating"] == pytest.approx(10e-3 * (150 - T_J) / 125, rel=1e-6)
    assert a["status"] == "marginal"
    assert "single-pulse" in a["message"]
    # E_AR 0.5 mJ (repetitive): 0.5625 mJ is past it: violation; E_AR 2 mJ (limit 1 mJ): ok
    f, _ = findings(_doc(unclamped, **{"switch.e_ar": "0.5 mJ"}))
    assert f["switch.avalanche"]["status"] == "violation"
    f, _ = findings(_doc(unclamped, **{"switch.e_ar": "2 mJ"}))
    assert f["switch.avalanche"]["status"] == "ok"
    # With a clamp there is no avalanche to judge
    f, _ = findings(NMOS)
    assert "switch.avalanche" not in f


# The Darlington channel, by hand:
I_B = (5 - 2.0) / (100 + 2700)  # 1.071429 mA through R_th + R_in at V_I(on) 2.0 V
I_C_SAT = (12 - 1.0) / 160  # 68.75 mA at V_CE(sat) max
P_PACKAGE = 4 * (I_C_SAT * 1.0 + I_B * 2.0 + I_B**2 * 2700)  # 4 × 73.9924 mW = 295.969 mW
T_J_ARRAY = 25 + P_PACKAGE * 80  # 48.6776 °C


def test_darlington_saturation_through_its_input_resistor():
    # overdrive = 1.071429 mA/(68.75 mA/1000) = 15.584 (forced gain with the built-in resistor)
    f, _ = findings(DARLINGTON)
    assert f["drive.saturation"]["value"] == pytest.approx(I_B / (I_C_SAT / 1000), rel=1e-9)
    assert f["drive.saturation"]["value"] == pytest.approx(15.5844, rel=1e-5)
    # A 3.3 V pin: (3.3 − 2.0)/2800 = 0.464286 mA -> overdrive 6.753; a 2.2 V pin: 0.2/2800 =
    # 71.43 µA -> 1.039: marginal (below 2, common practice)
    f, _ = findings(_doc(DARLINGTON, **{"drive.high": 2.2, "drive.high_min": 2.2}))
    assert f["drive.saturation"]["value"] == pytest.approx((0.2 / 2800) / (I_C_SAT / 1000), rel=1e-9)
    assert f["drive.saturation"]["status"] == "marginal"


def test_darlington_package_dissipation_with_every_channel_on():
    # per channel 68.75 mA·1.0 V + 1.071429 mA·2.0 V + (1.071429 mA)²·2.7 kΩ = 73.9924 mW; four
    # channels = 295.969 mW against min(1 W, 125/80 = 1.5625 W) = 1 W, limit 500 mW: ok
    f, _ = findings(DARLINGTON)
    assert f["switch.power"]["value"] == pytest.approx(P_PACKAGE, rel=1e-9)
    assert P_PACKAGE == pytest.approx(0.295969, rel=1e-5)
    assert "4 of its 7 channels" in f["switch.power"]["message"]
    assert f["switch.junction_temp"]["value"] == pytest.approx(T_J_ARRAY, rel=1e-9)
    # All seven on: 7 × 73.9924 mW = 517.9 mW: past 500 mW, marginal
    f, _ = findings(_doc(DARLINGTON, **{"switch.channels_on": 7}))
    assert f["switch.power"]["value"] == pytest.approx(P_PACKAGE / 4 * 7, rel=1e-9)
    assert f["switch.power"]["status"] == "marginal"


def test_darlington_cutoff_and_pin_current():
    # onset at T_J: 1.2 V − 2·2 mV/K·(48.6776 − 25) = 1.105290 V (common practice); off level
    # 0.4 V (no pull-down); limit 75 % = 0.828967 V: ok
    f, _ = findings(DARLINGTON)
    onset = 1.2 - 0.004 * (T_J_ARRAY - 25)
    assert f["drive.cutoff"]["rating"] == pytest.approx(onset, rel=1e-9)
    assert f["drive.cutoff"]["value"] == pytest.approx(0.4)
    # pin current at the lowest conducting input, (5 − 1.105290)/(100 + 2700) = 1.390968 mA
    assert f["drive.source_current"]["value"] == pytest.approx((5 - onset) / 2800, rel=1e-9)
    # No vbe_on_min: two drops of 0.55 V assumed (from memory), and the finding says so
    doc = _doc(DARLINGTON)
    del doc["switch"]["vbe_on_min"]
    f, _ = findings(doc)
    assert "ASSUMED 1.1 V" in f["drive.cutoff"]["message"]


def test_array_diode_to_the_supply_zener_and_unconnected():
    # I_0 = 12/160 = 75 mA (V_CE(sat),min taken as 0 V); the array diode's I_S fitted through
    # (1.0 V, 100 mA) with n = 1.8 (from memory): I_S = 0.1/(exp(1.0/(1.8·V_T)) − 1) = 4.6961e-11 A;
    # V_F(75 mA) = 1.8·V_T·ln(1 + 0.075/I_S) = 0.986606 V; peak = 12.986606 V against 50 V
    i_s = 0.1 / math.expm1(1.0 / (1.8 * VT))
    peak = 12 + 1.8 * VT * math.log1p(I_D / i_s)
    f, _ = findings(DARLINGTON)
    assert f["switch.breakdown"]["value"] == pytest.approx(peak, rel=1e-9)
    assert peak == pytest.approx(12.986606, abs=1e-5)
    assert "common pin" in f["switch.breakdown"]["message"]
    assert f["clamp.reverse_voltage"]["value"] == pytest.approx(12.0)  # V_cc − 0 V against 50 V
    assert f["clamp.peak_current"]["value"] == pytest.approx(I_D)  # 75 mA against 0.5 A
    # Through a 24 V zener (I_ZT 5 mA, r_Z 10 Ω): peak = 12 + V_F + 24 + V_T·ln(0.075/0.005)
    # + (0.075 − 0.005)·10 = 12.986606 + 24 + 0.070042 + 0.7 = 37.756648 V (SPICE breakdown form)
    zener = {"vz": 24, "tolerance": 0, "rz": 10, "p_max": 1}
    f, _ = findings(_doc(DARLINGTON, **{"clamp.common_to": "zener", "clamp.zener": zener}))
    expected = peak + 24 + VT * math.log(0.075 / 0.005) + 0.07 * 10
    assert f["switch.breakdown"]["value"] == pytest.approx(expected, rel=1e-9)
    # Left unconnected: no clamp at all, and the finding says why
    f, _ = findings(_doc(DARLINGTON, **{"clamp.common_to": "unconnected"}))
    b = f["switch.breakdown"]
    assert b["status"] == "violation"
    assert "common pin is left unconnected" in b["message"]
    assert "clamp.reverse_voltage" not in f and "clamp.peak_current" not in f


def test_rules_for_one_kind_are_skipped_for_the_others():
    f, _ = findings(NMOS)
    assert not {"drive.saturation", "drive.cutoff", "drive.reverse_base", "resistor.power"} & set(f)
    assert {"gate.enhancement", "gate.threshold_off", "gate.voltage", "gate.resistor_power"} <= set(f)
    f, _ = findings(DARLINGTON)
    assert not {"gate.enhancement", "drive.reverse_base", "resistor.power", "switch.avalanche"} & set(f)
    assert {"drive.saturation", "drive.cutoff", "drive.source_current"} <= set(f)
    f, _ = findings(npn_design())
    assert not {r for r in f if r.startswith("gate.")}


def test_a_design_without_a_switch_kind_stays_npn():
    doc = npn_design()
    del doc["switch"]["kind"]
    assert parse_design(doc).switch.kind == "npn"
    assert evaluate(parse_design(doc)) == evaluate(parse_design(npn_design()))


@pytest.mark.parametrize(
    "doc, expected",
    [
        (_doc(NMOS, clamp=DARLINGTON["clamp"]), 'clamp.kind: "array_diode" is the clamp of a Darlington'),
        (_doc(DARLINGTON, **{"clamp.common_to": "zener"}), 'common_to "zener" needs the zener'),
        ({**{k: v for k, v in NMOS.items() if k != "gate"}, "base": NMOS["gate"]}, "has no base resistors"),
        ({k: v for k, v in NMOS.items() if k != "gate"}, "gate: is required"),
        (_doc(NMOS, **{"switch.rds_on_vgs": 1.5}), "rds_on_vgs must lie from vgs_th_max to vgs_max"),
        (_doc(DARLINGTON, **{"switch.channels_on": 9}), "channels_on (9) must not exceed channels (7)"),
        (
            _doc(NMOS, **{"switch.kind": "pnp"}),
            "switch: kind must be one of 'npn', 'nmos', 'darlington_array'",
        ),
    ],
)
def test_bad_switch_input_is_refused_by_field(doc, expected):
    with pytest.raises(DesignError) as caught:
        parse_design(doc)
    assert expected in str(caught.value)


@pytest.mark.parametrize(
    "doc",
    [
        NMOS,
        _doc(NMOS, clamp={"kind": "none"}),
        _doc(NMOS, clamp={"kind": "none"}, **{"switch.e_as": "10 mJ"}),
        _doc(NMOS, **{"drive.high_min": 4}),
        _doc(NMOS, **{"switch.rds_on": 20, "switch.rth_ja": 1000}),
        DARLINGTON,
        _doc(DARLINGTON, **{"clamp.common_to": "unconnected"}),
    ],
)
def test_every_finding_is_worked_and_ends_in_its_value(doc):
    """As tests/test_worked_formulas.py for the NPN: the formula with the worst corner's numbers."""
    f, _ = findings(doc)
    for finding in f.values():
        assert finding["worked"], finding["rule"]
        if finding["value"] is None:
            assert "no finite" in finding["worked"] or "runaway" in finding["message"], finding
            continue
        shown = _last_number(finding["worked"], finding["unit"])
        assert shown == pytest.approx(finding["value"], rel=6e-4, abs=1e-12), (
            finding["rule"],
            finding["worked"],
        )


def test_every_rule_for_one_kind_has_a_hand_worked_check():
    from pathlib import Path

    from app.engine.rules import RULES

    text = Path(__file__).read_text(encoding="utf-8")
    for registered in RULES.values():
        if registered.kinds is not None and "npn" not in registered.kinds:
            assert f'"{registered.id}"' in text, registered.id
            assert registered.formula, registered.id


def test_the_schema_knows_the_switch_kinds_and_their_resistors():
    """JSON Schema (draft 2020-12, the jsonschema package): each kind validates with its own
    resistor block and is refused with the other one."""
    import jsonschema

    from app.engine.schema import design_schema

    schema = design_schema()
    jsonschema.Draft202012Validator.check_schema(schema)
    for good in (NMOS, DARLINGTON, npn_design()):
        jsonschema.validate(good, schema)
    old = npn_design()
    del old["switch"]["kind"]
    jsonschema.validate(old, schema)  # no kind: an NPN, which needs its base block
    del old["base"]
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(old, schema)
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate({**NMOS, "base": NMOS["gate"]}, schema)
