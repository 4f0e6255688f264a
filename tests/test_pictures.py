"""The pictures: the schematic of every clamp kind and drive is well-formed SVG carrying each
part's label and value; the turn-off and margin charts say their key numbers; `clampdown draw`
writes all three.

Expected values are written out by hand below in engineering notation (IEC 60062 / SI
prefixes), not produced by the product's formatter.
"""

from __future__ import annotations

import copy
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from app.engine import evaluate, parse_design
from app.engine.clamps import CLAMP_KINDS
from app.engine.switches import SWITCH_KINDS
from app.pictures import draw, schematic_picture
from app.pictures.schematic import CLAMPS, DRIVES, SWITCHES, schematic_svg
from app.pictures.temperature import margins_over_temperature
from app.signoff.margin import margin

ROOT = Path(__file__).resolve().parents[1]

BASE = {
    "format": "clampdown-design/1",
    "name": "picture check",
    "supply": {"nominal": 12, "tolerance": 10},
    "ambient": {"min": -20, "max": 60},
    "drive": {"kind": "logic", "high": 5, "high_min": 4.5, "low": 0, "low_max": 0.4, "r_out": 47, "i_max": 0.02},
    "base": {"r_series": 1000, "r_pulldown": 10000, "tolerance": 5, "power_rating": 0.125},
    "switch": {"kind": "npn", "name": "check NPN", "hfe_min": 100, "vbe_sat": 0.95, "vce_sat": 0.25,
               "vbe_on": 0.65, "vceo": 45, "vebo": 6, "ic_max": 0.5, "p_max": 0.625, "rth_ja": 200,
               "tj_max": 150},
    "coil": {"name": "check coil", "v_nominal": 12, "r_coil": 160, "tolerance": 10, "inductance": 0.12,
             "v_pickup": 8, "v_dropout": 1.2, "v_max": 15},
}  # fmt: skip
DIODE = {"name": "check diode", "vrrm": 100, "if_avg": 1, "i_peak": 10, "vf": 1.0, "vf_at": 1.0}
# Per clamp kind: the clamp, and the labels and values its drawing must carry (hand-written).
CLAMP_CASES = {
    "none": ({"kind": "none"}, ["no clamp"]),
    "diode": ({"kind": "diode", "diode": DIODE}, ["D1 check diode", "100 V"]),
    "diode_zener": (
        {"kind": "diode_zener", "diode": DIODE, "zener": {"vz": 15, "tolerance": 5, "rz": 10, "p_max": 1}},
        ["D1 check diode", "Z1", "15 V", "±5 %", "1 W"],
    ),
    "diode_resistor": (
        {"kind": "diode_resistor", "diode": DIODE, "r": 220, "tolerance": 5, "power_rating": 0.5},
        ["D1 check diode", "R_s 220 Ω", "500 mW"],
    ),
    "resistor": ({"kind": "resistor", "r": 1500, "tolerance": 1}, ["R_p 1.5 kΩ", "±1 %"]),
    "tvs_switch": (
        {"kind": "tvs_switch", "tvs": {"maker_part": "TVS-33X", "v_breakdown": 33, "v_breakdown_max": 36.5,
                                        "v_clamp": 53.3, "i_clamp": 1, "p_max": 600}},
        ["TVS TVS-33X", "33 V", "36.5 V", "53.3 V"],
    ),
    "rc": (
        {"kind": "rc", "r": 680, "c": "1u", "tolerance": 10, "c_voltage_rating": 100, "power_rating": 0.5},
        ["R_s 680 Ω", "C_s 1 µF", "100 V"],
    ),
    "array_diode": (
        {"kind": "array_diode", "common_to": "supply", "vf": 1.7, "vf_at": 0.35, "i_peak": 0.5, "vrrm": 50,
         "if_avg": 0.5},
        ["U1 check array", "the array's own diode", "COM to V_cc", "V_RRM 50 V", "1.7 V"],
    ),
}  # fmt: skip
# What every drawing carries: each part's label with its value.
COMMON = ["V_cc 12 V", "10.8 V", "13.2 V", "K1 check coil", "160 Ω", "120 mH", "Q1 check NPN", "45 V",
          "R_b 1 kΩ", "125 mW", "R_be 10 kΩ", "R_out 47 Ω", "logic output", "5 V", "4.5 V", "400 mV"]  # fmt: skip


def _design(clamp: dict, **changes) -> dict:
    document = copy.deepcopy(BASE)
    document["clamp"] = copy.deepcopy(clamp)
    document.update(changes)
    return document


