"""parts: maker part number, package and datasheet link

Optional text a reader uses to identify a part; empty for the parts already stored.

Revision ID: 0004
Revises: 0003
Create Date: 2026-12-02 04:40:00
"""

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0004"
down_revision: str | None = "0003"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

COLUMNS = (("maker_part", 100), ("package", 60), ("datasheet", 500))


def upgrade() -> None:
    with op.batch_alter_table("part") as batch:
        for name, length in COLUMNS:
            batch.add_column(sa.Column(name, sa.String(length=length), nullable=False, server_default=""))


def downgrade() -> None:
    # Plain DROP COLUMN (SQLite 3.35 and later, PostgreSQL): a batch copy of part would fail the
    # foreign keys of the revisions that refer to it.
    for name, _ in reversed(COLUMNS):
        op.drop_column("part", name)
