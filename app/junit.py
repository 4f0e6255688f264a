"""`clampdown check --format junit`: the results as JUnit XML, which CI systems show natively.

The shape follows the JUnit XML conventions CI systems read (the Ant JUnit report format):
one ``<testsuites>`` root; one ``<testsuite>`` per design file (``name`` = the file, with
``tests``, ``failures``, ``errors``, ``skipped`` and ``time``); one ``<testcase>`` per rule
(``classname`` = the file, ``name`` = the rule id, ``time``). A violation is a ``<failure>``;
a marginal finding passes (its message in ``<system-out>``) unless ``strict``, when it is a
``<failure>`` too; a note passes with its message. A file that is bad input, or that met an
internal error, is one test case named ``design file`` holding an ``<error>``.
"""

from __future__ import annotations

from typing import Protocol
from xml.etree import ElementTree as ET


class Result(Protocol):
    path: str
    code: int
    report: dict | None
    errors: object | None  # InputError: .lines
    internal: str | None
    seconds: float


def _seconds(x: float) -> str:
    return f"{x:.6f}"


def _describe(finding: dict) -> str:
    def num(x):
        return "unbounded" if x is None else f"{x:.6g} {finding['unit']}".strip()

    text = (
        f"{finding['status']}: {finding['message']}\n"
        f"value {num(finding['value'])}, derated limit {num(finding['limit'])}, rating {num(finding['rating'])}"
    )
    if finding["corner"]:
        text += "\nworst corner: " + ", ".join(f"{k} = {v:.6g}" for k, v in finding["corner"].items())
    return text


def _suite(result: Result, strict: bool) -> ET.Element:
    suite = ET.Element("testsuite", name=result.path)
    cases: list[ET.Element] = []
    failures = errors = 0
    report = result.report
    if report is None:
        case = ET.Element(
            "testcase", classname=result.path, name="design file", time=_seconds(result.seconds)
        )
        if result.errors is not None:
            lines = result.errors.lines  # type: ignore[attr-defined]
            error = ET.SubElement(case, "error", type="bad input", message=lines[0] if lines else "bad input")
        else:
            error = ET.SubElement(case, "error", type="internal error", message=result.internal or "")
            lines = [result.internal or ""]
        error.text = "\n".join(lines)
        errors += 1
        cases.append(case)
    else:
        properties = ET.SubElement(suite, "properties")
        for name in ("design", "verdict", "engine_version"):
            ET.SubElement(properties, "property", name=name, value=str(report[name]))
        ET.SubElement(properties, "property", name="profile", value=str(report["profile"]["name"]))
        ET.SubElement(properties, "property", name="corners", value=str(report["corners"]))
        for finding in report["findings"]:
            case = ET.Element("testcase", classname=result.path, name=finding["rule"], time=_seconds(0.0))
            status = finding["status"]
            if status == "violation" or (strict and status == "marginal"):
                failure = ET.SubElement(case, "failure", type=status, message=finding["message"])
                failure.text = _describe(finding)
                failures += 1
            else:
                ET.SubElement(case, "system-out").text = _describe(finding)
            cases.append(case)
        if report.get("mains_caution"):
            ET.SubElement(suite, "system-out").text = report["mains_caution"]
    suite.set("tests", str(len(cases)))
    suite.set("failures", str(failures))
    suite.set("errors", str(errors))
    suite.set("skipped", "0")
    suite.set("time", _seconds(result.seconds))
    # <properties> first, then the test cases, then the suite's own <system-out>.
    position = 1 if report is not None else 0
    for offset, case in enumerate(cases):
        suite.insert(position + offset, case)
    return suite


def junit_xml(results: list[Result], *, strict: bool = False) -> str:
    """The results as one JUnit XML document (UTF-8 declaration, one line per element)."""
    root = ET.Element("testsuites", name="clampdown check")
    totals = {"tests": 0, "failures": 0, "errors": 0}
    seconds = 0.0
    for result in results:
        suite = _suite(result, strict)
        root.append(suite)
        for key in totals:
            totals[key] += int(suite.get(key))
        seconds += result.seconds
    for key, value in totals.items():
        root.set(key, str(value))
    root.set("skipped", "0")
    root.set("time", _seconds(seconds))
    ET.indent(root)
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + ET.tostring(root, encoding="unicode") + "\n"
