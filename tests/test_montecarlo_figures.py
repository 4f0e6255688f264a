"""Part figures between two bounds: drawn by the Monte Carlo yield, taken at their worst end by
the corners; and the coil's inductance tolerance, which the corners take at both ends.

Sources: the uniform distribution's CDF, P(X < x) = (x − a)/(b − a); the normal distribution's
(scipy.stats.norm); the hand-worked handbook design (tests/handbook.py: I_B = (5 − 0.9)/(100 +
1000) − 0.9/10 000 = 3.63727 mA, I_C = (12 − 0.2)/160 = 73.75 mA, I_0 = 12/160 = 75 mA); the
energy stored in an inductor, ½·L·I²; the time to drop-out t = ∫ L/(R·i + v_c(i)) di, linear in L
for a clamp whose voltage does not depend on L (a diode); ngspice (Debian) on the exported
netlist. Derating defaults: overdrive ≥ 2 (common practice, DOMAIN brief).
"""

from __future__ import annotations

import re
import shutil
import subprocess

import pytest
from scipy import stats

from app.engine import DesignError, evaluate, parse_design
from app.engine.corners import sampled_figures, worst_corners
from app.engine.montecarlo import monte_carlo
from app.engine.netlist import netlist
from app.engine.review import build_context

from .handbook import design

I_B = (5 - 0.9) / (100 + 1000) - 0.9 / 10_000  # 3.63727 mA
I_C = (12 - 0.2) / 160  # 73.75 mA


def _rule(result, rule_id):
    return next(r for r in result["rules"] if r["rule"] == rule_id)


def _finding(report, rule_id):
    return next(f for f in report["findings"] if f["rule"] == rule_id)


def test_gain_drawn_uniformly_between_its_bounds():
    # h_FE uniform on 10 … 40; saturated (overdrive ≥ 1) needs h_FE ≥ I_C/I_B = 20.276:
    # P(h_FE < 20.276) = (20.276 − 10)/30 = 34.25 % (uniform CDF). Past the derated limit
    # (overdrive < 2): h_FE < 40.55, every sample.
    doc = parse_design(design(**{"switch.hfe_min": 10, "switch.hfe_max": 40}))
    critical = I_C / I_B
    assert critical == pytest.approx(20.276, abs=1e-3)
    result = monte_carlo(doc, samples=40_000, seed=5)
    saturation = _rule(result, "drive.saturation")
    assert saturation["sampled"]
    assert saturation["past_rating"] == pytest.approx((critical - 10) / 30, abs=0.01)
    assert saturation["past_limit"] == 1.0
    assert result["distributions"]["hfe"] == "uniform"
    assert "h_FE" not in result["held"]
    # the corners keep h_FE at its minimum: a violation, as before
    assert _finding(evaluate(doc), "drive.saturation")["status"] == "violation"


# One Darlington array channel in the hand-worked circuit (numbers chosen so the critical gain
# falls inside the range): I_B = (5 − 1.6)/(100 + 1000 + 2700) − 1.6/10 000 = 0.73474 mA,
# I_C = (12 − 1.0)/160 = 68.75 mA.
DARLINGTON = {
    "kind": "darlington_array",
    "name": "test array channel",
    "channels": 7,
    "channels_on": 1,
    "r_input": 2700,
    "vce_sat": 1.0,
    "vbe_on": 1.6,
    "hfe_min": 50,
    "vceo": 50,
    "ic_max": 0.5,
    "p_max": 1.0,
    "rth_ja": 70,
    "tj_max": 150,
}


def test_a_darlington_pairs_gain_drawn_uniformly_between_its_bounds():
    # h_FE uniform on 50 … 150; saturated needs h_FE ≥ I_C/I_B = 93.57:
    # P(h_FE < 93.57) = (93.57 − 50)/100 = 43.57 % (uniform CDF).
    i_b = (5 - 1.6) / (100 + 1000 + 2700) - 1.6 / 10_000
    critical = (12 - 1.0) / 160 / i_b
    assert critical == pytest.approx(93.57, abs=0.01)
    doc = parse_design(design(switch={**DARLINGTON, "hfe_max": 150}))
    result = monte_carlo(doc, samples=40_000, seed=6)
    saturation = _rule(result, "drive.saturation")
    assert saturation["sampled"]
    assert saturation["past_rating"] == pytest.approx((critical - 50) / 100, abs=0.01)
    assert result["distributions"]["hfe"] == "uniform"
    assert "h_FE" not in result["held"]
    assert "V_I(on) at its maximum" in result["held"]
    # the corners keep the gain at its minimum: a violation, as before
    assert _finding(evaluate(doc), "drive.saturation")["status"] == "violation"
    plain = monte_carlo(parse_design(design(switch=DARLINGTON)), samples=500, seed=1)
    assert "h_FE at hfe_min (give switch.hfe_max to draw it)" in plain["held"]
    with pytest.raises(DesignError, match="hfe_max"):
        parse_design(design(switch={**DARLINGTON, "hfe_max": 40}))


