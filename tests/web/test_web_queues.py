"""The first thing on the home page is the work waiting for you: a reviewer's "waiting for my
review" (oldest first, with its age), a designer's "sent back to me" and "my drafts"."""

from datetime import UTC, datetime, timedelta

from app.web.services.queues import age

from .conftest import K1, channel_id, latest_document, sign_in

K3 = "K3 over-temperature alarm relay"
K4 = "K4 exhaust damper solenoid"
K2 = "K2 vent fan relay"


def _queue(page: str, title: str) -> str:
    return page.split(title, 1)[1].split("</div>", 1)[0]


def test_a_reviewer_sees_what_waits_for_review_before_the_fixtures(world, reviewer):
    page = reviewer.get("/").text
    assert page.index("Waiting for my review") < page.index("<h1>Fixtures</h1>")
    waiting = _queue(page, "Waiting for my review")
    # demo: K1 rev C handed in before K3 rev B: oldest first
    assert waiting.index(f"{K1} rev C") < waiting.index(f"{K3} rev B")
    assert "under a minute" in waiting  # the age
    assert "Diode plus zener for a faster release." in waiting  # the hand-in note
    assert "Sent back to me" not in page  # a reviewer has no designer queues


def test_nobody_is_asked_to_review_their_own_revision(world):
    ari = sign_in(world, "ari")  # admin: reviews too
    ari.post(
        f"/api/v1/channels/{channel_id(world, K2)}/revisions", json={"document": latest_document(world, K2)}
    )
    rid = ari.get(f"/api/v1/channels/{channel_id(world, K2)}").json()["revisions"][0]["id"]
    assert ari.post(f"/revisions/{rid}/hand-in", data={"note": "mine"}).status_code == 303
    assert f"{K2} rev" not in _queue(ari.get("/").text, "Waiting for my review")
    assert f"{K2} rev" in _queue(sign_in(world, "lee").get("/").text, "Waiting for my review")


def test_a_designer_sees_what_was_sent_back_with_the_reason_and_their_drafts(world, designer):
    page = designer.get("/").text
    assert "Waiting for my review" not in page
    sent_back = _queue(page, "Sent back to me")
    assert f"{K4} rev A" in sent_back and "Name the TVS part in the library before I sign." in sent_back
    assert "No drafts." in _queue(page, "My drafts")  # dana has no draft in the demo
    sam = sign_in(world, "sam")
    assert f"{K2} rev B" in _queue(sam.get("/").text, "My drafts")
    assert f"{K4} rev A" not in _queue(sam.get("/").text, "Sent back to me")  # dana's, not sam's


def test_age_reads_in_the_largest_whole_unit():
    now = datetime(2026, 1, 10, 12, 0, tzinfo=UTC)
    assert age(now - timedelta(seconds=30), now) == "under a minute"
    assert age(now - timedelta(minutes=5, seconds=59), now) == "5 min"
    assert age(now - timedelta(hours=3, minutes=59), now) == "3 h"
    assert age(now - timedelta(days=2, hours=23), now) == "2 d"
