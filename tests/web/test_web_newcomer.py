"""Small things a first-time user meets: the API documentation works offline, every page has a
way back, a refused form keeps the page around it, counts read as English, the demo's words
match its data."""

import json
from pathlib import Path

from app.web.templating import plural

ROOT = Path(__file__).resolve().parents[2]


def test_api_docs_load_only_vendored_assets(reviewer):
    page = reviewer.get("/api/v1/docs")
    assert page.status_code == 200
    assert "/static/swagger-ui/swagger-ui-bundle.js" in page.text
    assert "/static/swagger-ui/swagger-ui.css" in page.text
    assert "cdn" not in page.text.lower() and "https://" not in page.text  # nothing from outside
    for asset in ("swagger-ui-bundle.js", "swagger-ui.css", "favicon-32x32.png", "LICENSE"):
        assert reviewer.get(f"/static/swagger-ui/{asset}").status_code == 200, asset
    assert "swagger-ui-dist" in (ROOT / "static" / "VENDORED.md").read_text(encoding="utf-8")


def test_docs_is_not_a_bare_404(reviewer):
    response = reviewer.get("/docs")
    assert response.status_code in (301, 302, 307, 308)
    assert response.headers["location"] == "/api/v1/docs"


def test_an_unknown_page_has_the_navigation(reviewer, world):
    page = reviewer.get("/no/such/page")
    assert page.status_code == 404
    assert 'href="/parts"' in page.text and "Sign out" in page.text  # the header, signed in


def test_an_unknown_page_offers_sign_in_to_a_visitor(world):
    from fastapi.testclient import TestClient

    page = TestClient(world).get("/no/such/page")
    assert page.status_code == 404 and 'href="/sign-in"' in page.text


def test_a_refused_new_fixture_keeps_the_fixture_list(designer):
    response = designer.post("/fixtures", data={"name": ""})
    assert response.status_code == 422
    assert "Glaze test kiln KT-1" in response.text  # the list is still there
    assert "must not be empty" in response.text


def test_counts_are_pluralised():
    assert [plural(n, "comment") for n in (0, 1, 2)] == ["0 comments", "1 comment", "2 comments"]
    assert plural(1, "entry", "entries") == "1 entry" and plural(3, "entry", "entries") == "3 entries"


def test_the_revision_page_counts_comments_in_english(reviewer, world):
    import re

    from .conftest import K3, revision_ids

    rev = revision_ids(world, K3)[-1]
    counts = []
    for _ in range(2):
        page = reviewer.get(f"/revisions/{rev}").text
        found = re.findall(r"(\d+) (comments?)\b", page)
        assert found, "the page shows a comment count"
        for number, word in found:
            assert word == ("comment" if number == "1" else "comments"), (number, word)
        counts.append(int(found[0][0]))
        reviewer.post(f"/revisions/{rev}/comments", data={"text": "check the base resistor"})
    assert counts[1] == counts[0] + 1


def test_the_demo_fixture_text_counts_its_channels():
    scenario = json.loads((ROOT / "seed_data" / "demo" / "scenario.json").read_text(encoding="utf-8"))
    words = {3: "three", 4: "four", 5: "five", 6: "six", 7: "seven", 8: "eight"}
    count = len(scenario["channels"])
    assert f"drives {words[count]} outputs" in scenario["fixture"]["description"]