def svg_text(svg: str) -> str:
    """The SVG parsed as XML (it must be well-formed) and its text, lines joined by spaces."""
    root = ET.fromstring(svg)
    assert root.tag.endswith("svg")
    return " ".join(" ".join(root.itertext()).split())


FET = {"kind": "nmos", "name": "check FET", "vds_max": 30, "id_max": 1.5, "rds_on": 0.2, "rds_on_vgs": 2.5,
       "rds_on_hot": 1.6, "vgs_th_min": 0.7, "vgs_th_max": 1.4, "vgs_max": 12, "p_max": 0.35, "rth_ja": 350,
       "tj_max": 150}  # fmt: skip
ARRAY = {"kind": "darlington_array", "name": "check array", "channels": 7, "channels_on": 4, "r_input": 2700,
         "vce_sat": 1.3, "vbe_on": 2.4, "hfe_min": 1000, "vceo": 50, "ic_max": 0.5, "p_max": 1.0, "rth_ja": 70,
         "tj_max": 150}  # fmt: skip
ARRAY_DIODE = {"kind": "array_diode", "vf": 1.7, "vf_at": 0.35, "i_peak": 0.5, "vrrm": 50, "if_avg": 0.5}
# Per switch kind: the design's changes, and the labels and values its drawing must carry.
SWITCH_CASES = {
    "npn": ({}, ["Q1 check NPN", "45 V", "R_b 1 kΩ", "R_be 10 kΩ"]),
    "nmos": (
        {"switch": FET, "gate": BASE["base"], "base": None},
        ["Q1 check FET", "V(BR)DSS 30 V", "200 mΩ", "V_GS 2.5 V", "700 mV", "1.4 V", "R_g 1 kΩ", "R_gs 10 kΩ"],
    ),
    "darlington_array": (
        {"switch": ARRAY, "base": None, "clamp": {**ARRAY_DIODE, "common_to": "supply"}},
        ["U1 check array", "one channel of 7, 4 on at once", "2.7 kΩ", "V(BR)CEO 50 V", "IN", "OUT", "COM",
         "the array's own diode", "COM to V_cc", "50 V"],
    ),
}  # fmt: skip


def test_every_clamp_kind_and_switch_kind_has_a_drawing():
    assert set(CLAMPS) == set(CLAMP_KINDS)
    assert set(CLAMP_CASES) == set(CLAMP_KINDS)
    assert set(SWITCHES) == set(SWITCH_CASES) == set(SWITCH_KINDS)
    assert set(DRIVES) == {"logic", "divider"}


def _array_design(clamp: dict) -> dict:
    document = _design(clamp, switch=copy.deepcopy(ARRAY))
    del document["base"]
    return document


@pytest.mark.parametrize("kind", CLAMP_KINDS)
def test_schematic_of_each_clamp_kind_is_well_formed_and_labelled(kind):
    clamp, expected = CLAMP_CASES[kind]
    if kind == "array_diode":  # the clamp of a Darlington array channel only
        words = svg_text(schematic_svg(parse_design(_array_design(clamp))))
        common = [c for c in COMMON if not c.startswith(("Q1", "R_b", "R_be", "125 mW", "45 V"))]
    else:
        words = svg_text(schematic_svg(parse_design(_design(clamp))))
        common = COMMON
    for label in common + expected:
        assert label in words, f"{label!r} missing from the {kind} schematic: {words}"


@pytest.mark.parametrize("kind", sorted(SWITCH_CASES))
def test_schematic_of_each_switch_kind_is_well_formed_and_labelled(kind):
    changes, expected = SWITCH_CASES[kind]
    document = _design(changes.get("clamp", CLAMP_CASES["diode"][0]))
    for key, value in changes.items():
        if key == "clamp":
            continue
        if value is None:
            document.pop(key, None)
        else:
            document[key] = copy.deepcopy(value)
    words = svg_text(schematic_svg(parse_design(document)))
    for label in ["V_cc 12 V", "K1 check coil", "160 Ω", "R_out 47 Ω", "logic output", *expected]:
        assert label in words, f"{label!r} missing from the {kind} schematic: {words}"


def test_an_unconnected_common_pin_is_drawn_as_no_clamp():
    words = svg_text(schematic_svg(parse_design(_array_design({**ARRAY_DIODE, "common_to": "unconnected"}))))
    assert "COM pin unconnected: no clamp" in words
    zener = {"vz": 15, "tolerance": 5, "rz": 10, "p_max": 1}
    words = svg_text(
        schematic_svg(parse_design(_array_design({**ARRAY_DIODE, "common_to": "zener", "zener": zener})))
    )
    assert "the array's own diode" in words and "Z1" in words and "COM to V_cc" in words


