"""A CI job's check of 50 designs against 10 ngspice runs, in the same run.

    python benchmarks/cli_batch.py [--designs 50] [--spice-runs 10] [--rounds 5] [--seed 2024]

Writes seeded random designs of every clamp kind (tests/designgen.py) into a folder, then times,
in turns, `clampdown check FOLDER --format junit` as one whole process (start-up, every file
read and judged, the XML written) and 10 `ngspice -b` runs of the nominal-corner turn-off
netlists of 10 of those designs, one after another (what a simulator-per-corner job pays for
only 10 runs). Prints the median of each over the rounds and their ratio; the goal is a CLI
check of 50 designs in less time than 10 ngspice runs (ratio >= 1). Nothing is asserted.
"""

from __future__ import annotations

import argparse
import importlib.util
import json
import random
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from app.engine import parse_design  # noqa: E402
from app.engine.clamps import kind_of  # noqa: E402
from app.engine.netlist import netlist  # noqa: E402

_spec = importlib.util.spec_from_file_location("designgen", ROOT / "tests" / "designgen.py")
designgen = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(designgen)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--designs", type=int, default=50)
    parser.add_argument("--spice-runs", type=int, default=10)
    parser.add_argument("--rounds", type=int, default=5)
    parser.add_argument("--seed", type=int, default=2024)
    args = parser.parse_args()

    rng = random.Random(args.seed)
    kinds = designgen.CLAMP_KINDS
    documents = [designgen.random_design(rng, kinds[i % len(kinds)]) for i in range(args.designs)]
    ngspice = shutil.which("ngspice")
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp) / "designs"
        folder.mkdir()
        for number, document in enumerate(documents):
            (folder / f"design-{number:03d}.json").write_text(json.dumps(document), encoding="utf-8")
        circuits = []
        for number, document in enumerate(documents):
            design = parse_design(document)
            if kind_of(design.clamp).unclamped or len(circuits) >= args.spice_runs:
                continue
            path = Path(tmp) / f"circuit-{number}.cir"
            path.write_text(netlist(design, "nominal"), encoding="utf-8")
            circuits.append(path)

        command = [sys.executable, "-m", "app.cli", "check", str(folder), "--format", "junit"]
        cli_times, spice_times = [], []
        codes = set()
        for _ in range(args.rounds):
            start = time.perf_counter()
            done = subprocess.run(command, capture_output=True, text=True, cwd=ROOT)
            cli_times.append(time.perf_counter() - start)
            codes.add(done.returncode)
            if ngspice is None:
                continue
            start = time.perf_counter()
            for circuit in circuits:
                subprocess.run([ngspice, "-b", str(circuit)], capture_output=True, text=True)
            spice_times.append(time.perf_counter() - start)

    cli_ms = statistics.median(cli_times) * 1e3
    print(f"designs: {len(documents)} ({', '.join(kinds)}), seed {args.seed}, {args.rounds} rounds")
    print(f"clampdown check: median {cli_ms:.1f} ms for the whole process (exit codes {sorted(codes)})")
    if ngspice is None:
        print("ngspice: not installed (apt-get install ngspice); no ratio")
        return
    spice_ms = statistics.median(spice_times) * 1e3
    print(f"ngspice: median {spice_ms:.1f} ms for {len(circuits)} `ngspice -b` runs, one after another")
    print(
        f"ratio:   {len(circuits)} ngspice runs take {spice_ms / cli_ms:.2f}x the time of checking "
        f"{len(documents)} designs (goal >= 1)"
    )


if __name__ == "__main__":
    main()
