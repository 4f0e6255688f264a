"""The design window on the revision page: asked for with a button (htmx swaps the partial in;
without script the link opens it as a page), showing what the engine worked out."""

from __future__ import annotations

from app.engine import parse_design
from app.engine.window import design_windows

from .conftest import K1, latest_document, revision_ids


def test_the_revision_page_offers_the_window_and_the_route_shows_it(reviewer, world):
    rev = revision_ids(world, K1)[-1]
    page = reviewer.get(f"/revisions/{rev}").text
    assert f'hx-get="/revisions/{rev}/windows"' in page and "Show the design window" in page

    partial = reviewer.get(f"/revisions/{rev}/windows", headers={"HX-Request": "true"})
    assert partial.status_code == 200
    assert "<html" not in partial.text.lower()  # the fragment alone, for the swap
    full = reviewer.get(f"/revisions/{rev}/windows")
    assert full.status_code == 200 and "<html" in full.text.lower() and "design window" in full.text

    windows = design_windows(parse_design(latest_document(world, K1)))
    assert windows
    for w in windows:
        assert w["title"] in partial.text
        if w["low"] is None:
            assert "No value passes" in partial.text
        if w["conflict"] and len(w["conflict"]["rules"]) == 2:
            assert all(rule in partial.text for rule in w["conflict"]["rules"])


def test_an_unknown_revision_is_a_404(reviewer):
    assert reviewer.get("/revisions/999999/windows").status_code == 404
