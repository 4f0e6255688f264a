"""Database triggers that keep the trail append-only, and the data-version counter.

The guards (migration 0003; 0002 created the first set):
- ``trail_entry``: UPDATE and DELETE refused (and TRUNCATE on PostgreSQL); an INSERT must be
  the entry right after the head: seq = head seq + 1 and prev_hash = head hash.
- ``trail_head``: INSERT and DELETE refused (TRUNCATE too on PostgreSQL); an UPDATE either
  changes nothing (the append lock) or moves the head to the newest entry (its seq and hash).

They stop a mistake, a stray script or a casual edit through the database's own client. They
cannot check a MAC (the key is not in the database), and someone who can drop triggers can do
anything: `clampdown trail verify` (the key MACs, and an anchor kept elsewhere) catches that.
Tests drop and recreate the guards to clean up and to play the attacker. Changing these
statements needs a new migration (the sets used by earlier migrations stay as they were).

The data-version triggers are kept apart from the guards (``drop_guards`` leaves them): they
bump a counter on every change to a table the verification reads, so the printed record's cached
verification is recomputed after any change, including one made behind the app's back.
"""

from __future__ import annotations

from sqlalchemy import text

MESSAGE = "trail entries are append-only"
INSERT_MESSAGE = "a trail entry must follow the head (seq = head seq + 1, prev_hash = head hash)"
HEAD_MESSAGE = "the trail head only moves to the newest entry"

# ----- the first set (migration 0002): UPDATE and DELETE of trail_entry refused

SQLITE_CREATE_V1 = (
    f"CREATE TRIGGER trail_entry_no_update BEFORE UPDATE ON trail_entry "
    f"BEGIN SELECT RAISE(ABORT, '{MESSAGE}'); END",
    f"CREATE TRIGGER trail_entry_no_delete BEFORE DELETE ON trail_entry "
    f"BEGIN SELECT RAISE(ABORT, '{MESSAGE}'); END",
)
POSTGRES_CREATE_V1 = (
    "CREATE OR REPLACE FUNCTION trail_entry_refuse() RETURNS trigger LANGUAGE plpgsql AS "
    f"$$ BEGIN RAISE EXCEPTION '{MESSAGE}'; END $$",
    "CREATE TRIGGER trail_entry_no_change BEFORE UPDATE OR DELETE ON trail_entry "
    "FOR EACH ROW EXECUTE FUNCTION trail_entry_refuse()",
    "CREATE TRIGGER trail_entry_no_truncate BEFORE TRUNCATE ON trail_entry "
    "FOR EACH STATEMENT EXECUTE FUNCTION trail_entry_refuse()",
)

# ----- the current set (migration 0003): also INSERT checked, and the head guarded

