"""What the command line prints around its real output: JSON errors for JSON readers, and no
traceback when the reader of a pipe stops early (`clampdown schema | head`)."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest


def test_check_format_json_prints_bad_input_as_json_on_stdout(tmp_path):
    path = tmp_path / "bad.json"
    path.write_text(json.dumps({"format": "clampdown-design/1", "name": "x"}), encoding="utf-8")
    result = subprocess.run(
        [sys.executable, "-m", "app.cli", "check", str(path), "--format", "json"],
        capture_output=True,
        text=True,
        timeout=60,
    )
    assert result.returncode == 2
    body = json.loads(result.stdout)  # stdout is JSON, nothing else
    assert body["format"] == "clampdown-errors/1"
    fields = {e["field"] for e in body["errors"]}
    assert {"supply", "coil"} <= fields and all(e["source"] == str(path) for e in body["errors"])
    assert f"{path}: supply: is required" in result.stderr  # people still read the text


def test_check_format_json_reports_an_unreadable_file_as_json(tmp_path):
    result = subprocess.run(
        [sys.executable, "-m", "app.cli", "check", str(tmp_path / "missing.json"), "--format", "json"],
        capture_output=True,
        text=True,
        timeout=60,
    )
    assert result.returncode == 2
    assert json.loads(result.stdout)["errors"] == [
        {"source": str(tmp_path / "missing.json"), "field": "", "message": "no such file"}
    ]


@pytest.mark.parametrize(
    "args", [["schema"], ["check", "seed_data/examples/tank-level-relay.json"], ["--help"]]
)
def test_a_closed_pipe_ends_quietly(args):
    # The reader closes its end before the command writes (Python's start-up takes longer than
    # this), so every write meets a closed pipe, as with `| head` on a long output.
    process = subprocess.Popen(
        [sys.executable, "-m", "app.cli", *args], stdout=subprocess.PIPE, stderr=subprocess.PIPE
    )
    process.stdout.close()
    stderr = process.stderr.read().decode()
    code = process.wait(timeout=60)
    process.stderr.close()
    assert "Traceback" not in stderr and "BrokenPipeError" not in stderr, stderr
    assert code in (0, 141)
