"""The design window: each chosen value's interval where every rule holds, checked by hand where
a closed form exists, and every edge checked by evaluating the design just inside and just
outside it through the public evaluate()."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from app import cli
from app.engine import evaluate, parse_design
from app.engine.window import CHOICES, E12, design_windows, standard_values, window

from .designgen import random_designs
from .handbook import design

EXAMPLES = sorted(Path(__file__).resolve().parent.parent.joinpath("seed_data", "examples").glob("*.json"))
CHOICE = {c.key: c for c in CHOICES}
STEP = 2e-4  # beyond the edges' 1e-4 bisection precision


def _failing(design_model, ignored) -> set[str]:
    report = evaluate(design_model)
    return {f["rule"] for f in report["findings"] if f["status"] in ("violation", "marginal")} - set(ignored)


def test_the_base_resistor_edge_set_by_saturation_matches_the_hand_calculation():
    # Hand calculation (the handbook design, one corner): the saturation check takes
    # I_C = (V_cc − V_CE(sat))/R_coil = (12 − 0.2)/160 = 73.75 mA, so I_B,required = I_C/h_FE(min)
    # = 0.7375 mA and the derated overdrive 2 (profile "general", common practice) asks for
    # I_B ≥ 1.475 mA. I_B = (V_on − V_BE(sat))/(R_th + R_b) − V_BE(sat)/R_be
    # = 4.1 V/(100 Ω + R_b) − 0.9 V/10 kΩ, so 4.1/(100 + R_b) = 1.475 mA + 0.09 mA = 1.565 mA,
    # 100 + R_b = 2619.81 Ω, R_b = 2519.81 Ω.
    r_b_max = 4.1 / (0.07375 / 100 * 2 + 0.9 / 10_000) - 100
    assert r_b_max == pytest.approx(2519.81, abs=0.01)
    w = window(parse_design(design()), CHOICE["base.r_series"])
    assert w["designed_passes"] and w["fail_at_every_value"] == []
    assert w["high"] == pytest.approx(r_b_max, rel=1.5e-4)
    assert w["low"] < 1000 < w["high"]
    # the edge's failing neighbour is the saturation rule going marginal
    over = evaluate(CHOICE["base.r_series"].change(parse_design(design()), w["high_outside"]))
    statuses = {f["rule"]: f["status"] for f in over["findings"]}
    assert statuses["drive.saturation"] == "marginal"


def _check_edges(design_model, w):
    choice = CHOICE[w["value"]]
    ignored = w["fail_at_every_value"]
    if w["low"] is None:
        return 0
    checked = 0
    for edge, outside in ((w["low"], w["low_outside"]), (w["high"], w["high_outside"])):
        assert not _failing(choice.change(design_model, edge), ignored), (w["value"], edge)  # inside
        if outside is None:  # the search limit, not an edge
            continue
        beyond = edge * (1 - STEP) if edge == w["low"] else edge * (1 + STEP)
        assert _failing(choice.change(design_model, beyond), ignored), (w["value"], beyond)  # outside
        checked += 1
    return checked


@pytest.mark.parametrize("example", EXAMPLES, ids=lambda p: p.stem)
def test_every_edge_holds_inside_and_fails_just_outside_for_the_examples(example):
    model = parse_design(json.loads(example.read_text(encoding="utf-8")))
    windows = design_windows(model)
    assert windows
    for w in windows:
        _check_edges(model, w)


def test_every_edge_holds_inside_and_fails_just_outside_for_random_designs():
    checked = 0
    for document in random_designs(12, 10, ("diode_zener", "diode_resistor", "rc", "resistor", "diode")):
        model = parse_design(document)
        for w in design_windows(model):
            checked += _check_edges(model, w)
    assert checked >= 5  # edges were found and checked, not only search limits


def test_the_standard_values_inside_are_iec_60063_and_each_passes():
    w = window(parse_design(design()), CHOICE["base.r_series"])
    values = [s["value"] for s in w["standard"]]
    assert values == standard_values("E24", w["low"], w["high"])
    assert all(w["low"] <= v <= w["high"] for v in values)
    # IEC 60063: E24 between 1 k and 2.2 k is 1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2 (×1000)
    assert [v for v in values if 1000 <= v <= 2200] == [1000, 1100, 1200, 1300, 1500, 1600, 1800, 2000, 2200]
    assert {s["value"] for s in w["standard"] if s["e12"]} == {
        v for v in values if any(abs(v / 10 ** len(str(int(v))) * 10 - m) < 1e-9 for m in E12)
    }
    for s in w["standard"]:
        assert s["passes"]
        report = evaluate(CHOICE["base.r_series"].change(parse_design(design()), s["value"]))
        assert not {f["rule"] for f in report["findings"] if f["status"] in ("violation", "marginal")}
        assert s["margin"] > 0
    assert w["best"] in values


def test_an_empty_window_names_the_two_rules_that_pull_against_each_other():
    # The drive pin's 10 mA against saturation: a lower R_b saturates the switch but draws more
    # from the pin than its derated limit.
    example = next(p for p in EXAMPLES if p.stem == "conveyor-brake-solenoid")
    model = parse_design(json.loads(example.read_text(encoding="utf-8")))
    w = window(model, CHOICE["base.r_series"])
    assert w["low"] is None and w["standard"] == []
    assert w["conflict"]["rules"] == ["drive.source_current", "drive.saturation"]
    # at every value across the range one of the two fails (outside the rules no R_b fixes)
    low, high = w["searched"]
    for k in range(25):
        x = low * (high / low) ** (k / 24)
        failing = _failing(CHOICE["base.r_series"].change(model, x), w["fail_at_every_value"])
        assert failing & {"drive.source_current", "drive.saturation"}, x


def test_windows_are_in_the_report_and_the_table_only_when_asked(capsys):
    model = parse_design(design())
    assert "windows" not in evaluate(model)
    report = evaluate(model, windows=True)
    assert [w["value"] for w in report["windows"]] == ["base.r_series", "base.r_pulldown", "clamp.zener.vz"][
        :2
    ]
    json.dumps(report, allow_nan=False)


def test_the_cli_prints_the_window(tmp_path, capsys):
    path = tmp_path / "d.json"
    path.write_text(json.dumps(design()), encoding="utf-8")
    assert cli.main(["check", str(path), "--windows"]) == 0
    out = capsys.readouterr().out
    line = next(line for line in out.splitlines() if line.strip().startswith("R_b:"))
    assert "E12 inside:" in line and "best margin at" in line
