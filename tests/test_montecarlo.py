"""Monte Carlo yield against closed forms and a reference library.

Sources: the Wilson score interval (Wilson 1927) against scipy.stats.binomtest(...).proportion_ci
(method "wilson"); fractions against the uniform and normal distributions' closed-form CDFs
(scipy.stats.norm). Derating defaults (80 % current, common practice, DOMAIN brief).
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest
from scipy import stats

from app.engine import DesignError, evaluate, parse_design
from app.engine.montecarlo import monte_carlo, wilson

from .handbook import design


def _rule(result, rule_id):
    return next(r for r in result["rules"] if r["rule"] == rule_id)


@pytest.mark.parametrize("k,n", [(0, 100), (3, 100), (50, 100), (100, 100), (2718, 100_000)])
def test_wilson_interval_matches_scipy(k, n):
    expected = stats.binomtest(k, n).proportion_ci(confidence_level=0.95, method="wilson")
    assert wilson(k, n) == pytest.approx((expected.low, expected.high), abs=1e-12)


def test_uniform_supply_past_the_coil_rating_by_hand():
    # supply 12 V ± 10 %: uniform over 10.8 … 13.2 V; the coil sees V_cc − V_CE(sat),min = V_cc
    # (0 V, no vce_sat_min) against v_max 12.6 V: P(V_cc > 12.6) = 0.6/2.4 = 25 % (uniform CDF)
    doc = design(**{"supply.tolerance": 10, "coil.v_max": 12.6})
    result = monte_carlo(parse_design(doc), samples=40_000, seed=7)
    over = _rule(result, "coil.overvoltage")
    assert over["sampled"]
    assert over["past_rating"] == pytest.approx(0.25, abs=0.01)  # σ of the estimate ≈ 0.22 %
    lo, hi = over["past_rating_ci"]
    assert lo < over["past_rating"] < hi and hi - lo < 0.01
    assert result["distributions"]["supply"] == "uniform"


def test_normal_coil_tolerance_past_the_current_limit_by_hand():
    # coil 160 Ω ± 10 %: normal about 160 Ω, σ = 16/3 = 5.333 Ω, clipped at 144 … 176 Ω;
    # I_C = 12 V/R (V_CE(sat),min = 0, 20 °C = the coil's r_at) against 80 % of i_c,max
    # (common practice); i_c,max = 12/(0.8·155) puts the limit at R = 155 Ω:
    # P(R < 155) = Φ((155 − 160)/5.333) = Φ(−0.9375) = 17.42 % (scipy.stats.norm)
    ic_max = 12 / (0.8 * 155)
    doc = design(**{"coil.tolerance": 10, "switch.ic_max": ic_max})
    result = monte_carlo(parse_design(doc), samples=40_000, seed=3)
    current = _rule(result, "switch.current")
    expected = stats.norm.cdf((155 - 160) / (16 / 3))
    assert expected == pytest.approx(0.1742, abs=1e-4)
    assert current["past_limit"] == pytest.approx(expected, abs=0.01)
    assert current["past_rating"] == 0  # 12/R > i_c,max needs R < 124 Ω, outside the clip
    assert result["distributions"]["r_coil"] == "normal"


def test_a_design_can_draw_a_quantity_another_way():
    # the supply drawn normal: N(12, 0.4) clipped at ±1.2 V; P(V_cc > 12.6) = 1 − Φ(1.5) = 6.68 %
    doc = design(
        **{"supply.tolerance": 10, "coil.v_max": 12.6}, monte_carlo={"distributions": {"supply": "normal"}}
    )
    result = monte_carlo(parse_design(doc), samples=40_000, seed=7)
    assert _rule(result, "coil.overvoltage")["past_rating"] == pytest.approx(
        1 - stats.norm.cdf(1.5), abs=0.008
    )
    with pytest.raises(DesignError, match="monte_carlo.distributions: r_wire is not a quantity"):
        parse_design(design(monte_carlo={"distributions": {"r_wire": "normal"}}))
    with pytest.raises(DesignError, match="monte_carlo"):
        parse_design(design(monte_carlo={"distributions": {"supply": "lognormal"}}))


def test_seeded_and_the_overall_yield_bounds_every_rule():
    doc = parse_design(design(**{"supply.tolerance": 10, "coil.tolerance": 10, "coil.v_max": 12.6}))
    a, b = monte_carlo(doc, samples=5_000, seed=11), monte_carlo(doc, samples=5_000, seed=11)
    assert a == b
    assert monte_carlo(doc, samples=5_000, seed=12) != a
    for r in a["rules"]:
        assert a["yield"] <= 1 - r["past_rating"] + 1e-12
        assert a["within_limits"] <= 1 - r["past_limit"] + 1e-12
    # the chunked judgement gives what one pass gives (CHUNK is 20 000 samples)
    big = monte_carlo(doc, samples=45_000, seed=5)
    assert 0 < big["yield"] < 1


def test_a_status_the_same_at_every_sample_is_said_so():
    result = monte_carlo(parse_design(design(clamp={"kind": "none"})), samples=200, seed=1)
    spike = _rule(result, "switch.breakdown")
    assert spike["past_rating"] == 1 and not spike["sampled"]
    assert result["yield"] == 0


def test_the_report_and_the_cli_carry_the_yield():
    doc = design(**{"supply.tolerance": 10, "coil.v_max": 12.6})
    report = evaluate(parse_design(doc), samples=1_000, seed=1)  # the CLI's default seed
    assert report["yield"]["samples"] == 1_000
    run = subprocess.run(
        [sys.executable, "-m", "app.cli", "check", "-", "--samples", "1000", "--format", "json"],
        input=json.dumps(doc),
        capture_output=True,
        text=True,
    )
    assert json.loads(run.stdout)["yield"] == report["yield"]
    bad = subprocess.run(
        [sys.executable, "-m", "app.cli", "check", "-", "--samples", "0"],
        input=json.dumps(doc),
        capture_output=True,
        text=True,
    )
    assert bad.returncode == 2 and "--samples" in bad.stderr and "from 1 to" in bad.stderr
