"""parts: maker part number, package and datasheet link

Optional text a reader uses to identify a part; empty for the parts already stored.

Revision ID: 0003
Revises: 0002
Create Date: 2026-12-02 04:40:00
"""

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0003"
down_revision: str | None = "0002"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None

COLUMNS = (("maker_part", 100), ("package", 60), ("datasheet", 500))


def upgrade() -> None:
    with op.batch_alter_table("part") as batch:
        for name, length in COLUMNS:
            batch.add_column(sa.Column(name, sa.String(length=length), nullable=False, server_default=""))


def downgrade() -> None:
    with op.batch_alter_table("part") as batch:
        for name, _ in reversed(COLUMNS):
            batch.drop_column(name)
