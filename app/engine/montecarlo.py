"""Monte Carlo yield: how often a design built from toleranced parts fails, rule by rule.

Samples stand where the worst-case corners stand: every quantity the corners vary (the supply,
the ambient, the coil's resistance, the drive's resistors and levels, the clamp's toleranced
values) is drawn once per sample, and the rules judge every sample at once, as they judge the
corners. Distributions, unless the design's ``monte_carlo.distributions`` names another per
quantity:

- supply, ambient and the drive's voltage levels: uniform over their range (an operating range
  or a datasheet bound says nothing about where inside it a board sits);
- part tolerances: normal about the middle of the range with σ = tolerance/3, clipped at the
  tolerance (common practice: a ±5 % part is taken as a 3σ bound).

- the part figures the corners take at their worst end but a design gives between two bounds
  (``corners.sampled_figures``: h_FE from hfe_min to hfe_max (a transistor's or a Darlington
  pair's), V_CE(sat) and V_BE(sat) from
  their minimum to their maximum, a MOSFET's V_GS(th), the coil's pick-up voltage from
  v_pickup_min to v_pickup), and the clamp diode's forward voltage (a corner factor,
  ``diode_vf``, from clamp.diode.vf_min to vf): uniform between the bounds (a datasheet's minimum and maximum say
  nothing about where a part sits between them); one value per sample, the same part in every
  check, so the gain that saturates the switch is the gain that sets its current.

A figure the design gives as one number (with no tolerance or second bound) is not drawn: each
check takes it as at the corners, at its own worst case (``held`` in the result names them, and
what to give to have it drawn). Where some are held, the fractions past a rating are upper
bounds; the result says so.

A rule's fraction past its rating and past its derated limit carries a 95 % confidence interval
by the Wilson score method (Wilson, J. Am. Stat. Assoc. 22 (1927) 209). The overall yield is the
fraction of samples no rule puts past its rating (and, separately, past its derated limit).
Seeded: the same design, sample count and seed give the same figures.
"""

from __future__ import annotations

import math

import numpy as np

from .corners import Corners, factors, held_figures, sampled_figures
from .design import Design
from .profile import DEFAULT_PROFILE, Profile
from .rules import RULES

# The two-sided 95 % point of the standard normal distribution, Φ⁻¹(0.975).
Z95 = 1.959963984540054
# Drawn uniformly unless the design says otherwise: operating ranges and datasheet bounds.
UNIFORM = frozenset(
    {
        "supply",
        "ambient",
        "drive_on",
        "drive_off",
        "v_source",
        "hfe",
        "vce_sat",
        "vbe_sat",
        "vgs_th",
        "v_pickup",
        "diode_vf",
    }
)
CHUNK = 20_000  # samples judged at once: bounds the turn-off's (samples × grid) arrays
MAX_SAMPLES = 1_000_000


def wilson(k: int, n: int, z: float = Z95) -> tuple[float, float]:
    """The Wilson score interval of a proportion k/n."""
    if n == 0:
        return 0.0, 1.0
    p = k / n
    denominator = 1 + z * z / n
    centre = (p + z * z / (2 * n)) / denominator
    half = z * math.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / denominator
    low = 0.0 if k == 0 else max(0.0, centre - half)  # exact ends, not a rounding residue
    high = 1.0 if k == n else min(1.0, centre + half)
    return low, high


def distribution_of(design: Design, name: str) -> str:
    chosen = design.monte_carlo.distributions.get(name) if design.monte_carlo is not None else None
    if chosen is not None:
        return chosen
    return "uniform" if name in UNIFORM else "normal"


def draw(design: Design, samples: int, seed: int) -> Corners:
    """``samples`` draws of every varying quantity, as a set of corners."""
    rng = np.random.default_rng(seed)
    all_factors = factors(design) + sampled_figures(design)
    values = {}
    for factor in all_factors:  # in the corners' order, so a seed always gives the same draws
        low, high = factor.low, factor.high
        if low == high:
            values[factor.name] = np.full(samples, low, dtype=float)
        elif distribution_of(design, factor.name) == "uniform":
            values[factor.name] = rng.uniform(low, high, samples)
        else:
            middle, sigma = (low + high) / 2, (high - low) / 6
            values[factor.name] = np.clip(rng.normal(middle, sigma, samples), low, high)
    return Corners(tuple(all_factors), values, samples)


