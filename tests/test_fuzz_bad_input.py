"""Malformed and extreme design files thrown at parse_design, evaluate and the CLI (hypothesis).

Whatever comes in, the answer is one of: a DesignError naming fields (exit 2), or a report whose
every number is finite (valid JSON with allow_nan=False), with no negative overdrive, current,
power or energy (exit 0 or 1). Never a traceback, never exit 3.
"""

from __future__ import annotations

import copy
import json
import math
import subprocess
import sys

from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st

from app.engine import DesignError, evaluate, parse_design

from .handbook import BASE

# Every numeric field of the hand-worked design, with the paths the generator may change.
NUMERIC_PATHS = [
    "supply.nominal",
    "supply.tolerance",
    "ambient.min",
    "ambient.max",
    "drive.high",
    "drive.high_min",
    "drive.low",
    "drive.low_max",
    "drive.r_out",
    "drive.i_max",
    "base.r_series",
    "base.r_pulldown",
    "base.tolerance",
    "base.power_rating",
    "switch.hfe_min",
    "switch.hfe_max",
    "switch.vbe_sat",
    "switch.vbe_sat_min",
    "switch.vce_sat",
    "switch.vce_sat_min",
    "switch.vbe_on",
    "switch.vceo",
    "switch.vebo",
    "switch.ic_max",
    "switch.p_max",
    "switch.rth_ja",
    "switch.tj_max",
    "coil.v_nominal",
    "coil.r_coil",
    "coil.tolerance",
    "coil.r_at",
    "coil.inductance",
    "coil.v_pickup",
    "coil.v_dropout",
    "coil.v_max",
    "coil.rth",
    "coil.temp_rise",
    "clamp.diode.vrrm",
    "clamp.diode.i_peak",
    "clamp.diode.vf",
    "clamp.diode.vf_at",
    "clamp.diode.is",
    "clamp.diode.n",
    "clamp.diode.rs",
    "switching.per_hour",
    "requirements.max_release_time",
    "limits.voltage",
    "limits.overdrive",
    "limits.tj",
]

EXTREME_NUMBERS = st.one_of(
    st.sampled_from(
        [0, -0.0, 1e-300, -1e-300, 1e-12, 1e9, -1e9, 1e300, -1e300, 4e7, 1e6, 999.9, 1000, 250, -70, 1e-9]
    ),
    st.floats(allow_nan=False, allow_infinity=False),
    st.integers(min_value=-(10**30), max_value=10**30),
    st.floats(min_value=1e-6, max_value=1e4),
)
EXTREME_TEXT = st.sampled_from(
    [
        "nan",
        "NaN",
        "inf",
        "-inf",
        "1e999",
        "-1e999",
        "4k7k",
        "",
        " ",
        "1e-400",
        "0x10",
        "10 %",
        "40 MV",
        "1 GΩ",
    ]
)
JUNK = st.one_of(
    st.none(),
    st.booleans(),
    st.lists(st.integers(), max_size=3),
    st.dictionaries(st.text(max_size=3), st.integers(), max_size=2),
    st.text(max_size=12),
)
VALUES = st.one_of(EXTREME_NUMBERS, EXTREME_TEXT, JUNK)
SCALES = st.sampled_from([0.001, 0.1, 0.5, 0.9, 1, 1.1, 2, 10, 1000])


def _get(doc: dict, path: str):
    node = doc
    for key in path.split("."):
        if not isinstance(node, dict) or key not in node:
            return None
        node = node[key]
    return node


def _set(doc: dict, path: str, value) -> None:
    *parents, leaf = path.split(".")
    node = doc
    for key in parents:
        if not isinstance(node.get(key), dict):
            node[key] = {}
        node = node[key]
    node[leaf] = value


