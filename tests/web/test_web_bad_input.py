"""Bad input anywhere gets a 4xx that says what is wrong; never a 500, and nothing stored is lost."""

import re

import pytest
from sqlalchemy import func
from sqlmodel import Session, select

from app.web.main import route_table
from app.web.models import Channel, Fixture, Part, Revision, User

from .conftest import K2, channel_id, form_values

# Empty, a negative, an overflow, and a long mix of a bad unit, SQL, NUL and markup.
GARBAGE = ["", "-1", "1e999", "4k7k ' OR 1=1 -- \x00 <b>" + "x" * 6000]


def _counts(app):
    with Session(app.state.engine) as db:
        return tuple(
            db.exec(select(func.count()).select_from(t)).one()
            for t in (Fixture, Channel, Part, Revision, User)
        )


@pytest.mark.parametrize("value", GARBAGE, ids=["empty", "negative", "overflow", "long-mixed"])
def test_no_route_answers_garbage_with_a_server_error(admin, world, value):
    before_revisions = _counts(world)[3]
    fields = {
        "name": value,
        "kind": value,
        "password": value,
        "role": value,
        "description": value,
        "load": value,
        "vrrm": value,
        "supply.nominal": value,
        "clamp.kind": value,
        "switch": value,
        "change_note": value,
    }
    for method, path in route_table(world):
        if path.startswith("/static") or path == "/sign-out":
            continue
        concrete = re.sub(r"\{[^}]+\}", "1", path)
        if method == "GET":
            response = admin.get(concrete, params={"kind": value, "q": value, "slot": value})
            if path.endswith("/record.pdf") and response.status_code == 501:
                assert "WeasyPrint is not installed" in response.text  # the documented answer
                continue
        else:
            response = admin.request(method, concrete, data=fields)
            assert response.status_code < 500, f"{method} {path} form {value!r}: {response.status_code}"
            response = admin.request(method, concrete, json={"name": value, "kind": value, "document": value})
        assert response.status_code < 500, (
            f"{method} {path} {value!r}: {response.status_code} {response.text[:200]}"
        )
    assert _counts(world)[3] == before_revisions


def test_non_numeric_ids_are_refused_not_crashed(reviewer):
    assert reviewer.get("/revisions/abc").status_code == 422
    assert reviewer.get("/api/v1/parts/abc").status_code == 422


def test_unknown_part_kind_in_the_list_says_what_is_allowed(reviewer):
    response = reviewer.get("/parts", params={"kind": "relay"})
    assert (
        response.status_code == 400
        and "allowed: transistor, nmos, darlington_array, diode, zener, tvs, coil" in response.text
    )


def test_changing_the_drive_kind_rerenders_the_fields(designer, world):
    values = {**form_values(world, K2), "drive.kind": "divider"}
    response = designer.post(
        f"/channels/{channel_id(world, K2)}/preview", data=values, headers={"HX-Trigger-Name": "drive.kind"}
    )
    fields = response.text.split('id="revision-fields" hx-swap-oob="true"', 1)[1]
    divider = fields.split('for="f-drive-r_fixed"')[0].rsplit('<div class="field', 1)[1]
    assert "inactive" not in divider
    assert "drive.r_fixed" in response.text and "is required" in response.text


def test_nul_characters_and_overlong_notes_are_refused_by_name(designer):
    fixture = designer.post("/api/v1/fixtures", json={"name": "Bench\x00rig"})
    assert fixture.status_code == 422 and "NUL" in fixture.text
    params = {"vrrm": 100, "if_avg": 1, "i_peak": 30, "vf": 1, "vf_at": 1}
    part = designer.post(
        "/api/v1/parts", json={"kind": "diode", "name": "D", "params": params, "notes": "n" * 5001}
    )
    assert part.status_code == 422 and part.json()["detail"][0]["loc"] == ["notes"]