def test_schematic_of_a_divider_drive_shows_the_sensor_and_the_fixed_resistor():
    drive = {"kind": "divider", "r_fixed": "22k", "sensor_position": "top", "r_sensor_on": 150,
             "r_sensor_off": "2.2M", "tolerance": 5, "v_source": 5}  # fmt: skip
    words = svg_text(schematic_svg(parse_design(_design(CLAMP_CASES["diode"][0], drive=drive))))
    for label in ("R_fixed", "22 kΩ", "sensor", "150 Ω on", "2.2 MΩ off", "V_src 5 V", "R_b 1 kΩ"):
        assert label in words, f"{label!r} missing: {words}"


def test_schematic_of_a_diode_given_between_two_forward_voltages_shows_both():
    clamp = copy.deepcopy(CLAMP_CASES["diode"][0])
    clamp["diode"]["vf_min"] = 0.6
    words = svg_text(schematic_svg(parse_design(_design(clamp))))
    assert "V_F 600 mV…" in words, words


def test_schematic_without_pull_down_leaves_it_out():
    document = _design(CLAMP_CASES["diode"][0])
    del document["base"]["r_pulldown"]
    assert "R_be" not in svg_text(schematic_svg(parse_design(document)))


def test_part_names_with_markup_stay_text():
    clamp = copy.deepcopy(CLAMP_CASES["diode"][0])
    clamp["diode"]["name"] = 'D <b>&</b> "x"'
    words = svg_text(schematic_svg(parse_design(_design(clamp))))
    assert 'D <b>&</b> "x"' in words


def test_schematic_caption_names_the_parts():
    picture = schematic_picture(parse_design(_design(CLAMP_CASES["rc"][0])))
    assert "check NPN" in picture.caption and "check coil" in picture.caption
    assert "RC snubber" in picture.caption


def test_turn_off_picture_carries_the_report_numbers():
    design = parse_design(_design(CLAMP_CASES["diode"][0]))
    transient = evaluate(design)["transient"]
    picture = draw(design, which=("turnoff",))["turnoff"]
    words = svg_text(picture.svg)
    assert "V(BR)CEO rating 45 V" in words
    assert "derated limit 36 V (80 %)" in words  # 0.8 × 45 V, the default profile (common practice)
    # I_do = V_dropout / R_coil = 1.2 V / 160 Ω = 7.5 mA.
    assert transient["dropout_current"] == pytest.approx(0.0075)
    assert "drop-out 7.5 mA" in words
    assert "drop-out current 7.5 mA" in picture.caption
    for alternative in transient["alternatives"]:
        if alternative["clamp"] != "diode":
            assert alternative["clamp"] in picture.caption


def test_unclamped_turn_off_says_it_is_not_a_rated_event():
    design = parse_design(_design({"kind": "none"}))
    picture = draw(design, which=("turnoff",))["turnoff"]
    assert "not a rated event" in picture.caption
    assert "not a rated event" in svg_text(picture.svg)
    assert "at least V(BR)CEO 45 V" in picture.caption


def test_margin_lines_reach_the_reports_margin_at_their_lowest():
    """At each ambient the rules are judged with every other factor at its worst, so the lowest
    point of a rule's line over the range is the margin of the report's finding (which took
    the worst corner over the whole range, ambient included)."""
    design = parse_design(_design(CLAMP_CASES["diode_zener"][0]))
    report = evaluate(design)
    data = margins_over_temperature(design, points=9)
    assert data.temperatures[0] == -20 and data.temperatures[-1] == 60
    checked = 0
    for finding in report["findings"]:
        expected = margin(finding)
        if expected is None:
            continue
        lowest = min(m for m in data.lines[finding["rule"]].margins if m is not None)
        assert lowest == pytest.approx(expected, rel=1e-9, abs=1e-12), finding["rule"]
        checked += 1
    assert checked >= 8


def test_margin_chart_marks_the_zero_line_and_names_the_smallest():
    design = parse_design(_design(CLAMP_CASES["diode"][0]))
    picture = draw(design, which=("margins",))["margins"]
    words = svg_text(picture.svg)
    assert "0 % = derated limit" in words
    assert picture.caption.startswith("Margins over −20 to 60 °C") or picture.caption.startswith(
        "Margins over -20 to 60 °C"
    )
    assert "Smallest:" in picture.caption


def _cli(*args: str, cwd: Path = ROOT) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "app.cli", *args], cwd=cwd, capture_output=True, text=True, timeout=300
    )


