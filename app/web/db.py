"""The database engine, sessions, and applying migrations."""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager

from alembic import command
from alembic.config import Config
from sqlalchemy import Engine, event
from sqlmodel import Session, create_engine

from .config import REPO_ROOT, shipped


def make_engine(url: str) -> Engine:
    """An engine for SQLite (WAL mode, foreign keys on) or PostgreSQL (psycopg 3)."""
    if url.startswith("sqlite"):
        engine = create_engine(
            # No overflow limit: a wait for a pooled connection must never stall the event loop.
            url,
            connect_args={"check_same_thread": False, "timeout": 30},
            pool_size=20,
            max_overflow=-1,
        )

        @event.listens_for(engine, "connect")
        def _pragmas(dbapi_connection, _record):
            cursor = dbapi_connection.cursor()
            cursor.execute("PRAGMA journal_mode=WAL")
            cursor.execute("PRAGMA foreign_keys=ON")
            cursor.execute("PRAGMA synchronous=NORMAL")
            cursor.close()

        return engine
    return create_engine(url, pool_size=10, max_overflow=20, pool_pre_ping=True)


def alembic_config(url: str) -> Config:
    ini = REPO_ROOT / "alembic.ini"  # in a source checkout (logging for the alembic command)
    config = Config(str(ini) if ini.is_file() else None)
    config.set_main_option("script_location", str(shipped("migrations")))
    config.set_main_option("sqlalchemy.url", url.replace("%", "%%"))
    return config


def migrate(engine: Engine, trail_key: str | None = None) -> None:
    """Bring the database to the newest migration. ``trail_key`` lets the migration that added
    the trail's key MACs seal entries stored before it (see migrations/versions/0003)."""
    config = alembic_config(str(engine.url.render_as_string(hide_password=False)))
    with engine.begin() as connection:
        config.attributes["connection"] = connection
        config.attributes["trail_key"] = trail_key
        command.upgrade(config, "head")


@contextmanager
def session_scope(engine: Engine) -> Iterator[Session]:
    """A session whose transaction commits when the block ends without an exception."""
    with Session(engine, expire_on_commit=False) as session:
        try:
            yield session
            session.commit()
        except BaseException:
            session.rollback()
            raise