def _judge_samples(design: Design, profile: Profile, corners: Corners) -> dict[str, tuple]:
    """Per rule: (past rating, past derated limit) per sample, and the rules that judged no
    sample (a status the same at every sample, e.g. an unclamped spike)."""
    from .review import context_at

    ctx = context_at(design, profile, corners)
    ctx.extras["per_corner"] = collected = {}
    out = {}
    for registered in RULES.values():
        applies = getattr(registered, "applies_to", None)
        if applies is not None and not applies(design):
            continue
        finding = registered.check(ctx)
        if finding is None or finding.status == "note":
            collected.pop(registered.id, None)
            continue
        if registered.id in collected:
            out[registered.id] = (*collected.pop(registered.id), finding.title, True)
        else:  # judged without corners: the same at every sample
            rating = np.full(corners.size, finding.status == "violation")
            limit = np.full(corners.size, finding.status in ("violation", "marginal"))
            out[registered.id] = (rating, limit, finding.title, False)
    return out


def monte_carlo(
    design: Design, profile: Profile = DEFAULT_PROFILE, samples: int = 10_000, seed: int = 1
) -> dict:
    """The yield of ``samples`` seeded draws: per rule the fraction past its rating and past its
    derated limit (each with its 95 % Wilson interval), and the overall yield."""
    if not 1 <= samples <= MAX_SAMPLES:
        raise ValueError(f"samples: from 1 to {MAX_SAMPLES}")
    profile = profile.with_limits(design.limits)
    corners = draw(design, samples, seed)
    per_rule: dict[str, list] = {}
    any_rating = np.zeros(samples, dtype=bool)
    any_limit = np.zeros(samples, dtype=bool)
    for start in range(0, samples, CHUNK):
        stop = min(samples, start + CHUNK)
        chunk = Corners(corners.factors, {k: v[start:stop] for k, v in corners.values.items()}, stop - start)
        for rule_id, (rating, limit, title, sampled) in _judge_samples(design, profile, chunk).items():
            entry = per_rule.setdefault(rule_id, [0, 0, title, sampled])
            entry[0] += int(np.count_nonzero(rating))
            entry[1] += int(np.count_nonzero(limit))
            any_rating[start:stop] |= rating
            any_limit[start:stop] |= limit
    rules = []
    for rule_id, (k_rating, k_limit, title, sampled) in per_rule.items():
        rules.append(
            {
                "rule": rule_id,
                "title": title,
                "past_rating": k_rating / samples,
                "past_rating_ci": list(wilson(k_rating, samples)),
                "past_limit": k_limit / samples,
                "past_limit_ci": list(wilson(k_limit, samples)),
                "sampled": sampled,
            }
        )
    rules.sort(key=lambda r: (-r["past_rating"], -r["past_limit"]))
    good = samples - int(np.count_nonzero(any_rating))
    within = samples - int(np.count_nonzero(any_limit))
    return {
        "samples": samples,
        "seed": seed,
        "yield": good / samples,
        "yield_ci": list(wilson(good, samples)),
        "within_limits": within / samples,
        "within_limits_ci": list(wilson(within, samples)),
        "distributions": {
            f.name: distribution_of(design, f.name) for f in corners.factors if f.low != f.high
        },
        "rules": rules,
        "held": held(design),
    }


def held(design: Design) -> str:
    """What the samples do not draw, each taken at its own worst case as at the corners."""
    out = held_figures(design)
    if design.switch.kind == "darlington_array":
        out.append("the channel's input voltage V_I(on) at its maximum (one number in the design)")
    if design.switch.kind == "nmos":
        out.append("R_DS(on) at its maximum (the design gives no typical value)")
    if design.coil.inductance_tolerance == 0:
        out.append("the inductance as given (give coil.inductance_tolerance to draw it)")
    diode = getattr(design.clamp, "diode", None)
    if diode is not None and diode.vf_min is None:
        out.append(
            "the array's clamp diode's forward curve at its V_F as given"
            if design.clamp.kind == "array_diode"
            else "the clamp diode's forward curve at vf (give clamp.diode.vf_min to draw it)"
        )
    out.append("the coil's self-heating, taken at the highest supply")
    return (
        "not drawn, each taken at its own worst case as at the corners: "
        + "; ".join(out)
        + ". So the fractions past a rating are upper bounds"
    )


def yield_lines(result: dict) -> list[str]:
    """The result as lines for a terminal."""
    lo, hi = result["yield_ci"]
    lines = [
        f"yield over {result['samples']} samples (seed {result['seed']}): {result['yield']:.2%} within ratings "
        f"(95 % CI {lo:.2%}…{hi:.2%}), {result['within_limits']:.2%} within derated limits",
        "distributions: " + ", ".join(f"{k} {v}" for k, v in result["distributions"].items()),
    ]
    for r in result["rules"]:
        if r["past_limit"] == 0:
            continue
        a, b = r["past_rating_ci"]
        c, d = r["past_limit_ci"]
        lines.append(
            f"  {r['rule']}: past rating {r['past_rating']:.2%} ({a:.2%}…{b:.2%}), past derated limit "
            f"{r['past_limit']:.2%} ({c:.2%}…{d:.2%})"
            + ("" if r["sampled"] else " — the same at every sample")
        )
    lines.append(f"  ({result['held']})")
    return lines
