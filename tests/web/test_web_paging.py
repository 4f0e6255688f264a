"""Lists that grow with what is stored come a page at a time: the home page's fixtures, a
channel's history, and the API's fixture list and channel revisions (limit/offset, Link next)."""

from __future__ import annotations

import re

from fastapi.testclient import TestClient
from sqlmodel import Session, select

from app.web.main import create_app
from app.web.models import Fixture

from .conftest import K1, channel_id, revision_ids, sign_in


def _variant(app, **settings):
    return create_app(app.state.settings.model_copy(update=settings), engine=app.state.engine)


def _add_fixtures(app, count: int) -> list[str]:
    names = [f"Paging rig {i:03d}" for i in range(count)]
    with Session(app.state.engine) as db:
        db.add_all(Fixture(name=name) for name in names)
        db.commit()
        return list(db.exec(select(Fixture.name).order_by(Fixture.name, Fixture.id)))


def _shown_fixtures(html: str) -> list[str]:
    return re.findall(r'<h2[^>]*><a href="/fixtures/\d+">([^<]+)</a></h2>', html)


def test_home_page_shows_one_page_of_fixtures_with_links(world):
    everything = _add_fixtures(world, 7)  # and the demo's own fixture: 8 in all
    app = _variant(world, page_size=3)
    client = sign_in(app, "lee")
    pages = [client.get("/", params={"page": n}) for n in (1, 2, 3)]
    shown = [_shown_fixtures(p.text) for p in pages]
    assert [len(s) for s in shown] == [3, 3, 2]
    assert sum(shown, []) == everything  # each fixture once, in name order
    assert "page 1 of 3 (8 fixtures)" in pages[0].text
    assert 'href="/?page=2" rel="next"' in pages[0].text and 'rel="prev"' not in pages[0].text
    assert 'href="/?page=2" rel="prev"' in pages[2].text and 'rel="next"' not in pages[2].text
    # past the last page: the last page; not a number or below 1: refused by field
    assert _shown_fixtures(client.get("/", params={"page": 99}).text) == shown[2]
    assert client.get("/", params={"page": 0}).status_code == 422
    assert client.get("/", params={"page": "x"}).status_code == 422


def test_home_page_size_stays_bounded_as_fixtures_grow(world):
    _add_fixtures(world, 120)
    client = sign_in(world, "lee")  # the default page size
    page = world.state.settings.page_size
    assert len(_shown_fixtures(client.get("/").text)) == page < 121


def test_channel_history_pages(world):
    app = _variant(world, page_size=2)
    client = sign_in(app, "lee")
    k1 = channel_id(world, K1)
    ids = revision_ids(world, K1)  # oldest first; the demo has 3
    first, second = client.get(f"/channels/{k1}"), client.get(f"/channels/{k1}", params={"page": 2})
    links = [re.findall(r'<td><a href="/revisions/(\d+)">', p.text) for p in (first, second)]
    assert [int(i) for i in links[0] + links[1]] == ids[::-1]  # newest first, each once
    assert len(links[0]) == 2 and f'href="/channels/{k1}?page=2" rel="next"' in first.text
    assert "Compare revisions" in second.text  # the channel has more than one revision in all


def test_api_fixture_list_pages_with_a_next_link(world):
    everything = _add_fixtures(world, 5)
    client = sign_in(world, "lee")
    seen, url = [], "/api/v1/fixtures?limit=2"
    while url:
        answer = client.get(url)
        assert answer.status_code == 200 and answer.headers["X-Total-Count"] == "6"
        seen += [f["name"] for f in answer.json()]
        found = re.match(r'<([^>]+)>; rel="next"', answer.headers.get("Link", ""))
        url = found.group(1) if found else None
    assert seen == everything
    assert len(client.get("/api/v1/fixtures").json()) == 6  # the default page holds them all


def test_api_limits_are_refused_by_field(world):
    client = sign_in(world, "lee")
    too_many = client.get("/api/v1/fixtures", params={"limit": world.state.settings.api_max_limit + 1})
    assert too_many.status_code == 422 and "limit" in str(too_many.json()["detail"])
    assert client.get("/api/v1/fixtures", params={"limit": 0}).status_code == 422
    assert client.get("/api/v1/fixtures", params={"offset": -1}).status_code == 422
    assert client.get("/api/v1/fixtures", params={"offset": 2**70}).status_code == 422


def test_api_channel_revisions_page_and_latest_stays_the_newest(world):
    client = sign_in(world, "lee")
    k1 = channel_id(world, K1)
    ids = revision_ids(world, K1)
    first = client.get(f"/api/v1/channels/{k1}", params={"limit": 2})
    rest = client.get(f"/api/v1/channels/{k1}", params={"limit": 2, "offset": 2})
    assert first.headers["X-Total-Count"] == "3" and 'rel="next"' in first.headers["Link"]
    assert "Link" not in rest.headers
    assert [r["id"] for r in first.json()["revisions"] + rest.json()["revisions"]] == ids[::-1]
    assert first.json()["latest"]["id"] == rest.json()["latest"]["id"] == ids[-1]


def test_anonymous_cannot_page_either(world):
    assert TestClient(world).get("/api/v1/fixtures", params={"limit": 2}).status_code == 401
