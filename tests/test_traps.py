"""The traps: designs the engine once passed as "ok" ("within limits") where the right answer
is not — the drive, coil, switch and contacts first, then the clamp.

One test per trap. Each docstring says what the old engine said and why that was wrong; the
hand calculations behind the numbers are written out in tests/test_rules_hand_worked*.py.
Nobody should be able to bring one of these back without a test failing here.

Sources: derating defaults (80 % voltage/current, 50 % power) common practice; V_T = kT/q at
27 °C from the SI defining constants; V_BR(max) = 1.1 × V_BR(min) when not given, from memory
(typical of ±5 % parts); E24 series IEC 60063.
"""

from __future__ import annotations

import math

import pytest
from scipy import constants

from app.engine import evaluate, parse_design

from .handbook import design


def finding(doc, rule):
    report = evaluate(parse_design(doc))
    return next(f for f in report["findings"] if f["rule"] == rule)


def test_drive_pin_current_at_the_lowest_base_voltage():
    """Old: drive.source_current ok, 3.727 mA = (5 − 0.9)/1.1 kΩ at V_BE(sat) max, under the 3.84 mA
    derated limit of a 4.8 mA pin. Wrong: a conducting base can sit at the hot V_BE(on), 0.653 V,
    and the pin then sources (5 − 0.653)/1.1 kΩ = 3.952 mA, past the derated limit (80 %, common
    practice)."""
    f = finding(design(**{"drive.i_max": "4.8 mA"}), "drive.source_current")
    assert f["status"] == "marginal"


def test_base_resistor_power_at_the_lowest_base_voltage():
    """Old: resistor.power ok, (3.727 mA)²·1 kΩ = 13.89 mW under half of 28 mW (14 mW). Wrong: at the
    hot V_BE(on) the current is 3.952 mA and the power 15.62 mW, past 50 % (common practice)."""
    f = finding(design(**{"base.power_rating": "28 mW"}), "resistor.power")
    assert f["status"] == "marginal"


def test_collector_current_at_the_lowest_vce_sat():
    """Old: switch.current ok, (12 − 0.2)/160 = 73.75 mA against 80 % of 92.2 mA = 73.76 mA. Wrong:
    V_CE(sat) 0.2 V is a maximum; a good part saturates lower (0 V without vce_sat_min), giving
    12/160 = 75 mA, past the derated limit."""
    f = finding(design(**{"switch.ic_max": "92.2 mA"}), "switch.current")
    assert f["status"] == "marginal"


def test_coil_overvoltage_at_the_lowest_vce_sat():
    """Old: coil.overvoltage ok, 15.7 − 0.2 = 15.5 V on a coil rated 15.6 V. Wrong: with V_CE(sat)
    at its minimum the coil sees up to 15.7 V, over its maximum continuous voltage."""
    f = finding(design(**{"supply.nominal": 15.7}), "coil.overvoltage")
    assert f["status"] == "violation"


def test_clamp_diode_reverse_voltage_at_the_lowest_vce_sat():
    """Old: clamp.reverse_voltage ok, 12 − 0.2 = 11.8 V under 80 % of a 14.8 V diode (11.84 V).
    Wrong: the diode sees up to 12 − 0 = 12 V while the switch is on, past the derated limit."""
    f = finding(design(**{"clamp.diode.vrrm": 14.8}), "clamp.reverse_voltage")
    assert f["status"] == "marginal"


def test_unsaturated_switch_dissipation_is_the_half_supply_bound():
    """Old: switch.power ok, 52 mW at h_FE(min) (I_C 4.62 mA with R_b 30 kΩ), under half of the
    216.7 mW allowed with R_θJA 600 K/W. Wrong: with h_FE anywhere above h_FE(min) the switch
    can sit at V_CE = 6 V, where it dissipates 12²/(4·160) = 225 mW: over the allowed power."""
    doc = design(**{"base.r_series": "30k", "switch.rth_ja": 600})
    assert finding(doc, "switch.power")["status"] == "violation"


