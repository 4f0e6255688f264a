"""Who may do what, checked on the server for every route. Each row names the action the route
needs (app/web/permissions.py says which roles grant it); anonymous visitors see only the
sign-in page."""

import json

import pytest
from sqlmodel import Session, select
from starlette.routing import compile_path

from app.web.main import route_table
from app.web.models import DeratingProfile, Fixture, User
from app.web.permissions import ACTIONS
from app.web.services import profiles

from .conftest import K1, K2, K3, channel_id, form_values, latest_document, part_id, revision_ids

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
        lee = db.exec(select(User).where(User.name == "lee")).one()
        existing = db.exec(select(DeratingProfile.id).where(DeratingProfile.name == "Matrix policy")).first()
        prof = existing or profiles.create_profile(db, lee, "Matrix policy", "general", {}).id
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
        ("GET", "/", "read", {}),
        ("GET", f"/fixtures/{fid}", "read", {}),
        ("GET", f"/channels/{c1}", "read", {}),
        ("GET", f"/revisions/{rev}", "read", {}),
        ("GET", f"/revisions/{rev}/design.json", "read", {}),
        ("GET", f"/revisions/{rev}/windows", "read", {}),
        ("GET", f"/revisions/{rev}/pictures/schematic.svg", "read", {}),
        ("GET", "/parts", "read", {}),
        ("GET", "/parts/picker?slot=switch&q=NPN", "read", {}),
        ("GET", "/parts/export.csv?kind=coil", "read", {}),
        ("GET", f"/channels/{c1}/new", "create_revision", {}),
        ("GET", f"/parts/{pid}", "read", {}),
        ("GET", "/parts/new?kind=coil", "edit_library", {}),
        ("GET", f"/parts/{pid}/edit", "edit_library", {}),
        ("GET", "/admin/users", "manage_users", {}),
        ("GET", "/profiles", "read", {}),
        ("GET", f"/profiles/{prof}", "read", {}),
        ("POST", "/profiles", "edit_profiles", {"data": {"name": f"P {role}", "preset": "general"}}),
        (
            "POST",
            f"/profiles/{prof}/versions",
            "edit_profiles",
            {"data": {"voltage": "70 %", "note": f"by {role}"}},
        ),
        ("POST", f"/fixtures/{fid}/profile", "edit_profiles", {"data": {"profile": str(prof)}}),
        ("GET", f"/revisions/{rev}/review", "read", {}),
        ("GET", f"/revisions/{rev}/record", "read", {}),
        ("GET", f"/revisions/{rev}/tighten", "read", {}),
        ("GET", f"/revisions/{rev}/yield?samples=200", "read", {}),
        (
            "GET",
            f"/revisions/{rev}/record.pdf",
            {"reviewer": {200, 303}, "designer": {200, 303}, "admin": {200, 303}},
            {},
        ),
        ("GET", f"/channels/{c1}/compare", "read", {}),
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
        ("POST", "/fixtures", "set_up_fixtures", {"data": {"name": f"Bench {role}"}}),
        ("POST", f"/fixtures/{fid}/channels", "set_up_fixtures", {"data": {"name": f"K9 {role}"}}),
        ("POST", f"/channels/{c1}/preview", "create_revision", {"data": values}),
        ("POST", f"/channels/{c1}/revisions", "create_revision", {"data": {**values, "change_note": role}}),
        (
            "POST",
            f"/channels/{c2}/upload",
            "create_revision",
            {
                "files": {"file": ("d.json", json.dumps(latest_document(app, K2)))},
                "data": {"change_note": "up"},
            },
        ),
        ("POST", "/parts", "edit_library", {"data": {"kind": "diode", "name": f"D {role}", **DIODE_PARAMS}}),
        (
            "POST",
            "/parts/import",
            "edit_library",
            {
                "data": {"kind": "diode"},
                "files": {"file": ("p.csv", "name,vrrm,if_avg,i_peak,vf,vf_at\nD csv,50,1,30,1,1\n")},
            },
        ),
        ("POST", f"/parts/{pid}", "edit_library", {"data": part_form}),
        ("POST", f"/parts/{pid}/remove", "edit_library", {}),
        ("POST", f"/parts/{pid}/restore", "edit_library", {}),
        (
            "POST",
            "/admin/users",
            "manage_users",
            {"data": {"name": f"new-{role}", "password": "long-enough", "role": "reviewer"}},
        ),
        ("POST", f"/admin/users/{sam}", "manage_users", {"data": {"role": "designer", "active": "on"}}),
        ("GET", "/api/v1/engine", "read", {}),
        ("GET", "/api/v1/parts?kind=coil", "read", {}),
        ("GET", f"/api/v1/parts/{pid}", "read", {}),
        ("GET", "/api/v1/fixtures", "read", {}),
        ("GET", f"/api/v1/fixtures/{fid}", "read", {}),
        ("GET", f"/api/v1/channels/{c1}", "read", {}),
        ("GET", f"/api/v1/revisions/{rev}", "read", {}),
        ("GET", f"/api/v1/revisions/{rev}/report", "read", {}),
        ("GET", f"/api/v1/revisions/{rev}/tighten", "read", {}),
        ("GET", f"/api/v1/revisions/{rev}/yield?samples=200", "read", {}),
        ("POST", "/api/v1/evaluate", "read", {"json": latest_document(app, K1)}),
        (
            "POST",
            "/api/v1/parts",
            "edit_library",
            {"json": {"kind": "diode", "name": f"API {role}", "params": DIODE_PARAMS}},
        ),
        (
            "PUT",
            f"/api/v1/parts/{pid}",
            "edit_library",
            {"json": {"name": PART, "params": _params(app, pid)}},
        ),
        ("POST", "/api/v1/fixtures", "set_up_fixtures", {"json": {"name": f"API bench {role}"}}),
        ("POST", f"/api/v1/fixtures/{fid}/channels", "set_up_fixtures", {"json": {"name": f"API K {role}"}}),
        (
            "POST",
            f"/api/v1/channels/{c1}/revisions",
            "create_revision",
            {"json": {"document": latest_document(app, K1), "change_note": "api"}},
        ),
        ("DELETE", f"/api/v1/parts/{pid}", "edit_library", {}),
        ("POST", "/sign-out", "read", {}),
    ]


