"""The turn-off of a MOSFET and of a Darlington array channel agrees with ngspice.

Seeded random circuits per switch kind go through the real command line, as in
tests/test_ngspice_agreement.py: `clampdown netlist` writes the circuit with the switch as its
kind models it (a MOSFET as a gate-controlled R_DS(on) with its body diode, a Darlington channel
as a gate-controlled conductance behind its V_CE(sat), the array's own clamp diode to the supply
or through a zener), `ngspice -b` simulates it, and its `.meas` results must be within 2 % of
the engine: peak drain/collector voltage, time to drop-out, and for the unclamped MOSFET the
avalanche energy ∫ v·i dt its body diode takes.
"""

from __future__ import annotations

import concurrent.futures
import importlib.util
import json
import os
import random
import re
import shutil
import subprocess
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest

from app.engine import parse_design
from app.engine.review import build_context

pytestmark = pytest.mark.skipif(
    shutil.which("ngspice") is None,
    reason="ngspice is not installed (apt-get install ngspice); the transient agreement tests need it",
)

ROOT = Path(__file__).resolve().parents[1]
_spec = importlib.util.spec_from_file_location("designgen", Path(__file__).with_name("designgen.py"))
designgen = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(designgen)

TOLERANCE = 0.02  # relative; the agreement the engine promises (DEVELOPERS.md)
PER_KIND = 20
# (switch kind, clamp kind, common_to of an array_diode clamp): the clamped turn-offs compared.
FAMILIES = {
    "nmos": [("nmos", k, None) for k in ("diode", "diode_zener", "diode_resistor", "resistor", "tvs_switch")],
    "darlington_array": [
        ("darlington_array", "array_diode", "supply"),
        ("darlington_array", "array_diode", "zener"),
        ("darlington_array", "diode", None),
    ],
}


@dataclass(frozen=True)
class Case:
    kind: str
    number: int
    corner: str  # "nominal" or "worst"

    @property
    def id(self) -> str:
        return f"{self.corner}-{self.kind}-{self.number}"

    def document(self) -> dict:
        family = FAMILIES[self.kind]
        switch, clamp, common_to = family[self.number % len(family)]
        rng = random.Random(f"ngspice-switch/{self.kind}/{self.number}")
        return designgen.random_switch_design(rng, switch, clamp, common_to=common_to)


CASES = [Case(k, n, "nominal") for k in FAMILIES for n in range(PER_KIND)] + [
    Case(k, n, "worst") for k in FAMILIES for n in range(6)
]


def _cli(*args: str) -> str:
    done = subprocess.run(
        [sys.executable, "-m", "app.cli", *args], cwd=ROOT, capture_output=True, text=True, timeout=120
    )
    assert done.returncode in (0, 1), f"clampdown {' '.join(args)} failed:\n{done.stderr}"
    return done.stdout


def _measure(output: str, name: str) -> float:
    match = re.search(rf"^\s*{name}\s*=\s*([-+0-9.eE]+)", output, re.MULTILINE)
    assert match, f"ngspice printed no {name}:\n{output}"
    return float(match[1])


def run_ngspice(netlist_path: Path) -> str:
    done = subprocess.run(
        ["ngspice", "-b", str(netlist_path)],
        cwd=netlist_path.parent,
        capture_output=True,
        text=True,
        timeout=120,
    )
    output = done.stdout + done.stderr
    assert done.returncode == 0, f"ngspice failed on {netlist_path}:\n{output}"
    return output


class NoRelease(Exception):
    """The operating point carries no more than the drop-out current: nothing to release."""


@dataclass(frozen=True)
class Outcome:
    engine_peak: float
    engine_time: float
    spice_peak: float
    spice_time: float
    netlist: str


def _engine(document: dict, corner: str) -> tuple[float, float, float, float]:
    """(peak, time to drop-out, I_0, I_do) of the engine at the corner the netlist takes."""
    ctx = build_context(parse_design(document))
    if corner == "nominal":
        to, index = ctx.turnoff_nominal, 0
    else:
        to = ctx.turnoff
        index = int(np.argmax(np.where(np.isfinite(to.peak_switch_voltage), to.peak_switch_voltage, 0)))
    return (
        float(to.peak_switch_voltage[index]),
        float(to.time_to_dropout[index]),
        float(to.initial_current[index]),
        float(ctx.op.dropout_current),
    )