SQLITE_CREATE = SQLITE_CREATE_V1 + (
    "CREATE TRIGGER trail_entry_insert_check BEFORE INSERT ON trail_entry "
    "WHEN NEW.seq IS NOT (SELECT seq + 1 FROM trail_head WHERE id = 1) "
    "OR NEW.prev_hash IS NOT (SELECT hash FROM trail_head WHERE id = 1) "
    f"BEGIN SELECT RAISE(ABORT, '{INSERT_MESSAGE}'); END",
    "CREATE TRIGGER trail_head_no_insert BEFORE INSERT ON trail_head "
    f"BEGIN SELECT RAISE(ABORT, '{HEAD_MESSAGE}'); END",
    "CREATE TRIGGER trail_head_no_delete BEFORE DELETE ON trail_head "
    f"BEGIN SELECT RAISE(ABORT, '{HEAD_MESSAGE}'); END",
    "CREATE TRIGGER trail_head_update_check BEFORE UPDATE ON trail_head "
    "WHEN NOT ((NEW.id IS OLD.id AND NEW.seq IS OLD.seq AND NEW.hash IS OLD.hash AND NEW.mac IS OLD.mac) "
    "OR (NEW.id IS OLD.id AND NEW.seq IS (SELECT max(seq) FROM trail_entry) "
    "AND NEW.hash IS (SELECT hash FROM trail_entry WHERE seq = NEW.seq))) "
    f"BEGIN SELECT RAISE(ABORT, '{HEAD_MESSAGE}'); END",
)
POSTGRES_CREATE = POSTGRES_CREATE_V1 + (
    "CREATE OR REPLACE FUNCTION trail_entry_insert_check() RETURNS trigger LANGUAGE plpgsql AS $$ "
    "DECLARE head_seq bigint; head_hash text; "
    "BEGIN SELECT seq, hash INTO head_seq, head_hash FROM trail_head WHERE id = 1; "
    "IF NOT FOUND OR NEW.seq IS DISTINCT FROM head_seq + 1 OR NEW.prev_hash IS DISTINCT FROM head_hash THEN "
    f"RAISE EXCEPTION '{INSERT_MESSAGE}'; END IF; RETURN NEW; END $$",
    "CREATE TRIGGER trail_entry_insert_check BEFORE INSERT ON trail_entry "
    "FOR EACH ROW EXECUTE FUNCTION trail_entry_insert_check()",
    "CREATE OR REPLACE FUNCTION trail_head_check() RETURNS trigger LANGUAGE plpgsql AS $$ "
    "BEGIN "
    f"IF TG_OP <> 'UPDATE' THEN RAISE EXCEPTION '{HEAD_MESSAGE}'; END IF; "
    "IF NEW.id = OLD.id AND NEW.seq = OLD.seq AND NEW.hash = OLD.hash "
    "AND NEW.mac IS NOT DISTINCT FROM OLD.mac THEN RETURN NEW; END IF; "
    "IF NEW.id = OLD.id AND NEW.seq = (SELECT max(seq) FROM trail_entry) "
    "AND NEW.hash = (SELECT hash FROM trail_entry WHERE seq = NEW.seq) THEN RETURN NEW; END IF; "
    f"RAISE EXCEPTION '{HEAD_MESSAGE}'; END $$",
    "CREATE TRIGGER trail_head_guard BEFORE INSERT OR UPDATE OR DELETE ON trail_head "
    "FOR EACH ROW EXECUTE FUNCTION trail_head_check()",
    "CREATE TRIGGER trail_head_no_truncate BEFORE TRUNCATE ON trail_head "
    "FOR EACH STATEMENT EXECUTE FUNCTION trail_entry_refuse()",
)

# Dropping is by name, IF EXISTS: lifts whichever set is installed.
SQLITE_DROP = tuple(
    f"DROP TRIGGER IF EXISTS {name}"
    for name in (
        "trail_entry_no_update",
        "trail_entry_no_delete",
        "trail_entry_insert_check",
        "trail_head_no_insert",
        "trail_head_no_delete",
        "trail_head_update_check",
    )
)
POSTGRES_DROP = (
    "DROP TRIGGER IF EXISTS trail_entry_no_change ON trail_entry",
    "DROP TRIGGER IF EXISTS trail_entry_no_truncate ON trail_entry",
    "DROP TRIGGER IF EXISTS trail_entry_insert_check ON trail_entry",
    "DROP TRIGGER IF EXISTS trail_head_guard ON trail_head",
    "DROP TRIGGER IF EXISTS trail_head_no_truncate ON trail_head",
    "DROP FUNCTION IF EXISTS trail_entry_insert_check()",
    "DROP FUNCTION IF EXISTS trail_head_check()",
    "DROP FUNCTION IF EXISTS trail_entry_refuse()",
)

# ----- the data-version counter (migration 0003)

# The tables migration 0003 gave triggers (it calls create_version_triggers: keep this as it was).
VERSIONED_TABLES = ("revision", "user_account", "report", "channel", "fixture", "trail_entry")
# Every table whose changes bump the data version at head: 0003's, and the parts library and
# derating profiles (migration 0007, which writes its own SQL).
VERSIONED_AT_HEAD = (*VERSIONED_TABLES, "part", "derating_profile", "derating_profile_version")


