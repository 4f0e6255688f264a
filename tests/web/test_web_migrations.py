"""Migrations: an empty database reaches head, and the models match what the migrations build."""

import os
import uuid

import pytest
from alembic.autogenerate import compare_metadata
from alembic.migration import MigrationContext
from alembic.script import ScriptDirectory
from sqlalchemy import create_engine, inspect, text
from sqlmodel import SQLModel

from app.web.config import normalise_database_url
from app.web.db import alembic_config, make_engine, migrate

PG_URL = os.environ.get("CLAMPDOWN_TEST_DATABASE_URL")


@pytest.fixture(params=["sqlite"] + (["postgresql"] if PG_URL else []))
def empty_database(request, tmp_path):
    if request.param == "sqlite":
        yield f"sqlite:///{tmp_path / 'empty.sqlite3'}"
        return
    url = normalise_database_url(PG_URL)
    name = f"clampdown_mig_{uuid.uuid4().hex[:8]}"
    server = create_engine(url, isolation_level="AUTOCOMMIT")
    with server.connect() as connection:
        connection.execute(text(f'CREATE DATABASE "{name}"'))
    yield url.rsplit("/", 1)[0] + "/" + name
    with server.connect() as connection:
        connection.execute(text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
    server.dispose()


def test_empty_database_migrates_to_head_and_matches_the_models(empty_database):
    engine = make_engine(empty_database)
    migrate(engine)
    with engine.connect() as connection:
        tables = set(inspect(connection).get_table_names())
        differences = compare_metadata(MigrationContext.configure(connection), SQLModel.metadata)
    engine.dispose()
    assert {"part", "fixture", "channel", "revision", "revision_part", "report", "user_account"} <= tables
    assert differences == []


def test_migrating_twice_changes_nothing(empty_database):
    engine = make_engine(empty_database)
    migrate(engine)
    migrate(engine)
    with engine.connect() as connection:
        current = connection.execute(text("select version_num from alembic_version")).scalar()
    head = ScriptDirectory.from_config(alembic_config(empty_database)).get_current_head()
    assert current == head
    engine.dispose()


def test_sqlite_runs_in_wal_mode(tmp_path):
    engine = make_engine(f"sqlite:///{tmp_path / 'wal.sqlite3'}")
    with engine.connect() as connection:
        assert connection.execute(text("PRAGMA journal_mode")).scalar() == "wal"
    engine.dispose()


def _seeded_then_back_to_0002(url: str, key: str):
    from alembic import command
    from sqlmodel import Session

    from app.web import demo
    from app.web.services import trail

    engine = make_engine(url)
    trail.use_key(engine, key)
    migrate(engine, key)
    with Session(engine, expire_on_commit=False) as db:
        demo.load_seed(db)
    config = alembic_config(url)
    with engine.begin() as connection:
        config.attributes["connection"] = connection
        command.downgrade(config, "0002")
    return engine


@pytest.mark.parametrize("with_key", [True, False])
def test_upgrading_a_trail_made_before_macs_seals_it_with_the_key_given(empty_database, with_key):
    """A database whose trail predates the key MACs: the migration seals it when given the key;
    without one, verification names the first entry that has no MAC."""
    from sqlmodel import Session

    from app.web.services import trail

    engine = _seeded_then_back_to_0002(empty_database, "seal-key")
    with engine.connect() as connection:
        columns = {c["name"] for c in inspect(connection).get_columns("trail_entry")}
    assert "mac" not in columns
    migrate(engine, "seal-key" if with_key else None)
    with Session(engine) as db:
        check = trail.verify_all(db, key=b"seal-key")
    engine.dispose()
    if with_key:
        assert check.ok, check.summary
    else:
        assert not check.ok and "entry 1: has no key MAC" in check.summary


def test_every_versioned_table_still_bumps_the_data_version_at_head(empty_database):
    """A later migration that rebuilds a table (SQLite's batch mode copies it) must not lose the
    triggers that tell kept pages and the record's kept verification that something changed."""
    from app.web.trail_guard import VERSIONED_AT_HEAD, data_version

    engine = make_engine(empty_database)
    migrate(engine)
    with engine.begin() as connection:
        for table in VERSIONED_AT_HEAD:
            before = data_version(connection)
            # An UPDATE that matches no row still fires statement triggers on PostgreSQL; on
            # SQLite row triggers need a row, so count on an INSERT-free check: the trigger list.
            if connection.dialect.name == "sqlite":
                names = {
                    row[0]
                    for row in connection.execute(
                        text("SELECT name FROM sqlite_master WHERE type = 'trigger' AND tbl_name = :t"),
                        {"t": table},
                    )
                }
                assert {f"data_version_{table}_{op}" for op in ("insert", "update", "delete")} <= names, table
            else:
                connection.execute(text(f"DELETE FROM {table} WHERE false"))
                assert data_version(connection) > before, table
    engine.dispose()
