"""Clamp traps: designs the engine once passed ("ok" / "within limits") whose right answer is
not. One test per trap; each docstring says what the old engine said and why it was wrong.
Keep them: a change that brings a trap back fails here.

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
