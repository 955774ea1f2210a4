"""breakdowns by group: the values of subgroups (age band 65+), versioned by edition like the totals

A table of its own, so every reader of the totals (``observation``) is unchanged: rows with a
breakdown and a subgroup, an optional share (per cent of the whole), valid over a range of
editions.

Revision ID: 0011
Revises: 0010
Create Date: 2026-12-02
"""
from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = '0011'
down_revision = '0010'
branch_labels = None
depends_on = None


def upgrade() -> None:
    """Apply this revision."""
    op.create_table('breakdown_observation',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('entity', sa.String(length=200), nullable=False),
    sa.Column('topic', sa.String(length=200), nullable=False),
    sa.Column('breakdown', sa.String(length=200), nullable=False),
    sa.Column('subgroup', sa.String(length=300), nullable=False),
    sa.Column('period', sa.String(length=20), nullable=False),
    sa.Column('value', sa.Double(), nullable=True),
    sa.Column('margin', sa.Double(), nullable=True),
    sa.Column('status', sa.String(length=20), nullable=False),
    sa.Column('share', sa.Double(), nullable=True),
    sa.Column('valid_from', sa.Integer(), nullable=False),
    sa.Column('valid_to', sa.Integer(), nullable=True),
    sa.ForeignKeyConstraint(['valid_from'], ['edition.id'], name=op.f('fk_breakdown_observation_valid_from_edition')),
    sa.ForeignKeyConstraint(['valid_to'], ['edition.id'], name=op.f('fk_breakdown_observation_valid_to_edition')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_breakdown_observation'))
    )
    with op.batch_alter_table('breakdown_observation', schema=None) as batch_op:
        batch_op.create_index('ix_breakdown_observation_current', ['valid_to', 'entity', 'topic'], unique=False)


def downgrade() -> None:
    """Undo this revision."""
    with op.batch_alter_table('breakdown_observation', schema=None) as batch_op:
        batch_op.drop_index('ix_breakdown_observation_current')

    op.drop_table('breakdown_observation')
