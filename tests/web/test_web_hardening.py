"""Sign-in throttle, request-body limits, revocable sessions, and the security headers."""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from fastapi.testclient import TestClient
from sqlmodel import Session, select

from app.web.main import create_app
from app.web.models import User
from app.web.services import users

from .conftest import PASSWORD, csrf_token, sign_in

TEMPLATES = Path(__file__).resolve().parents[2] / "templates"


def _variant(app, **settings):
    """The same database under different settings."""
    return create_app(app.state.settings.model_copy(update=settings), engine=app.state.engine)


def _form_sign_in(client: TestClient, name: str, password: str):
    return client.post(
        "/sign-in", data={"name": name, "password": password, "csrf_token": csrf_token(client)}
    )


# ---------------------------------------------------------------- throttle


def test_failed_sign_ins_per_account_end_in_429_with_retry_after(world, monkeypatch):
    app = _variant(world, signin_failures_per_account=3, signin_window_seconds=600)
    client = TestClient(app, follow_redirects=False)
    for _ in range(3):
        assert _form_sign_in(client, "lee", "wrong password").status_code == 401
    hashed = []
    monkeypatch.setattr(users, "verify_password", lambda *a: hashed.append(a) or True)
    refused = _form_sign_in(client, "LEE", PASSWORD)  # names are matched without case
    assert refused.status_code == 429
    assert 1 <= int(refused.headers["Retry-After"]) <= 600
    assert "Too many failed sign-ins" in refused.text
    # the API refuses the same account too, and no password hash was computed for either
    api = client.post(
        "/api/v1/session",
        json={"name": "lee", "password": PASSWORD},
        headers={"X-CSRF-Token": csrf_token(client)},
    )
    assert api.status_code == 429 and 1 <= int(api.headers["Retry-After"]) <= 600
    assert hashed == []
    # another account from the same address is still let in
    monkeypatch.undo()
    assert _form_sign_in(client, "dana", PASSWORD).status_code == 303


def test_failed_sign_ins_per_address_end_in_429(world):
    app = _variant(world, signin_failures_per_account=100, signin_failures_per_address=4)
    client = TestClient(app, follow_redirects=False)
    for name in ("nobody1", "nobody2", "lee", "dana"):
        assert _form_sign_in(client, name, "wrong password").status_code == 401
    refused = _form_sign_in(client, "ari", PASSWORD)
    assert refused.status_code == 429 and int(refused.headers["Retry-After"]) >= 1


def test_a_success_clears_the_accounts_count(world):
    app = _variant(world, signin_failures_per_account=3)
    client = TestClient(app, follow_redirects=False)
    for _ in range(2):
        assert _form_sign_in(client, "lee", "wrong password").status_code == 401
    assert _form_sign_in(client, "lee", PASSWORD).status_code == 303
    for _ in range(2):
        assert _form_sign_in(client, "lee", "wrong password").status_code == 401
    assert _form_sign_in(client, "lee", PASSWORD).status_code == 303  # 2 + 2 failures, never 3 in a row


# ---------------------------------------------------------------- body limits


def test_an_over_size_json_body_is_refused_before_parsing_even_anonymous(world):
    app = _variant(world, body_limit_json=10_000)
    client = TestClient(app)
    body = b'{"name": "lee", "password": "' + b"x" * 20_000 + b'"}'
    answer = client.post("/api/v1/session", content=body, headers={"Content-Type": "application/json"})
    assert answer.status_code == 413
    assert "10,000 bytes" in answer.text and "JSON API" in answer.text


def test_a_chunked_body_without_length_is_counted(world):
    app = _variant(world, body_limit_json=10_000)
    client = TestClient(app)

    def chunks():
        for _ in range(30):
            yield b"x" * 1000

    answer = client.post("/api/v1/evaluate", content=chunks(), headers={"Content-Type": "application/json"})
    assert "content-length" not in {k.lower() for k in answer.request.headers}
    assert answer.status_code == 413 and "10,000 bytes" in answer.text


def test_form_and_upload_limits_by_route_kind(world):
    app = _variant(world, body_limit_form=5_000, body_limit_upload=50_000)
    client = sign_in(app, "dana")
    big_form = client.post("/fixtures", data={"name": "x" * 6_000, "description": ""})
    assert big_form.status_code == 413 and "5,000 bytes" in big_form.text and "a form" in big_form.text
    # a 20 kB file is over the form limit but within the upload limit: the import route judges it
    csv = "name,hfe\n" + "".join(f"T{i},100\n" for i in range(2000))
    within = client.post(
        "/parts/import", data={"kind": "transistor"}, files={"file": ("p.csv", csv.encode())}
    )
    assert within.status_code != 413
    too_big = client.post(
        "/parts/import", data={"kind": "transistor"}, files={"file": ("p.csv", b"x" * 60_000)}
    )
    assert too_big.status_code == 413 and "50,000 bytes" in too_big.text and "file upload" in too_big.text


