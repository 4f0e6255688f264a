"""team derating profiles, versioned; the version that judged each revision

derating_profile names a team's profile; derating_profile_version holds its figures, one row per
edit (never updated). A fixture may name a default profile; a revision records the profile
version in force when it was handed in; reports are cached per profile too (profile_key "" is
the built-in default, so the reports already stored stay valid).

Revision ID: 0005
Revises: 0004
Create Date: 2026-12-02 05:00:00
"""

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0005"
down_revision: str | None = "0004"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    op.create_table(
        "derating_profile",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(length=120), nullable=False),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.PrimaryKeyConstraint("id"),
        sa.UniqueConstraint("name"),
    )
    op.create_table(
        "derating_profile_version",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("profile_id", sa.Integer(), nullable=False),
        sa.Column("version", sa.Integer(), nullable=False),
        sa.Column("figures", sa.JSON(), nullable=False),
        sa.Column("note", sa.String(length=2000), nullable=False),
        sa.Column("author_id", sa.Integer(), nullable=False),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.ForeignKeyConstraint(["author_id"], ["user_account.id"]),
        sa.ForeignKeyConstraint(["profile_id"], ["derating_profile.id"]),
        sa.PrimaryKeyConstraint("id"),
        sa.UniqueConstraint("profile_id", "version", name="uq_profile_version"),
    )
    op.create_index(
        "ix_derating_profile_version_profile_id", "derating_profile_version", ["profile_id"], unique=False
    )
    # SQLite adds a column with its REFERENCES clause in place (no table copy, so the rows that
    # refer to revisions are untouched); PostgreSQL adds the constraint after.
    sqlite = op.get_bind().dialect.name == "sqlite"
    for table, column, target in (
        ("fixture", "default_profile_id", "derating_profile"),
        ("revision", "profile_version_id", "derating_profile_version"),
    ):
        if sqlite:
            # A downgrade on SQLite leaves the column in place (it cannot drop it): reuse it.
            present = {c["name"] for c in sa.inspect(op.get_bind()).get_columns(table)}
            if column not in present:
                op.execute(f"ALTER TABLE {table} ADD COLUMN {column} INTEGER REFERENCES {target} (id)")
        else:
            op.add_column(table, sa.Column(column, sa.Integer(), nullable=True))
            op.create_foreign_key(f"fk_{table}_{column}", table, target, [column], ["id"])
    with op.batch_alter_table("report") as batch:
        batch.add_column(sa.Column("profile_key", sa.String(length=20), nullable=False, server_default=""))
        batch.drop_constraint("uq_report_hash_version", type_="unique")
        batch.create_unique_constraint(
            "uq_report_hash_version_profile", ["content_hash", "engine_version", "profile_key"]
        )
    if sqlite:
        # SQLite's batch mode rebuilt the report table, and its triggers went with it: put back
        # the data-version triggers migration 0003 made, or kept pages and the record's kept
        # verification would not see a report edited behind the app's back.
        for event in ("INSERT", "UPDATE", "DELETE"):
            op.execute(
                f"CREATE TRIGGER IF NOT EXISTS data_version_report_{event.lower()} AFTER {event} ON report "
                "BEGIN UPDATE data_version SET n = n + 1 WHERE id = 1; END"
            )


def downgrade() -> None:
    with op.batch_alter_table("report") as batch:
        batch.drop_constraint("uq_report_hash_version_profile", type_="unique")
        batch.execute("DELETE FROM report WHERE profile_key != ''")
        batch.create_unique_constraint("uq_report_hash_version", ["content_hash", "engine_version"])
        batch.drop_column("profile_key")
    if op.get_bind().dialect.name == "sqlite":
        # SQLite cannot drop a column with a REFERENCES clause, and copying revision (which other
        # tables refer to) fails their foreign keys: the two nullable columns stay, unused by
        # the older schema, and their references are cleared so the profile tables can go.
        op.execute("UPDATE fixture SET default_profile_id = NULL")
        op.execute("UPDATE revision SET profile_version_id = NULL")
    else:
        op.drop_column("revision", "profile_version_id")
        op.drop_column("fixture", "default_profile_id")
    op.drop_index("ix_derating_profile_version_profile_id", table_name="derating_profile_version")
    op.drop_table("derating_profile_version")
    op.drop_table("derating_profile")