def test_a_darlington_pairs_highest_gain_bounds_the_power_of_a_channel_not_saturated():
    # h_FE 30 … 40, never saturated (93.57 needed): I_C ≤ 40·I_B = 29.39 mA, below the
    # V_cc/(2R) = 37.5 mA vertex, so P = I·(V_cc − I·R) at 40·I_B; without hfe_max the bound
    # is V_cc²/(4R) = 225 mW. Both plus I_B·V_I(on) + I_B²·R_in in the input.
    i_b = (5 - 1.6) / (100 + 1000 + 2700) - 1.6 / 10_000
    i_high = 40 * i_b
    base = i_b * 1.6 + i_b**2 * 2700
    bounded = evaluate(parse_design(design(switch={**DARLINGTON, "hfe_min": 30, "hfe_max": 40})))
    plain = evaluate(parse_design(design(switch={**DARLINGTON, "hfe_min": 30})))
    assert _finding(bounded, "switch.power")["value"] == pytest.approx(
        i_high * (12 - i_high * 160) + base, rel=1e-9
    )
    assert _finding(plain, "switch.power")["value"] == pytest.approx(12**2 / (4 * 160) + base, rel=1e-9)


def test_a_figure_with_one_bound_is_held_and_said_so():
    doc = parse_design(design())
    assert [f.name for f in sampled_figures(doc)] == []
    result = monte_carlo(doc, samples=500, seed=1)
    assert "h_FE at hfe_min (give switch.hfe_max" in result["held"]
    assert "the inductance as given (give coil.inductance_tolerance" in result["held"]
    assert "upper bounds" in result["held"]
    assert "hfe" not in result["distributions"]


def test_saturation_voltage_drawn_moves_the_coil_voltage():
    # V_CE(sat) uniform on 0.1 … 0.5 V; the coil sees 12 V − V_CE(sat) against v_max 11.7 V:
    # past the rating where V_CE(sat) < 0.3 V: P = (0.3 − 0.1)/0.4 = 50 % (uniform CDF).
    doc = parse_design(
        design(**{"switch.vce_sat": 0.5, "switch.vce_sat_min": 0.1, "coil.v_max": 11.7, "coil.v_pickup": 8.4})
    )
    result = monte_carlo(doc, samples=40_000, seed=9)
    over = _rule(result, "coil.overvoltage")
    assert over["past_rating"] == pytest.approx(0.5, abs=0.01)
    # the corners take the lowest V_CE(sat) for the stress: 11.9 V > 11.7 V
    assert _finding(evaluate(doc), "coil.overvoltage")["status"] == "violation"


def test_pick_up_voltage_drawn_between_its_bounds():
    # The hot coil's must-operate is V_pu·R_hot/R_20 with the same copper factor k at every
    # sample (fixed supply, ambient and coil); k read off the corners' finding, where
    # v_pickup = 12 V: rating = 12·k. With v_pickup drawn uniform on 6 … 12 V, a sample fails
    # where V_pu·k > V_coil: P = (12 − V_coil/k)/6 (uniform CDF).
    doc = parse_design(design(**{"coil.v_pickup": 12, "coil.v_max": 15.6, "coil.v_pickup_min": 6}))
    corner = _finding(evaluate(doc), "coil.pickup")
    k = corner["rating"] / 12
    v_coil = corner["value"]
    assert v_coil == pytest.approx(11.8)  # V_cc − V_CE(sat): saturated
    assert corner["status"] == "violation"  # 12·k > 11.8 at the corners
    expected = (12 - v_coil / k) / 6
    assert 0.05 < expected < 0.95
    result = monte_carlo(doc, samples=40_000, seed=2)
    assert _rule(result, "coil.pickup")["past_rating"] == pytest.approx(expected, abs=0.01)
    assert result["distributions"]["v_pickup"] == "uniform"


def test_pick_up_minimum_is_checked_by_field():
    with pytest.raises(DesignError, match="v_pickup_min"):
        parse_design(design(**{"coil.v_pickup_min": 1.0}))  # below drop-out 1.2 V
    with pytest.raises(DesignError, match="v_pickup_min"):
        parse_design(design(**{"coil.v_pickup_min": 9.0}))  # above v_pickup 8.4 V


def test_mosfet_threshold_drawn_between_its_bounds():
    # The off gate fails where V_GS,off ≥ V_GS(th)(T_J) = V_GS(th) + tempco·(T_J − 25 °C); the
    # corners take V_GS(th),min (rating r₀ at the finding's corner). With V_GS(th) uniform on
    # min … max the rating moves by (V_GS(th) − min): P = (value − r₀)/(max − min), where the
    # junction temperature is the same at every sample (fixed supply, ambient, coil).
    from .test_rules_hand_worked_switches import NMOS, _doc

    parsed = parse_design(_doc(NMOS, **{"drive.low": 1.6, "drive.low_max": 1.6}))  # off level fixed
    fet = parsed.switch
    corner = _finding(evaluate(parsed), "gate.threshold_off")
    expected = (corner["value"] - corner["rating"]) / (fet.vgs_th_max - fet.vgs_th_min)
    assert 0.05 < expected < 0.95, expected
    result = monte_carlo(parsed, samples=40_000, seed=4)
    assert _rule(result, "gate.threshold_off")["past_rating"] == pytest.approx(expected, abs=0.01)


