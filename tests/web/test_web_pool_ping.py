"""A pooled PostgreSQL connection the server dropped while it sat idle is replaced before use,
not handed to a request (db.ping_when_idle: pinged when idle a second or more)."""

import time

import pytest
from sqlalchemy import text

from app.web.db import PING_AFTER_IDLE_SECONDS, make_engine


def test_a_connection_dropped_while_idle_is_replaced_before_use(engine):
    if engine.dialect.name != "postgresql":
        pytest.skip("a SQLite file has no server to drop the connection")
    pooled = make_engine(engine.url.render_as_string(hide_password=False), threads=1, overflow=0)
    try:
        with pooled.connect() as connection:
            first = connection.execute(text("SELECT pg_backend_pid()")).scalar()
        with engine.connect() as other:  # the server ends it, as a restart or an idle timeout would
            assert other.execute(text("SELECT pg_terminate_backend(:pid)"), {"pid": first}).scalar()
        time.sleep(PING_AFTER_IDLE_SECONDS + 0.2)
        with pooled.connect() as connection:  # the same pool slot: pinged, found dead, replaced
            second = connection.execute(text("SELECT pg_backend_pid()")).scalar()
        assert second != first
    finally:
        pooled.dispose()
