"""The ``clampdown`` command line: check, schema, netlist, draw (and the web app's commands).

Exit codes: 0 no violation, 1 a violation (or a marginal finding with --strict), 2 bad input,
3 an internal error (a bug: one line on standard error asks for the design file). `check` takes
many files and folders; its exit code is the worst over all of them.

The engine (numpy, pydantic, the design models) is imported when a command needs it, so
`--help` and the web app's commands start without it.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import time
from collections.abc import Callable
from pathlib import Path

# Commands other modules add (the web app registers serve, demo, user, trail).
EXTRA_COMMANDS: list[Callable[[argparse._SubParsersAction], None]] = []


class InputError(Exception):
    """Bad input for a command: the lines say what and where. Exit code 2.

    ``problems`` holds the same as (source, field, message) for the JSON output; a line that
    names no field has field ""."""

    def __init__(self, lines: list[str], problems: list[tuple[str, str, str]] | None = None):
        super().__init__("\n".join(lines))
        self.lines = lines
        self.problems = problems if problems is not None else [("", "", line) for line in lines]

    @classmethod
    def about(cls, source: str, problems: list[tuple[str, str]]) -> InputError:
        """Problems (field, message) with one source (a file name): lines read "source: field: message"."""
        lines = [
            f"{source}: {field}: {message}" if field else f"{source}: {message}"
            for field, message in problems
        ]
        return cls(lines, [(source, field, message) for field, message in problems])

    def as_json(self) -> str:
        errors = [{"source": src, "field": field, "message": msg} for src, field, msg in self.problems]
        return json.dumps({"format": "clampdown-errors/1", "errors": errors}, indent=2, ensure_ascii=False)


def _split_problem(line: str) -> tuple[str, str]:
    """'coil.inductance: "-3 mH" must be positive' -> ('coil.inductance', '"-3 mH" must be positive')."""
    field, sep, message = line.partition(": ")
    if sep and field and " " not in field:
        return field, message
    return "", line


def _read_json(path: str, what: str):
    """Read one JSON file ("-": standard input), or raise InputError saying what is wrong with it."""
    try:
        text = sys.stdin.read() if path == "-" else Path(path).read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError.about(path, [("", "no such file")]) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError.about(path, [("", f"cannot be read ({exc.__class__.__name__}: {exc})")]) from None
    try:
        return json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputError.about(
            path, [("", f"not JSON (line {exc.lineno}, column {exc.colno}: {exc.msg})")]
        ) from None
    except RecursionError:
        raise InputError.about(path, [("", f"the JSON is nested too deep to be {what}")]) from None
    except ValueError:  # an integer longer than Python converts (thousands of digits)
        raise InputError.about(
            path, [("", "a number in the file has too many digits to be a value")]
        ) from None


def evaluate(design, profile, **extras):
    """The engine's evaluate(), imported on first use."""
    from .engine import evaluate as run

    return run(design, profile, **extras)


def load_design_file(path: str):
    """Read and validate a design file, or raise InputError naming every problem."""
    from .engine import DesignError, parse_design

    document = _read_json(path, "a design file")
    try:
        return parse_design(document)
    except DesignError as exc:
        raise InputError.about(path, [_split_problem(line) for line in exc.problems]) from None
    except RecursionError:
        raise InputError.about(path, [("", "the design file is nested too deep")]) from None


def load_profile_file(path: str):
    """Read a derating profile file (JSON, clampdown-profile/1), or raise InputError naming each bad field."""
    from .engine.profile import ProfileError, profile_from_dict

    values = _read_json(path, "a profile file")
    try:
        return profile_from_dict(values)
    except ProfileError as exc:
        raise InputError.about(path, exc.problems) from None


def design_files(paths: list[str]) -> list[tuple[str, InputError | None]]:
    """The design files the paths name, in order: a file as given ("-": standard input), a folder
    as every *.json file inside it, recursively, sorted by path. A folder without one is bad
    input of its own (the InputError beside it)."""
    out: list[tuple[str, InputError | None]] = []
    for path in paths:
        folder = Path(path)
        if path != "-" and folder.is_dir():
            found = sorted(str(p) for p in folder.rglob("*.json") if p.is_file())
            if not found:
                out.append(
                    (path, InputError.about(path, [("", "is a folder with no *.json design file in it")]))
                )
            out += [(f, None) for f in found]
        else:
            out.append((path, None))
    return out


def _extras(args: argparse.Namespace) -> dict:
    """What the report adds on request (the engine's keyword arguments)."""
    extras: dict = {"windows": True} if args.windows else {}
    if args.tighten:
        extras["tighten"] = True
    if args.samples is not None:
        extras.update(samples=args.samples, seed=args.seed)
    return extras


def _sample_count(text: str) -> int:
    from .engine.montecarlo import MAX_SAMPLES

    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number") from None
    if not 1 <= value <= MAX_SAMPLES:
        raise argparse.ArgumentTypeError(f"from 1 to {MAX_SAMPLES}, not {value}")
    return value


