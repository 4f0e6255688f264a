"""Web fixtures: every test runs on SQLite, and on PostgreSQL too when
CLAMPDOWN_TEST_DATABASE_URL is set (e.g. postgresql+psycopg://postgres@127.0.0.1:5432/test)."""

from __future__ import annotations

import os
import warnings

import pytest
from argon2 import PasswordHasher
from sqlalchemy import text

warnings.filterwarnings("ignore", message=".*httpx2.*")

from fastapi.testclient import TestClient  # noqa: E402

from app.signoff.chain import GENESIS  # noqa: E402
from app.web import demo, security  # noqa: E402
from app.web.config import Settings, normalise_database_url  # noqa: E402
from app.web.db import make_engine, migrate  # noqa: E402
from app.web.main import create_app  # noqa: E402
from app.web.services import users  # noqa: E402
from app.web.trail_guard import create_guards, drop_guards  # noqa: E402

PG_URL = os.environ.get("CLAMPDOWN_TEST_DATABASE_URL")
BACKENDS = ["sqlite"] + (["postgresql"] if PG_URL else [])
TABLES = (
    "trail_entry",
    "revision_part",
    "report",
    "revision",
    "channel",
    "fixture",
    "derating_profile_version",
    "derating_profile",
    "part",
    "user_account",
)
PASSWORD = demo.DEMO_PASSWORD
TRAIL_KEY = "test-trail-key"

# Real argon2, cheap parameters: the tests sign in hundreds of times.
_fast = PasswordHasher(time_cost=1, memory_cost=1024, parallelism=1)


@pytest.fixture(scope="session", autouse=True)
def _cheap_password_hashing():
    mp = pytest.MonkeyPatch()
    mp.setattr(users, "hash_password", _fast.hash)
    mp.setattr(users, "DUMMY_HASH", _fast.hash("nobody"))
    yield
    mp.undo()


@pytest.fixture(scope="session", params=BACKENDS)
def database_url(request, tmp_path_factory) -> str:
    if request.param == "sqlite":
        return f"sqlite:///{tmp_path_factory.mktemp('db') / 'test.sqlite3'}"
    return normalise_database_url(PG_URL)


@pytest.fixture(scope="session")
def engine(database_url):
    engine = make_engine(database_url)
    if engine.dialect.name == "postgresql":
        with engine.begin() as connection:  # start from an empty schema
            connection.execute(text("DROP SCHEMA public CASCADE; CREATE SCHEMA public"))
    migrate(engine)
    yield engine
    engine.dispose()


def _clean(engine) -> None:
    """Empty every table. The trail's triggers refuse that, so they are lifted for the moment
    and put back in the same transaction."""
    with engine.begin() as connection:
        drop_guards(connection)
        if engine.dialect.name == "postgresql":
            connection.execute(text(f"TRUNCATE {', '.join(TABLES)} RESTART IDENTITY CASCADE"))
        else:
            for table in TABLES:
                connection.execute(text(f"DELETE FROM {table}"))
        connection.execute(
            text("UPDATE trail_head SET seq = 0, hash = :genesis WHERE id = 1"), {"genesis": GENESIS}
        )
        create_guards(connection)


@pytest.fixture
def app(engine, tmp_path):
    _clean(engine)
    settings = Settings(
        data_dir=tmp_path,
        database_url=engine.url.render_as_string(False),
        secret_key="test-key",
        trail_key=TRAIL_KEY,
    )
    return create_app(settings, engine=engine)


@pytest.fixture
def world(app):
    """The demo scenario: parts, users lee (reviewer), dana and sam (designers), ari (admin),
    the fixture with five channels and their revisions."""
    from sqlmodel import Session

    with Session(app.state.engine, expire_on_commit=False) as db:
        demo.load_seed(db)
    return app


def csrf_token(client: TestClient) -> str:
    return client.get("/api/v1/session").json()["csrf_token"]


def sign_in(app, name: str | None) -> TestClient:
    """A client signed in as ``name`` (None: anonymous) that sends its CSRF token as a header."""
    client = TestClient(app, follow_redirects=False)
    if name is not None:
        response = client.post(
            "/sign-in", data={"name": name, "password": PASSWORD, "csrf_token": csrf_token(client)}
        )
        assert response.status_code == 303, response.text
    client.headers["X-CSRF-Token"] = csrf_token(client)
    return client


ROLE_USERS = {"anonymous": None, "reviewer": "lee", "designer": "dana", "admin": "ari"}


@pytest.fixture
def as_role(world):
    return lambda role: sign_in(world, ROLE_USERS[role])


@pytest.fixture
def designer(world):
    return sign_in(world, "dana")


@pytest.fixture
def reviewer(world):
    return sign_in(world, "lee")


@pytest.fixture
def admin(world):
    return sign_in(world, "ari")


__all__ = ["security"]


def channel_id(app, name: str) -> int:
    from sqlmodel import Session, select

    from app.web.models import Channel

    with Session(app.state.engine) as db:
        return db.exec(select(Channel.id).where(Channel.name == name)).one()


def revision_ids(app, channel_name: str) -> list[int]:
    """The channel's revision ids, oldest first."""
    from sqlmodel import Session, select

    from app.web.models import Revision

    cid = channel_id(app, channel_name)
    with Session(app.state.engine) as db:
        return list(db.exec(select(Revision.id).where(Revision.channel_id == cid).order_by(Revision.number)))


def part_id(app, kind: str, name: str) -> int:
    from sqlmodel import Session, select

    from app.web.models import Part

    with Session(app.state.engine) as db:
        return db.exec(select(Part.id).where(Part.kind == kind, Part.name == name)).one()


K1 = "K1 element contactor"
K2 = "K2 vent fan relay"
K3 = "K3 over-temperature alarm relay"


def form_values(app, channel_name: str) -> dict[str, str]:
    """The new-revision form as pre-filled from the channel's latest revision."""
    from sqlmodel import Session

    from app.web.services import revision_form, revisions

    with Session(app.state.engine) as db:
        latest = revisions.latest_revision(db, channel_id(app, channel_name))
        return revision_form.values_from_document(db, latest.document, revisions.part_links(db, latest.id))


def latest_document(app, channel_name: str) -> dict:
    from sqlmodel import Session

    from app.web.services import revisions

    with Session(app.state.engine) as db:
        return revisions.latest_revision(db, channel_id(app, channel_name)).document
