"""Speed of one full review against one ngspice run of the same circuit, in the same run.

    python benchmarks/engine.py [--designs 200] [--seed 2024] [--samples 100000]

Generates seeded random designs of every clamp kind (tests/designgen.py), then prints the
median time of app.engine.evaluate (every rule, every worst-case corner, the turn-off) and
the median time of `ngspice -b` on the nominal-corner netlist of the same circuits
(app.engine.netlist.netlist), and their ratio. The two are timed in turns (a round of every
design's evaluation, then a few simulator runs, and again), so a machine shared with other work
slows both alike. Besides the wall-clock medians it prints the CPU time each used (the engine's
own process time per evaluation, ngspice's from the children's resource usage), a ratio a busy
machine disturbs less. The goal is an
evaluation at least 100 times faster than one simulator run of one corner. Nothing is asserted.
"""

from __future__ import annotations

import argparse
import importlib.util
import random
import resource
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from app.engine import evaluate, parse_design  # noqa: E402
from app.engine.clamps import kind_of  # noqa: E402
from app.engine.netlist import netlist  # noqa: E402

_spec = importlib.util.spec_from_file_location("designgen", ROOT / "tests" / "designgen.py")
designgen = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(designgen)


def _median_ms(samples: list[float]) -> float:
    return statistics.median(samples) * 1e3


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--designs", type=int, default=200)
    parser.add_argument("--seed", type=int, default=2024)
    parser.add_argument(
        "--samples", type=int, default=100_000, help="Monte Carlo samples of one design (0: skip)"
    )
    args = parser.parse_args()

    rng = random.Random(args.seed)
    kinds = designgen.CLAMP_KINDS
    designs = [parse_design(designgen.random_design(rng, kinds[i % len(kinds)])) for i in range(args.designs)]

    for design in designs[:10]:  # warm-up: imports, numpy's first calls
        evaluate(design)
    ngspice = shutil.which("ngspice")
    clamped = [d for d in designs if not kind_of(d.clamp).unclamped] if ngspice else []
    engine_times, spice_times = [], []
    engine_cpu = spice_cpu = 0.0
    failures = 0
    rounds = 5
    with tempfile.TemporaryDirectory() as tmp:
        for round_number in range(rounds):
            cpu = time.process_time()
            for design in designs:
                start = time.perf_counter()
                evaluate(design)
                engine_times.append(time.perf_counter() - start)
            engine_cpu += time.process_time() - cpu
            for number in range(round_number, len(clamped), rounds):
                path = Path(tmp) / f"circuit-{number}.cir"
                path.write_text(netlist(clamped[number], "nominal"), encoding="utf-8")
                children = resource.getrusage(resource.RUSAGE_CHILDREN)
                start = time.perf_counter()
                done = subprocess.run([ngspice, "-b", str(path)], capture_output=True, text=True)
                spice_times.append(time.perf_counter() - start)
                after = resource.getrusage(resource.RUSAGE_CHILDREN)
                spice_cpu += (after.ru_utime - children.ru_utime) + (after.ru_stime - children.ru_stime)
                failures += done.returncode != 0 or "time_to_dropout" not in done.stdout
    engine_ms = _median_ms(engine_times)
    corners = statistics.median(evaluate(d)["corners"] for d in designs)
    print(f"designs: {len(designs)} ({', '.join(kinds)}), seed {args.seed}, median {corners:g} corners each")
    print(
        f"engine:  median {engine_ms:.3f} ms per full evaluation (every rule, every corner, turn-off, alternatives)"
    )
    if ngspice is None:
        print("ngspice: not installed (apt-get install ngspice); no ratio")
        return
    spice_ms = _median_ms(spice_times)
    print(
        f"ngspice: median {spice_ms:.3f} ms per `ngspice -b` run of one corner "
        f"({len(clamped)} clamped circuits, {failures} without a result)"
    )
    print(f"ratio:   the engine is {spice_ms / engine_ms:.1f}x faster than one ngspice run (goal >= 100x)")
    engine_cpu_ms = engine_cpu / (rounds * len(designs)) * 1e3
    spice_cpu_ms = spice_cpu / max(1, len(spice_times)) * 1e3
    print(
        f"cpu:     {engine_cpu_ms:.3f} ms per evaluation, {spice_cpu_ms:.3f} ms per ngspice run (means): "
        f"{spice_cpu_ms / engine_cpu_ms:.1f}x"
    )
    if args.samples:
        # Monte Carlo: N samples of one design, against 20 ngspice runs of one corner (the goal:
        # less time). One design of each clamp kind, the median over them.
        from app.engine.montecarlo import monte_carlo

        picked = {kind_of(d.clamp).kind: d for d in designs}
        times = {}
        for kind, design in picked.items():
            start = time.perf_counter()
            monte_carlo(design, samples=args.samples, seed=1)
            times[kind] = time.perf_counter() - start
        mc_ms = _median_ms(list(times.values()))
        each = ", ".join(f"{k} {v * 1e3:.0f} ms" for k, v in times.items())
        print(f"monte carlo: {args.samples} samples of one design, median {mc_ms:.0f} ms ({each})")
        print(
            f"ratio:   {args.samples} samples take {mc_ms / (20 * spice_ms):.2f}x the time of 20 ngspice runs "
            "(goal < 1)"
        )


if __name__ == "__main__":
    main()
