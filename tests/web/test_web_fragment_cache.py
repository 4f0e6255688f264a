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


PART = "Demo rectifier 1 A (illustrative)"
DIODE = {"vrrm": "200", "if_avg": "1 A", "i_peak": "30", "vf": "1.1 V", "vf_at": "1"}
PARTS_URLS = ("/parts", "/parts?kind=diode", "/api/v1/parts", "/api/v1/parts?kind=diode")


def test_the_parts_page_and_api_parts_follow_a_change_behind_the_apps_back(world, reviewer):
    """The parts list and the API's parts list are kept per data version; migration 0007 makes a
    change to the part table bump it, so a direct edit, an archive and a delete all show."""
    for url in PARTS_URLS:
        assert PART in reviewer.get(url).text  # kept now
    with world.state.engine.begin() as connection:
        connection.execute(
            text("UPDATE part SET name = 'Bench rectifier renamed' WHERE name = :n"), {"n": PART}
        )
    for url in PARTS_URLS:
        shown = reviewer.get(url).text
        assert "Bench rectifier renamed" in shown and PART not in shown, url
    with world.state.engine.begin() as connection:
        connection.execute(text("UPDATE part SET archived = true WHERE name = 'Bench rectifier renamed'"))
    for url in PARTS_URLS:
        assert "Bench rectifier renamed" not in reviewer.get(url).text, url
    assert "Bench rectifier renamed" in reviewer.get("/parts?kind=diode&archived=true").text
    with world.state.engine.begin() as connection:  # a part no revision froze can go for good
        connection.execute(text("DELETE FROM part WHERE name = 'Demo NPN-45 half-amp (illustrative)'"))
    assert "Demo NPN-45" not in reviewer.get("/parts").text
    assert all(
        p["name"] != "Demo NPN-45 half-amp (illustrative)" for p in reviewer.get("/api/v1/parts").json()
    )


def test_the_parts_lists_follow_a_part_added_and_edited_through_the_app(world, reviewer, designer):
    assert "Bench rectifier" not in reviewer.get("/parts?kind=diode").text
    assert "Bench rectifier" not in reviewer.get("/api/v1/parts?kind=diode").text
    assert (
        designer.post("/parts", data={"kind": "diode", "name": "Bench rectifier", **DIODE}).status_code == 303
    )
    assert "Bench rectifier" in reviewer.get("/parts?kind=diode").text
    [listed] = [p for p in reviewer.get("/api/v1/parts?kind=diode").json() if p["name"] == "Bench rectifier"]
    assert str(listed["params"]["vrrm"]) == "200"
    changed = {"name": "Bench rectifier", "params": {**DIODE, "vrrm": "400"}}
    assert designer.put(f"/api/v1/parts/{listed['id']}", json=changed).status_code == 200
    [listed] = [p for p in reviewer.get("/api/v1/parts?kind=diode").json() if p["name"] == "Bench rectifier"]
    assert str(listed["params"]["vrrm"]) == "400"
    assert "vrrm=400" in reviewer.get("/parts?kind=diode").text


def test_the_kept_parts_page_differs_by_role_and_search(world, reviewer, designer):
    """The edit and remove forms are for library editors only, and carry each session's token."""
    assert "/edit</a>" not in reviewer.get("/parts").text and "/edit" in designer.get("/parts").text
    assert f'value="{designer.headers["X-CSRF-Token"]}"' in designer.get("/parts").text
    assert "/edit" not in reviewer.get("/parts").text
    assert "Demo NPN-40" not in reviewer.get("/parts?kind=diode").text
    assert "Demo NPN-40" in reviewer.get("/parts?q=npn-40").text
    table = reviewer.get("/parts?q=npn-40", headers={"HX-Request": "true"}).text
    assert table.startswith('<table id="parts-table">') and "Demo NPN-40" in table