def test_unsaturated_switch_junction_temperature_uses_the_same_bound():
    """Old: switch.junction_temp ok, 20 + 0.052·600 = 51 °C. Wrong: at the 225 mW bound the junction
    reaches 20 + 0.225·600 = 155 °C, above T_J,max 150 °C."""
    doc = design(**{"base.r_series": "30k", "switch.rth_ja": 600})
    assert finding(doc, "switch.junction_temp")["status"] == "violation"


def test_ambient_above_tj_max_allows_no_dissipation():
    """Old: switch.power ok at 160 °C ambient with T_J,max 150 °C: the allowed power
    (150 − 160)/200 = −50 mW made the ratio P/P_allowed negative, which passed. Wrong: no power
    at all is allowed there."""
    doc = design(**{"ambient.min": 160, "ambient.max": 160})
    assert finding(doc, "switch.power")["status"] == "violation"


def test_pickup_with_an_unknown_coil_heating_is_not_taken_as_cold():
    """Old: coil.pickup ok, 11.8 V against a must-operate of 10 V at 20 °C (limit 11 V): the coil was
    taken at ambient because it gave no R_th. Wrong: a coil held on heats itself; with the
    profile's assumed 40 K rise (from memory) the must-operate is 11.57 V and the limit 12.73 V:
    not ok, and the finding says the rise was assumed."""
    f = finding(design(**{"coil.v_pickup": 10}), "coil.pickup")
    assert f["status"] == "marginal"
    assert "ASSUMED" in f["message"]


def test_slow_divider_input_dwells_in_the_linear_region():
    """Old: verdict ok with switch.power ok (17 mW saturated) for a photoresistor divider. Wrong: a
    slowly changing sensor walks the switch through its linear region, where it can dissipate
    12²/(4·160) = 225 mW plus base power, above the 216.7 mW allowed with R_θJA 600 K/W."""
    divider = {
        "kind": "divider",
        "r_fixed": "22k",
        "sensor_position": "top",
        "r_sensor_on": "1k",
        "r_sensor_off": "2M2",
        "tolerance": 0,
    }
    doc = design(drive=divider, **{"base.r_series": "3k3", "base.r_pulldown": "22k", "switch.rth_ja": 600})
    assert finding(doc, "switch.linear_region")["status"] == "violation"
    assert evaluate(parse_design(doc))["verdict"] == "violation"


# ---------------------------------------------------------------- the clamp

VT = constants.k * 300.15 / constants.e  # kT/q at 27 °C (SI defining constants)
I0 = (12 - 0.2) / 160  # 73.75 mA, the handbook design's coil current


def findings(doc):
    report = evaluate(parse_design(doc))
    return {f["rule"]: f for f in report["findings"]}, report


def test_tvs_spike_taken_at_minimum_breakdown():
    """Old: the spike was taken on the TVS's minimum breakdown V_BR(min) 33 V: 34.56 V, under
    the 36 V derated V_(BR)CEO (45 V × 80 %): "ok". Wrong: a part at V_BR(max) (36.3 V assumed,
    1.1 × V_BR(min), from memory) clamps at 37.61 V, past the derated limit."""
    clamp = {"kind": "tvs_switch", "tvs": {"v_breakdown": 33, "v_clamp": 53, "i_clamp": 1, "p_max": 40}}
    old = 33 + VT * math.log(73.75) + 0.07275 * (53 - 33 - VT * math.log(1000)) / 0.999
    assert old < 0.8 * 45  # 34.56 V < 36 V: what the old engine passed
    f, _ = findings(design(clamp=clamp, **{"switch.vceo": 45}))
    assert f["switch.breakdown"]["value"] > 0.8 * 45
    assert f["switch.breakdown"]["status"] == "marginal"


def test_tvs_stand_off_below_the_supply():
    """Old: a TVS was judged only against its minimum breakdown (12 V against 33 V: "ok").
    Wrong: its stand-off voltage V_RWM (here 11 V) is the most it holds off without conducting;
    a 12 V supply sits above it whenever the switch is off, and the TVS leaks and heats."""
    clamp = {
        "kind": "tvs_switch",
        "tvs": {"v_breakdown": 33, "v_clamp": 53, "i_clamp": 1, "p_max": 40, "v_standoff": 11},
    }
    f, report = findings(design(clamp=clamp))
    assert f["clamp.standoff"]["status"] == "violation"
    assert report["verdict"] == "violation"