def simulate(case: Case, workdir: Path) -> Outcome:
    document = case.document()
    peak, time, i0, ido = _engine(document, case.corner)
    if i0 <= ido:
        raise NoRelease(f"coil current {i0:.4g} A at or below drop-out {ido:.4g} A: no release to compare")
    design_path = workdir / f"{case.id}.json"
    netlist_path = workdir / f"{case.id}.cir"
    design_path.write_text(json.dumps(document), encoding="utf-8")
    _cli("netlist", str(design_path), "--corner", case.corner, "-o", str(netlist_path))
    text = netlist_path.read_text(encoding="utf-8")
    printed_i0 = float(re.search(r"^\* I_0 = ([-+0-9.eE]+) A", text, re.MULTILINE)[1])
    assert printed_i0 == pytest.approx(i0, rel=1e-6)
    output = run_ngspice(netlist_path)
    return Outcome(
        peak, time, _measure(output, "peak_switch_voltage"), _measure(output, "time_to_dropout"), text
    )


@pytest.fixture(scope="module")
def outcomes(tmp_path_factory) -> dict[str, Outcome | BaseException]:
    workdir = tmp_path_factory.mktemp("ngspice-switch")
    with concurrent.futures.ThreadPoolExecutor(max_workers=max(2, os.cpu_count() or 2)) as pool:
        futures = {case.id: pool.submit(simulate, case, workdir) for case in CASES}
    return {key: (f.exception() or f.result()) for key, f in futures.items()}


def _agrees(outcome: Outcome | BaseException) -> None:
    if isinstance(outcome, NoRelease):
        pytest.skip(str(outcome))
    if isinstance(outcome, BaseException):
        raise outcome
    where = f"\nnetlist:\n{outcome.netlist}"
    # Reference: ngspice (Debian package) running the same circuit.
    assert outcome.engine_peak == pytest.approx(outcome.spice_peak, rel=TOLERANCE), where
    # Reference: ngspice (Debian package) running the same circuit.
    assert outcome.engine_time == pytest.approx(outcome.spice_time, rel=TOLERANCE), where


def test_generated_switch_designs_are_valid():
    for case in CASES:
        design = parse_design(case.document())
        assert design.switch.kind == case.kind


@pytest.mark.parametrize("case", CASES, ids=lambda c: c.id)
def test_turn_off_agrees_with_ngspice(outcomes, case):
    _agrees(outcomes[case.id])


def test_enough_circuits_per_kind(outcomes):
    """At least 20 circuits per switch kind with a release to compare; the largest differences
    printed (pytest -s)."""
    for kind in FAMILIES:
        mine = [o for c in CASES if c.kind == kind and isinstance(o := outcomes[c.id], Outcome)]
        assert len(mine) >= 20, f"{kind}: only {len(mine)} circuits with a release to compare"
        peak = max(abs(o.engine_peak - o.spice_peak) / o.spice_peak for o in mine)
        time = max(abs(o.engine_time - o.spice_time) / o.spice_time for o in mine)
        print(f"{kind}: {len(mine)} cases, max difference peak {peak:.3%}, time to drop-out {time:.3%}")


@pytest.mark.parametrize("number", range(PER_KIND))
def test_unclamped_mosfet_avalanche_agrees_with_ngspice(tmp_path, number):
    """An unclamped MOSFET: the drain is held at V_(BR)DSS by the body diode's breakdown; the
    engine's avalanche energy ∫ V_(BR)DSS·i dt and its time to drop-out against ngspice's
    ∫ v(sw)·i dt and release. The rule's ½·L·I_0²·V_BR/(V_BR − V_cc) neglects the coil
    resistance and so lies at or above both."""
    rng = random.Random(f"ngspice-avalanche/{number}")
    document = designgen.random_switch_design(rng, "nmos", "none")
    design = parse_design(document)
    ctx = build_context(design)
    to = ctx.turnoff_nominal
    i0, vcc = float(to.initial_current[0]), float(ctx.nominal.vcc[0])
    if i0 <= ctx.nominal.dropout_current:
        pytest.skip("the coil never carries more than its drop-out current")
    design_path, netlist_path = tmp_path / "fet.json", tmp_path / "fet.cir"
    design_path.write_text(json.dumps(document), encoding="utf-8")
    _cli("netlist", str(design_path), "-o", str(netlist_path))
    output = run_ngspice(netlist_path)
    v_br = design.switch.vds_max
    # ngspice (Debian package): the body diode's breakdown (IBV 1 mA) holds the drain near V_BR.
    assert _measure(output, "peak_switch_voltage") == pytest.approx(v_br, rel=TOLERANCE)
    # ngspice (Debian package) running the same circuit.
    assert float(to.clamp_energy[0]) == pytest.approx(_measure(output, "avalanche_energy"), rel=TOLERANCE)
    # ngspice (Debian package) running the same circuit.
    assert float(to.time_to_dropout[0]) == pytest.approx(_measure(output, "time_to_dropout"), rel=TOLERANCE)
    # The datasheet formula (coil resistance neglected) bounds the energy from above.
    assert 0.5 * design.coil.inductance * i0**2 * v_br / (v_br - vcc) >= float(to.clamp_energy[0])