def test_the_fixture_page_follows_profiles_added_and_renamed_behind_the_apps_back(world, reviewer):
    """The fixture page is kept whole; it lists the derating profiles, whose tables bump the data
    version since migration 0007."""
    from sqlmodel import Session, select

    from app.web.models import User
    from app.web.services import profiles

    fixture = reviewer.get("/api/v1/fixtures").json()[0]["id"]
    assert "Bench profile" not in reviewer.get(f"/fixtures/{fixture}").text  # kept now
    with Session(world.state.engine, expire_on_commit=False) as db:  # the service, not a route
        lee = db.exec(select(User).where(User.name == "lee")).one()
        profiles.create_profile(db, lee, "Bench profile", "general", {}, "for the test")
    assert "Bench profile" in reviewer.get(f"/fixtures/{fixture}").text
    with world.state.engine.begin() as connection:
        connection.execute(
            text("UPDATE derating_profile SET name = 'Renamed profile' WHERE name = 'Bench profile'")
        )
    page = reviewer.get(f"/fixtures/{fixture}").text
    assert "Renamed profile" in page and "Bench profile" not in page


def test_a_kept_page_or_list_is_not_sent_to_an_account_ended_behind_the_apps_back(world, reviewer):
    """Kept answers skip the database, but never the check of who asks: each request still reads
    the account (deactivated, or its sessions ended, directly in the database)."""
    k2 = reviewer.get("/api/v1/fixtures").json()[0]["channels"][0]["id"]
    urls = ("/parts", "/api/v1/parts", "/api/v1/fixtures", f"/api/v1/channels/{k2}", f"/channels/{k2}")
    for url in urls:
        assert reviewer.get(url).status_code == 200  # kept now
    with world.state.engine.begin() as connection:
        connection.execute(
            text("UPDATE user_account SET session_generation = session_generation + 1 WHERE name = 'lee'")
        )
    for url in urls:
        answer = reviewer.get(url)
        assert answer.status_code in (303, 401) and "Demo" not in answer.text, url


def test_the_api_lists_keep_their_paging_headers(world, reviewer):
    """X-Total-Count and the Link to the next page are kept with the body."""
    k1 = reviewer.get("/api/v1/fixtures").json()[0]["channels"][0]["id"]
    for _ in range(2):  # the second answer is the kept one
        answer = reviewer.get(f"/api/v1/channels/{k1}", params={"limit": 1})
        total = int(answer.headers["X-Total-Count"])
        assert total == len(reviewer.get(f"/api/v1/channels/{k1}", params={"limit": 100}).json()["revisions"])
        assert (total > 1) == ('rel="next"' in answer.headers.get("Link", "")), answer.headers
        assert answer.headers["content-type"] == "application/json"


def test_the_cache_is_bounded_by_the_text_it_holds():
    """A key can carry a search string or query a client chooses: past its byte budget the cache
    starts afresh instead of growing."""
    from app.web.templating import FragmentCache, Kept

    cache = FragmentCache(size=1000, max_bytes=10_000)
    for n in range(30):
        cache.put(("page", n), Kept(b"x" * 1000, 200, "text/html"))
        assert sum(len(v.body) for v in cache._items.values()) <= 10_000
    assert cache.get(("page", 29)) is not None and cache.get(("page", 0)) is None


def test_a_page_read_while_a_change_is_uncommitted_is_not_kept_as_the_new_version(world, reviewer):
    """PostgreSQL bumps the data version (a sequence) when a writer's statement runs, before it
    commits: a page read in between shows the old data under the new version. It must not be
    kept under it, or the change would never show once committed. (SQLite bumps a row inside
    the writer's transaction: a reader sees the old version with the old data.)"""
    draft = revision_ids(world, K2)[-1]  # sam's draft (seed_data/demo/scenario.json)
    urls = (*PARTS_URLS, f"/revisions/{draft}", "/")
    for url in urls:
        assert reviewer.get(url).status_code == 200, url  # kept now
    with world.state.engine.connect() as writer:
        transaction = writer.begin()
        writer.execute(text("UPDATE part SET name = 'Rectifier mid-edit' WHERE name = :n"), {"n": PART})
        writer.execute(text("UPDATE user_account SET name = 'samuel' WHERE name = 'sam'"))
        for url in urls:  # read while the edit is uncommitted: the old data, as it is now
            shown = reviewer.get(url).text
            assert "Rectifier mid-edit" not in shown and "samuel" not in shown, url
        transaction.commit()
    for url in PARTS_URLS:
        shown = reviewer.get(url).text
        assert "Rectifier mid-edit" in shown and PART not in shown, url
    assert "samuel" in reviewer.get("/").text
    assert "by samuel" in reviewer.get(f"/revisions/{draft}").text
