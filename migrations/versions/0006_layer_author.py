"""layers record who wrote the words they keep

A pin keeps the text it was put on, an accepted proposal keeps the rewrite it merged, a
restored rewrite keeps an earlier one: the person who acts is not always the person who wrote
the words, and the two-person rule asks the latter. Existing rewrites and pins count as written
by whoever added them (the cautious reading).

Revision ID: 0006
Revises: 0005
Create Date: 2026-12-02
"""
from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = '0006'
down_revision = '0005'
branch_labels = None
depends_on = None


def upgrade() -> None:
    """Apply this revision."""
    with op.batch_alter_table('layer', schema=None) as batch_op:
        batch_op.add_column(sa.Column('author', sa.String(length=100), nullable=True))
    layer = sa.table('layer', sa.column('type', sa.String), sa.column('by', sa.String), sa.column('author', sa.String))
    op.execute(layer.update().where(layer.c.type.in_(['rewrite', 'pin'])).values(author=layer.c.by))


def downgrade() -> None:
    """Undo this revision."""
    with op.batch_alter_table('layer', schema=None) as batch_op:
        batch_op.drop_column('author')
