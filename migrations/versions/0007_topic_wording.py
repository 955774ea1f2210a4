"""topics carry their wording: how a change is sized, the label mid-sentence and its article

Three optional columns of the topics file, kept with the topic: ``change`` (relative or
absolute, empty for the default), ``label_in_sentence`` (the label as written mid-sentence,
empty to let the engine decide) and ``article`` (the or none, empty to let the engine decide).

Revision ID: 0007
Revises: 0006
Create Date: 2026-12-02
"""
from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = '0007'
down_revision = '0006'
branch_labels = None
depends_on = None


def upgrade() -> None:
    """Apply this revision."""
    with op.batch_alter_table('topic', schema=None) as batch_op:
        batch_op.add_column(sa.Column('change', sa.String(length=20), nullable=False, server_default=''))
        batch_op.add_column(sa.Column('label_in_sentence', sa.String(length=300), nullable=False, server_default=''))
        batch_op.add_column(sa.Column('article', sa.String(length=10), nullable=False, server_default=''))


def downgrade() -> None:
    """Undo this revision."""
    with op.batch_alter_table('topic', schema=None) as batch_op:
        batch_op.drop_column('article')
        batch_op.drop_column('label_in_sentence')
        batch_op.drop_column('change')
