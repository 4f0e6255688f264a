"""Golden reports of the example designs: a report may change only together with ENGINE_VERSION.

Reports are cached per (content hash, engine version), so a change in judgement that keeps the
version would leave every stored revision showing the old verdict. Each golden file records the
engine version that wrote it; when a report differs from its golden file:
- with the same version, the engine changed its judgement silently — bump ENGINE_VERSION and say
  what changed in CHANGELOG.md;
- with a newer version, the golden files are stale — rewrite them.

Rewrite with:  python tests/test_golden_reports.py --write
"""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = sorted((ROOT / "seed_data" / "examples").glob("*.json"))
GOLDEN = Path(__file__).resolve().parent / "golden"


def _rounded(value):
    """Floats to 9 significant digits, so the last bits of a platform's libm do not count."""
    if isinstance(value, float):
        return float(f"{value:.9g}") if math.isfinite(value) else value
    if isinstance(value, dict):
        return {k: _rounded(v) for k, v in value.items()}
    if isinstance(value, list):
        return [_rounded(v) for v in value]
    return value


def _report(example: Path) -> dict:
    from app.engine import evaluate, parse_design

    report = evaluate(parse_design(json.loads(example.read_text(encoding="utf-8"))))
    return _rounded(json.loads(json.dumps(report)))


def _without_version(report: dict) -> dict:
    return {k: v for k, v in report.items() if k != "engine_version"}


def test_every_example_has_a_golden_report():
    assert EXAMPLES, "no example designs found"
    missing = [e.name for e in EXAMPLES if not (GOLDEN / e.name).exists()]
    assert not missing, f"no golden report for {missing}: python tests/test_golden_reports.py --write"


@pytest.mark.parametrize("example", EXAMPLES, ids=lambda p: p.stem)
def test_report_changes_only_with_the_engine_version(example: Path):
    from app.engine import ENGINE_VERSION

    golden_path = GOLDEN / example.name
    if not golden_path.exists():
        pytest.fail(f"no golden report for {example.name}: python tests/test_golden_reports.py --write")
    golden = json.loads(golden_path.read_text(encoding="utf-8"))
    report = _report(example)
    if _without_version(report) == _without_version(golden):
        assert golden["engine_version"] == ENGINE_VERSION, (
            f"{example.name}: golden written by engine {golden['engine_version']}, now {ENGINE_VERSION}; "
            "rewrite the golden reports (python tests/test_golden_reports.py --write)"
        )
        return
    if golden["engine_version"] == ENGINE_VERSION:
        pytest.fail(
            f"{example.name}: the report changed but ENGINE_VERSION is still {ENGINE_VERSION}. Stored "
            "reports are cached per engine version, so bump it (app/engine/__init__.py), say what "
            "changed in CHANGELOG.md, then rewrite the golden reports."
        )
    pytest.fail(
        f"{example.name}: engine {ENGINE_VERSION} judges differently from the golden report of "
        f"{golden['engine_version']}; check the change is intended, then rewrite the golden reports "
        "(python tests/test_golden_reports.py --write)"
    )


def test_a_silent_change_is_caught(tmp_path, monkeypatch):
    """The check itself: a golden file whose verdict differs under the same version fails."""
    from app.engine import ENGINE_VERSION

    example = EXAMPLES[0]
    tampered = _report(example)
    tampered["verdict"] = "ok" if tampered["verdict"] != "ok" else "violation"
    tampered["engine_version"] = ENGINE_VERSION
    (tmp_path / example.name).write_text(json.dumps(tampered), encoding="utf-8")
    monkeypatch.setattr(sys.modules[__name__], "GOLDEN", tmp_path)
    with pytest.raises(pytest.fail.Exception, match="ENGINE_VERSION is still"):
        test_report_changes_only_with_the_engine_version(example)


def _write() -> None:
    sys.path.insert(0, str(ROOT))
    GOLDEN.mkdir(exist_ok=True)
    for stale in GOLDEN.glob("*.json"):
        if not (ROOT / "seed_data" / "examples" / stale.name).exists():
            stale.unlink()
    for example in EXAMPLES:
        text = json.dumps(_report(example), indent=1, sort_keys=True, ensure_ascii=False, allow_nan=False)
        (GOLDEN / example.name).write_text(text + "\n", encoding="utf-8")
        print(f"wrote {GOLDEN / example.name}")


if __name__ == "__main__":
    if sys.argv[1:] != ["--write"]:
        sys.exit("usage: python tests/test_golden_reports.py --write")
    _write()
