"""Compare tells the truth: notation-only edits are no change, unlike quantities are never
compared, and each change says whether it got better or worse by the rule's direction.
Pure: no database. The numbers are the hand-worked design's (tests/handbook.py)."""

from __future__ import annotations

import pytest

from app.engine import evaluate, parse_design
from app.signoff.compare import compare
from app.signoff.margin import bound_of, margin

from .handbook import design


def _compare(old_doc, new_doc):
    return compare(old_doc, evaluate(parse_design(old_doc)), new_doc, evaluate(parse_design(new_doc)))


def _by_rule(result):
    return {c.rule: c for c in result.findings}


def test_notation_only_edits_are_no_change():
    # 12 → "12 V", 0 → "0 %", "1k" → "1000 Ω", "20 mA" → 0.02: the same numbers in SI units
    old = design()
    new = design(
        **{
            "supply.nominal": "12 V",
            "supply.tolerance": "0 %",
            "base.r_series": "1000 Ω",
            "drive.i_max": 0.02,
        }
    )
    result = _compare(old, new)
    assert result.inputs == [] and result.findings == [] and result.unchanged


def test_a_real_edit_is_listed_with_the_values_as_typed():
    result = _compare(design(), design(**{"base.r_series": "1k5"}))
    assert [(c.path, c.old, c.new) for c in result.inputs] == [("base.r_series", "1k", "1k5")]


def test_a_stress_that_grows_is_worse_and_shows_both_limits():
    # Supply 12 → 14 V: I_C = (14 − 0)/160 = 87.5 mA (was (12 − 0)/160 = 75 mA; a stress takes
    # the lowest V_CE(sat), 0 V when no minimum is given); the switch current's limit stays 80 %
    # of its rating, so the margin shrinks: worse.
    change = _by_rule(_compare(design(), design(**{"supply.nominal": 14})))["switch.current"]
    assert change.kind == "value"
    assert change.old["value"] == pytest.approx(0.075) and change.new["value"] == pytest.approx(0.0875)
    assert change.value_change == pytest.approx(0.0125)
    assert change.old["limit"] == change.new["limit"] and not change.limit_moved
    assert change.effect == "worse" and change.new_margin < change.old_margin


def test_a_margin_that_grows_is_better():
    # R_b 1 kΩ → 680 Ω: more base current, more overdrive (a lower bound: ≥ 2): better
    change = _by_rule(_compare(design(), design(**{"base.r_series": "680"})))["drive.saturation"]
    assert change.new["value"] > change.old["value"]
    assert change.effect == "better"


def test_only_the_limit_moving_is_reported_as_such():
    # The current fraction 80 % → 50 % (a per-design override): value unchanged, limit lower
    new = design()
    new["limits"] = {"current": "50%"}
    change = _by_rule(_compare(design(), new))["switch.current"]
    assert change.kind == "limit" and change.limit_moved and change.value_change == 0
    assert change.effect == "worse"


def test_unlike_quantities_are_never_compared():
    old = design()
    new = design()
    old_report, new_report = evaluate(parse_design(old)), evaluate(parse_design(new))
    # The same rule reporting another quantity (an energy against a power) in the newer report
    for finding in new_report["findings"]:
        if finding["rule"] == "switch.power":
            finding["unit"], finding["value"] = "J", 0.001
    changes = [c for c in compare(old, old_report, new, new_report).findings if c.rule == "switch.power"]
    assert sorted(c.kind for c in changes) == ["appeared", "disappeared"]
    assert all(c.value_change is None and c.effect == "" for c in changes)


def test_margin_reads_inside_positive_and_past_negative():
    # Upper bound: value 60 against a limit of 80 → (80 − 60)/80 = +25 %; 100 → −25 %.
    assert margin(
        {"status": "ok", "value": 60, "limit": 80, "rating": 100, "bound": "upper"}
    ) == pytest.approx(0.25)
    assert margin(
        {"status": "violation", "value": 100, "limit": 80, "rating": 100, "bound": "upper"}
    ) == pytest.approx(-0.25)
    # Lower bound (pick-up): 21.1 V against 24.4 V → (21.1 − 24.4)/24.4 = −13.52 %
    pickup = {"status": "violation", "value": 21.1, "limit": 24.4, "rating": 22.2, "bound": "lower"}
    assert margin(pickup) == pytest.approx(-0.135246, rel=1e-5)
    # Reports written before the bound was recorded: read from the limit's side of the rating
    assert bound_of({**pickup, "bound": None}) == "lower"
    assert bound_of({"status": "ok", "value": 1, "limit": 0.8, "rating": 1.0}) == "upper"
    assert bound_of({"status": "ok", "value": 1, "limit": 1.0, "rating": 1.0}) is None
    assert margin({"status": "note", "value": 1, "limit": None, "rating": None}) is None
