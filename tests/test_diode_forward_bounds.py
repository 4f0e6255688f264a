"""The clamp diode's forward voltage between two bounds (clamp.diode.vf_min … vf): the corners take
the diode's curve at both, the release at the lowest V_F, the spike at the highest; the Monte
Carlo yield draws it; without vf_min a judged release says the diode was taken as given.

Sources: the Shockley diode equation I = I_S·(exp(V/(n·V_T)) − 1) with V_T = k·T/q at 27 °C (SI
2019 defining constants; ngspice's default temperature), fitted through (V_F, I_F) by hand; the
time to drop-out t = ∫ from I_do to I_0 of L/(R·i + v_D(i)) di, integrated by scipy's quad; the
uniform distribution's CDF; ngspice (Debian) on the exported netlist. The design is the
hand-worked one (tests/handbook.py: 12 V, 160 Ω / 0.12 H, I_0 = 12/160 = 75 mA with V_CE(sat)
at its lowest, 0 V; I_do = 1.2/160 = 7.5 mA), its diode given by (V_F, I_F) alone, n = 1.8.
"""

from __future__ import annotations

import math
import re
import shutil
import subprocess

import pytest
from scipy import integrate, optimize

from app.engine import DesignError, evaluate, parse_design
from app.engine.corners import worst_corners
from app.engine.montecarlo import monte_carlo
from app.engine.netlist import netlist
from app.engine.review import build_context

from .handbook import DELETE, design

V_T = 1.380649e-23 * (27 + 273.15) / 1.602176634e-19  # k·T/q at 27 °C
N = 1.8  # the emission coefficient taken when a diode gives only (V_F, I_F)
L, R, I_0, I_DO = 0.12, 160.0, 12 / 160, 1.2 / 160


def _design(**changes):
    base = {"clamp.diode.is": DELETE, "clamp.diode.n": DELETE, "clamp.diode.rs": DELETE}
    return design(**{**base, **changes})


def _release_by_hand(vf: float, vf_at: float = 1.0) -> float:
    i_s = vf_at / math.expm1(vf / (N * V_T))  # the curve through (vf, vf_at)
    value, _ = integrate.quad(
        lambda i: L / (R * i + N * V_T * math.log1p(i / i_s)), I_DO, I_0, epsabs=0, epsrel=1e-10
    )
    return value


def _finding(report, rule_id):
    return next(f for f in report["findings"] if f["rule"] == rule_id)


def test_the_corners_take_the_forward_curve_at_both_bounds():
    plain = parse_design(_design())
    bounded = parse_design(_design(**{"clamp.diode.vf_min": 0.6}))
    corners = worst_corners(bounded)
    assert sorted(set(corners["diode_vf"].tolist())) == [0.6, 1.0]
    assert corners.size == 2 * worst_corners(plain).size
    report, before = evaluate(bounded), evaluate(plain)
    # The slowest release is at the lowest V_F; without vf_min it is at vf.
    assert _finding(report, "coil.release")["value"] == pytest.approx(_release_by_hand(0.6), rel=5e-3)
    assert _finding(before, "coil.release")["value"] == pytest.approx(_release_by_hand(1.0), rel=5e-3)
    assert _release_by_hand(0.6) > 1.05 * _release_by_hand(1.0)  # the bound matters here
    # The spike keeps the highest V_F: V_cc + V_F(I_0) on the curve through (1.0 V, 1 A).
    spike = _finding(report, "switch.breakdown")["value"]
    assert spike == pytest.approx(_finding(before, "switch.breakdown")["value"], rel=1e-12)
    i_s = 1.0 / math.expm1(1.0 / (N * V_T))
    assert spike == pytest.approx(12 + N * V_T * math.log1p(I_0 / i_s), rel=1e-3)
    # The nominal corner keeps the part's curve as given.
    assert report["transient"]["time_to_dropout"] == pytest.approx(before["transient"]["time_to_dropout"])


def test_a_release_judged_without_vf_min_says_the_diode_was_taken_as_given():
    limit = {"requirements": {"max_release_time": 0.01}}
    plain = _finding(evaluate(parse_design(_design(**limit))), "coil.release")
    assert "taken at V_F = 1 V at 1 A as given" in plain["message"]
    assert "lower V_F releases slower" in plain["message"]
    assert "clamp.diode.vf_min" in plain["message"]
    bounded = _finding(
        evaluate(parse_design(_design(**limit, **{"clamp.diode.vf_min": 0.6}))), "coil.release"
    )
    assert "as given" not in bounded["message"]
    assert bounded["corner"]["diode_vf"] == 0.6


