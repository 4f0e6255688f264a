"""The database engine, sessions, and applying migrations."""

from __future__ import annotations

import asyncio
import time
from collections.abc import Iterator
from contextlib import contextmanager

from alembic import command
from alembic.config import Config
from sqlalchemy import Engine, event
from sqlalchemy.exc import DisconnectionError
from sqlmodel import Session, create_engine

from .config import DEFAULT_POOL_OVERFLOW, DEFAULT_THREADS, REPO_ROOT, shipped


def make_engine(url: str, threads: int = DEFAULT_THREADS, overflow: int = DEFAULT_POOL_OVERFLOW) -> Engine:
    """An engine for SQLite (WAL mode, foreign keys on) or PostgreSQL (psycopg 3).

    The pool holds one connection per worker thread (``threads``, the size of the thread pool
    the routes run in) plus ``overflow`` for work outside requests: a request holds a connection
    only inside one worker-thread call, so a thread never waits for one. The engine refuses
    use from the event loop's thread (guard_event_loop)."""
    pool = {"pool_size": threads, "max_overflow": overflow, "pool_timeout": 30}
    if url.startswith("sqlite"):
        engine = create_engine(url, connect_args={"check_same_thread": False, "timeout": 30}, **pool)

        @event.listens_for(engine, "connect")
        def _pragmas(dbapi_connection, _record):
            cursor = dbapi_connection.cursor()
            cursor.execute("PRAGMA journal_mode=WAL")
            cursor.execute("PRAGMA foreign_keys=ON")
            cursor.execute("PRAGMA synchronous=NORMAL")
            cursor.close()

    else:
        engine = create_engine(url, **pool)
        ping_when_idle(engine)
    guard_event_loop(engine)
    return engine


# A connection back from the pool after this long is pinged before use. SQLAlchemy's
# pool_pre_ping pings on every checkout: a round trip per request that was half the cost of a
# kept page on PostgreSQL. Under load connections come back within milliseconds; a connection
# the server dropped while it was idle (a restart, an idle timeout) is found before use, and an
# error on a connection in use invalidates the whole pool (SQLAlchemy's disconnect handling).
PING_AFTER_IDLE_SECONDS = 1.0


def ping_when_idle(engine: Engine, idle_seconds: float = PING_AFTER_IDLE_SECONDS) -> None:
    """Ping a pooled connection on checkout when it has been idle ``idle_seconds`` or more; one
    that fails is discarded and the pool tries another (raising DisconnectionError is how a
    checkout listener asks for that)."""

    @event.listens_for(engine, "connect")
    @event.listens_for(engine, "checkin")
    def _idle_from_now(_dbapi_connection, record):
        if record is not None:
            record.info["idle_since"] = time.monotonic()

    @event.listens_for(engine, "checkout")
    def _ping(dbapi_connection, record, _proxy):
        if time.monotonic() - record.info.get("idle_since", 0.0) < idle_seconds:
            return
        try:
            cursor = dbapi_connection.cursor()
            try:
                cursor.execute("SELECT 1")
            finally:
                cursor.close()
            if not dbapi_connection.autocommit:
                dbapi_connection.rollback()  # end the transaction the ping began
        except Exception as exc:
            raise DisconnectionError(f"pooled connection failed its ping: {exc}") from exc


class DatabaseOnEventLoop(RuntimeError):
    """Database work was attempted on the event loop's thread (see DEVELOPERS.md)."""


def _on_event_loop() -> bool:
    try:
        asyncio.get_running_loop()
    except RuntimeError:
        return False
    return True


def guard_event_loop(engine: Engine) -> None:
    """Refuse a pooled connection on the thread that runs the event loop. A blocking wait there
    (for the pool, a lock, SQLite's write lock) would stall every request, and a connection
    that can only come back on the loop can deadlock it; routes and dependencies that use the
    database are plain functions, run in worker threads."""

    @event.listens_for(engine, "checkout")
    def _refuse_on_loop(_dbapi_connection, _record, _proxy):
        if _on_event_loop():
            raise DatabaseOnEventLoop(
                "database used on the event loop's thread: make the route or dependency a plain def"
            )


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
