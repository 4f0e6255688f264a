"""How far a finding sits inside or past its derated limit: the reading a reviewer checks first.

Pure: a finding dict (clampdown-report/1) in, numbers out. Used by the web pages and by compare.
"""

from __future__ import annotations

import math

UPPER, LOWER = "upper", "lower"
SIGNS = {UPPER: "≤", LOWER: "≥"}


def bound_of(finding: dict) -> str | None:
    """ "upper" when the value must stay at or below its limit (a stress), "lower" when at or above
    it (a margin), None for notes and findings without a limit. Reports written before the
    engine recorded it are read from the limit's side of the rating (a derated stress limit sits
    below its rating, a margin's limit above); equal numbers cannot tell, so None."""
    if finding.get("status") == "note" or finding.get("limit") is None:
        return None
    if finding.get("bound") in (UPPER, LOWER):
        return finding["bound"]
    limit, rating = finding.get("limit"), finding.get("rating")
    if rating is None or limit == rating:
        return None
    return UPPER if limit < rating else LOWER


def margin(finding: dict) -> float | None:
    """The fraction of the limit by which the value is inside it (positive) or past it
    (negative): (limit − value)/limit for an upper bound, (value − limit)/limit for a lower one.
    None when there is no value, no limit, no known bound, or the limit is zero."""
    bound = bound_of(finding)
    value, limit = finding.get("value"), finding.get("limit")
    if bound is None or value is None or limit is None or limit == 0:
        return None
    if not (math.isfinite(value) and math.isfinite(limit)):
        return None
    gap = limit - value if bound == UPPER else value - limit
    return gap / abs(limit)
