"""The traps: designs the engine once passed as "ok" where the right answer is not.

One test per trap. Each docstring says what the old engine said and why that was wrong; the
hand calculations behind the numbers are written out in tests/test_rules_hand_worked*.py.
Nobody should be able to bring one of these back without a test failing here.
"""

from __future__ import annotations

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