def _sqlite_version_triggers() -> tuple[str, ...]:
    return tuple(
        f"CREATE TRIGGER data_version_{table}_{op.lower()} AFTER {op} ON {table} "
        "BEGIN UPDATE data_version SET n = n + 1 WHERE id = 1; END"
        for table in VERSIONED_TABLES
        for op in ("INSERT", "UPDATE", "DELETE")
    )


POSTGRES_VERSION = (
    "CREATE SEQUENCE IF NOT EXISTS data_version_seq",
    "CREATE OR REPLACE FUNCTION data_version_bump() RETURNS trigger LANGUAGE plpgsql AS "
    "$$ BEGIN PERFORM nextval('data_version_seq'); RETURN NULL; END $$",
) + tuple(
    f"CREATE TRIGGER data_version_{table} AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON {table} "
    "FOR EACH STATEMENT EXECUTE FUNCTION data_version_bump()"
    for table in VERSIONED_TABLES
)


def _statements(dialect: str, create: bool, version: int = 2) -> tuple[str, ...]:
    if dialect == "postgresql":
        if not create:
            return POSTGRES_DROP
        return POSTGRES_CREATE if version >= 2 else POSTGRES_CREATE_V1
    if dialect == "sqlite":
        if not create:
            return SQLITE_DROP
        return SQLITE_CREATE if version >= 2 else SQLITE_CREATE_V1
    raise ValueError(f"no trail triggers for the {dialect} dialect; use SQLite or PostgreSQL")


def create_guards(connection, version: int = 2) -> None:
    """Install the guards (``version`` 1: the set migration 0002 made)."""
    for statement in _statements(connection.dialect.name, True, version):
        connection.execute(text(statement))


def drop_guards(connection) -> None:
    for statement in _statements(connection.dialect.name, False):
        connection.execute(text(statement))


def create_version_triggers(connection) -> None:
    dialect = connection.dialect.name
    statements = POSTGRES_VERSION if dialect == "postgresql" else _sqlite_version_triggers()
    for statement in statements:
        connection.execute(text(statement))


def writers_idle(connection) -> bool:
    """Whether something read now may be kept under the data version read before it.

    PostgreSQL bumps the version (a sequence) when a writer's statement runs, not when it
    commits, so a reader may see the new version with the old data; kept under that version,
    the old data would outlive the commit. Read after the version, this says no while any
    transaction that has written is still open (read-only ones hold no transaction id and are
    not counted): a writer that bumped before the version was read has then either committed
    (what is read next shows its change) or is counted here. SQLite bumps a row inside the
    writer's transaction: a reader sees the old version with the old data, always keepable.

    An open writer is seen by the lock every transaction holds on its own id from its first
    write to its end (pg_locks reads the live lock table, not a snapshot, and any role may read
    it; a snapshot's in-progress list leaves out ids at or above its xmax, as a writer's own
    newest id is)."""
    if connection.dialect.name != "postgresql":
        return True
    return not connection.execute(
        text(
            "SELECT EXISTS (SELECT 1 FROM pg_locks WHERE locktype = 'transactionid' "
            "AND mode = 'ExclusiveLock' AND granted AND pid <> pg_backend_pid())"
        )
    ).scalar()


# The counter's current value as an SQL expression, per dialect (current_user reads it in the
# same statement as the account).
DATA_VERSION_SQL = {
    "sqlite": "(SELECT n FROM data_version WHERE id = 1)",
    "postgresql": "(SELECT CASE WHEN is_called THEN last_value ELSE 0 END FROM data_version_seq)",
}


def data_version(connection) -> int:
    """The counter's current value (any change to a versioned table makes it larger)."""
    sql = DATA_VERSION_SQL["postgresql" if connection.dialect.name == "postgresql" else "sqlite"]
    return int(connection.execute(text(f"SELECT {sql}")).scalar() or 0)
