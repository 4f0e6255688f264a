"""Signing in and out, the session cookie, and password storage."""

from sqlmodel import Session, select

from app.web.models import User

from .conftest import PASSWORD, csrf_token, sign_in


def test_anonymous_visitor_is_sent_to_sign_in(world):
    client = sign_in(world, None)
    response = client.get("/channels/1")
    assert response.status_code == 303
    assert response.headers["location"] == "/sign-in?next=/channels/1"


def test_anonymous_api_call_gets_401(world):
    assert sign_in(world, None).get("/api/v1/fixtures").status_code == 401


def test_sign_in_page_shows_only_the_form(world):
    page = sign_in(world, None).get("/sign-in").text
    assert 'name="password"' in page and "Glaze test kiln" not in page


def test_wrong_password_is_refused_with_a_message(world):
    client = sign_in(world, None)
    response = client.post(
        "/sign-in", data={"name": "dana", "password": "nope", "csrf_token": csrf_token(client)}
    )
    assert response.status_code == 401
    assert "do not match" in response.text


def test_session_cookie_is_httponly_and_samesite_lax(world):
    client = sign_in(world, None)
    response = client.post(
        "/sign-in", data={"name": "dana", "password": PASSWORD, "csrf_token": csrf_token(client)}
    )
    cookie = response.headers["set-cookie"]
    assert "HttpOnly" in cookie and "SameSite=Lax" in cookie


def test_sign_in_renews_the_session_and_old_token_stops_working(world):
    client = sign_in(world, None)
    before_cookie, before_token = client.cookies["clampdown_session"], csrf_token(client)
    client.post("/sign-in", data={"name": "dana", "password": PASSWORD, "csrf_token": before_token})
    assert client.cookies["clampdown_session"] != before_cookie
    refused = client.post("/fixtures", data={"name": "X", "csrf_token": before_token})
    assert refused.status_code == 403


def test_sign_out_ends_the_session(designer):
    assert designer.post("/sign-out").status_code == 303
    assert designer.get("/").status_code == 303


def test_passwords_are_stored_as_argon2_hashes(world):
    with Session(world.state.engine) as db:
        stored = db.exec(select(User.password_hash).where(User.name == "dana")).one()
    assert stored.startswith("$argon2id$") and PASSWORD not in stored


def test_deactivated_user_cannot_sign_in(admin, world):
    with Session(world.state.engine) as db:
        sam = db.exec(select(User).where(User.name == "sam")).one()
    assert admin.post(f"/admin/users/{sam.id}", data={"role": "designer"}).status_code == 303
    client = sign_in(world, None)
    response = client.post(
        "/sign-in", data={"name": "sam", "password": PASSWORD, "csrf_token": csrf_token(client)}
    )
    assert response.status_code == 401


def test_sign_in_ignores_offsite_next(world):
    client = sign_in(world, None)
    response = client.post(
        "/sign-in",
        data={
            "name": "dana",
            "password": PASSWORD,
            "next": "//evil.example/",
            "csrf_token": csrf_token(client),
        },
    )
    assert response.headers["location"] == "/"
