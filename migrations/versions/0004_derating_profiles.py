"""team derating profiles, versioned; the version that judged each revision

derating_profile names a team's profile; derating_profile_version holds its figures, one row per
edit (never updated). A fixture may name a default profile; a revision records the profile
version in force when it was handed in; reports are cached per profile too (profile_key "" is
the built-in default, so the reports already stored stay valid).

Revision ID: 0004
Revises: 0003
Create Date: 2026-12-02 05:00:00
"""

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0004"
down_revision: str | None = "0003"
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


def downgrade() -> None:
    with op.batch_alter_table("report") as batch:
        batch.drop_constraint("uq_report_hash_version_profile", type_="unique")
        batch.execute("DELETE FROM report WHERE profile_key != ''")
        batch.create_unique_constraint("uq_report_hash_version", ["content_hash", "engine_version"])
        batch.drop_column("profile_key")
    with op.batch_alter_table("revision") as batch:
        batch.drop_column("profile_version_id")
    with op.batch_alter_table("fixture") as batch:
        batch.drop_column("default_profile_id")
    op.drop_index("ix_derating_profile_version_profile_id", table_name="derating_profile_version")
    op.drop_table("derating_profile_version")
    op.drop_table("derating_profile")
