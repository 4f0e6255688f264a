"""Monte Carlo yield: the Wilson interval against scipy, the stated distributions against
scipy's, every sample judged as the engine judges that one corner, and seeded figures."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy import integrate, stats

from app import cli
from app.engine import evaluate, parse_design
from app.engine.corners import Corners
from app.engine.montecarlo import draw, monte_carlo, wilson_interval
from app.engine.profile import DEFAULT_PROFILE
from app.engine.review import context_at
from app.engine.rules import RULES

from .handbook import design

# A design with tolerances and ranges everywhere, whose coil pick-up fails at some draws only.
TOLERANT = design(
    **{
        "supply.tolerance": 10,
        "ambient.min": -20,
        "ambient.max": 60,
        "coil.tolerance": 10,
        "base.tolerance": 5,
        "drive.high_min": 4.5,
        "coil.v_pickup": 9.0,
    }
)


@pytest.mark.parametrize(("count", "n"), [(0, 10), (3, 10), (10, 10), (17, 2000), (1999, 2000), (1, 1)])
def test_the_wilson_interval_is_scipys(count, n):
    # scipy.stats.binomtest(...).proportion_ci(method="wilson"): the Wilson score interval (1927)
    expected = stats.binomtest(count, n).proportion_ci(confidence_level=0.95, method="wilson")
    low, high = wilson_interval(count, n)
    assert low == pytest.approx(expected.low, abs=1e-12)
    assert high == pytest.approx(expected.high, abs=1e-12)


def test_tolerances_are_clipped_normals_and_ranges_uniform():
    model = parse_design(TOLERANT)
    corners = draw(model, 200_000, seed=3)
    # coil resistance 160 Ω ± 10 %: normal, σ = 16/3 Ω, clipped at 144 and 176 Ω
    r = corners["r_coil"]
    sigma = 16 / 3
    assert r.min() >= 144 and r.max() <= 176
    # share clipped at either end: 2·(1 − Φ(3)) (scipy.stats.norm)
    clipped = np.mean((r == 144) | (r == 176))
    assert clipped == pytest.approx(2 * stats.norm.sf(3), abs=4 * math.sqrt(0.0027 / 200_000))
    # standard deviation of a normal clipped at ±3σ: σ·√(∫_{-3}^{3} z²φ(z) dz + 9·2·(1 − Φ(3)))
    inside, _ = integrate.quad(lambda z: z * z * stats.norm.pdf(z), -3, 3)
    expected_std = sigma * math.sqrt(inside + 9 * 2 * stats.norm.sf(3))
    assert r.std() == pytest.approx(expected_std, rel=0.01)
    assert r.mean() == pytest.approx(160, abs=4 * sigma / math.sqrt(200_000))
    # supply 12 V ± 10 %: uniform over 10.8 … 13.2 V (Kolmogorov–Smirnov against scipy's uniform)
    supply = corners["supply"]
    assert stats.kstest(supply, stats.uniform(loc=10.8, scale=2.4).cdf).pvalue > 1e-3
    assert stats.kstest(corners["ambient"], stats.uniform(loc=-20, scale=80).cdf).pvalue > 1e-3


def test_every_sample_is_judged_as_the_engine_judges_that_one_corner():
    model = parse_design(TOLERANT)
    samples, seed = 60, 5
    result = monte_carlo(model, samples=samples, seed=seed)
    corners = draw(model, samples, seed)
    profile = DEFAULT_PROFILE.with_limits(model.limits)
    counts: dict[str, list[int]] = {}
    any_limit = 0
    for i in range(samples):
        one = Corners(corners.factors, {k: v[i : i + 1] for k, v in corners.values.items()}, 1)
        ctx = context_at(model, profile, one)
        past = False
        for registered in RULES.values():
            finding = registered.check(ctx)
            if finding is None or finding.status == "note":
                continue
            count = counts.setdefault(registered.id, [0, 0])  # [past rating, past limit]
            count[0] += finding.status == "violation"
            count[1] += finding.status in ("violation", "marginal")
            past |= finding.status in ("violation", "marginal")
        any_limit += past
    got = {r["rule"]: [r["past_rating"]["count"], r["past_limit"]["count"]] for r in result["rules"]}
    assert got == counts
    assert result["yield"]["within_limits"]["count"] == samples - any_limit
    assert 0 < any_limit < samples  # some draws fail, some pass: the per-sample path was used


def test_a_rule_within_its_limit_at_the_worst_corner_is_within_it_at_every_draw():
    model = parse_design(TOLERANT)
    worst = {f["rule"]: f["status"] for f in evaluate(model)["findings"]}
    result = monte_carlo(model, samples=500, seed=2)
    for r in result["rules"]:
        if worst[r["rule"]] == "ok":
            assert r["past_limit"]["count"] == 0
        if worst[r["rule"]] != "violation":
            assert r["past_rating"]["count"] == 0


def test_the_same_seed_gives_the_same_figures_and_the_cli_prints_them(tmp_path, capsys):
    model = parse_design(TOLERANT)
    assert monte_carlo(model, samples=300, seed=9) == monte_carlo(model, samples=300, seed=9)
    assert monte_carlo(model, samples=300, seed=9) != monte_carlo(model, samples=300, seed=10)
    path = tmp_path / "d.json"
    path.write_text(json.dumps(TOLERANT), encoding="utf-8")
    cli.main(["check", str(path), "--samples", "300", "--seed", "9", "--format", "json"])
    report = json.loads(capsys.readouterr().out)
    assert report["monte_carlo"] == json.loads(json.dumps(monte_carlo(model, samples=300, seed=9)))
    cli.main(["check", str(path), "--samples", "300", "--seed", "9"])
    assert "yield over 300 samples (seed 9" in capsys.readouterr().out
