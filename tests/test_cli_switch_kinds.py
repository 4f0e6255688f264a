"""The command line with the new switch kinds: check, schema and netlist know them; a netlist
that cannot be simulated is refused by field (exit 2)."""

from __future__ import annotations

import json
from pathlib import Path

from app import cli

EXAMPLES = Path(__file__).resolve().parents[1] / "seed_data" / "examples"


def test_check_judges_the_new_examples(capsys):
    # The open common pin leaves the array's channel unclamped: a violation, exit 1.
    assert cli.main(["check", str(EXAMPLES / "sorter-bank-darlington-open-common.json")]) == 1
    out = capsys.readouterr().out
    assert "common pin is left unconnected" in out
    # The FET rated only at 10 V from a 5 V pin: marginal gate enhancement, exit 0 (1 with --strict).
    path = str(EXAMPLES / "pump-relay-fet-rated-at-10v.json")
    assert cli.main(["check", path]) == 0
    assert "gate.enhancement" in capsys.readouterr().out
    assert cli.main(["check", path, "--strict"]) == 1


def test_schema_lists_the_switch_kinds(capsys):
    assert cli.main(["schema"]) == 0
    schema = json.loads(capsys.readouterr().out)
    assert {"Transistor", "NmosFet", "DarlingtonArray", "ArrayDiodeClamp"} <= set(schema["$defs"])


def test_netlist_of_an_open_common_pin_is_refused_by_field(capsys):
    assert cli.main(["netlist", str(EXAMPLES / "sorter-bank-darlington-open-common.json")]) == 2
    err = capsys.readouterr().err
    assert "clamp.kind" in err and 'common_to "unconnected"' in err


def test_netlist_of_an_unclamped_mosfet_simulates_its_avalanche(tmp_path, capsys):
    design = json.loads((EXAMPLES / "pump-relay-fet-rated-at-10v.json").read_text())
    design["clamp"] = {"kind": "none"}
    path = tmp_path / "fet.json"
    path.write_text(json.dumps(design))
    assert cli.main(["netlist", str(path)]) == 0
    out = capsys.readouterr().out
    assert "DBODY 0 sw dbody" in out and "BV=60" in out and "avalanche_energy" in out
