"""comment threads: one discussion per slot (comments and send-backs)

Revision ID: 0002
Revises: 0001
Create Date: 2026-12-02
"""
from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = '0002'
down_revision = '0001'
branch_labels = None
depends_on = None


def upgrade() -> None:
    """Apply this revision."""
    op.create_table('comment',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('slot_id', sa.String(length=450), nullable=False),
    sa.Column('by', sa.String(length=100), nullable=False),
    sa.Column('at', sa.DateTime(), nullable=False),
    sa.Column('text', sa.Text(), nullable=False),
    sa.Column('kind', sa.String(length=20), nullable=False),
    sa.ForeignKeyConstraint(['slot_id'], ['slot.id'], name=op.f('fk_comment_slot_id_slot')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_comment'))
    )
    with op.batch_alter_table('comment', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_comment_slot_id'), ['slot_id'], unique=False)


def downgrade() -> None:
    """Undo this revision."""
    with op.batch_alter_table('comment', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_comment_slot_id'))

    op.drop_table('comment')
