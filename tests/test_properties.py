"""Properties that hold for every valid design (hypothesis)."""

from __future__ import annotations

import copy

from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from app.engine import evaluate, parse_design

from .handbook import BASE


def positive(lo: float, hi: float):
    return st.floats(min_value=lo, max_value=hi, allow_nan=False, allow_infinity=False)


DIODE = {"name": "d", "vrrm": 200, "if_avg": 1, "i_peak": 20, "vf": 1.0, "vf_at": 1.0}


@st.composite
def clamps(draw):
    kind = draw(st.sampled_from(["none", "diode", "diode_zener", "diode_resistor", "resistor", "tvs_switch"]))
    if kind == "none":
        return {"kind": "none"}
    if kind == "diode":
        return {"kind": "diode", "diode": DIODE}
    if kind == "diode_zener":
        zener = {
            "vz": draw(positive(3, 60)),
            "tolerance": draw(positive(0, 10)),
            "rz": draw(positive(0, 50)),
            "p_max": 1,
        }
        return {"kind": kind, "diode": DIODE, "zener": zener}
    if kind == "diode_resistor":
        return {"kind": kind, "diode": DIODE, "r": draw(positive(1, 5000))}
    if kind == "resistor":
        return {"kind": kind, "r": draw(positive(10, 10000))}
    v_br = draw(positive(55, 100))
    return {
        "kind": kind,
        "tvs": {"v_breakdown": v_br, "v_clamp": v_br * draw(positive(1.1, 1.8)), "i_clamp": 5, "p_max": 400},
    }


@st.composite
def designs(draw):
    doc = copy.deepcopy(BASE)
    doc["supply"] = {"nominal": draw(positive(5, 48)), "tolerance": draw(positive(0, 20))}
    t_min = draw(positive(-40, 40))
    doc["ambient"] = {"min": t_min, "max": t_min + draw(positive(0, 60))}
    if draw(st.booleans()):
        high = draw(positive(1.8, 12))
        low_max = draw(positive(0, 0.5))
        doc["drive"] = {
            "kind": "logic",
            "high": high,
            "high_min": high * draw(positive(0.7, 1)),
            "low": draw(positive(-10, 0)),
            "low_max": min(low_max, high * 0.5),
            "r_out": draw(positive(0, 500)),
            "i_max": draw(positive(1e-3, 0.05)),
        }
    else:
        doc["drive"] = {
            "kind": "divider",
            "r_fixed": draw(positive(100, 1e6)),
            "sensor_position": draw(st.sampled_from(["top", "bottom"])),
            "r_sensor_on": draw(positive(10, 1e7)),
            "r_sensor_off": draw(positive(10, 1e7)),
            "tolerance": draw(positive(0, 20)),
        }
        if draw(st.booleans()):
            doc["drive"]["v_source"] = draw(positive(1, 30))
    doc["base"] = {
        "r_series": draw(positive(10, 1e6)),
        "tolerance": draw(positive(0, 10)),
        "power_rating": 0.125,
    }
    if draw(st.booleans()):
        doc["base"]["r_pulldown"] = draw(positive(100, 1e6))
    doc["switch"] = dict(doc["switch"], hfe_min=draw(positive(10, 500)), vce_sat=draw(positive(0, 1)))
    v_nom = doc["supply"]["nominal"]
    doc["coil"] = {
        "name": "c",
        "v_nominal": v_nom,
        "r_coil": draw(positive(5, 5000)),
        "tolerance": draw(positive(0, 15)),
        "r_at": draw(positive(15, 30)),
        "inductance": draw(positive(1e-3, 5)),
        "v_pickup": v_nom * draw(positive(0.4, 0.9)),
        "v_dropout": v_nom * draw(positive(0.02, 0.3)),
        "v_max": v_nom * draw(positive(1.0, 2.0)),
    }
    if draw(st.booleans()):
        doc["coil"]["rth"] = draw(positive(1, 200))
    doc["clamp"] = draw(clamps())
    if draw(st.booleans()):
        doc["switching"] = {"per_hour": draw(positive(1, 1e5))}
    return doc


def _valid(doc):
    lowest = doc["supply"]["nominal"] * (1 - doc["supply"]["tolerance"] / 100)
    return doc["switch"]["vce_sat"] < lowest


COMMON = settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])


@COMMON
@given(designs())
def test_any_valid_design_evaluates(doc):
    assume(_valid(doc))
    report = evaluate(parse_design(doc))
    assert report["verdict"] in {"violation", "marginal", "ok"}
    for finding in report["findings"]:
        assert finding["status"] in {"violation", "marginal", "ok", "note"}
        if finding["value"] is None:  # only an unclamped spike, or a clamp that never lets go
            assert finding["rule"] in {"switch.breakdown", "coil.release"}


def _overdrive(doc):
    return next(
        f["value"] for f in evaluate(parse_design(doc))["findings"] if f["rule"] == "drive.saturation"
    )


@COMMON
@given(designs(), positive(1.0, 10.0))
def test_a_larger_base_resistor_never_raises_the_overdrive(doc, factor):
    assume(_valid(doc))
    larger = copy.deepcopy(doc)
    larger["base"]["r_series"] = doc["base"]["r_series"] * factor
    assert _overdrive(larger) <= _overdrive(doc) * (1 + 1e-12)


def _peak(doc):
    return evaluate(parse_design(doc))["transient"]["peak_switch_voltage"]


def _conducts(doc):
    """The nominal operating point carries current (else there is no turn-off to compare)."""
    return evaluate(parse_design(doc))["nominal"]["base_current"] > 0


@COMMON
@given(designs(), positive(1.0, 1.5))
def test_a_higher_supply_never_lowers_the_peak_switch_voltage(doc, factor):
    assume(_valid(doc) and doc["clamp"]["kind"] != "none" and _conducts(doc))
    higher = copy.deepcopy(doc)
    higher["supply"]["nominal"] = doc["supply"]["nominal"] * factor
    assert _peak(higher) >= _peak(doc) * (1 - 1e-12)
    worst = [
        next(f["value"] for f in evaluate(parse_design(d))["findings"] if f["rule"] == "switch.breakdown")
        for d in (doc, higher)
    ]
    assert worst[1] >= worst[0] * (1 - 1e-12)
