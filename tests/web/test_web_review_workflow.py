"""The review workflow through the web layer: every step, every refusal with its reason, the
own-revision rule for every role, supersede, draft replacement, compare and the pages."""

import json

import pytest
from sqlmodel import Session, select

from app.signoff.canonical import sha256_hex
from app.web.models import Revision, TrailEntry, User

from .conftest import K1, K2, K3, channel_id, revision_ids, sign_in


def _state(app, rev: int) -> str:
    with Session(app.state.engine) as db:
        return db.get(Revision, rev).state


def _actions(app, rev: int) -> list[str]:
    with Session(app.state.engine) as db:
        return list(
            db.exec(select(TrailEntry.action).where(TrailEntry.revision_id == rev).order_by(TrailEntry.seq))
        )


def _with_violation(app, author) -> int:
    """A new revision of K1 carrying rev A's design (no clamp: the switch breaks down)."""
    document = author.get(f"/api/v1/revisions/{revision_ids(app, K1)[0]}").json()["document"]
    made = author.post(f"/api/v1/channels/{channel_id(app, K1)}/revisions", json={"document": document})
    assert made.status_code == 201, made.text
    return made.json()["id"]


def _refused(response, status: int, reason: str) -> None:
    assert response.status_code == status, response.text[:300]
    assert reason in response.text


def test_a_draft_goes_through_review_to_sign_off_with_a_waiver(world, designer, reviewer):
    sam = sign_in(world, "sam")
    rev = _with_violation(world, designer)
    assert _state(world, rev) == "draft"
    _refused(
        reviewer.post(f"/revisions/{rev}/sign-off"), 409, "a revision that is draft cannot be signed off"
    )
    _refused(
        reviewer.post(
            f"/revisions/{rev}/waivers", data={"finding": "switch.breakdown", "justification": "x" * 20}
        ),
        409,
        "cannot be accepted a finding",
    )
    _refused(sam.post(f"/revisions/{rev}/hand-in"), 403, "only the revision&#39;s author can do that")
    assert designer.post(f"/revisions/{rev}/hand-in", data={"note": "ready"}).status_code == 303
    assert _state(world, rev) == "in_review"
    _refused(
        designer.post(f"/revisions/{rev}/hand-in"),
        409,
        "a revision that is in review cannot be handed in for review",
    )
    _refused(reviewer.post(f"/revisions/{rev}/sign-off"), 409, "1 violation without a waiver")
    _refused(
        sam.post(
            f"/revisions/{rev}/waivers", data={"finding": "switch.breakdown", "justification": "x" * 20}
        ),
        403,
        "this needs the reviewer role",
    )
    _refused(
        reviewer.post(
            f"/revisions/{rev}/waivers", data={"finding": "switch.breakdown", "justification": "ok"}
        ),
        422,
        "justification: must be at least 10 characters",
    )
    _refused(
        reviewer.post(
            f"/revisions/{rev}/waivers", data={"finding": "coil.release", "justification": "x" * 20}
        ),
        422,
        "only violations and marginal findings take a waiver",
    )
    _refused(
        reviewer.post(f"/revisions/{rev}/waivers", data={"finding": "no.such", "justification": "x" * 20}),
        422,
        "finding: &#39;no.such&#39; is not a finding of this revision",
    )
    why = "Bench unit only; the coil is never switched under power on this jig."
    assert (
        reviewer.post(
            f"/revisions/{rev}/waivers", data={"finding": "switch.breakdown", "justification": why}
        ).status_code
        == 303
    )
    _refused(
        reviewer.post(
            f"/revisions/{rev}/waivers", data={"finding": "switch.breakdown", "justification": why}
        ),
        409,
        "already has a waiver",
    )
    assert (
        reviewer.post(
            f"/revisions/{rev}/comments",
            data={"text": "Check again before the production run.", "finding": "switch.breakdown"},
        ).status_code
        == 303
    )
    assert reviewer.post(f"/revisions/{rev}/sign-off", data={"note": "bench only"}).status_code == 303
    assert _state(world, rev) == "signed_off"
    _refused(
        reviewer.post(f"/revisions/{rev}/send-back", data={"note": "late"}),
        409,
        "a revision that is signed off cannot be sent back",
    )
    _refused(reviewer.post(f"/revisions/{rev}/comments", data={"text": "late"}), 409, "cannot be commented")
    assert _actions(world, rev) == ["save", "hand_in", "waive", "comment", "sign_off"]
    with Session(world.state.engine) as db:
        signature = db.exec(
            select(TrailEntry).where(TrailEntry.revision_id == rev, TrailEntry.action == "sign_off")
        ).one()
        revision = db.get(Revision, rev)
    assert signature.content_hash == revision.content_hash == sha256_hex(revision.document)
    assert json.loads(signature.detail) == {"note": "bench only", "waivers": ["switch.breakdown"]}
    assert signature.meaning.endswith("findings accepted as listed; 1 finding accepted with waivers")
    for page in (f"/revisions/{rev}", f"/revisions/{rev}/review", f"/revisions/{rev}/record"):
        text = reviewer.get(page).text
        assert why in text, page
        assert "Signed off" in text, page
    assert signature.hash in reviewer.get(f"/revisions/{rev}/record").text