def test_the_yield_draws_the_forward_voltage_uniformly():
    # Uniform on 0.6 … 1.0 V; the release is slower the lower V_F, so with a limit of t(0.8 V)
    # the samples past it are those below 0.8 V: (0.8 − 0.6)/(1.0 − 0.6) = 50 %.
    limit = _release_by_hand(0.8)
    doc = parse_design(_design(**{"clamp.diode.vf_min": 0.6, "requirements": {"max_release_time": limit}}))
    result = monte_carlo(doc, samples=40_000, seed=11)
    assert result["distributions"]["diode_vf"] == "uniform"
    release = next(r for r in result["rules"] if r["rule"] == "coil.release")
    assert release["past_rating"] == pytest.approx(0.5, abs=0.012)
    assert "forward curve" not in result["held"]
    plain = monte_carlo(parse_design(_design()), samples=100, seed=1)
    assert "the clamp diode's forward curve at vf (give clamp.diode.vf_min to draw it)" in plain["held"]


def test_the_critical_forward_voltage_by_hand_agrees_with_the_engine():
    # The V_F at which the release meets a 1.47 ms limit, by hand (brentq on the quad), against
    # the engine's fraction past it with V_F uniform on 0.6 … 1.0 V.
    limit = 1.47e-3
    critical = optimize.brentq(lambda v: _release_by_hand(v) - limit, 0.6, 1.0)
    doc = parse_design(_design(**{"clamp.diode.vf_min": 0.6, "requirements": {"max_release_time": limit}}))
    release = next(
        r for r in monte_carlo(doc, samples=40_000, seed=3)["rules"] if r["rule"] == "coil.release"
    )
    expected = min(1.0, max(0.0, (critical - 0.6) / 0.4))
    assert 0.05 < expected < 0.95  # a limit inside the range, so the test can fail
    assert release["past_rating"] == pytest.approx(expected, abs=0.015)


@pytest.mark.parametrize(
    ("changes", "field"),
    [
        ({"clamp.diode.vf_min": 1.2}, "vf_min must not be above vf"),
        ({"clamp.diode.vf_min": 0.06, "clamp.diode.rs": 0.1}, "vf_min is too low"),
    ],
)
def test_a_lowest_forward_voltage_out_of_place_is_refused_by_field(changes, field):
    with pytest.raises(DesignError) as caught:
        parse_design(_design(**changes))
    text = "\n".join(caught.value.problems)
    assert "clamp.diode" in text and field in text


@pytest.mark.skipif(shutil.which("ngspice") is None, reason="ngspice not installed (apt-get install ngspice)")
@pytest.mark.parametrize("kind", ["diode", "diode_resistor", "diode_zener"])
def test_slowest_release_at_the_lowest_forward_voltage_agrees_with_ngspice(tmp_path, kind):
    changes = {"clamp.diode.vf_min": 0.6}
    if kind == "diode_resistor":
        changes.update({"clamp.kind": "diode_resistor", "clamp.r": 100, "clamp.tolerance": 0})
    elif kind == "diode_zener":
        changes.update(
            {
                "clamp.kind": "diode_zener",
                "clamp.zener": {"vz": 12, "tolerance": 5, "rz": 10, "p_max": 1, "i_test": 0.005},
            }
        )
    doc = parse_design(_design(**changes))
    text = netlist(doc, "release")
    i_s_low = 1.0 / math.expm1(0.6 / (N * V_T))
    spice_is = float(re.search(r"\.model dclamp D\(IS=([-+0-9.eE]+)", text)[1])
    assert spice_is == pytest.approx(i_s_low, rel=1e-6)
    path = tmp_path / "release.cir"
    path.write_text(text, encoding="utf-8")
    done = subprocess.run(["ngspice", "-b", str(path)], capture_output=True, text=True, timeout=120)
    output = done.stdout + done.stderr
    assert done.returncode == 0, output
    spice_time = float(re.search(r"^\s*time_to_dropout\s*=\s*([-+0-9.eE]+)", output, re.MULTILINE)[1])
    engine_time = float(build_context(doc).turnoff.time_to_dropout.max())
    assert engine_time == pytest.approx(spice_time, rel=0.02)  # the engine's promise (DEVELOPERS.md)
