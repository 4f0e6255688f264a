"""Database triggers that refuse UPDATE and DELETE (and, on PostgreSQL, TRUNCATE) of trail rows.

Migration 0002 creates them. They stop a mistake or a casual edit through the database's own
client; someone who drops them or edits the SQLite file directly is caught by
`clampdown trail verify` instead. Tests drop and recreate them to clean up between cases and to
play the attacker. Changing these statements needs a new migration.
"""

from __future__ import annotations

from sqlalchemy import text

MESSAGE = "trail entries are append-only"

SQLITE_CREATE = (
    f"CREATE TRIGGER trail_entry_no_update BEFORE UPDATE ON trail_entry "
    f"BEGIN SELECT RAISE(ABORT, '{MESSAGE}'); END",
    f"CREATE TRIGGER trail_entry_no_delete BEFORE DELETE ON trail_entry "
    f"BEGIN SELECT RAISE(ABORT, '{MESSAGE}'); END",
)
SQLITE_DROP = (
    "DROP TRIGGER IF EXISTS trail_entry_no_update",
    "DROP TRIGGER IF EXISTS trail_entry_no_delete",
)
POSTGRES_CREATE = (
    "CREATE OR REPLACE FUNCTION trail_entry_refuse() RETURNS trigger LANGUAGE plpgsql AS "
    f"$$ BEGIN RAISE EXCEPTION '{MESSAGE}'; END $$",
    "CREATE TRIGGER trail_entry_no_change BEFORE UPDATE OR DELETE ON trail_entry "
    "FOR EACH ROW EXECUTE FUNCTION trail_entry_refuse()",
    "CREATE TRIGGER trail_entry_no_truncate BEFORE TRUNCATE ON trail_entry "
    "FOR EACH STATEMENT EXECUTE FUNCTION trail_entry_refuse()",
)
POSTGRES_DROP = (
    "DROP TRIGGER IF EXISTS trail_entry_no_change ON trail_entry",
    "DROP TRIGGER IF EXISTS trail_entry_no_truncate ON trail_entry",
    "DROP FUNCTION IF EXISTS trail_entry_refuse()",
)


def _statements(dialect: str, create: bool) -> tuple[str, ...]:
    if dialect == "postgresql":
        return POSTGRES_CREATE if create else POSTGRES_DROP
    if dialect == "sqlite":
        return SQLITE_CREATE if create else SQLITE_DROP
    raise ValueError(f"no trail triggers for the {dialect} dialect; use SQLite or PostgreSQL")


def create_guards(connection) -> None:
    for statement in _statements(connection.dialect.name, True):
        connection.execute(text(statement))


def drop_guards(connection) -> None:
    for statement in _statements(connection.dialect.name, False):
        connection.execute(text(statement))