@st.composite
def mangled_designs(draw):
    doc = copy.deepcopy(BASE)
    if draw(st.booleans()):
        doc["drive"] = {
            "kind": "divider",
            "r_fixed": "22k",
            "sensor_position": draw(st.sampled_from(["top", "bottom"])),
            "r_sensor_on": "1k",
            "r_sensor_off": "2M2",
            "tolerance": 5,
            "transition": draw(st.sampled_from(["slow", "snap"])),
        }
    doc["clamp"] = copy.deepcopy(
        draw(
            st.sampled_from(
                [
                    BASE["clamp"],
                    {"kind": "none"},
                    {"kind": "resistor", "r": "1k"},
                    {
                        "kind": "tvs_switch",
                        "tvs": {"v_breakdown": 33, "v_clamp": 53, "i_clamp": 1, "p_max": 400},
                    },
                    {
                        "kind": "diode_zener",
                        "diode": BASE["clamp"]["diode"],
                        "zener": {"vz": 24, "tolerance": 5, "rz": 10, "p_max": 1},
                    },
                ]
            )
        )
    )
    if draw(st.booleans()):
        doc["load"] = {
            "kind": draw(st.sampled_from(["resistive", "inductive", "motor", "lamp", "capacitive"])),
            "voltage": draw(st.sampled_from([12, 24, 120, 230, 400])),
            "supply": draw(st.sampled_from(["ac", "dc"])),
            "current": draw(st.sampled_from([0.1, 1, 5, 10])),
        }
        doc["coil"]["contacts"] = {"current": 10, "voltage_ac": 250}
    paths = draw(st.lists(st.sampled_from(NUMERIC_PATHS), min_size=0, max_size=3, unique=True))
    for path in paths:
        current = _get(doc, path)
        if isinstance(current, int | float) and draw(st.integers(0, 2)) > 0:
            _set(doc, path, current * draw(SCALES))  # a plausible design pushed to an extreme
        else:
            _set(doc, path, draw(VALUES))
    if draw(st.integers(0, 9)) == 0:  # now and then a field removed or a stranger added
        section = draw(st.sampled_from(["supply", "coil", "switch", "base", "drive"]))
        doc[section].pop(draw(st.sampled_from(sorted(doc[section]))), None)
        doc[section]["unknown_" + draw(st.text("abc", min_size=1, max_size=3))] = 1
    return doc


def _numbers(node, path=""):
    if isinstance(node, dict):
        for key, value in node.items():
            yield from _numbers(value, f"{path}.{key}")
    elif isinstance(node, list):
        for i, value in enumerate(node):
            yield from _numbers(value, f"{path}[{i}]")
    elif isinstance(node, float | int) and not isinstance(node, bool):
        yield path, node


NON_NEGATIVE = {"overdrive", "energy", "clamp_energy", "collector_current", "base_current", "dissipation"}


def _check_report(report: dict) -> None:
    for path, number in _numbers(report):
        assert math.isfinite(number), (path, number)
    json.dumps(report, allow_nan=False)  # raises on NaN or ±Infinity
    for key in NON_NEGATIVE:
        for section in ("nominal", "transient"):
            value = report[section].get(key)
            assert value is None or value >= 0, (section, key, value)
    for finding in report["findings"]:
        if finding["rule"] in ("drive.saturation", "clamp.energy", "switch.power", "resistor.power"):
            assert finding["value"] is None or finding["value"] >= 0, finding


@settings(max_examples=2000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(mangled_designs())
def test_parse_and_evaluate_refuse_or_answer_with_finite_numbers(doc):
    try:
        design = parse_design(doc)
    except DesignError as exc:
        assert exc.problems and all(isinstance(line, str) and ": " in line for line in exc.problems)
        event("refused")
        return
    event("evaluated")
    _check_report(evaluate(design))


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(mangled_designs())
def test_the_cli_exits_0_1_or_2_and_prints_valid_json(tmp_path_factory, doc):
    path = tmp_path_factory.mktemp("fuzz") / "d.json"
    path.write_text(json.dumps(doc))
    result = subprocess.run(
        [sys.executable, "-m", "app.cli", "check", str(path), "--format", "json"],
        capture_output=True,
        text=True,
        timeout=60,
    )
    assert result.returncode in (0, 1, 2), result.stderr
    assert "Traceback" not in result.stderr
    if result.returncode == 2:
        # Refused: the lines on standard error, and the same problems as JSON on standard output.
        assert result.stderr.strip()
        refused = json.loads(result.stdout)
        assert refused["format"] == "clampdown-errors/1" and refused["errors"]
    else:
        _check_report(json.loads(result.stdout))
