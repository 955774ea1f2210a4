"""entities may lie within another: the parent key of each entity (town in district in region)

One column of the entity table, ``parent``: the key of the entity this one lies within, empty
for an entity at the top. The flat ``group`` stays as it was; ``parent`` is the hierarchy.

Revision ID: 0009
Revises: 0008
Create Date: 2026-12-03
"""
from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = '0009'
down_revision = '0008'
branch_labels = None
depends_on = None


def upgrade() -> None:
    """Apply this revision."""
    with op.batch_alter_table('entity', schema=None) as batch_op:
        batch_op.add_column(sa.Column('parent', sa.String(length=200), nullable=False, server_default=''))


def downgrade() -> None:
    """Undo this revision."""
    with op.batch_alter_table('entity', schema=None) as batch_op:
        batch_op.drop_column('parent')
