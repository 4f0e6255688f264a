"""What to tighten, against margins worked by hand on the handbook design (tests/handbook.py).

Sources: derating defaults (80 % current, common practice, DOMAIN brief); copper α = 0.00393 /K
(IEC 60028) does not enter here (the handbook design's ambient is 20 °C, its coil's r_at).
"""

from __future__ import annotations

import pytest

from app.engine import evaluate, parse_design
from app.engine.tighten import margin_of, tighten_lines, what_to_tighten

from .handbook import design


def _by_rule(entries):
    return {e["rule"]: e for e in entries}


def test_halving_the_coil_tolerance_moves_the_switch_current_margin_by_hand():
    # coil 160 Ω −10 % = 144 Ω: I_C = 12/144 = 83.333 mA against 80 % of 0.5 A = 0.4 A
    # (V_CE(sat),min = 0 V): margin (0.4 − 0.083333)/0.4 = 79.167 %;
    # halved to 5 %: 12/152 = 78.947 mA, margin (0.4 − 0.078947)/0.4 = 80.263 %: +1.096 points
    entries = _by_rule(what_to_tighten(parse_design(design(**{"coil.tolerance": 10}))))
    current = entries["switch.current"]
    assert current["margin"] == pytest.approx((0.4 - 12 / 144) / 0.4, rel=1e-9)
    (lever,) = current["levers"]
    assert lever["quantity"] == "coil.tolerance"
    assert (lever["now"], lever["halved"]) == ("10 %", "5 %")
    assert lever["margin"] == pytest.approx((0.4 - 12 / 152) / 0.4, rel=1e-9)
    assert lever["change"] == pytest.approx(0.010965, abs=1e-6)


def test_supply_tolerance_decides_coil_overvoltage_and_nothing_else_does():
    # V_cc,max = 12·1.1 = 13.2 V against the coil's 15.6 V: margin (15.6 − 13.2)/15.6 = 15.385 %;
    # supply ±5 %: 12.6 V, (15.6 − 12.6)/15.6 = 19.231 %: +3.846 points. The coil's tolerance does
    # not enter V_cc − V_CE(sat), so it is not named for this rule.
    entries = _by_rule(
        what_to_tighten(parse_design(design(**{"supply.tolerance": 10, "coil.tolerance": 10})))
    )
    over = entries["coil.overvoltage"]
    assert [m["quantity"] for m in over["levers"]] == ["supply.tolerance"]
    assert over["levers"][0]["change"] == pytest.approx(3 / 15.6 - 2.4 / 15.6, rel=1e-9)
    lines = tighten_lines(list(entries.values()))
    assert "  halve supply.tolerance (10 % → 5 %): margin +3.8 points to +19.2 % (ok)" in lines


def test_supply_given_as_min_max_is_tightened_about_nominal():
    # 10.8 … 13.2 V about 12 V halved: 11.4 … 12.6 V; coil over-voltage as above
    doc = design(supply={"nominal": 12, "min": 10.8, "max": 13.2})
    over = _by_rule(what_to_tighten(parse_design(doc)))["coil.overvoltage"]
    (lever,) = over["levers"]
    assert lever["quantity"] == "supply.min/max"
    assert lever["halved"] == "11.4…12.6 V"
    assert lever["margin"] == pytest.approx(3 / 15.6, rel=1e-9)


def test_no_tolerance_no_levers_and_margins_read_from_the_report():
    doc = parse_design(design())  # every tolerance 0 in the handbook design
    assert what_to_tighten(doc) == []
    report = evaluate(doc)
    for f in report["findings"]:
        m = margin_of(f)
        if f["status"] == "note":
            assert m is None
        elif f["bound"] == "upper":
            assert m == pytest.approx((f["limit"] - f["value"]) / f["limit"])
