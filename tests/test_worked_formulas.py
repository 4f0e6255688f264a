"""Each finding carries its formula with the worst corner's numbers substituted ("worked"), the
way an engineer checks it on paper. The figures are checked against the hand calculation of
tests/test_rules_hand_worked.py (the same handbook design, same sources), and for every finding
of every example the worked text must end in the finding's own value.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

from app.engine import evaluate, parse_design
from app.engine.units import parse_quantity

from .handbook import design

EXAMPLES = sorted((Path(__file__).parent.parent / "seed_data" / "examples").glob("*.json"))

RC = {"kind": "rc", "r": 200, "c": "1 uF", "c_voltage_rating": 50, "power_rating": "250 mW"}
TVS = {"kind": "tvs_switch", "tvs": {"v_breakdown": 33, "v_clamp": 53, "i_clamp": 1, "p_max": 4}}
ZENER = {
    "kind": "diode_zener",
    "diode": design()["clamp"]["diode"],
    "zener": {"vz": 24, "tolerance": 5, "rz": 10, "p_max": 1},
}
DIVIDER = {
    "kind": "divider",
    "sensor_position": "bottom",
    "r_fixed": "10k",
    "r_sensor_on": "100k",
    "r_sensor_off": "1k",
    "tolerance": 5,
    "sensor_tolerance": 20,
}
VARIANTS = {
    "handbook": design(),
    "resistor clamp": design(
        clamp={"kind": "resistor", "r": 470, "power_rating": "0.5 W"}, switching={"per_hour": 3600}
    ),
    "tvs": design(clamp=TVS),
    "rc": design(clamp=RC),
    "zener with rate": design(clamp=ZENER, switching={"per_hour": 3600}),
    "unclamped": design(clamp={"kind": "none"}),
    "not saturated": design(**{"base.r_series": "47k"}),
    "cold ambient": design(**{"ambient.min": -10}),
}


def _findings(doc):
    return evaluate(parse_design(doc))["findings"]


def test_saturation_worked_by_hand():
    # I_B = (5 − 0.9)/(100 + 1000) − 0.9/10 000 = 3.63727 mA; I_C = (12 − 0.2)/160 = 73.75 mA;
    # overdrive = 3.63727/(73.75/100) = 4.93189 (tests/test_rules_hand_worked.py works the same)
    f = {x["rule"]: x for x in _findings(design())}
    assert f["drive.saturation"]["worked"] == (
        "I_B = (5 V − 900 mV)/(100 Ω + 1 kΩ) − 900 mV/10 kΩ = 3.637 mA; "
        "I_C = (V_cc − V_CE(sat))/R_coil = (12 V − 200 mV)/160 Ω = 73.75 mA; "
        "overdrive = I_B/(I_C/h_FE(min)) = 3.637 mA/(73.75 mA/100) = 4.932 ×"
    )
    # P = 73.75 mA·0.2 V + 3.63727 mA·0.9 V = 18.0235 mW; T_J = 20 + 0.0180235·200 = 23.605 °C
    assert f["switch.power"]["worked"].endswith(
        "P = I_C·V_CE(sat) + I_B·V_BE(sat) = 73.75 mA·200 mV + 3.637 mA·900 mV = 18.02 mW"
    )
    assert f["switch.junction_temp"]["worked"] == "T_J = T_A + P·R_θJA = 20 °C + 18.02 mW·200 K/W = 23.6 °C"
    # E = ½·0.12·0.075² = 337.5 µJ (I_0 = 12/160 at V_CE(sat),min = 0 V)
    assert f["clamp.energy"]["worked"] == "E = ½·L·I_0² = ½·120 mH·(75 mA)² = 337.5 µJ"


def test_a_negative_ambient_reads_as_a_subtraction():
    f = {x["rule"]: x for x in _findings(design(**{"ambient.min": -10, "ambient.max": -10}))}
    assert "min(625 mW, (150 °C − (−10 °C))/200 K/W) = 625 mW" in f["switch.power"]["worked"]


_LAST = re.compile(
    r"= (\(?−?[0-9.]+(?:e[+-]?[0-9]+)?\)?) ?([fpnµmkMG]?)([^ ;,()]*)\s*(?:\(not saturated\))?$"
)


def _last_number(text: str, unit: str) -> float:
    """The figure after the last '=' of a worked text, in SI units."""
    tail = text.rsplit(" = ", 1)[1]
    tail = re.sub(r" \(not saturated\)$", "", tail).replace("(−", "-").replace(")", "").replace("−", "-")
    if unit in ("×", "°C"):
        return float(tail.split()[0])
    return parse_quantity(tail.replace(" ", ""), unit)


@pytest.mark.parametrize(
    "doc",
    [*VARIANTS.values(), *(json.loads(p.read_text()) for p in EXAMPLES)],
    ids=[*VARIANTS, *(p.stem for p in EXAMPLES)],
)
def test_every_finding_is_worked_and_ends_in_its_value(doc):
    for f in _findings(doc):
        assert f["worked"], f"{f['rule']} has no worked formula"
        if f["value"] is None:  # an unclamped spike: no finite value, the text says why
            assert "no finite" in f["worked"]
            continue
        shown = _last_number(f["worked"], f["unit"])
        # four significant digits are shown: within half a unit in the fourth digit
        assert shown == pytest.approx(f["value"], rel=6e-4, abs=1e-12), (f["rule"], f["worked"], f["value"])
