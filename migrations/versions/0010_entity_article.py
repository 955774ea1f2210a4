"""entities carry their article: whether a name takes "the" mid-sentence

One optional column of the entities file, kept with the entity: ``article`` (the or none, empty
to let the engine decide: "the Netherlands", "the Czech Republic").

Revision ID: 0010
Revises: 0009
Create Date: 2026-12-02
"""
from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = '0010'
down_revision = '0009'
branch_labels = None
depends_on = None


def upgrade() -> None:
    """Apply this revision."""
    with op.batch_alter_table('entity', schema=None) as batch_op:
        batch_op.add_column(sa.Column('article', sa.String(length=10), nullable=False, server_default=''))


def downgrade() -> None:
    """Undo this revision."""
    with op.batch_alter_table('entity', schema=None) as batch_op:
        batch_op.drop_column('article')