@pytest.mark.parametrize("author_role", ["designer", "admin", "reviewer"])
def test_nobody_reviews_a_revision_they_authored_whatever_their_role(world, admin, author_role):
    """The author keeps the revision's author_id whatever role they hold later (a designer
    made reviewer, or an admin who holds every role)."""
    name = {"designer": "dana", "admin": "ari", "reviewer": "sam"}[author_role]
    author = sign_in(world, name)
    rev = _with_violation(world, author)
    assert author.post(f"/revisions/{rev}/hand-in").status_code == 303
    if author_role == "reviewer":
        assert (
            admin.post(
                f"/admin/users/{_user_id(world, 'sam')}", data={"role": "reviewer", "active": "on"}
            ).status_code
            == 303
        )
        author = sign_in(world, name)
    for path, data in (
        ("sign-off", {}),
        ("send-back", {"note": "my own"}),
        ("waivers", {"finding": "switch.breakdown", "justification": "my own reasons, long"}),
    ):
        _refused(
            author.post(f"/revisions/{rev}/{path}", data=data),
            403,
            "you authored this revision; someone else must review it",
        )
    assert _state(world, rev) == "in_review"
    assert author.post(f"/revisions/{rev}/comments", data={"text": "answering the review"}).status_code == 303


def _user_id(app, name):
    with Session(app.state.engine) as db:
        return db.exec(select(User.id).where(User.name == name)).one()


def test_a_designer_comments_only_on_their_own_revisions(world, designer):
    k3 = revision_ids(world, K3)[-1]  # sam's
    _refused(
        designer.post(f"/revisions/{k3}/comments", data={"text": "drive-by"}),
        403,
        "only reviewers and the revision&#39;s author can comment",
    )
    _refused(
        sign_in(world, "lee").post(f"/revisions/{k3}/comments", data={"text": "  "}),
        422,
        "text: must not be empty",
    )


def test_sent_back_then_superseded_and_a_sign_off_stays_on_its_revision(world, reviewer):
    sam = sign_in(world, "sam")
    k3 = revision_ids(world, K3)[-1]
    _refused(reviewer.post(f"/revisions/{k3}/send-back", data={"note": ""}), 422, "note: must not be empty")
    assert (
        reviewer.post(f"/revisions/{k3}/send-back", data={"note": "Raise the pick-up margin."}).status_code
        == 303
    )
    assert _state(world, k3) == "returned"
    _refused(sam.post(f"/revisions/{k3}/hand-in"), 409, "sent back cannot be handed in")
    _refused(reviewer.post(f"/revisions/{k3}/sign-off"), 409, "sent back cannot be signed off")
    document = sam.get(f"/api/v1/revisions/{k3}").json()["document"]
    newer = sam.post(
        f"/api/v1/channels/{channel_id(world, K3)}/revisions", json={"document": document}
    ).json()["id"]
    assert _state(world, k3) == "superseded" and _state(world, newer) == "draft"
    assert _actions(world, k3)[-2:] == ["send_back", "supersede"]
    k1_b = revision_ids(world, K1)[1]  # signed off in the demo, superseded by C
    assert _state(world, k1_b) == "superseded"
    assert "sign_off" in _actions(world, k1_b)
    assert "signed off" in reviewer.get(f"/revisions/{k1_b}/review").text


def test_the_author_replaces_a_draft_and_the_hash_follows(world, designer):
    sam = sign_in(world, "sam")
    draft = revision_ids(world, K2)[-1]
    other = sam.get(f"/api/v1/revisions/{revision_ids(world, K2)[0]}").json()["document"]
    upload = {"file": ("d.json", json.dumps(other))}
    _refused(
        designer.post(f"/revisions/{draft}/replace", files=upload), 403, "only the revision&#39;s author"
    )
    _refused(
        sam.post(f"/revisions/{draft}/replace", files={"file": ("d.json", "{not json")}),
        422,
        "file: not JSON",
    )
    _refused(
        sam.post(f"/revisions/{draft}/replace", files={"file": ("d.json", json.dumps({"format": "x"}))}),
        422,
        "format",
    )
    assert (
        sam.post(
            f"/revisions/{draft}/replace", files=upload, data={"change_note": "back to the old resistor"}
        ).status_code
        == 303
    )
    with Session(world.state.engine) as db:
        revision = db.get(Revision, draft)
        replaced = db.exec(
            select(TrailEntry).where(TrailEntry.revision_id == draft, TrailEntry.action == "replace")
        ).one()
    assert revision.document == other and revision.content_hash == sha256_hex(other) == replaced.content_hash
    assert revision.change_note == "back to the old resistor"
    assert sam.post(f"/revisions/{draft}/hand-in").status_code == 303
    _refused(
        sam.post(f"/revisions/{draft}/replace", files=upload), 409, "in review cannot be replaced the draft"
    )


def test_compare_defaults_to_the_last_signed_off_revision(world, reviewer):
    a, b, c = revision_ids(world, K1)
    page = reviewer.get(f"/channels/{channel_id(world, K1)}/compare")
    assert page.status_code == 200
    assert "rev B → rev C" in page.text  # B is the signed-off one, C is under review
    assert "clamp.kind" in page.text
    assert (
        f"/channels/{channel_id(world, K1)}/compare?old={b}&amp;new={c}"
        in reviewer.get(f"/revisions/{c}/review").text
    )
    ab = reviewer.get(f"/channels/{channel_id(world, K1)}/compare?old={a}&new={b}").text
    assert "Resolved" in ab and "switch.breakdown" in ab
    elsewhere = revision_ids(world, K2)[0]
    _refused(
        reviewer.get(f"/channels/{channel_id(world, K1)}/compare?old={elsewhere}&new={c}"),
        422,
        "old: revision",
    )


def test_the_revision_page_follows_the_review(world, reviewer):
    k3 = revision_ids(world, K3)[-1]
    assert "In review" in reviewer.get(f"/revisions/{k3}").text
    reviewer.post(f"/revisions/{k3}/send-back", data={"note": "Raise the pick-up margin."})
    page = reviewer.get(f"/revisions/{k3}").text
    assert "Sent back" in page and "In review" not in page
    assert f"/revisions/{k3}/record" in page
