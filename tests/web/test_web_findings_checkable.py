"""Findings a reviewer can check by hand: the worst corner in words with units and the values
the rule used, the limit's direction, a margin column sortable without script, and on the
review page everything the revision page has."""

import html
import re

from .conftest import K1, revision_ids


def _row(page: str, rule: str) -> str:
    return page.split(f'id="f-{rule}"', 1)[1].split("</tr>", 1)[0]


def test_the_worst_corner_reads_in_words_with_units_and_the_coil_used(world, reviewer):
    rev_c = revision_ids(world, K1)[2]
    row = _row(reviewer.get(f"/revisions/{rev_c}").text, "switch.current")
    assert "supply <b>26.4 V</b>" in row and "ambient <b>0 °C</b>" in row
    # the coil's 144 Ω (160 Ω − 10 %) holds at 20 °C; at 0 °C the rule used
    # 144·(1 + 0.00393·(0 − 20)) = 132.68 Ω (copper α, IEC 60028)
    assert "coil resistance <b>132.7 Ω at 0 °C (144 Ω at 20 °C)</b>" in row
    assert "base resistor <b>209 Ω</b>" in row
    assert '<code class="key">r_coil</code>' in row  # the design file's key, small beside the words


def test_limits_carry_their_direction_and_a_margin(world, reviewer):
    page = reviewer.get(f"/revisions/{revision_ids(world, K1)[2]}").text
    pickup = _row(page, "coil.pickup")  # a lower bound: the coil must get at least this
    assert "≥ 19.8 V" in pickup and "≥ 18 V" in pickup
    # margin (21.1 − 19.8)/19.8 ≈ +6.7 % inside the limit (values as the report rounds them)
    assert re.search(r'class="num margin">\+6\.\d %', pickup)
    # An upper bound: the margin is (limit − value)/limit, from the report's own numbers.
    rid = revision_ids(world, K1)[2]
    report = reviewer.get(f"/api/v1/revisions/{rid}/report").json()
    found = next(f for f in report["findings"] if f["rule"] == "switch.current")
    margin = (found["limit"] - found["value"]) / found["limit"] * 100
    current = _row(page, "switch.current")
    assert "≤ " in current and f"+{margin:.1f} %" in current
    assert "inside (+) or past (−) the derated limit" in page


def test_sorting_by_margin_puts_the_tightest_finding_first(world, reviewer):
    rev_a = revision_ids(world, K1)[0]
    page = reviewer.get(f"/revisions/{rev_a}", params={"sort": "margin"}).text
    order = re.findall(r'id="f-([a-z_.]+)"', page)
    margins = [
        float(m)
        for m in re.findall(r'class="num margin">([+-]?\d+\.\d) %', page.split('class="findings"', 1)[1])
    ]
    assert margins == sorted(margins) and len(margins) >= 10
    # The tightest finding of rev A comes first: the one with the smallest margin in its report.
    report = reviewer.get(f"/api/v1/revisions/{rev_a}/report").json()

    def margin_of(f):
        if f["limit"] is None or f["value"] is None or f.get("bound") is None:
            return None
        inside = f["limit"] - f["value"] if f["bound"] == "upper" else f["value"] - f["limit"]
        return inside / f["limit"]

    judged = [(margin_of(f), f["rule"]) for f in report["findings"] if margin_of(f) is not None]
    assert order[0] == min(judged)[1]
    assert order[-1] in ("switch.breakdown", "coil.release", "clamp.energy")  # no margin: last
    assert "<strong>smallest margin first</strong>" in page
    review = reviewer.get(f"/revisions/{rev_a}/review", params={"sort": "margin"}).text
    assert re.findall(r'id="f-([a-z_.]+)"', review) == order


def test_an_unknown_sort_order_is_refused_by_name(world, reviewer):
    response = reviewer.get(f"/revisions/{revision_ids(world, K1)[0]}", params={"sort": "sideways"})
    assert response.status_code == 422 and "sort" in response.text and "margin" in response.text


