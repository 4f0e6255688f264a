"""Properties that hold for every valid MOSFET and Darlington array design (hypothesis), as
tests/test_properties.py holds them for the NPN: any valid design evaluates; a larger gate or
base resistor never raises the drive margin; a higher supply never lowers the peak."""

from __future__ import annotations

import copy

from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from app.engine import evaluate, parse_design

from .test_properties import designs, positive

ARRAY_CLAMP = {"kind": "array_diode", "vf": 1.2, "vf_at": 0.35, "i_peak": 0.5, "vrrm": 100, "if_avg": 0.5}


@st.composite
def fet_designs(draw):
    doc = draw(designs())
    gate = doc.pop("base")
    doc["gate"] = gate
    th_max = draw(positive(0.8, 4.5))
    doc["switch"] = {
        "kind": "nmos",
        "name": "property FET",
        "vds_max": draw(positive(20, 200)),
        "id_max": draw(positive(0.1, 10)),
        "rds_on": draw(positive(0.01, 20)),
        "rds_on_vgs": th_max + draw(positive(0.2, 8)),
        "rds_on_hot": draw(positive(1.2, 2.0)),
        "vgs_th_min": th_max * draw(positive(0.3, 1.0)),
        "vgs_th_max": th_max,
        "vgs_max": th_max + 8.5,
        "p_max": draw(positive(0.2, 5)),
        "rth_ja": draw(positive(20, 500)),
        "tj_max": draw(st.sampled_from([150, 175])),
    }
    if draw(st.booleans()):
        doc["switch"]["e_as"] = draw(positive(1e-4, 1))
    return doc


@st.composite
def array_designs(draw):
    doc = draw(designs())
    if draw(st.booleans()):
        doc.pop("base")
    doc["switch"] = {
        "kind": "darlington_array",
        "name": "property array",
        "channels": 8,
        "channels_on": draw(st.integers(1, 8)),
        "r_input": draw(positive(1000, 12000)),
        "r_input_tolerance": draw(positive(0, 30)),
        "vce_sat": draw(positive(0.8, 1.6)),
        "vbe_on": draw(positive(1.5, 2.6)),
        "hfe_min": draw(positive(300, 2000)),
        "vceo": 100,
        "ic_max": 0.5,
        "p_max": draw(positive(0.5, 2.5)),
        "rth_ja": draw(positive(40, 120)),
        "tj_max": 150,
    }
    if draw(st.booleans()):
        common_to = draw(st.sampled_from(["supply", "zener", "unconnected"]))
        doc["clamp"] = dict(ARRAY_CLAMP, common_to=common_to)
        if common_to == "zener":
            doc["clamp"]["zener"] = {"vz": draw(positive(3, 40)), "tolerance": 5, "rz": 10, "p_max": 1}
    return doc


def _lowest(doc):
    return doc["supply"]["nominal"] * (1 - doc["supply"]["tolerance"] / 100)


def _valid(doc):
    if doc["switch"]["kind"] == "darlington_array":
        return doc["switch"]["vce_sat"] < _lowest(doc)
    return True


COMMON = settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])
# No finite number: an unclamped spike, a clamp that never lets go, a FET's thermal runaway
# (junction and power), or an avalanche with the supply at or above V_(BR)DSS.
MAY_BE_UNBOUNDED = {
    "switch.breakdown",
    "coil.release",
    "switch.junction_temp",
    "switch.power",
    "switch.avalanche",
}


@COMMON
@given(st.one_of(fet_designs(), array_designs()))
def test_any_valid_design_of_either_kind_evaluates(doc):
    assume(_valid(doc))
    report = evaluate(parse_design(doc))
    assert report["verdict"] in {"violation", "marginal", "ok"}
    for finding in report["findings"]:
        assert finding["status"] in {"violation", "marginal", "ok", "note"}
        if finding["value"] is None:
            assert finding["rule"] in MAY_BE_UNBOUNDED
            assert finding["status"] in {"violation", "note"}


def _value(doc, rule):
    return next(f["value"] for f in evaluate(parse_design(doc))["findings"] if f["rule"] == rule)


@COMMON
@given(fet_designs(), positive(1.0, 10.0))
def test_a_larger_gate_resistor_never_raises_the_gate_voltage(doc, factor):
    larger = copy.deepcopy(doc)
    larger["gate"]["r_series"] = doc["gate"]["r_series"] * factor
    assert _value(larger, "gate.enhancement") <= _value(doc, "gate.enhancement") * (1 + 1e-12)


@COMMON
@given(array_designs(), positive(1.0, 10.0))
def test_a_larger_base_resistor_never_raises_the_array_overdrive(doc, factor):
    assume(_valid(doc) and "base" in doc)
    larger = copy.deepcopy(doc)
    larger["base"]["r_series"] = doc["base"]["r_series"] * factor
    assert _value(larger, "drive.saturation") <= _value(doc, "drive.saturation") * (1 + 1e-12)


def _peak(doc):
    return evaluate(parse_design(doc))["transient"]["peak_switch_voltage"]


@COMMON
@given(st.one_of(fet_designs(), array_designs()), positive(1.0, 1.5))
def test_a_higher_supply_never_lowers_the_peak_switch_voltage(doc, factor):
    assume(_valid(doc))
    report = evaluate(parse_design(doc))
    assume(report["transient"]["peak_switch_voltage"] is not None)  # clamped
    assume(doc["clamp"].get("common_to") != "unconnected")
    assume(report["transient"]["initial_current"] > 0)
    higher = copy.deepcopy(doc)
    higher["supply"]["nominal"] = doc["supply"]["nominal"] * factor
    worst = [_value(d, "switch.breakdown") for d in (doc, higher)]
    assert worst[1] >= worst[0] * (1 - 1e-12)
    # The nominal corner is one self-heated operating point: a FET's R_DS(on) rises with its
    # junction, so a FET heated past its rating can carry less at a higher supply. Within its
    # rating the nominal peak must not fall either.
    if doc["switch"]["kind"] == "nmos":
        hot = [evaluate(parse_design(d))["nominal"]["junction_temp"] for d in (doc, higher)]
        if any(t is None or t > doc["switch"]["tj_max"] for t in hot):
            return
    assert _peak(higher) >= _peak(doc) * (1 - 1e-12)
