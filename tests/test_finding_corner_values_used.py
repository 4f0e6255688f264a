"""A finding's worst corner records the coil as the rule used it, not only its value at the
reference temperature, and every judged finding says which side of its limit it must stay.

Copper α = 0.00393 /K at 20 °C: IEC 60028 (standard annealed copper)."""

from __future__ import annotations

import math

import pytest

from app.engine import evaluate, parse_design

from .handbook import design

ALPHA = 0.00393  # IEC 60028


def _findings(doc):
    return {f["rule"]: f for f in evaluate(parse_design(doc))["findings"]}


def test_the_worst_current_corner_records_the_cold_coil_resistance_used():
    # Coil 160 Ω ±10 % at 20 °C, ambient −20…60 °C. The highest switch current is at the
    # low-tolerance coil (144 Ω at 20 °C) at −20 °C: 144·(1 + 0.00393·(−20 − 20)) = 144·0.8428
    # = 121.363 Ω. The corner keeps r_coil = 144 (the 20 °C value) and adds the 121.363 Ω used.
    f = _findings(
        design(**{"supply.tolerance": 10, "coil.tolerance": 10, "ambient.min": -20, "ambient.max": 60})
    )
    corner = f["switch.current"]["corner"]
    assert corner["r_coil"] == pytest.approx(144)
    assert corner["coil_temp"] == -20
    assert corner["r_coil_used"] == pytest.approx(144 * (1 + ALPHA * (-40)), rel=1e-5)
    assert corner["r_coil_used"] == pytest.approx(121.363, rel=1e-5)


def test_pick_up_records_the_hot_coil_it_was_judged_with():
    # R_th = 50 K/W, hot start at V_cc,max − V_CE(sat),min = 12 − 0 = 12 V (the coil's heating is
    # a stress: the lowest V_CE(sat) heats it most; hand-worked in test_rules_hand_worked):
    # R = (160 + √(160² + 4·160·0.00393·50·12²))/2 = 184.534 Ω, at 20 + 12²/184.534·50 = 59.02 °C.
    r_hot = (160 + math.sqrt(160**2 + 4 * 160 * ALPHA * 50 * 12.0**2)) / 2
    t_hot = 20 + 12.0**2 / r_hot * 50
    assert r_hot == pytest.approx(184.534, rel=1e-5)
    corner = _findings(design(**{"coil.rth": 50, "coil.v_pickup": 10}))["coil.pickup"]["corner"]
    assert corner["r_coil_used"] == pytest.approx(r_hot, rel=1e-5)
    assert corner["coil_temp"] == pytest.approx(t_hot, rel=1e-5)
    assert corner["r_coil"] == 160


def test_stresses_are_upper_bounds_and_margins_lower_bounds():
    # A stress must stay at or below its derated limit (current, voltage, power, T_J); a margin
    # at or above it (overdrive, pick-up voltage): common practice, as the profile states them.
    f = _findings(design())
    for rule in ("switch.current", "switch.breakdown", "switch.power", "switch.junction_temp"):
        assert f[rule]["bound"] == "upper"
        assert f[rule]["limit"] <= f[rule]["rating"]
    for rule in ("drive.saturation", "coil.pickup"):
        assert f[rule]["bound"] == "lower"
        assert f[rule]["limit"] >= f[rule]["rating"]
    assert all(x["bound"] is None for x in f.values() if x["status"] == "note")