def test_the_review_page_has_everything_the_revision_page_has(world, reviewer):
    rev_c = revision_ids(world, K1)[2]
    review = reviewer.get(f"/revisions/{rev_c}/review").text
    for heading in (
        "Nominal operating point",
        "Turn-off (nominal corner)",
        "Other clamps",
        "Parts as frozen",
    ):
        assert heading in review, heading
    assert review.count('<details class="formula">') >= 10
    assert "accept with a waiver" in review or "comment on this finding" in review  # its own tools too


def test_each_finding_shows_its_formula_with_the_worst_corners_numbers(world, reviewer):
    """The worked formula (the rule's formula with the worst corner's numbers) is on the revision
    page, the review page and the printed record, as the report gives it."""
    from markupsafe import escape

    rid = revision_ids(world, K1)[2]
    report = reviewer.get(f"/api/v1/revisions/{rid}/report").json()
    saturation = next(f for f in report["findings"] if f["rule"] == "drive.saturation")
    assert saturation["worked"].startswith("I_B = (")
    for path in (f"/revisions/{rid}", f"/revisions/{rid}/review"):
        row = _row(reviewer.get(path).text, "drive.saturation")
        assert "Worked at the worst corner:" in row and str(escape(saturation["worked"])) in row
    record = reviewer.get(f"/revisions/{rid}/record").text
    for f in report["findings"]:
        assert str(escape(f["worked"])) in record, f["rule"]


def test_what_to_tighten_names_the_tolerance_and_its_number(world, reviewer):
    """The page and the API list, per rule, the tolerances that move its margin when halved, the
    same figures app/engine/tighten.py gives for the stored design (tests/test_tighten.py checks
    those by hand)."""
    from app.engine import parse_design
    from app.engine.tighten import what_to_tighten

    rid = revision_ids(world, K1)[2]
    entries = reviewer.get(f"/api/v1/revisions/{rid}/tighten").json()
    document = reviewer.get(f"/revisions/{rid}/design.json").json()
    # the fixture's default profile is the built-in one in the demo world
    assert entries == what_to_tighten(parse_design(document))
    assert entries, "the demo revision gives tolerances that move its margins"
    page = reviewer.get(f"/revisions/{rid}/tighten").text
    first = entries[0]
    assert first["title"] in page and first["levers"][0]["quantity"] in page
    assert f"{first['levers'][0]['change'] * 100:+.1f} points" in page
    assert f'href="/revisions/{rid}/tighten"' in reviewer.get(f"/revisions/{rid}").text


def test_monte_carlo_yield_on_demand_with_its_figures_and_refusals(world, reviewer):
    """The revision's Monte Carlo yield (app/engine/montecarlo.py, checked against closed forms
    in tests/test_montecarlo.py): the API gives the engine's figures for the stored design, the
    page shows them, and a sample count out of range is refused by name."""
    from app.engine import parse_design
    from app.engine.montecarlo import monte_carlo

    rid = revision_ids(world, K1)[2]
    got = reviewer.get(f"/api/v1/revisions/{rid}/yield", params={"samples": 2000, "seed": 4}).json()
    document = reviewer.get(f"/revisions/{rid}/design.json").json()
    expected = monte_carlo(parse_design(document), samples=2000, seed=4)
    assert got["yield"] == expected["yield"] and got["rules"] == expected["rules"]
    page = reviewer.get(f"/revisions/{rid}/yield", params={"samples": 2000, "seed": 4}).text
    assert f"{expected['yield'] * 100:.2f} %" in page and "Wilson" in page
    # what the samples hold at its worst case is said as the engine says it (symbols unchanged)
    held = expected["held"]
    assert "V_CE(sat)" in held or "h_FE" in held or "R_DS(on)" in held
    assert held[1:] in html.unescape(page)
    assert f'href="/revisions/{rid}/yield"' in reviewer.get(f"/revisions/{rid}").text
    for bad in ({"samples": 0}, {"samples": 100_001}, {"samples": "many"}, {"seed": -1}):
        answer = reviewer.get(f"/api/v1/revisions/{rid}/yield", params=bad)
        assert answer.status_code in (400, 422), bad
        assert next(iter(bad)) in answer.text
