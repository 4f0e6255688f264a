"""revocable sessions: a per-account session generation

A session cookie records the account's session generation when it was issued; raising the
generation (sign-out, password change, deactivation) ends every earlier session at once.

Revision ID: 0006
Revises: 0005
Create Date: 2026-12-02 04:50:00.000000
"""

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0006"
down_revision: str | None = "0005"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    with op.batch_alter_table("user_account") as batch:
        batch.add_column(sa.Column("session_generation", sa.Integer(), server_default="0", nullable=False))


def downgrade() -> None:
    # Plain DROP COLUMN (SQLite 3.35 and later): a batch copy of user_account would fail the
    # foreign keys that refer to it and drop its data-version triggers.
    op.drop_column("user_account", "session_generation")
