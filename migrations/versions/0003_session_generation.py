"""revocable sessions: a per-account session generation

A session cookie records the account's session generation when it was issued; raising the
generation (sign-out, password change, deactivation) ends every earlier session at once.

Revision ID: 0003
Revises: 0002
Create Date: 2026-12-02 04:50:00.000000
"""

from collections.abc import Sequence

import sqlalchemy as sa
from alembic import op

revision: str = "0003"
down_revision: str | None = "0002"
branch_labels: str | Sequence[str] | None = None
depends_on: str | Sequence[str] | None = None


def upgrade() -> None:
    with op.batch_alter_table("user_account") as batch:
        batch.add_column(sa.Column("session_generation", sa.Integer(), server_default="0", nullable=False))


def downgrade() -> None:
    with op.batch_alter_table("user_account") as batch:
        batch.drop_column("session_generation")
