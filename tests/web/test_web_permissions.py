"""Who may do what, checked on the server for every route: anonymous visitors see only the
sign-in page, reviewers read, designers also create parts and revisions, admins also manage users."""

import json

import pytest
from sqlmodel import Session, select
from starlette.routing import compile_path

from app.web.main import route_table
from app.web.models import Fixture, User

from .conftest import K1, K2, K3, channel_id, form_values, latest_document, part_id, revision_ids

LEVEL = {"anonymous": 0, "reviewer": 1, "designer": 2, "admin": 3}
NEEDS = {"viewer": 1, "designer": 2, "admin": 3}

PART = "Demo NPN-40 small-signal (illustrative)"
DIODE_PARAMS = {"vrrm": "100", "if_avg": "1", "i_peak": "30", "vf": "1.0", "vf_at": "1"}


def _requests(app, role):
    """(method, path, who may, request keyword arguments), in an order that keeps working."""
    c1, c2 = channel_id(app, K1), channel_id(app, K2)
    rev = revision_ids(app, K1)[-1]
    pid = part_id(app, "transistor", PART)
    with Session(app.state.engine) as db:
        sam = db.exec(select(User.id).where(User.name == "sam")).one()
        fid = db.exec(select(Fixture.id)).first()
    values = form_values(app, K1)
    k1_review = revision_ids(app, K1)[-1]  # dana's, in review in the demo
    k3_review = revision_ids(app, K3)[-1]  # sam's, in review
    k2_draft = revision_ids(app, K2)[-1]  # sam's draft
    # The review actions: who may is the workflow's answer for each person, so the expected
    # status is given per role (lee reviews, dana designs and wrote K1's revision, ari is admin).
    own = {"reviewer": {303}, "designer": {403}, "admin": {303}}
    nobody = {"reviewer": {403}, "designer": {403}, "admin": {403}}
    part_form = {"kind": "transistor", "name": PART, **{k: str(v) for k, v in _params(app, pid).items()}}
    return [
        ("GET", "/", "viewer", {}),
        ("GET", f"/fixtures/{fid}", "viewer", {}),
        ("GET", f"/channels/{c1}", "viewer", {}),
        ("GET", f"/revisions/{rev}", "viewer", {}),
        ("GET", f"/revisions/{rev}/design.json", "viewer", {}),
        ("GET", "/parts", "viewer", {}),
        ("GET", "/parts/picker?slot=switch&q=NPN", "viewer", {}),
        ("GET", "/parts/export.csv?kind=coil", "viewer", {}),
        ("GET", f"/channels/{c1}/new", "designer", {}),
        ("GET", "/parts/new?kind=coil", "designer", {}),
        ("GET", f"/parts/{pid}/edit", "designer", {}),
        ("GET", "/admin/users", "admin", {}),
        ("GET", f"/revisions/{rev}/review", "viewer", {}),
        ("GET", f"/revisions/{rev}/record", "viewer", {}),
        (
            "GET",
            f"/revisions/{rev}/record.pdf",
            {"reviewer": {200, 501}, "designer": {200, 501}, "admin": {200, 501}},
            {},
        ),
        ("GET", f"/channels/{c1}/compare", "viewer", {}),
        ("POST", f"/revisions/{k3_review}/comments", own, {"data": {"text": f"comment by {role}"}}),
        (
            "POST",
            f"/revisions/{k3_review}/waivers",
            {"reviewer": {422}, "designer": {403}, "admin": {422}},
            {"data": {"finding": "no.such.rule", "justification": "long enough reason"}},
        ),
        ("POST", f"/revisions/{k3_review}/send-back", own, {"data": {"note": "change it"}}),
        ("POST", f"/revisions/{k1_review}/sign-off", own, {"data": {}}),
        ("POST", f"/revisions/{k2_draft}/hand-in", nobody, {"data": {}}),
        (
            "POST",
            f"/revisions/{k2_draft}/replace",
            nobody,
            {"files": {"file": ("d.json", json.dumps(latest_document(app, K2)))}},
        ),
        ("POST", "/fixtures", "designer", {"data": {"name": f"Bench {role}"}}),
        ("POST", f"/fixtures/{fid}/channels", "designer", {"data": {"name": f"K9 {role}"}}),
        ("POST", f"/channels/{c1}/preview", "designer", {"data": values}),
        ("POST", f"/channels/{c1}/revisions", "designer", {"data": {**values, "change_note": role}}),
        (
            "POST",
            f"/channels/{c2}/upload",
            "designer",
            {
                "files": {"file": ("d.json", json.dumps(latest_document(app, K2)))},
                "data": {"change_note": "up"},
            },
        ),
        ("POST", "/parts", "designer", {"data": {"kind": "diode", "name": f"D {role}", **DIODE_PARAMS}}),
        (
            "POST",
            "/parts/import",
            "designer",
            {
                "data": {"kind": "diode"},
                "files": {"file": ("p.csv", "name,vrrm,if_avg,i_peak,vf,vf_at\nD csv,50,1,30,1,1\n")},
            },
        ),
        ("POST", f"/parts/{pid}", "designer", {"data": part_form}),
        ("POST", f"/parts/{pid}/remove", "designer", {}),
        ("POST", f"/parts/{pid}/restore", "designer", {}),
        (
            "POST",
            "/admin/users",
            "admin",
            {"data": {"name": f"new-{role}", "password": "long-enough", "role": "reviewer"}},
        ),
        ("POST", f"/admin/users/{sam}", "admin", {"data": {"role": "designer", "active": "on"}}),
        ("GET", "/api/v1/engine", "viewer", {}),
        ("GET", "/api/v1/parts?kind=coil", "viewer", {}),
        ("GET", f"/api/v1/parts/{pid}", "viewer", {}),
        ("GET", "/api/v1/fixtures", "viewer", {}),
        ("GET", f"/api/v1/fixtures/{fid}", "viewer", {}),
        ("GET", f"/api/v1/channels/{c1}", "viewer", {}),
        ("GET", f"/api/v1/revisions/{rev}", "viewer", {}),
        ("GET", f"/api/v1/revisions/{rev}/report", "viewer", {}),
        ("POST", "/api/v1/evaluate", "viewer", {"json": latest_document(app, K1)}),
        (
            "POST",
            "/api/v1/parts",
            "designer",
            {"json": {"kind": "diode", "name": f"API {role}", "params": DIODE_PARAMS}},
        ),
        ("PUT", f"/api/v1/parts/{pid}", "designer", {"json": {"name": PART, "params": _params(app, pid)}}),
        ("POST", "/api/v1/fixtures", "designer", {"json": {"name": f"API bench {role}"}}),
        ("POST", f"/api/v1/fixtures/{fid}/channels", "designer", {"json": {"name": f"API K {role}"}}),
        (
            "POST",
            f"/api/v1/channels/{c1}/revisions",
            "designer",
            {"json": {"document": latest_document(app, K1), "change_note": "api"}},
        ),
        ("DELETE", f"/api/v1/parts/{pid}", "designer", {}),
        ("POST", "/sign-out", "viewer", {}),
    ]


