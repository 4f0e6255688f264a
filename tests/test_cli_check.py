"""`clampdown check`, `schema` and `netlist` as a CI job uses them."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import jsonschema
import pytest

from .handbook import design

EXAMPLES = sorted(Path(__file__).resolve().parent.parent.joinpath("seed_data", "examples").glob("*.json"))


def clampdown(*args: str, stdin: str | None = None) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "app.cli", *args], capture_output=True, text=True, input=stdin, timeout=60
    )


def write(tmp_path, document) -> str:
    path = tmp_path / "d.json"
    path.write_text(json.dumps(document))
    return str(path)


def test_a_clean_design_exits_0_with_a_table(tmp_path):
    result = clampdown("check", write(tmp_path, design()))
    assert result.returncode == 0, result.stdout + result.stderr
    assert "verdict: ok" in result.stdout
    assert "switch.breakdown" in result.stdout


def test_a_violation_exits_1(tmp_path):
    result = clampdown("check", write(tmp_path, design(clamp={"kind": "none"})))
    assert result.returncode == 1
    assert "VIOLATION" in result.stdout


def test_strict_fails_on_marginal(tmp_path):
    path = write(tmp_path, design(**{"base.r_series": "3k3"}))  # overdrive 1.51: marginal
    assert clampdown("check", path).returncode == 0
    assert clampdown("check", path, "--strict").returncode == 1


def test_json_report_contract(tmp_path):
    result = clampdown("check", write(tmp_path, design()), "--format", "json")
    report = json.loads(result.stdout)
    assert report["format"] == "clampdown-report/1"
    assert {"design", "verdict", "findings", "nominal", "transient"} <= report.keys()
    required_rules = {
        "drive.saturation",
        "drive.cutoff",
        "drive.source_current",
        "drive.reverse_base",
        "coil.pickup",
        "coil.overvoltage",
        "switch.current",
        "switch.breakdown",
        "switch.power",
        "switch.junction_temp",
        "clamp.reverse_voltage",
        "clamp.peak_current",
        "clamp.energy",
        "resistor.power",
        "coil.release",
    }
    assert required_rules <= {f["rule"] for f in report["findings"]}
    for finding in report["findings"]:
        assert set(finding) == {
            "rule",
            "title",
            "status",
            "value",
            "unit",
            "limit",
            "rating",
            "worked",
            "corner",
            "message",
            "bound",
        }
        assert finding["status"] in {"violation", "marginal", "ok", "note"}
        # which side of the limit the value must stay: upper (≤) for stresses, lower (≥) for margins
        assert finding["bound"] == (None if finding["status"] == "note" else finding["bound"])
        if finding["status"] != "note" and finding["limit"] is not None:
            assert finding["bound"] in {"upper", "lower"}
        assert finding["value"] is not None  # only an unclamped spike has no finite value
    for key in ("collector_current", "base_current", "overdrive", "coil_voltage", "junction_temp"):
        assert isinstance(report["nominal"][key], float)
    for key in ("clamp", "initial_current", "peak_switch_voltage", "time_to_dropout", "energy"):
        assert report["transient"][key] is not None


def test_reads_standard_input():
    result = clampdown("check", "-", "--format", "json", stdin=json.dumps(design()))
    assert result.returncode == 0 and json.loads(result.stdout)["verdict"] == "ok"


def test_schema_accepts_the_examples_and_engineering_strings():
    schema = json.loads(clampdown("schema").stdout)
    jsonschema.Draft202012Validator.check_schema(schema)
    for path in EXAMPLES:
        jsonschema.validate(json.loads(path.read_text()), schema)
    assert schema["properties"]["format"]["const"] == "clampdown-design/1"


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.stem)
def test_examples_evaluate(path):
    result = clampdown("check", str(path), "--format", "json")
    assert result.returncode in (0, 1), result.stderr
    assert json.loads(result.stdout)["design"].startswith("Demo")


def test_netlist_has_the_engine_values(tmp_path):
    result = clampdown("netlist", write(tmp_path, design()))
    assert result.returncode == 0
    text = result.stdout
    assert "IS=1e-08 N=1.9 RS=0.05" in text
    assert "RCOIL vcc a 160" in text
    assert "LCOIL a b 0.12 IC=0.07375" in text
    assert text.rstrip().endswith(".end")


def test_netlist_refuses_an_unclamped_coil(tmp_path):
    result = clampdown("netlist", write(tmp_path, design(clamp={"kind": "none"})))
    assert result.returncode == 2 and "clamp.kind" in result.stderr


def _schema_fields(schema: dict, model: str) -> dict:
    return schema["$defs"][model]["properties"]


def test_schema_documents_the_new_fields_and_their_ranges():
    schema = json.loads(clampdown("schema").stdout)
    expected = {
        "Transistor": ("hfe_max", "vbe_sat_min", "vce_sat_min"),
        "Coil": ("temp_rise", "contacts"),
        "Contacts": ("current", "voltage_ac", "voltage_dc", "inrush"),
        "DividerDrive": (
            "transition",
            "v_source_tolerance",
            "fixed_power_rating",
            "sensor_power_rating",
        ),
        "Load": ("kind", "voltage", "supply", "current", "inrush_multiple"),
    }
    for model, fields in expected.items():
        properties = _schema_fields(schema, model)
        for name in fields:
            assert name in properties, (model, name)
            assert json.dumps(properties[name]).count("description") >= 1, (model, name)
    assert "load" in schema["properties"]
    # Ranges are in the schema, the same the parser enforces: ambient −70…250 °C
    ambient_min = _schema_fields(schema, "Ambient")["min"]
    number = ambient_min["anyOf"][0]
    assert (number["minimum"], number["maximum"]) == (-70.0, 250.0)
    assert "allowed from -70 to 250 °C" in ambient_min["description"]


def test_a_mains_load_shows_the_caution_in_the_table_and_the_json():
    path = str(next(p for p in EXAMPLES if p.stem == "greenhouse-fan-mains"))
    table = clampdown("check", path)
    assert "CAUTION" in table.stdout and "IEC 60449" in table.stdout and "local codes" in table.stdout
    report = json.loads(clampdown("check", path, "--format", "json").stdout)
    assert "licensed practice" in report["mains_caution"]
    assert {"contacts.current", "contacts.inrush", "contacts.voltage"} <= {
        f["rule"] for f in report["findings"]
    }
    # Without a load there is no caution
    assert (
        json.loads(clampdown("check", "-", "--format", "json", stdin=json.dumps(design())).stdout)[
            "mains_caution"
        ]
        is None
    )


def test_every_number_in_the_schema_has_a_documented_range():
    schema = json.loads(clampdown("schema").stdout)
    missing = [
        (model, name)
        for model, body in schema["$defs"].items()
        for name, prop in body.get("properties", {}).items()
        if '"number"' in json.dumps(prop) and "aximum" not in json.dumps(prop)
    ]
    assert missing == []
