"""Every state-changing route refuses a request without a valid CSRF token, and changes nothing."""

import re

import pytest
from sqlalchemy import func
from sqlmodel import Session, select

from app.web.deps import UNSAFE_METHODS
from app.web.main import route_table
from app.web.models import Channel, Fixture, Part, Report, Revision, User

from .conftest import csrf_token, sign_in


def _counts(app) -> tuple:
    with Session(app.state.engine) as db:
        return tuple(
            db.exec(select(func.count()).select_from(t)).one()
            for t in (Fixture, Channel, Part, Revision, Report, User)
        )


def _routes_with_paths(app):
    """Every state-changing route of the application, path parameters filled with 1."""
    out = []
    for method, path in route_table(app):
        if method in UNSAFE_METHODS:
            out.append((method, re.sub(r"\{[^}]+\}", "1", path)))
    return out


def test_there_are_state_changing_routes_to_check(world):
    assert len(_routes_with_paths(world)) >= 20


@pytest.mark.parametrize("token", ["missing", "from another session", "garbage"])
def test_every_state_changing_route_refuses_a_request_without_a_valid_token(world, token):
    client = sign_in(world, "ari")
    del client.headers["X-CSRF-Token"]
    other = csrf_token(sign_in(world, "dana"))
    before = _counts(world)
    for method, path in _routes_with_paths(world):
        headers = {
            "from another session": {"X-CSRF-Token": other},
            "garbage": {"X-CSRF-Token": "x" * 64},
        }.get(token, {})
        form = {"name": "Refused", "kind": "diode", "csrf_token": headers.get("X-CSRF-Token", "")}
        as_form = client.request(method, path, data=form, headers=headers)
        as_json = client.request(method, path, json={"name": "Refused"}, headers=headers)
        assert as_form.status_code == 403, f"{method} {path} (form): {as_form.status_code}"
        assert as_json.status_code == 403, f"{method} {path} (json): {as_json.status_code}"
    assert _counts(world) == before


def test_a_valid_token_in_the_form_field_is_accepted(world):
    client = sign_in(world, "dana")
    token = client.headers.pop("X-CSRF-Token")
    response = client.post("/fixtures", data={"name": "Bench two", "csrf_token": token})
    assert response.status_code == 303
