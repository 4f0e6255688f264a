"""`pip install clampdown` (no extras) must give a working engine, CLI and pictures: every
third-party module they import is a declared core dependency. (The packaging test borrows the
test environment's packages, so it cannot see a missing one; this reads the imports instead.)"""

from __future__ import annotations

import ast
import re
import sys
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
# Modules a declared distribution always brings with it (pydantic 2 is built on pydantic-core).
PROVIDED_BY = {"pydantic_core": "pydantic"}
CORE = [
    ROOT / "app" / "engine",
    ROOT / "app" / "pictures",
    ROOT / "app" / "cli.py",
    ROOT / "app" / "junit.py",
]


def _imports(path: Path) -> set[str]:
    names = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            names |= {a.name.split(".")[0] for a in node.names}
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            names.add(node.module.split(".")[0])
    return names


def test_the_engine_cli_and_pictures_import_only_core_dependencies():
    project = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["project"]
    declared = {re.split(r"[<>=!~\[; ]", d, maxsplit=1)[0].lower() for d in project["dependencies"]}
    files = [f for p in CORE for f in ([p] if p.is_file() else p.rglob("*.py"))]
    imported = set().union(*(_imports(f) for f in files))
    third_party = {PROVIDED_BY.get(n, n) for n in imported if n not in sys.stdlib_module_names and n != "app"}
    assert third_party, "the reader found no imports at all"
    assert third_party <= declared, (
        f"imported but not declared in [project] dependencies: {third_party - declared}"
    )
