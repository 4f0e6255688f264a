"""Bad design files: exit code 2, one line per problem naming the field path, never a traceback."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from .handbook import DELETE, design


def run_check(tmp_path, content: str | bytes, *args: str) -> subprocess.CompletedProcess:
    path = tmp_path / "design.json"
    if isinstance(content, bytes):
        path.write_bytes(content)
    else:
        path.write_text(content, encoding="utf-8")
    return subprocess.run(
        [sys.executable, "-m", "app.cli", "check", str(path), *args],
        capture_output=True,
        text=True,
        timeout=60,
    )


def doc(**changes) -> str:
    return json.dumps(design(**changes))


CASES = {
    "missing field": (doc(**{"coil.inductance": DELETE}), "coil.inductance", "is required"),
    "wrong type": (doc(**{"supply.nominal": [12]}), "supply.nominal", "must be a number"),
    "bad unit string": (doc(**{"base.r_series": "4k7k"}), "base.r_series", "two prefixes"),
    "not a number": (doc(**{"base.r_series": "lots"}), "base.r_series", "not a number"),
    "wrong unit": (doc(**{"coil.inductance": "5 ms"}), "coil.inductance", "the unit H"),
    "negative inductance": (doc(**{"coil.inductance": "-3 mH"}), "coil.inductance", "must be positive"),
    "vce_sat at the supply": (
        doc(**{"supply.nominal": 5, "switch.vce_sat": 5}),
        "switch.vce_sat",
        "below the lowest supply",
    ),
    "unknown clamp kind": (doc(clamp={"kind": "magic"}), "clamp", "kind must be one of"),
    "unknown field": (doc(**{"coil.r_coill": 5}), "coil.r_coill", "not a field"),
    "tolerance out of range": (doc(**{"coil.tolerance": "150%"}), "coil.tolerance", "from 0 up to"),
    "ambient reversed": (doc(**{"ambient.min": 70}), "ambient", "must not be above max"),
    "drop-out above pick-up": (doc(**{"coil.v_dropout": 9}), "coil", "must be below v_pickup"),
    "wrong format": (doc(format="design/0"), "format", "clampdown-design/1"),
    "true for a number": (doc(**{"switch.hfe_min": True}), "switch.hfe_min", "not true/false"),
    "bad sensor position": (
        doc(
            drive={
                "kind": "divider",
                "r_fixed": "22k",
                "sensor_position": "middle",
                "r_sensor_on": 1,
                "r_sensor_off": 2,
                "tolerance": 1,
            }
        ),
        "drive.sensor_position",
        "must be one of",
    ),
    "tvs clamp below breakdown": (
        doc(
            clamp={"kind": "tvs_switch", "tvs": {"v_breakdown": 30, "v_clamp": 20, "i_clamp": 1, "p_max": 1}}
        ),
        "clamp.tvs",
        "v_clamp must be above v_breakdown",
    ),
    "logic levels crossed": (doc(**{"drive.high_min": 6}), "drive", "high_min must not be above high"),
    "empty name": (doc(name=""), "name", "must not be empty"),
    "missing zener in a zener clamp": (
        doc(clamp={"kind": "diode_zener", "diode": design()["clamp"]["diode"]}),
        "clamp.zener",
        "is required",
    ),
    "not JSON": ("{ this is not json", "design.json", "not JSON"),
    "a JSON list": ("[1, 2]", "design.json", "must be a JSON object"),
    "empty file": ("", "design.json", "not JSON"),
    "infinite number": (
        doc(**{"supply.nominal": 12}).replace('"nominal": 12', '"nominal": 1e999'),
        "supply.nominal",
        "finite",
    ),
}


@pytest.mark.parametrize("case", sorted(CASES))
def test_bad_input_exits_2_and_names_the_field(tmp_path, case):
    content, field, words = CASES[case]
    result = run_check(tmp_path, content)
    assert result.returncode == 2, result.stdout + result.stderr
    assert "Traceback" not in result.stderr
    lines = [line for line in result.stderr.splitlines() if field in line and words in line]
    assert lines, f"expected a line naming {field!r} with {words!r}, got:\n{result.stderr}"
    assert result.stdout == ""


def test_every_problem_gets_its_own_line(tmp_path):
    content = doc(**{"coil.inductance": "-1 H", "base.r_series": "x", "switch.vebo": DELETE})
    result = run_check(tmp_path, content)
    assert result.returncode == 2
    assert len(result.stderr.strip().splitlines()) == 3
    assert 'coil.inductance: "-1 H" must be positive' in result.stderr


def test_missing_file_and_binary_file(tmp_path):
    result = subprocess.run(
        [sys.executable, "-m", "app.cli", "check", str(tmp_path / "absent.json")],
        capture_output=True,
        text=True,
    )
    assert result.returncode == 2 and "no such file" in result.stderr
    result = run_check(tmp_path, b"\xff\xfe\x00garbage")
    assert result.returncode == 2 and "Traceback" not in result.stderr


def test_unknown_option_exits_2(tmp_path):
    result = run_check(tmp_path, doc(), "--colour")
    assert result.returncode == 2


def test_json_nested_thousands_deep_exits_2(tmp_path):
    result = run_check(tmp_path, "[" * 5000 + "]" * 5000)
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert "nested too deep" in result.stderr
    deep_notes = doc(notes=None).replace('"notes": null', '"notes": ' + '{"a":' * 3000 + "1" + "}" * 3000)
    result = run_check(tmp_path, deep_notes)
    assert result.returncode == 2 and "Traceback" not in result.stderr


def test_integers_with_thousands_of_digits_exit_2(tmp_path):
    # Above Python's 4300-digit conversion limit the JSON reader refuses it; below, a float overflows.
    result = run_check(tmp_path, doc().replace('"hfe_min": 100', '"hfe_min": ' + "9" * 5000))
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert "too many digits" in result.stderr
    result = run_check(tmp_path, doc().replace('"hfe_min": 100', '"hfe_min": ' + "9" * 400))
    assert result.returncode == 2
    assert "switch.hfe_min" in result.stderr and "overflows a float" in result.stderr


@pytest.mark.parametrize(
    ("field", "value", "allowed"),
    [
        ("ambient.min", -1e9, "from -70 to 250 °C"),
        ("supply.nominal", 1e9, "to 1000 V"),
        ("clamp.diode.vf", "40 MV", "to 10 V"),
        ("coil.inductance", "1 kH", "to 100 H"),
        ("switch.hfe_min", 0.5, "from 1 to 100000"),
    ],
)
def test_physically_absurd_values_are_refused_with_the_allowed_range(tmp_path, field, value, allowed):
    result = run_check(tmp_path, doc(**{field: value}))
    assert result.returncode == 2, result.stdout
    line = next(line for line in result.stderr.splitlines() if field in line)
    assert allowed in line, line


def test_an_internal_error_exits_3_with_one_line(monkeypatch, tmp_path, capsys):
    from app import cli

    def broken(design, profile=None):
        raise ZeroDivisionError("float division by zero")

    monkeypatch.setattr(cli, "evaluate", broken)
    path = tmp_path / "d.json"
    path.write_text(doc())
    assert cli.main(["check", str(path)]) == 3
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1
    assert "internal error" in err[0] and "ZeroDivisionError" in err[0] and "design file" in err[0]
