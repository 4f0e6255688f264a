""" "What you can do" offers the actions this person can take now, not a list of refusals; a
designer's own draft offers "Hand in" on its page."""

from .conftest import K1, channel_id, latest_document, revision_ids, sign_in

K2 = "K2 vent fan relay"


def test_a_designers_draft_shows_hand_in_on_its_page(world):
    sam = sign_in(world, "sam")
    draft = revision_ids(world, K2)[-1]  # sam's draft in the demo
    page = sam.get(f"/revisions/{draft}").text
    assert f'action="/revisions/{draft}/hand-in"' in page and "Hand in rev B" in page
    response = sam.post(f"/revisions/{draft}/hand-in", data={"note": "ready for a look"})
    assert response.status_code == 303
    assert "handed in for review" in sam.get(response.headers["location"]).text


def test_someone_elses_draft_offers_no_hand_in(world, designer, reviewer):
    draft = revision_ids(world, K2)[-1]
    for client in (designer, reviewer):
        page = client.get(f"/revisions/{draft}").text
        assert "/hand-in" not in page
        assert "its author hands it in when it is ready" in page


def test_the_review_page_lists_no_refusals(world, reviewer, designer):
    rev_c = revision_ids(world, K1)[2]
    page = reviewer.get(f"/revisions/{rev_c}/review").text
    assert "Sign off rev C" in page and "Send back" in page
    assert "not now" not in page and "cannot be" not in page
    page = designer.get(f"/revisions/{rev_c}/review").text  # dana authored rev C
    assert "Sign off rev C" not in page and "not now" not in page and "cannot be" not in page
    assert "waiting for a reviewer" in page


def test_a_signed_off_revision_says_where_it_stands(world, reviewer):
    rev_b = revision_ids(world, K1)[1]
    ari = sign_in(world, "ari")
    ari.post(
        f"/api/v1/channels/{channel_id(world, K1)}/revisions", json={"document": latest_document(world, K1)}
    )
    page = reviewer.get(f"/revisions/{rev_b}/review").text
    assert "Superseded by a newer revision of the channel; it was signed off." in page