def _params(app, pid):
    from app.web.models import Part

    with Session(app.state.engine) as db:
        return dict(db.get(Part, pid).params)


# Routes every visitor may use: the sign-in page and form, the API's session, docs, static files.
PUBLIC = {"/sign-in", "/api/v1/session", "/healthz", "/api/v1/docs", "/api/v1/openapi.json", "/static"}


@pytest.mark.parametrize("role", ["anonymous", "reviewer", "designer", "admin"])
def test_every_route_answers_each_role_as_the_matrix_says(as_role, world, role):
    client = as_role(role)
    for method, path, needs, kwargs in _requests(world, role):
        response = client.request(method, path, **kwargs)
        where = f"{role} {method} {path}: {response.status_code} {response.text[:200]}"
        if role == "anonymous":
            expected = 401 if path.startswith("/api/") else 303
            assert response.status_code == expected, where
            if expected == 303:
                assert response.headers["location"].startswith("/sign-in"), where
        elif isinstance(needs, dict):
            assert response.status_code in needs[role], where
        elif LEVEL[role] < NEEDS[needs]:
            assert response.status_code == 403, where
        else:
            assert response.status_code in (200, 201, 303), where


def test_the_matrix_covers_every_route(world):
    served = [(m, p) for m, p in route_table(world) if not any(p.startswith(x) for x in PUBLIC)]
    assert len(served) > 30
    covered = {(m, _pattern(served, p)) for m, p, _, _ in _requests(world, "admin")}
    for method, path in served:
        assert (method, path) in covered, f"{method} {path} is missing from the permission matrix"


def _pattern(served, path: str) -> str:
    """/channels/3/new -> /channels/{channel_id}/new: the app's own route that serves the path
    (a literal segment such as /parts/new wins over a parameter)."""
    path = path.split("?")[0]
    matching = [p for _, p in served if compile_path(p)[0].match(path)]
    return min(matching, key=lambda candidate: candidate.count("{")) if matching else path
