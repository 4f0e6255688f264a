"""`clampdown check` over many files and folders in one process, as a CI job runs it: the exit
code is the worst over all files, every bad file is named with its field, and the JUnit XML
follows the conventions CI systems read (checked with the standard library's XML parser)."""

from __future__ import annotations

import json
from pathlib import Path
from xml.etree import ElementTree as ET

import pytest

from app import cli
from app.engine import evaluate, evaluate_many, parse_design

from .handbook import design

CLEAN = design()
VIOLATION = design(clamp={"kind": "none"})
MARGINAL = design(**{"base.r_series": "3k3"})  # overdrive 1.51: marginal (tests/test_cli_check.py)
BAD = {"format": "clampdown-design/1", "name": "missing everything"}


def _write(path, document) -> str:
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(json.dumps(document), encoding="utf-8")
    return str(path)


def run(capsys, *args: str) -> tuple[int, str, str]:
    code = cli.main(["check", *args])
    out, err = capsys.readouterr()
    return code, out, err


def test_a_folder_is_every_json_file_inside_it_recursively_sorted(tmp_path, capsys):
    _write(tmp_path / "b" / "deep" / "z.json", CLEAN)
    _write(tmp_path / "a.json", CLEAN)
    _write(tmp_path / "b" / "m.json", CLEAN)
    (tmp_path / "notes.txt").write_text("not a design")
    code, out, _ = run(capsys, str(tmp_path), "--format", "json")
    assert code == 0
    files = [f["file"] for f in json.loads(out)["files"]]
    assert files == [
        str(tmp_path / "a.json"),
        str(tmp_path / "b" / "deep" / "z.json"),
        str(tmp_path / "b" / "m.json"),
    ]


@pytest.mark.parametrize(
    ("documents", "expected"),
    [
        ([CLEAN, CLEAN], 0),
        ([CLEAN, VIOLATION], 1),
        ([VIOLATION, BAD, CLEAN], 2),
        ([MARGINAL, CLEAN], 0),
    ],
)
def test_the_exit_code_is_the_worst_over_all_files(tmp_path, capsys, documents, expected):
    paths = [_write(tmp_path / f"d{n}.json", doc) for n, doc in enumerate(documents)]
    code, out, _ = run(capsys, *paths)
    assert code == expected
    assert out.count("== ") == len(paths)  # every file is checked, whatever came before it


def test_strict_counts_a_marginal_file(tmp_path, capsys):
    paths = [_write(tmp_path / "m.json", MARGINAL), _write(tmp_path / "c.json", CLEAN)]
    assert run(capsys, *paths, "--strict")[0] == 1


def test_each_bad_file_is_named_with_its_field(tmp_path, capsys):
    bad_field = design(**{"coil.inductance": "-3 mH"})
    paths = [
        _write(tmp_path / "one.json", bad_field),
        _write(tmp_path / "two.json", BAD),
        _write(tmp_path / "fine.json", CLEAN),
    ]
    code, out, err = run(capsys, *paths)
    assert code == 2
    assert f"{paths[0]}: coil.inductance:" in err
    assert f"{paths[1]}: supply: is required" in err
    assert "verdict: ok" in out  # the good file still gets its table
    assert out.endswith("checked 3 design files: 2 bad input, 1 ok\n")


def test_a_folder_without_designs_is_bad_input(tmp_path, capsys):
    (tmp_path / "empty").mkdir()
    code, _, err = run(capsys, str(tmp_path / "empty"), _write(tmp_path / "c.json", CLEAN))
    assert code == 2
    assert "no *.json design file" in err


def test_an_internal_error_in_one_file_exits_3_and_the_rest_are_checked(tmp_path, capsys, monkeypatch):
    real = cli.evaluate

    def broken_for_one(design, profile):
        if design.name == "broken":
            raise ZeroDivisionError("float division by zero")
        return real(design, profile)

    monkeypatch.setattr(cli, "evaluate", broken_for_one)
    broken = design()
    broken["name"] = "broken"
    paths = [_write(tmp_path / "x.json", broken), _write(tmp_path / "v.json", VIOLATION)]
    code, out, err = run(capsys, *paths, "--format", "json")
    assert code == 3
    body = json.loads(out)
    assert [f["exit"] for f in body["files"]] == [3, 1]
    assert body["exit"] == 3
    assert "internal error" in err and paths[0] in err and "ZeroDivisionError" in err


