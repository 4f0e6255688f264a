"""Every kept fragment shows what is stored now: each cache's key changes with everything that
can change the fragment, including a change made behind the app's back."""

import json
import re

from sqlalchemy import text

from .conftest import K1, K2, revision_ids, sign_in


def _home_row(client, revision_id: int) -> str:
    """The home overview's row of the channel whose latest revision is ``revision_id``."""
    page = client.get("/").text
    for row in re.findall(r"<tr class=\"[^\"]*\">.*?</tr>", page, re.S):
        if f'href="/revisions/{revision_id}"' in row:
            return row
    raise AssertionError(f"no home row for revision {revision_id}")


def test_the_home_overview_follows_a_replaced_draft(world, reviewer):
    sam = sign_in(world, "sam")
    draft = revision_ids(world, K2)[-1]  # sam's draft (seed_data/demo/scenario.json)
    before = _home_row(reviewer, draft)
    assert 'class="row-violation"' not in before
    _home_row(reviewer, draft)  # kept now
    clampless = sam.get(f"/api/v1/revisions/{revision_ids(world, K1)[0]}").json()["document"]
    upload = {"file": ("d.json", json.dumps(clampless))}
    assert sam.post(f"/revisions/{draft}/replace", files=upload).status_code == 303
    assert 'class="row-violation"' in _home_row(reviewer, draft)


def test_the_home_overview_follows_a_change_behind_the_apps_back(world, reviewer):
    draft = revision_ids(world, K2)[-1]
    assert "sam" in _home_row(reviewer, draft)
    with world.state.engine.begin() as connection:
        connection.execute(text("UPDATE user_account SET name = 'samuel' WHERE name = 'sam'"))
    assert "samuel" in _home_row(reviewer, draft)


def test_the_revision_page_follows_a_replaced_draft_and_a_change_behind_the_apps_back(world, reviewer):
    sam = sign_in(world, "sam")
    draft = revision_ids(world, K2)[-1]
    assert "Exceeds rating" not in reviewer.get(f"/revisions/{draft}").text
    clampless = sam.get(f"/api/v1/revisions/{revision_ids(world, K1)[0]}").json()["document"]
    upload = {"file": ("d.json", json.dumps(clampless))}
    assert sam.post(f"/revisions/{draft}/replace", files=upload).status_code == 303
    assert "Exceeds rating" in reviewer.get(f"/revisions/{draft}").text
    with world.state.engine.begin() as connection:  # no trail entry, no new id: only the data
        connection.execute(text("UPDATE user_account SET name = 'samuel' WHERE name = 'sam'"))
    assert "by samuel" in reviewer.get(f"/revisions/{draft}").text


def test_the_kept_revision_page_differs_by_role(world, reviewer, designer):
    rev = revision_ids(world, K1)[-1]
    assert "new revision</a>" not in reviewer.get(f"/revisions/{rev}").text
    assert "new revision</a>" in designer.get(f"/revisions/{rev}").text
    assert "new revision</a>" not in reviewer.get(f"/revisions/{rev}").text


def test_fixture_channel_pages_and_api_lists_follow_a_replaced_draft_and_a_change_behind_the_apps_back(
    world, reviewer
):
    """The fixture page's channel table, the channel page's history and the API's fixture list and
    channel are kept per data version: a replaced draft and a direct database edit both show."""
    from .conftest import channel_id

    sam = sign_in(world, "sam")
    k2 = channel_id(world, K2)
    draft = revision_ids(world, K2)[-1]
    fixture = reviewer.get(f"/api/v1/channels/{k2}").json()["fixture_id"]
    urls = (f"/fixtures/{fixture}", f"/channels/{k2}", "/api/v1/fixtures", f"/api/v1/channels/{k2}")
    for url in urls:
        assert "samuel" not in reviewer.get(url).text  # kept now
    before = reviewer.get(f"/api/v1/channels/{k2}").json()["latest"]["verdict"]
    clampless = sam.get(f"/api/v1/revisions/{revision_ids(world, K1)[0]}").json()["document"]
    upload = {"file": ("d.json", json.dumps(clampless))}
    assert sam.post(f"/revisions/{draft}/replace", files=upload).status_code == 303
    after = reviewer.get(f"/api/v1/channels/{k2}").json()
    assert after["latest"]["verdict"] == "violation" != before
    assert after["revisions"][0]["verdict"] == "violation"
    assert any(
        c["latest"] and c["latest"]["id"] == draft and c["latest"]["verdict"] == "violation"
        for f in reviewer.get("/api/v1/fixtures").json()
        for c in f["channels"]
    )
    with world.state.engine.begin() as connection:  # no trail entry, no new id: only the data
        connection.execute(text("UPDATE user_account SET name = 'samuel' WHERE name = 'sam'"))
    for url in urls:
        assert "samuel" in reviewer.get(url).text, url
