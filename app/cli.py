"""The ``clampdown`` command line: check, schema, netlist (and the web app's commands).

Exit codes: 0 no violation, 1 a violation (or a marginal finding with --strict), 2 bad input.
"""

from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Callable
from pathlib import Path

from .engine import DesignError, evaluate, parse_design

# Commands other modules add (the web app registers serve, demo, user, trail).
EXTRA_COMMANDS: list[Callable[[argparse._SubParsersAction], None]] = []


class InputError(Exception):
    """Bad input for a command: the lines say what and where. Exit code 2."""

    def __init__(self, lines: list[str]):
        super().__init__("\n".join(lines))
        self.lines = lines


def load_design_file(path: str):
    """Read and validate a design file, or raise InputError naming every problem."""
    try:
        text = sys.stdin.read() if path == "-" else Path(path).read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError([f"{path}: no such file"]) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError([f"{path}: cannot be read ({exc.__class__.__name__}: {exc})"]) from None
    try:
        document = json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputError([f"{path}: not JSON (line {exc.lineno}, column {exc.colno}: {exc.msg})"]) from None
    try:
        return parse_design(document)
    except DesignError as exc:
        raise InputError([f"{path}: {line}" for line in exc.problems]) from None


def _check(args: argparse.Namespace) -> int:
    from .engine.text_report import render_table

    design = load_design_file(args.file)
    report = evaluate(design)
    if args.format == "json":
        print(json.dumps(report, indent=2, ensure_ascii=False))
    else:
        print(render_table(report), end="")
    statuses = {f["status"] for f in report["findings"]}
    if "violation" in statuses or (args.strict and "marginal" in statuses):
        return 1
    return 0


def _schema(args: argparse.Namespace) -> int:
    from .engine.schema import design_schema

    print(json.dumps(design_schema(), indent=2, ensure_ascii=False))
    return 0


def _netlist(args: argparse.Namespace) -> int:
    from .engine.clamps import kind_of
    from .engine.netlist import netlist

    design = load_design_file(args.file)
    if kind_of(design.clamp).unclamped:
        raise InputError([f'{args.file}: clamp.kind: "none" has no finite turn-off to simulate; add a clamp'])
    text = netlist(design, args.corner)
    if args.output:
        Path(args.output).write_text(text, encoding="utf-8")
    else:
        print(text, end="")
    return 0


class _Parser(argparse.ArgumentParser):
    def error(self, message: str):  # argparse already exits 2; keep its message short
        self.print_usage(sys.stderr)
        print(f"clampdown: {message}", file=sys.stderr)
        raise SystemExit(2)


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="clampdown", description="Review relay-driver designs against the limits of their parts."
    )
    sub = parser.add_subparsers(dest="command", required=True, parser_class=_Parser)

    check = sub.add_parser("check", help="evaluate a design file at its worst corners")
    check.add_argument("file", help="design file (JSON, clampdown-design/1), or - for standard input")
    check.add_argument("--format", choices=("table", "json"), default="table")
    check.add_argument("--strict", action="store_true", help="exit 1 on marginal findings too")
    check.set_defaults(run=_check)

    schema = sub.add_parser("schema", help="print the JSON Schema of the design file")
    schema.set_defaults(run=_schema)

    net = sub.add_parser("netlist", help="write a SPICE netlist of the turn-off")
    net.add_argument("file")
    net.add_argument(
        "--corner",
        choices=("nominal", "worst", "release"),
        default="nominal",
        help="nominal; worst: the highest spike; release: the slowest release",
    )
    net.add_argument("-o", "--output", help="file to write (default: standard output)")
    net.set_defaults(run=_netlist)

    for add in EXTRA_COMMANDS:
        add(sub)
    return parser


def _load_extra_commands() -> None:
    try:
        from .web import commands  # noqa: F401  (registers itself in EXTRA_COMMANDS)
    except ImportError as exc:
        if exc.name is None or not exc.name.startswith("app.web"):
            raise


def main(argv: list[str] | None = None) -> int:
    _load_extra_commands()
    args = build_parser().parse_args(argv)
    try:
        return args.run(args)
    except InputError as exc:
        for line in exc.lines:
            print(line, file=sys.stderr)
        return 2


if __name__ == "__main__":
    raise SystemExit(main())