def _params(app, pid):
    from app.web.models import Part

    with Session(app.state.engine) as db:
        return dict(db.get(Part, pid).params)


# Routes every visitor may use: the sign-in page and form, the API's session, docs, static files.
PUBLIC = {
    "/sign-in",
    "/api/v1/session",
    "/healthz",
    "/api/v1/docs",
    "/docs",
    "/api/v1/openapi.json",
    "/static",
}


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
        elif role not in ACTIONS[needs].roles:
            assert response.status_code == 403, where
        else:
            assert response.status_code in (200, 201, 303), where


def test_every_action_is_granted_to_the_roles_the_team_expects():
    # The policy in words (DEVELOPERS.md, "Roles"): everyone reads; designers build; reviewers
    # review and set the derating policy; admins do everything.
    expected = {
        "read": {"designer", "reviewer", "admin"},
        "edit_library": {"designer", "admin"},
        "set_up_fixtures": {"designer", "admin"},
        "create_revision": {"designer", "admin"},
        "review": {"reviewer", "admin"},
        "edit_profiles": {"reviewer", "admin"},
        "manage_users": {"admin"},
    }
    assert {name: set(action.roles) for name, action in ACTIONS.items()} == expected


def test_no_template_or_route_spells_roles_itself():
    """Roles are named only in app/web/permissions.py (and where accounts are managed)."""
    import re
    from pathlib import Path

    root = Path(__file__).resolve().parents[2]
    spelled = re.compile(r"""\.role\s*(==|!=|in\b)|role\s+in\s*\(""")
    places = list((root / "templates").rglob("*.html")) + list((root / "app" / "web").rglob("*.py"))
    offenders = [
        f"{path.relative_to(root)}:{number}"
        for path in places
        if path.name not in ("permissions.py", "users.py", "users.html")
        for number, line in enumerate(path.read_text(encoding="utf-8").splitlines(), start=1)
        if spelled.search(line)
    ]
    assert offenders == []


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