def test_resistor_across_coil_power_never_checked():
    """Old: a 100 Ω resistor across a 12 V coil had no power check; the report read "within
    limits". Wrong: it dissipates 12²/100 = 1.44 W the whole time the coil is on, three times
    its 0.5 W rating."""
    f, report = findings(design(clamp={"kind": "resistor", "r": 100, "power_rating": "0.5 W"}))
    assert f["clamp.resistor_power"]["value"] == pytest.approx(1.44)
    assert f["clamp.resistor_power"]["status"] == "violation"
    assert report["verdict"] == "violation"


def test_diode_peak_judged_against_its_surge_rating():
    """Old: the clamp diode's peak current (73.75 mA at every turn-off) was judged against its
    one "peak" figure, here the 2 A surge rating: "ok". Wrong: a peak at every turn-off is
    repetitive; the diode's repetitive rating I_FRM is 70 mA, below it."""
    f, _ = findings(design(**{"clamp.diode.i_frm": "70 mA", "clamp.diode.i_fsm": 2}))
    assert f["clamp.peak_current"]["status"] == "violation"


def test_turn_off_current_taken_with_the_highest_saturation_voltage():
    """Old: at the worst corners the coil current at turn-off was (V_cc − V_CE(sat),max)/R_coil =
    (12 − 0.2)/160 = 73.75 mA, the least it can be, and every turn-off stress followed it: a diode
    with a 93 mA repetitive rating (derated 80 %, common practice: 74.4 mA) read "ok". Wrong: a
    switch that saturates at less than 0.2 V (0 V when no vce_sat_min is given) leaves 12/160 =
    75 mA in the coil, past the derated rating."""
    assert I0 < 0.8 * 0.093 < 12 / 160  # 73.75 mA < 74.4 mA < 75 mA
    f, _ = findings(design(**{"clamp.diode.i_frm": "93 mA", "clamp.diode.i_fsm": 2}))
    assert f["clamp.peak_current"]["value"] == pytest.approx(12 / 160)
    assert f["clamp.peak_current"]["status"] == "marginal"


def test_energy_share_above_100_percent():
    """Old: with a TVS to ground the energy note said "…, 1xx % of it into the clamp": the TVS
    also absorbs what the supply delivers while the current returns through it (V_cc·Q), so the
    share of ½·L·I_0² exceeded 100 %. Now the share is of everything the turn-off dissipates."""
    clamp = {"kind": "tvs_switch", "tvs": {"v_breakdown": 33, "v_clamp": 53, "i_clamp": 1, "p_max": 40}}
    f, _ = findings(design(clamp=clamp))
    message = f["clamp.energy"]["message"]
    share = int(message.split(" of it into the clamp")[0].rsplit(", ", 1)[1].rstrip("%"))
    assert 0 < share <= 100


def test_suggested_zener_fails_at_its_own_tolerance():
    """Old: the suggested zener was V_budget − V_F exactly (here 18 V from the 32 V derated
    V_(BR)CEO less the 13.2 V supply), with no tolerance and no dynamic resistance: at its +5 %
    corner and 20 Ω its spike passed the derated limit, though the release it showed looked
    fine. Now the suggestion is an E24 value that passes the spike and every clamp rule at the
    worst corner."""
    doc = design(**{"supply.tolerance": 10})
    _, report = findings(doc)
    zeners = [a for a in report["transient"]["alternatives"] if "zener" in a["clamp"]]
    assert zeners
    vz = float(zeners[0]["clamp"].split("+ ")[1].split(" V")[0])
    old_vz = 0.8 * 40 - 13.2 - (1.9 * VT * math.log1p(I0 * 1.1 / 1e-8) + I0 * 1.1 * 0.05)
    old = {
        "kind": "diode_zener",
        "diode": doc["clamp"]["diode"],
        "zener": {"vz": old_vz, "tolerance": 5, "rz": 20, "p_max": 1},
    }
    f_old, _ = findings({**doc, "clamp": old})
    assert f_old["switch.breakdown"]["status"] != "ok"
    new = {**old, "zener": {**old["zener"], "vz": vz}}
    f_new, _ = findings({**doc, "clamp": new})
    assert f_new["switch.breakdown"]["status"] == "ok"
