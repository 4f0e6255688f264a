"""a change to the parts library or the derating profiles bumps the data version

The data version (migration 0003) keys the kept pages and API lists; the part, derating_profile
and derating_profile_version tables had no trigger, so a kept parts list or fixture page could
not see a part added, edited or archived, or a profile added. This adds the same triggers the
other versioned tables have. The SQL is written out here, not taken from
app.web.trail_guard, so this step stays what it was when the app changes.

Revision ID: 0007
Revises: 0006
Create Date: 2026-12-02 16:20:00.000000
"""

from collections.abc import Sequence

from alembic import op

revision: str = "0007"
down_revision: str | None = "0006"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

EVENTS = ("INSERT", "UPDATE", "DELETE")
TABLES = ("part", "derating_profile", "derating_profile_version")


def upgrade() -> None:
    postgresql = op.get_bind().dialect.name == "postgresql"
    for table in TABLES:
        if postgresql:  # data_version_bump() and data_version_seq come from migration 0003
            op.execute(
                f"CREATE TRIGGER data_version_{table} AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE "
                f"ON {table} FOR EACH STATEMENT EXECUTE FUNCTION data_version_bump()"
            )
            continue
        for event in EVENTS:
            op.execute(
                f"CREATE TRIGGER IF NOT EXISTS data_version_{table}_{event.lower()} AFTER {event} "
                f"ON {table} BEGIN UPDATE data_version SET n = n + 1 WHERE id = 1; END"
            )


def downgrade() -> None:
    postgresql = op.get_bind().dialect.name == "postgresql"
    for table in TABLES:
        if postgresql:
            op.execute(f"DROP TRIGGER IF EXISTS data_version_{table} ON {table}")
            continue
        for event in EVENTS:
            op.execute(f"DROP TRIGGER IF EXISTS data_version_{table}_{event.lower()}")
