"""Derating profiles: the two presets, profile files for `clampdown check --profile`, and a
finding that is within the general limits but past the high-reliability ones."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from app.engine import evaluate, parse_design
from app.engine.profile import DEFAULT_PROFILE, PRESETS, ProfileError, figures_of, profile_from_dict

from .handbook import design

ROOT = Path(__file__).resolve().parents[1]


def _finding(report: dict, rule: str) -> dict:
    return next(f for f in report["findings"] if f["rule"] == rule)


def test_the_general_preset_is_todays_default():
    # Common practice (shared domain notes): V ≤ 80 %, I ≤ 80 %, P ≤ 50 %, T_J ≤ 125 °C,
    # overdrive ≥ 2, pick-up margin ≥ 10 %.
    assert figures_of(PRESETS["general"]) == figures_of(DEFAULT_PROFILE)
    assert figures_of(PRESETS["general"]) == {
        "voltage": 0.80, "current": 0.80, "power": 0.50, "tj": 125.0,
        "overdrive": 2.0, "pickup_margin": 0.10, "cutoff": 0.75,
    }  # fmt: skip


def test_high_reliability_limits_are_the_standards_figures():
    # ECSS-Q-ST-30-11 and NASA EEE-INST-002, bipolar transistors and diodes (from memory):
    # voltage ≤ 75 %, current ≤ 75 %, power ≤ 50 %, T_J ≤ 110 °C.
    report = evaluate(parse_design(design()), PRESETS["high reliability"])
    breakdown = _finding(report, "switch.breakdown")  # V_(BR)CEO 40 V
    assert breakdown["rating"] == 40.0 and breakdown["limit"] == pytest.approx(0.75 * 40.0)  # 30 V
    current = _finding(report, "switch.current")  # I_C rating 0.5 A
    assert current["limit"] == pytest.approx(0.75 * 0.5)  # 0.375 A
    reverse = _finding(report, "clamp.reverse_voltage")  # V_RRM 100 V
    assert reverse["limit"] == pytest.approx(75.0)
    junction = _finding(report, "switch.junction_temp")  # T_J,max 150 °C
    assert junction["limit"] == pytest.approx(min(110.0, 150.0 - 25.0))  # 110 °C
    power = _finding(report, "switch.power")
    general = _finding(evaluate(parse_design(design())), "switch.power")
    assert power["limit"] == pytest.approx(general["limit"])  # 50 % in both
    assert report["profile"]["name"] == "high reliability"


def test_a_spike_within_80_but_past_75_percent_is_marginal_only_under_high_reliability():
    # The handbook design's worst turn-off peak is 12.78 V. With V_(BR)CEO = 16.5 V:
    # general limit 0.80 × 16.5 = 13.2 V ≥ 12.78 V → ok;
    # high-reliability limit 0.75 × 16.5 = 12.375 V < 12.78 V ≤ 16.5 V → marginal.
    doc = design(**{"switch.vceo": 16.5})
    general = _finding(evaluate(parse_design(doc), PRESETS["general"]), "switch.breakdown")
    strict = _finding(evaluate(parse_design(doc), PRESETS["high reliability"]), "switch.breakdown")
    assert general["value"] == pytest.approx(12.78, abs=0.01)
    assert (general["limit"], general["status"]) == (pytest.approx(13.2), "ok")
    assert (strict["limit"], strict["status"]) == (pytest.approx(12.375), "marginal")


def test_profile_values_are_checked_by_field():
    with pytest.raises(ProfileError) as caught:
        profile_from_dict({"voltage": 1.5, "power": "0", "tj": "hot", "overdrive": 0.5, "colour": "red"})
    fields = [field for field, _ in caught.value.problems]
    assert fields == ["colour", "voltage", "power", "tj", "overdrive"]
    assert profile_from_dict({"voltage": "70 %"}).voltage == pytest.approx(0.70)
    assert profile_from_dict({"name": "x", "tj": 100}).tj == 100.0  # the rest from "general"


def _check(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "app.cli", "check", *args], capture_output=True, text=True, timeout=60
    )


def test_check_with_a_profile_file_judges_by_it(tmp_path):
    design_file = tmp_path / "d.json"
    design_file.write_text(json.dumps(design(**{"switch.vceo": 16.5})), encoding="utf-8")
    general = _check(str(design_file), "--format", "json")
    strict = _check(
        str(design_file),
        "--format",
        "json",
        "--profile",
        str(ROOT / "seed_data/profiles/high-reliability.json"),
    )
    assert general.returncode == 0 and strict.returncode == 0, strict.stderr
    assert _finding(json.loads(general.stdout), "switch.breakdown")["status"] == "ok"
    report = json.loads(strict.stdout)
    assert report["profile"]["name"] == "high reliability"
    assert _finding(report, "switch.breakdown")["status"] == "marginal"
    assert (
        _check(
            str(design_file), "--strict", "--profile", str(ROOT / "seed_data/profiles/high-reliability.json")
        ).returncode
        == 1
    )


def test_check_refuses_a_bad_profile_file_naming_the_field(tmp_path):
    design_file = tmp_path / "d.json"
    design_file.write_text(json.dumps(design()), encoding="utf-8")
    profile = tmp_path / "p.json"
    profile.write_text(json.dumps({"name": "team", "voltage": 1.2, "tj": "hot"}), encoding="utf-8")
    result = _check(str(design_file), "--profile", str(profile))
    assert result.returncode == 2 and result.stdout == ""
    assert f"{profile}: voltage: 1.2 is outside the allowed range" in result.stderr
    assert f"{profile}: tj: 'hot' is not a number" in result.stderr
    as_json = _check(str(design_file), "--profile", str(profile), "--format", "json")
    assert as_json.returncode == 2
    assert [e["field"] for e in json.loads(as_json.stdout)["errors"]] == ["voltage", "tj"]
    assert _check(str(design_file), "--profile", str(tmp_path / "none.json")).returncode == 2


def test_the_shipped_preset_files_match_the_presets():
    for name, preset in PRESETS.items():
        path = ROOT / "seed_data" / "profiles" / f"{name.replace(' ', '-')}.json"
        assert profile_from_dict(json.loads(path.read_text(encoding="utf-8"))) == preset