# ---------------------------------------------------------------- inductance tolerance


def test_inductance_tolerance_makes_corners_and_the_worst_takes_the_high_end():
    # 0.12 H ± 10 %: the energy ½·L·I_0² at the corners reaches ½·0.132·0.075² = 371.25 µJ
    # (337.5 µJ without the tolerance), and the slowest release is 1.1 × the release at 0.12 H.
    plain = parse_design(design())
    toleranced = parse_design(design(**{"coil.inductance_tolerance": 10}))
    corners = worst_corners(toleranced)
    assert sorted(set(corners["inductance"].tolist())) == pytest.approx([0.108, 0.132])
    assert corners.size == 2 * worst_corners(plain).size
    report, before = evaluate(toleranced), evaluate(plain)
    assert _finding(report, "clamp.energy")["value"] == pytest.approx(0.5 * 0.132 * 0.075**2, rel=1e-9)
    assert _finding(before, "clamp.energy")["value"] == pytest.approx(337.5e-6, rel=1e-9)
    assert _finding(report, "coil.release")["value"] == pytest.approx(
        1.1 * _finding(before, "coil.release")["value"], rel=1e-6
    )
    # the nominal turn-off keeps the nominal inductance
    assert report["transient"]["time_to_dropout"] == pytest.approx(before["transient"]["time_to_dropout"])
    assert "0.132" in _finding(report, "clamp.energy")["worked"].replace("132 mH", "0.132")


def test_alternatives_release_at_the_inductance_tolerance_too():
    # Every suggested clamp's voltage depends on the current alone, so its time to drop-out is
    # linear in L: with ±20 % the slowest corner is 1.2 × the slowest at 0.12 H, the nominal the same.
    def alternatives(doc):
        return {a["clamp"]: a for a in build_context(parse_design(doc)).extras["alternatives"]}

    plain, toleranced = alternatives(design()), alternatives(design(**{"coil.inductance_tolerance": 20}))
    assert plain.keys() == toleranced.keys() and len(plain) >= 2
    for name, alt in plain.items():
        assert toleranced[name]["time_to_dropout"] == pytest.approx(alt["time_to_dropout"], rel=1e-12)
        assert toleranced[name]["time_to_dropout_worst"] == pytest.approx(
            1.2 * alt["time_to_dropout_worst"], rel=1e-9
        )


def test_inductance_drawn_normal_in_the_yield():
    # L normal about 0.12 H, σ = 0.012/3 H, clipped at ±10 %; t ∝ L (diode clamp, everything
    # else fixed), so a release limit of t(0.12 H)·1.05 fails where L > 0.126 H:
    # P = 1 − Φ(0.006/0.004) = 1 − Φ(1.5) = 6.68 % (scipy.stats.norm).
    base = evaluate(parse_design(design()))
    t_nominal = _finding(base, "coil.release")["value"]
    doc = parse_design(
        design(
            **{
                "coil.inductance_tolerance": 10,
                "requirements": {"max_release_time": t_nominal * 1.05},
            }
        )
    )
    result = monte_carlo(doc, samples=40_000, seed=8)
    assert result["distributions"]["inductance"] == "normal"
    assert _rule(result, "coil.release")["past_rating"] == pytest.approx(1 - stats.norm.cdf(1.5), abs=0.008)


@pytest.mark.skipif(shutil.which("ngspice") is None, reason="ngspice not installed (apt-get install ngspice)")
@pytest.mark.parametrize(
    "clamp",
    [
        None,
        {
            "kind": "rc",
            "r": "330",
            "c": "100n",
            "tolerance": 5,
            "c_voltage_rating": 100,
            "power_rating": "0.5 W",
        },
    ],
)
def test_slowest_release_at_the_inductance_tolerance_agrees_with_ngspice(tmp_path, clamp):
    changes = {"coil.inductance_tolerance": 10}
    if clamp is not None:
        changes["clamp"] = clamp
    doc = parse_design(design(**changes))
    text = netlist(doc, "release")
    assert re.search(r"^LCOIL a b 0\.132 ", text, re.MULTILINE), text
    path = tmp_path / "release.cir"
    path.write_text(text, encoding="utf-8")
    done = subprocess.run(["ngspice", "-b", str(path)], capture_output=True, text=True, timeout=120)
    output = done.stdout + done.stderr
    assert done.returncode == 0, output
    spice_time = float(re.search(r"^\s*time_to_dropout\s*=\s*([-+0-9.eE]+)", output, re.MULTILINE)[1])
    ctx = build_context(doc)
    engine_time = float(ctx.turnoff.time_to_dropout.max())
    assert engine_time == pytest.approx(spice_time, rel=0.02)  # the engine's promise (DEVELOPERS.md)
