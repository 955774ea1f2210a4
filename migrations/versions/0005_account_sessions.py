"""account sessions carry a generation

Signing out, a new password, a new role and disabling or enabling an account raise the account's
session generation; a session cookie made under an older generation is no longer accepted.

Revision ID: 0005
Revises: 0004
Create Date: 2026-12-02
"""
from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = '0005'
down_revision = '0004'
branch_labels = None
depends_on = None


def upgrade() -> None:
    """Apply this revision."""
    with op.batch_alter_table('account', schema=None) as batch_op:
        batch_op.add_column(sa.Column('session_generation', sa.Integer(), server_default='0', nullable=False))


def downgrade() -> None:
    """Undo this revision."""
    with op.batch_alter_table('account', schema=None) as batch_op:
        batch_op.drop_column('session_generation')