def test_cli_draw_writes_three_svg_files(tmp_path):
    done = _cli("draw", str(ROOT / "seed_data/examples/tank-level-relay.json"), "-o", str(tmp_path / "doc"))
    assert done.returncode == 0, done.stderr
    for name in ("schematic", "turnoff", "margins"):
        path = tmp_path / "doc" / f"tank-level-relay-{name}.svg"
        svg_text(path.read_text(encoding="utf-8"))
        assert str(path) in done.stdout


def test_cli_draw_only_writes_the_pictures_asked_for(tmp_path):
    done = _cli("draw", str(ROOT / "seed_data/examples/unclamped-valve.json"), "-o", str(tmp_path), "--only",
                "turnoff", "--name", "valve")  # fmt: skip
    assert done.returncode == 0, done.stderr
    assert [p.name for p in tmp_path.iterdir()] == ["valve-turnoff.svg"]
    assert "not a rated event" in done.stdout


def test_cli_draw_refuses_bad_input_with_exit_2(tmp_path):
    bad = tmp_path / "bad.json"
    bad.write_text('{"format": "clampdown-design/1", "name": "x"}', encoding="utf-8")
    done = _cli("draw", str(bad), "-o", str(tmp_path))
    assert done.returncode == 2
    assert "supply" in done.stderr
    a_file = tmp_path / "file.txt"
    a_file.write_text("x", encoding="utf-8")
    done = _cli("draw", str(ROOT / "seed_data/examples/tank-level-relay.json"), "-o", str(a_file))
    assert done.returncode == 2 and "give a folder" in done.stderr


def _generated(kind: str, n: int) -> dict:
    import importlib.util
    import random

    spec = importlib.util.spec_from_file_location("designgen", ROOT / "tests" / "designgen.py")
    designgen = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(designgen)
    return designgen.random_design(random.Random(f"pictures/{kind}/{n}"), kind)


@pytest.mark.parametrize("kind", CLAMP_KINDS)
def test_generated_designs_of_every_kind_draw_well_formed_pictures(kind):
    """Seeded random designs (either drive, any values the design file allows in plausible
    ranges): every picture is well-formed SVG with its caption, whatever the verdict."""
    for n in range(2):
        pictures = draw(parse_design(_generated(kind, n)))
        assert list(pictures) == ["schematic", "turnoff", "margins"]
        for picture in pictures.values():
            svg_text(picture.svg)
            assert picture.caption


@pytest.mark.parametrize(
    "example", sorted((ROOT / "seed_data" / "examples").glob("*.json")), ids=lambda p: p.stem
)
def test_every_example_of_every_switch_kind_draws_its_three_pictures(example):
    import json

    design = parse_design(json.loads(example.read_text(encoding="utf-8")))
    pictures = draw(design)
    assert list(pictures) == ["schematic", "turnoff", "margins"]
    for picture in pictures.values():
        svg_text(picture.svg)
        assert picture.caption
    # the switch's label (its name folded over lines, so its first words)
    assert design.switch.name[:12] in svg_text(pictures["schematic"].svg)


def test_an_unclamped_mosfet_shows_its_avalanche_energy_against_its_rating():
    # the report's switch.avalanche finding (hand-worked in tests/test_rules_hand_worked_switches.py)
    document = _design({"kind": "none"}, switch={**FET, "e_as": 0.05}, gate=BASE["base"])
    del document["base"]
    design = parse_design(document)
    finding = next(f for f in evaluate(design)["findings"] if f["rule"] == "switch.avalanche")
    words = draw(design, which=("turnoff",))["turnoff"].caption
    assert "V(BR)DSS 30 V" in words and "Avalanche energy" in words and finding["status"] in words
    assert "not a rated event" not in words


def test_schematic_stays_in_the_svg_namespace_whatever_else_registers_namespaces():
    """Importing WeasyPrint registers an empty default namespace in ElementTree's process-wide
    table; the schematic must still be an <svg> whose every element is SVG (a browser draws
    nothing of elements outside the SVG namespace)."""
    import xml.etree.ElementTree as ElementTree

    saved = dict(ElementTree._namespace_map)
    try:
        ElementTree.register_namespace("", "")
        svg = schematic_svg(parse_design(_design(CLAMP_CASES["diode"][0])))
    finally:
        ElementTree._namespace_map.clear()
        ElementTree._namespace_map.update(saved)
    assert svg.startswith("<svg ") and "ns0:" not in svg
    root = ET.fromstring(svg)
    svg_ns = "{http://www.w3.org/2000/svg}"
    assert all(element.tag.startswith(svg_ns) for element in root.iter())