def _seed(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number") from None
    if not 0 <= value < 2**63:
        raise argparse.ArgumentTypeError(f"from 0 to 2**63 − 1, not {value}")
    return value


def _exit_code(report: dict, strict: bool) -> int:
    statuses = {f["status"] for f in report["findings"]}
    return 1 if "violation" in statuses or (strict and "marginal" in statuses) else 0


def _internal_error_line(exc: Exception, where: str) -> str:
    what = f"{exc.__class__.__name__}: {exc}".splitlines()[0][:300]
    return (
        f"clampdown: internal error in {where} ({what}); this is a bug — "
        "please report it with the design file that caused it"
    )


def _check(args: argparse.Namespace) -> int:
    from .engine.profile import DEFAULT_PROFILE

    profile = load_profile_file(args.profile) if args.profile else DEFAULT_PROFILE
    one_file = len(args.files) == 1 and (args.files[0] == "-" or not Path(args.files[0]).is_dir())
    if one_file and args.format != "junit":
        return _check_one(args, profile)
    results = []
    for path, problem in design_files(args.files):
        start = time.perf_counter()
        try:
            if problem is not None:
                raise problem
            report = evaluate(load_design_file(path), profile, **_extras(args))
        except InputError as exc:
            for line in exc.lines:
                print(line, file=sys.stderr)
            results.append(CheckResult(path, 2, errors=exc, seconds=time.perf_counter() - start))
            continue
        except Exception as exc:  # noqa: BLE001 — this file exits 3; the others are still checked
            line = _internal_error_line(exc, f"`check` of {path}")
            print(line, file=sys.stderr)
            results.append(CheckResult(path, 3, internal=line, seconds=time.perf_counter() - start))
            continue
        code = _exit_code(report, args.strict)
        results.append(CheckResult(path, code, report=report, seconds=time.perf_counter() - start))
    if args.format == "junit":
        from .junit import junit_xml

        print(junit_xml(results, strict=args.strict), end="")
    elif args.format == "json":
        print(json.dumps(_batch_json(results), indent=2, ensure_ascii=False, allow_nan=False))
    else:
        _print_tables(results)
    return max((r.code for r in results), default=0)


class CheckResult:
    """One design file's outcome: its exit code and its report, its bad input or its internal error."""

    def __init__(self, path, code, *, report=None, errors=None, internal=None, seconds=0.0):
        self.path: str = path
        self.code: int = code
        self.report: dict | None = report
        self.errors: InputError | None = errors
        self.internal: str | None = internal
        self.seconds: float = seconds


_OUTCOME = {0: "ok", 1: "failing review", 2: "bad input", 3: "internal error"}


def _batch_json(results: list[CheckResult]) -> dict:
    files = []
    for r in results:
        entry: dict = {"file": r.path, "exit": r.code}
        if r.report is not None:
            entry["report"] = r.report
        if r.errors is not None:
            entry["errors"] = json.loads(r.errors.as_json())["errors"]
        if r.internal is not None:
            entry["internal_error"] = r.internal
        files.append(entry)
    return {"format": "clampdown-check/1", "exit": max((r.code for r in results), default=0), "files": files}


def _print_tables(results: list[CheckResult]) -> None:
    from .engine.text_report import render_table

    for r in results:
        print(f"== {r.path}")
        if r.report is not None:
            print(render_table(r.report))
        elif r.errors is not None:
            print("bad input (on standard error):")
            print("\n".join(f"  {line}" for line in r.errors.lines) + "\n")
        else:
            print(f"{r.internal}\n")
    counts = {}
    for r in results:
        counts[_OUTCOME[r.code]] = counts.get(_OUTCOME[r.code], 0) + 1
    summary = ", ".join(f"{n} {what}" for what, n in counts.items())
    print(f"checked {len(results)} design file{'s' if len(results) != 1 else ''}: {summary}")


def _check_one(args: argparse.Namespace, profile) -> int:
    """One design file: the report itself (table or JSON), as a single check always printed it."""
    from .engine.text_report import render_table

    design = load_design_file(args.files[0])
    report = evaluate(design, profile, **_extras(args))
    if args.format == "json":
        # allow_nan=False: a NaN or an infinity in a report is a bug, never valid JSON.
        print(json.dumps(report, indent=2, ensure_ascii=False, allow_nan=False))
    else:
        print(render_table(report), end="")
    return _exit_code(report, args.strict)


def _schema(args: argparse.Namespace) -> int:
    from .engine.schema import design_schema

    print(json.dumps(design_schema(), indent=2, ensure_ascii=False))
    return 0


def _netlist(args: argparse.Namespace) -> int:
    from .engine.clamps import kind_of
    from .engine.netlist import netlist
    from .engine.switches import switch_kind

    design = load_design_file(args.file)
    clamp = kind_of(design.clamp)
    if clamp.is_unclamped(design.clamp) and not switch_kind(design.switch).simulates_avalanche:
        what = '"none"' if clamp.unclamped else f'"{clamp.kind}" (clamp.common_to "unconnected")'
        raise InputError.about(
            args.file, [("clamp.kind", f"{what} has no finite turn-off to simulate; add a clamp")]
        )
    text = netlist(design, args.corner)
    if args.output:
        Path(args.output).write_text(text, encoding="utf-8")
    else:
        print(text, end="")
    return 0


def _draw(args: argparse.Namespace) -> int:
    from .engine.profile import DEFAULT_PROFILE
    from .pictures import NAMES, draw

    profile = load_profile_file(args.profile) if args.profile else DEFAULT_PROFILE
    design = load_design_file(args.file)
    folder = Path(args.output)
    if folder.exists() and not folder.is_dir():
        raise InputError.about(args.output, [("", "is a file; give a folder to write the pictures into")])
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise InputError.about(args.output, [("", f"cannot be made ({exc.strerror})")]) from None
    stem = args.name or (Path(args.file).stem if args.file != "-" else "design")
    which = tuple(args.only) if args.only else tuple(NAMES)
    for name, picture in draw(design, profile, which).items():
        path = folder / f"{stem}-{name}.svg"
        try:
            path.write_text(picture.svg, encoding="utf-8")
        except OSError as exc:
            raise InputError.about(str(path), [("", f"cannot be written ({exc.strerror})")]) from None
        print(f"{path}: {picture.title}. {picture.caption}")
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

    check = sub.add_parser("check", help="evaluate design files at their worst corners")
    check.add_argument(
        "files",
        nargs="+",
        metavar="PATH",
        help="design file (JSON, clampdown-design/1), - for standard input, or a folder "
        "(every *.json file inside it, recursively, sorted)",
    )
    check.add_argument(
        "--format",
        choices=("table", "json", "junit"),
        default="table",
        help="junit: JUnit XML, one test suite per design file and one test case per rule",
    )
    check.add_argument("--strict", action="store_true", help="exit 1 on marginal findings too")
    check.add_argument(
        "--windows",
        action="store_true",
        help="add the design window: for the base resistor, pull-down, zener voltage and clamp "
        "R and C, the interval where every rule holds (others as designed) and the standard "
        "values inside it",
    )
    check.add_argument(
        "--tighten",
        action="store_true",
        help="add what to tighten: each tolerance halved in turn and how far it moves each rule's margin",
    )
    check.add_argument(
        "--samples",
        type=_sample_count,
        metavar="N",
        help="add the Monte Carlo yield of N seeded draws of every toleranced quantity",
    )
    check.add_argument("--seed", type=_seed, default=1, help="seed of the Monte Carlo draws (default 1)")
    check.add_argument(
        "--profile",
        metavar="FILE",
        help="derating profile (JSON, clampdown-profile/1: name and the figures to change; "
        "the rest are the general preset's)",
    )
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

    pictures = sub.add_parser(
        "draw",
        help="write the pictures of a design as SVG files: the stage, its turn-off, its margins over temperature",
    )
    pictures.add_argument("file", help="design file (JSON, clampdown-design/1), or - for standard input")
    pictures.add_argument(
        "-o", "--output", default=".", metavar="FOLDER", help="folder to write into (default: here)"
    )
    pictures.add_argument(
        "--name",
        help="file name stem (default: the design file's); files are STEM-schematic.svg, "
        "STEM-turnoff.svg, STEM-margins.svg",
    )
    pictures.add_argument(
        "--only",
        action="append",
        choices=("schematic", "turnoff", "margins"),
        help="draw only this picture (repeatable)",
    )
    pictures.add_argument("--profile", metavar="FILE", help="derating profile (JSON, clampdown-profile/1)")
    pictures.set_defaults(run=_draw)

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
    # Clampdown uses no pydantic plugin: spare pydantic its scan of every installed package's
    # entry points at the first model (about a tenth of `clampdown check`'s start-up). Set the
    # variable yourself (even to "") and pydantic looks for plugins as usual.
    os.environ.setdefault("PYDANTIC_DISABLE_PLUGINS", "__all__")
    _load_extra_commands()
    try:
        args = build_parser().parse_args(argv)
        try:
            code = args.run(args)
        except InputError as exc:
            if getattr(args, "format", None) == "json":
                print(exc.as_json())
            for line in exc.lines:
                print(line, file=sys.stderr)
            code = 2
        except BrokenPipeError:
            raise
        except Exception as exc:  # noqa: BLE001 — exit 3, never a traceback or 1 (which CI reads as a violation)
            print(_internal_error_line(exc, f"`{args.command}`"), file=sys.stderr)
            code = 3
        sys.stdout.flush()  # a closed pipe shows here, not at interpreter exit
        return code
    except BrokenPipeError:
        # The reader stopped early (`clampdown schema | head`): no traceback. Point standard
        # output at /dev/null so the interpreter's final flush does not fail again.
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 141  # 128 + SIGPIPE, as a shell reports a program ended by a closed pipe


if __name__ == "__main__":
    raise SystemExit(main())
