"""trail entries and head carry a key MAC; INSERT and the head guarded; a data-version counter

Adds trail_entry.mac and trail_head.mac (HMAC-SHA256 under the trail key, which is kept outside
the database), replaces the trail guards with the set that also checks INSERT (seq and
prev_hash follow the head) and guards trail_head, and adds the data_version counter with its
triggers. Entries already stored are sealed with the key when one is given to the migration
(app.web.db.migrate passes the configured key); otherwise they stay without a MAC and
`clampdown trail verify` says so.

Revision ID: 0003
Revises: 0002
Create Date: 2026-12-02 04:40:00
"""

from collections.abc import Sequence

import sqlalchemy as sa
import sqlmodel
from alembic import op

from app.signoff.chain import entry_mac, head_mac
from app.web.trail_guard import create_guards, create_version_triggers, drop_guards

revision: str = "0003"
down_revision: str | None = "0002"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def _seal(connection) -> None:
    """MAC the entries stored before this migration, if there are any and a key was given."""
    count = connection.execute(sa.text("SELECT count(*) FROM trail_entry")).scalar()
    key = op.get_context().config.attributes.get("trail_key") if op.get_context().config else None
    if not count or not key:
        return
    key = key.encode("utf-8")
    rows = connection.execute(sa.text("SELECT seq, hash FROM trail_entry ORDER BY seq")).all()
    for seq, digest in rows:
        connection.execute(
            sa.text("UPDATE trail_entry SET mac = :mac WHERE seq = :seq"),
            {"mac": entry_mac(key, digest), "seq": seq},
        )
    seq, digest = connection.execute(sa.text("SELECT seq, hash FROM trail_head WHERE id = 1")).one()
    connection.execute(
        sa.text("UPDATE trail_head SET mac = :mac WHERE id = 1"), {"mac": head_mac(key, seq, digest)}
    )


def upgrade() -> None:
    connection = op.get_bind()
    drop_guards(connection)
    op.add_column("trail_entry", sa.Column("mac", sqlmodel.sql.sqltypes.AutoString(length=64), nullable=True))
    op.add_column("trail_head", sa.Column("mac", sqlmodel.sql.sqltypes.AutoString(length=64), nullable=True))
    op.create_table(
        "data_version",
        sa.Column("id", sa.Integer(), autoincrement=False, nullable=False),
        sa.Column("n", sa.Integer(), nullable=False),
        sa.PrimaryKeyConstraint("id"),
    )
    op.bulk_insert(
        sa.table("data_version", sa.column("id", sa.Integer), sa.column("n", sa.Integer)), [{"id": 1, "n": 0}]
    )
    _seal(connection)
    create_guards(connection, version=2)
    create_version_triggers(connection)


def downgrade() -> None:
    connection = op.get_bind()
    drop_guards(connection)
    if connection.dialect.name == "postgresql":
        for table in ("revision", "user_account", "report", "channel", "fixture", "trail_entry"):
            connection.execute(sa.text(f"DROP TRIGGER IF EXISTS data_version_{table} ON {table}"))
        connection.execute(sa.text("DROP FUNCTION IF EXISTS data_version_bump()"))
        connection.execute(sa.text("DROP SEQUENCE IF EXISTS data_version_seq"))
    else:
        for table in ("revision", "user_account", "report", "channel", "fixture", "trail_entry"):
            for kind in ("insert", "update", "delete"):
                connection.execute(sa.text(f"DROP TRIGGER IF EXISTS data_version_{table}_{kind}"))
    op.drop_table("data_version")
    # Plain DROP COLUMN (SQLite 3.35 and later): a batch copy would reflect every table the
    # trail refers to, and fail on references a later downgrade left behind.
    op.drop_column("trail_head", "mac")
    op.drop_column("trail_entry", "mac")
    create_guards(connection, version=1)