def test_default_limits_let_ordinary_requests_through(designer):
    assert (
        designer.post("/fixtures", data={"name": "Limits test bench", "description": "d" * 4000}).status_code
        == 303
    )


# ---------------------------------------------------------------- sessions


def _cookie(client: TestClient) -> str:
    return client.cookies["clampdown_session"]


def _with_cookie(app, cookie: str) -> TestClient:
    client = TestClient(app, follow_redirects=False)
    client.cookies.set("clampdown_session", cookie)
    return client


def test_sign_out_ends_a_captured_cookie(world):
    lee = sign_in(world, "lee")
    captured = _cookie(lee)
    assert _with_cookie(world, captured).get("/").status_code == 200
    assert lee.post("/sign-out").status_code == 303
    stolen = _with_cookie(world, captured)
    assert stolen.get("/").status_code == 303  # to the sign-in page
    assert stolen.get("/api/v1/session").json()["user"] is None
    assert stolen.get("/api/v1/fixtures").status_code == 401
    assert sign_in(world, "lee").get("/").status_code == 200  # signing in again works


def test_deactivation_ends_the_accounts_sessions_at_once(world, admin):
    dana = sign_in(world, "dana")
    assert dana.get("/api/v1/session").json()["user"] == "dana"
    with Session(world.state.engine) as db:
        dana_id = db.exec(select(User.id).where(User.name == "dana")).one()
    assert (
        admin.post(f"/admin/users/{dana_id}", data={"role": "designer"}).status_code == 303
    )  # active unticked
    assert dana.get("/api/v1/session").json()["user"] is None
    assert dana.get("/").status_code == 303


def test_a_password_change_ends_the_accounts_sessions(world):
    lee = sign_in(world, "lee")
    with Session(world.state.engine) as db:
        lee_id = db.exec(select(User.id).where(User.name == "lee")).one()
        users.set_password(db, lee_id, "a new long password")
    assert lee.get("/api/v1/session").json()["user"] is None
    client = TestClient(world, follow_redirects=False)
    assert _form_sign_in(client, "lee", "a new long password").status_code == 303


def test_the_cookie_is_secure_when_the_setting_says_https(world):
    plain = TestClient(world).get("/sign-in").headers["set-cookie"]
    assert "HttpOnly" in plain and "SameSite=Lax" in plain and "Secure" not in plain
    https = _variant(world, cookie_secure=True)
    answer = TestClient(https, base_url="https://testserver").get("/sign-in")
    assert "; Secure" in answer.headers["set-cookie"]
    assert answer.headers["Strict-Transport-Security"].startswith("max-age=")


# ---------------------------------------------------------------- headers


@pytest.mark.parametrize(
    "path",
    ["/", "/sign-in", "/api/v1/session", "/api/v1/fixtures", "/static/app.css", "/nowhere", "/healthz"],
)
def test_security_headers_on_every_response(world, path):
    answer = TestClient(world, follow_redirects=False).get(path)
    csp = answer.headers["Content-Security-Policy"]
    assert "frame-ancestors 'none'" in csp
    script_src = re.search(r"script-src ([^;]+)", csp).group(1)
    assert script_src.strip() == "'self'"  # no inline script, no eval
    assert answer.headers["X-Frame-Options"] == "DENY"
    assert answer.headers["X-Content-Type-Options"] == "nosniff"
    assert answer.headers["Referrer-Policy"] == "same-origin"


def test_errors_and_refusals_carry_the_headers_too(world):
    app = _variant(world, body_limit_json=1_000)
    answer = TestClient(app).post("/api/v1/session", content=b"x" * 5_000)
    assert answer.status_code == 413 and answer.headers["X-Frame-Options"] == "DENY"


def test_templates_need_no_inline_script_and_htmx_no_eval():
    """The policy allows scripts from /static only: no <script> without src, no on*= handler,
    no javascript: URL, and htmx told not to eval (trigger filters and js: values need eval)."""
    for template in TEMPLATES.rglob("*.html"):
        text = template.read_text(encoding="utf-8")
        assert not re.search(r"<script(?![^>]*\ssrc=)[^>]*>", text), template
        assert not re.search(r"\son[a-z]+\s*=", text), template
        assert "javascript:" not in text and "js:" not in text, template
        assert not re.search(r"hx-trigger=\"[^\"]*\[", text), f"{template}: a trigger filter needs eval"
    base = (TEMPLATES / "base.html").read_text(encoding="utf-8")
    assert '"allowEval": false' in base and '"includeIndicatorStyles": false' in base
