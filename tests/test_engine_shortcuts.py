"""The engine's shortcuts change no figure: the turn-off computed once per distinct set of its
inputs, and the alternative clamps evaluated at the corners with distinct turn-off inputs only,
give every report exactly (bit for bit, compared as JSON text) what computing every corner
gives. The reference is the same engine with the shortcuts switched off."""

from __future__ import annotations

import json

import numpy as np
import pytest

from app.engine import evaluate, parse_design, review
from app.engine.corners import worst_corners
from app.engine.profile import PRESETS
from tests.designgen import CLAMP_KINDS, random_designs


def _every_corner(columns):
    n = len(columns[0])
    return np.arange(n), np.arange(n)


@pytest.fixture
def without_shortcuts():
    """evaluate() with every corner of the design and of each alternative computed on its own."""

    def run(design, profile):
        with pytest.MonkeyPatch.context() as mp:
            mp.setattr(review, "distinct_rows", _every_corner)
            mp.setattr(review, "corners_at_rows", lambda other, base, rows: worst_corners(other))
            return evaluate(design, profile)

    return run


@pytest.mark.parametrize("kind", CLAMP_KINDS)
def test_reports_are_the_same_as_computing_every_corner(kind, without_shortcuts):
    for number, document in enumerate(random_designs(31, 12, (kind,))):
        design = parse_design(document)
        profile = PRESETS["general"] if number % 2 else PRESETS["high reliability"]
        fast = json.dumps(evaluate(design, profile), sort_keys=True)
        slow = json.dumps(without_shortcuts(design, profile), sort_keys=True)
        assert fast == slow, f"{kind} design {number} differs"


def test_the_turn_off_is_shared_between_corners_with_the_same_inputs():
    # A logic drive with a pull-down: the drive's four factors (R_b, R_be, high, low) do not reach
    # the turn-off, so 2**4 corners share each turn-off.
    document = next(
        d
        for d in random_designs(5, 40, ("diode",))
        if d["drive"]["kind"] == "logic" and "r_pulldown" in d["base"]
    )
    design = parse_design(document)
    ctx = review.build_context(design, alternatives=False)
    first, inverse = review.distinct_rows([ctx.op.vcc, ctx.op.r_coil, ctx.op.coil_current])
    assert ctx.corners.size == 16 * first.size
    assert np.array_equal(ctx.op.vcc[first][inverse], ctx.op.vcc)