# ---------------------------------------------------------------- JUnit XML

# The JUnit XML conventions (the Ant JUnit report format that CI systems read): a <testsuites>
# root; <testsuite> with name, tests, failures, errors, skipped, time; <testcase> with name,
# classname, time; <failure> and <error> with message and type; counts that add up.


def _check_junit_shape(text: str) -> ET.Element:
    assert text.startswith('<?xml version="1.0" encoding="UTF-8"?>')
    root = ET.fromstring(text.encode("utf-8"))
    assert root.tag == "testsuites"
    totals = {"tests": 0, "failures": 0, "errors": 0}
    for suite in root:
        assert suite.tag == "testsuite"
        assert {"name", "tests", "failures", "errors", "skipped", "time"} <= suite.attrib.keys()
        cases = suite.findall("testcase")
        assert {child.tag for child in suite} <= {"properties", "testcase", "system-out"}
        assert int(suite.get("tests")) == len(cases)
        assert int(suite.get("failures")) == sum(len(c.findall("failure")) for c in cases)
        assert int(suite.get("errors")) == sum(len(c.findall("error")) for c in cases)
        float(suite.get("time"))
        for case in cases:
            assert {"name", "classname", "time"} <= case.attrib.keys()
            assert case.get("classname") == suite.get("name")
            for outcome in case.findall("failure") + case.findall("error"):
                assert {"message", "type"} <= outcome.attrib.keys()
            assert len(case.findall("failure")) + len(case.findall("error")) <= 1
        for key in totals:
            totals[key] += int(suite.get(key))
    for key, value in totals.items():
        assert int(root.get(key)) == value
    return root


def test_junit_has_a_suite_per_file_and_a_case_per_rule(tmp_path, capsys):
    paths = [
        _write(tmp_path / "clean.json", CLEAN),
        _write(tmp_path / "violation.json", VIOLATION),
        _write(tmp_path / "marginal.json", MARGINAL),
        _write(tmp_path / "bad.json", BAD),
    ]
    code, out, err = run(capsys, *paths, "--format", "junit")
    assert code == 2
    root = _check_junit_shape(out)
    suites = {s.get("name"): s for s in root}
    assert list(suites) == paths
    # one test case per rule the report holds
    report = evaluate(parse_design(VIOLATION))
    cases = suites[paths[1]].findall("testcase")
    assert [c.get("name") for c in cases] == [f["rule"] for f in report["findings"]]
    failed = {c.get("name") for c in cases if c.find("failure") is not None}
    assert failed == {f["rule"] for f in report["findings"] if f["status"] == "violation"}
    assert "switch.breakdown" in failed
    assert suites[paths[0]].get("failures") == "0" and suites[paths[0]].get("errors") == "0"
    # marginal passes without --strict, its message kept in system-out
    marginal = [c for c in suites[paths[2]].findall("testcase") if c.get("name") == "drive.saturation"][0]
    assert marginal.find("failure") is None and marginal.find("system-out").text.startswith("marginal")
    # bad input: one error naming the fields
    bad_cases = suites[paths[3]].findall("testcase")
    assert len(bad_cases) == 1 and bad_cases[0].find("error").get("type") == "bad input"
    assert "supply: is required" in bad_cases[0].find("error").text
    assert f"{paths[3]}: supply: is required" in err


def test_junit_strict_fails_marginal_findings(tmp_path, capsys):
    path = _write(tmp_path / "marginal.json", MARGINAL)
    code, out, _ = run(capsys, path, "--format", "junit", "--strict")
    assert code == 1
    root = _check_junit_shape(out)
    failure = root.find("testsuite/testcase[@name='drive.saturation']/failure")
    assert failure is not None and failure.get("type") == "marginal"


def test_junit_of_the_examples_folder_is_well_formed(capsys):
    code, out, _ = run(capsys, "seed_data/examples", "--format", "junit")
    root = _check_junit_shape(out)
    examples = sorted(Path("seed_data/examples").glob("*.json"))
    assert len(root) == len(examples) >= 5 and code == 1


# ---------------------------------------------------------------- the batch API


def test_evaluate_many_gives_each_design_its_own_report():
    designs = [parse_design(d) for d in (CLEAN, VIOLATION, MARGINAL)]
    reports = evaluate_many(designs)
    assert [r["verdict"] for r in reports] == ["ok", "violation", "marginal"]
    assert reports == [evaluate(d) for d in designs]
