"""Monte Carlo yield: how often each rule is past its rating and past its derated limit.

Every quantity that makes a worst-case corner is drawn instead of taken at its extremes
(seeded, so the same seed gives the same figures):
- part tolerances (coil resistance, base resistors, divider resistor and sensor, divider source,
  zener voltage, clamp R and C): normal about the nominal with σ = tolerance/3, clipped at the
  tolerance (common practice);
- ranges (supply, ambient, the logic levels between their limits, a TVS's breakdown between
  V_BR(min) and V_BR(max)): uniform over the range.
Each sample is then judged exactly as a worst-case corner is (the same operating point, turn-off
and rules; stresses with the lowest V_CE(sat), margins with the highest; values the design gives
as single numbers are held). All samples are computed at once as arrays; a rule whose worst
sample is within its limit is within it at every sample, and only a rule with a sample past its
limit is judged sample by sample.

Fractions carry a 95 % Wilson score interval (E. B. Wilson, "Probable inference, the law of
succession, and statistical inference", J. Am. Stat. Assoc. 22 (1927) 209–212), which stays
inside [0, 1] and is sound at 0 and N failures.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from .corners import Corners, factors
from .design import Design
from .profile import DEFAULT_PROFILE, Profile
from .review import context_at
from .rules import RULES, Context

# Quantities given as a range rather than a tolerance: drawn uniformly over it.
UNIFORM = frozenset({"supply", "ambient", "drive_on", "drive_off", "tvs_breakdown"})
Z_95 = 1.959963984540054  # the two-sided 95 % point of the standard normal distribution


def wilson_interval(count: int, n: int, z: float = Z_95) -> tuple[float, float]:
    """The Wilson score interval for a proportion count/n:
    (p + z²/2n ± z·√(p(1 − p)/n + z²/4n²)) / (1 + z²/n)."""
    if n <= 0:
        return 0.0, 1.0
    p = count / n
    denominator = 1 + z * z / n
    centre = (p + z * z / (2 * n)) / denominator
    half = z * math.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / denominator
    return max(0.0, centre - half), min(1.0, centre + half)


def distributions(design: Design) -> list[dict]:
    """How each varying quantity of the design is drawn."""
    out = []
    for f in factors(design):
        if f.low == f.high:
            out.append({"quantity": f.name, "unit": f.unit, "distribution": "fixed", "value": f.low})
        elif f.name in UNIFORM:
            out.append(
                {"quantity": f.name, "unit": f.unit, "distribution": "uniform", "low": f.low, "high": f.high}
            )
        else:
            out.append(
                {
                    "quantity": f.name,
                    "unit": f.unit,
                    "distribution": "normal, σ = tolerance/3, clipped at the tolerance",
                    "mean": (f.low + f.high) / 2,
                    "sigma": (f.high - f.low) / 6,
                    "low": f.low,
                    "high": f.high,
                }
            )
    return out


def draw(design: Design, samples: int, seed: int) -> Corners:
    """``samples`` draws of every varying quantity, as a set of corners."""
    rng = np.random.default_rng(seed)
    all_factors = factors(design)
    values = {}
    for f in all_factors:
        if f.low == f.high:
            values[f.name] = np.full(samples, f.low, dtype=float)
        elif f.name in UNIFORM:
            values[f.name] = rng.uniform(f.low, f.high, samples)
        else:
            mean, sigma = (f.low + f.high) / 2, (f.high - f.low) / 6
            values[f.name] = np.clip(rng.normal(mean, sigma, samples), f.low, f.high)
    return Corners(tuple(all_factors), values, samples)


def _slice(value, index: int, size: int):
    """One sample of a per-sample array (anything else as it is)."""
    if isinstance(value, np.ndarray) and value.ndim >= 1 and value.shape[0] == size:
        return value[index : index + 1]
    if isinstance(value, dict):
        return {k: _slice(v, index, size) for k, v in value.items()}
    return value


def _sliced(obj, index: int, size: int):
    changes = {f.name: _slice(getattr(obj, f.name), index, size) for f in dataclasses.fields(obj)}
    return dataclasses.replace(obj, **changes)


def sample_context(ctx: Context, index: int) -> Context:
    """The context of one sample: every per-sample array cut down to that sample."""
    size = ctx.corners.size
    corners = Corners(
        ctx.corners.factors, {k: v[index : index + 1] for k, v in ctx.corners.values.items()}, 1
    )
    return Context(
        ctx.design,
        ctx.profile,
        corners,
        _sliced(ctx.op, index, size),
        ctx.nominal,
        _sliced(ctx.path, index, size),
        ctx.nominal_path,
        _sliced(ctx.turnoff, index, size),
        ctx.turnoff_nominal,
        dict(ctx.extras),
    )


def _share(count: int, n: int) -> dict:
    low, high = wilson_interval(count, n)
    return {"count": count, "fraction": count / n, "low": low, "high": high}


def monte_carlo(design: Design, profile: Profile = DEFAULT_PROFILE, *, samples: int, seed: int = 1) -> dict:
    """Per rule, the share of samples past its rating and past its derated limit (95 % Wilson
    intervals), and the overall yield: the share with every rule within its derated limit
    (and within its rating)."""
    if samples < 1:
        raise ValueError("samples must be at least 1")
    ctx = context_at(design, profile.with_limits(design.limits), draw(design, samples, seed))
    past_rating = np.zeros(samples, dtype=bool)
    past_limit = np.zeros(samples, dtype=bool)
    per_rule: dict[str, tuple[np.ndarray, np.ndarray]] = {}
    to_split = []
    for registered in RULES.values():
        finding = registered.check(ctx)
        if finding is None or finding.status == "note":
            continue
        rating = np.zeros(samples, dtype=bool)
        limit = np.zeros(samples, dtype=bool)
        per_rule[registered.id] = (rating, limit)
        if finding.status in ("violation", "marginal"):  # the worst sample is past: judge each
            to_split.append(registered)
    if to_split:
        for index in range(samples):
            one = sample_context(ctx, index)
            for registered in to_split:
                finding = registered.check(one)
                if finding is None:
                    continue
                rating, limit = per_rule[registered.id]
                rating[index] = finding.status == "violation"
                limit[index] = finding.status in ("violation", "marginal")
    rules = []
    for rule_id, (rating, limit) in per_rule.items():
        past_rating |= rating
        past_limit |= limit
        rules.append(
            {
                "rule": rule_id,
                "past_rating": _share(int(rating.sum()), samples),
                "past_limit": _share(int(limit.sum()), samples),
            }
        )
    return {
        "samples": samples,
        "seed": seed,
        "confidence": "95 % Wilson score interval",
        "distributions": distributions(design),
        "rules": rules,
        "yield": {
            "within_limits": _share(int((~past_limit).sum()), samples),
            "within_ratings": _share(int((~past_rating).sum()), samples),
        },
    }
