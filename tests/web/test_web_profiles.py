"""Team derating profiles in the web app: a lead creates one from a preset, every edit is a new
version (none changed), a fixture names its default, and a revision is judged by the version in
force when it was handed in — which its report, review page and printed record name."""

import pytest
from sqlmodel import Session, select

from app.web.models import DeratingProfileVersion, Fixture, ImmutableRevisionError, Revision

from .conftest import K1, channel_id, revision_ids


def _fixture_id(world) -> int:
    with Session(world.state.engine) as db:
        return db.exec(select(Fixture.id)).first()


def _new_k1_revision(world, designer) -> int:
    document = designer.get(f"/api/v1/revisions/{revision_ids(world, K1)[-1]}").json()["document"]
    made = designer.post(f"/api/v1/channels/{channel_id(world, K1)}/revisions", json={"document": document})
    assert made.status_code == 201, made.text
    return made.json()["id"]


def _report(client, rev: int) -> dict:
    return client.get(f"/api/v1/revisions/{rev}/report").json()


def _breakdown(report: dict) -> dict:
    return next(f for f in report["findings"] if f["rule"] == "switch.breakdown")


def _versions(world) -> list[tuple[int, dict]]:
    with Session(world.state.engine) as db:
        return [
            (v.version, dict(v.figures))
            for v in db.exec(select(DeratingProfileVersion).order_by(DeratingProfileVersion.id))
        ]


def test_a_revision_is_judged_by_the_profile_version_in_force_at_hand_in(world, reviewer, designer):
    made = reviewer.post("/profiles", data={"name": "Kiln policy", "preset": "high reliability", "note": ""})
    assert made.status_code == 303, made.text
    pid = int(made.headers["location"].split("/")[2].split("?")[0])
    assert _versions(world) == [(1, {"voltage": 0.75, "current": 0.75, "power": 0.5, "tj": 110.0, "overdrive": 2.0, "pickup_margin": 0.1, "cutoff": 0.75})]  # fmt: skip
    edited = reviewer.post(
        f"/profiles/{pid}/versions", data={"voltage": "70 %", "note": "tighter after a field failure"}
    )
    assert edited.status_code == 303, edited.text
    assert (
        reviewer.post(f"/fixtures/{_fixture_id(world)}/profile", data={"profile": str(pid)}).status_code
        == 303
    )

    rev = _new_k1_revision(world, designer)
    assert designer.post(f"/revisions/{rev}/hand-in", data={"note": "ready"}).status_code == 303
    report = _report(designer, rev)
    assert report["profile"]["name"] == "Kiln policy v2"
    # V_(BR)CEO derated by the version's 70 %: limit = 0.70 × rating.
    assert _breakdown(report)["limit"] == pytest.approx(0.70 * _breakdown(report)["rating"])

    # The lead tightens the policy again; the handed-in revision keeps version 2.
    reviewer.post(f"/profiles/{pid}/versions", data={"voltage": "65 %", "note": "tighter still"})
    assert [v for v, _ in _versions(world)] == [1, 2, 3]
    assert _versions(world)[1][1]["voltage"] == 0.70  # version 2 itself is unchanged
    assert _report(designer, rev)["profile"]["name"] == "Kiln policy v2"
    assert "Kiln policy v2" in reviewer.get(f"/revisions/{rev}/review").text
    assert "Kiln policy v2" in reviewer.get(f"/revisions/{rev}/record").text
    with Session(world.state.engine) as db:
        assert db.get(Revision, rev).profile_version_id is not None

    # A new draft is judged by the newest version.
    draft = _new_k1_revision(world, designer)
    assert _report(designer, draft)["profile"]["name"] == "Kiln policy v3"
    assert _breakdown(_report(designer, draft))["limit"] == pytest.approx(0.65 * _breakdown(report)["rating"])


def test_revisions_of_a_fixture_without_a_profile_use_the_built_in_default(world, designer):
    rev = _new_k1_revision(world, designer)
    assert _report(designer, rev)["profile"]["name"] == "default"


def test_only_leads_and_admins_edit_profiles(world, reviewer, designer, admin):
    assert designer.post("/profiles", data={"name": "Mine", "preset": "general"}).status_code == 403
    assert admin.post("/profiles", data={"name": "Admin's", "preset": "general"}).status_code == 303
    assert designer.get("/profiles").status_code == 200  # everyone reads the policy
    assert "Create profile" not in designer.get("/profiles").text
    assert "Create profile" in reviewer.get("/profiles").text


def test_bad_figures_are_refused_by_field_and_nothing_is_stored(world, reviewer):
    made = reviewer.post("/profiles", data={"name": "Kiln policy", "preset": "general"})
    pid = int(made.headers["location"].split("/")[2].split("?")[0])
    before = _versions(world)
    bad = reviewer.post(f"/profiles/{pid}/versions", data={"voltage": "150 %", "tj": "hot", "note": "typo"})
    assert bad.status_code == 422
    assert "voltage" in bad.text and "outside the allowed range" in bad.text and "is not a number" in bad.text
    same = reviewer.post(f"/profiles/{pid}/versions", data={"note": "nothing really"})
    assert same.status_code == 422 and "nothing changed" in same.text
    unexplained = reviewer.post(f"/profiles/{pid}/versions", data={"voltage": "70 %", "note": ""})
    assert unexplained.status_code == 422 and "say what changed and why" in unexplained.text
    duplicate = reviewer.post("/profiles", data={"name": "Kiln policy", "preset": "general"})
    assert duplicate.status_code == 422 and "already exists" in duplicate.text
    unknown = reviewer.post("/profiles", data={"name": "Other", "preset": "lenient"})
    assert unknown.status_code == 422 and "allowed: general, high reliability" in unknown.text
    assert _versions(world) == before
    fid = _fixture_id(world)
    assert reviewer.post(f"/fixtures/{fid}/profile", data={"profile": "abc"}).status_code == 422
    assert reviewer.post(f"/fixtures/{fid}/profile", data={"profile": "99999"}).status_code == 422


def test_a_stored_version_cannot_be_changed_or_deleted(world, reviewer):
    reviewer.post("/profiles", data={"name": "Kiln policy", "preset": "general"})
    with Session(world.state.engine) as db:
        version = db.exec(select(DeratingProfileVersion)).one()
        version.note = "rewritten history"
        db.add(version)
        with pytest.raises(ImmutableRevisionError):
            db.commit()
        db.rollback()
        with pytest.raises(ImmutableRevisionError):
            db.delete(db.exec(select(DeratingProfileVersion)).one())
            db.commit()


def test_the_fixture_page_names_its_profile(world, reviewer, designer):
    made = reviewer.post("/profiles", data={"name": "Kiln policy", "preset": "general"})
    pid = int(made.headers["location"].split("/")[2].split("?")[0])
    fid = _fixture_id(world)
    assert "the built-in default profile" in designer.get(f"/fixtures/{fid}").text
    reviewer.post(f"/fixtures/{fid}/profile", data={"profile": str(pid)})
    page = designer.get(f"/fixtures/{fid}").text
    assert "“Kiln policy”</a>, version 1" in page
    assert (
        'action="/fixtures/' not in page.split("Derating profile")[1].split("</div>")[0]
    )  # no form for designers
