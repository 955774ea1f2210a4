"""initial schema

Revision ID: 0001
Revises:
Create Date: 2026-12-01
"""
from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = '0001'
down_revision = None
branch_labels = None
depends_on = None


def upgrade() -> None:
    """Apply this revision."""
    op.create_table('edition',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('label', sa.String(length=100), nullable=False),
    sa.Column('loaded_at', sa.DateTime(), nullable=False),
    sa.Column('loaded_by', sa.String(length=100), nullable=False),
    sa.Column('files', sa.JSON(), nullable=False),
    sa.Column('latest_period', sa.String(length=20), nullable=False),
    sa.Column('period_format', sa.String(length=10), nullable=False),
    sa.Column('observations', sa.Integer(), nullable=False),
    sa.Column('summary', sa.JSON(), nullable=False),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_edition')),
    sa.UniqueConstraint('label', name=op.f('uq_edition_label'))
    )
    op.create_table('entity',
    sa.Column('key', sa.String(length=200), nullable=False),
    sa.Column('name', sa.String(length=300), nullable=False),
    sa.Column('group', sa.String(length=200), nullable=False),
    sa.Column('position', sa.Integer(), nullable=False),
    sa.PrimaryKeyConstraint('key', name=op.f('pk_entity'))
    )
    op.create_table('setting',
    sa.Column('key', sa.String(length=100), nullable=False),
    sa.Column('value', sa.JSON(), nullable=False),
    sa.PrimaryKeyConstraint('key', name=op.f('pk_setting'))
    )
    op.create_table('slot',
    sa.Column('id', sa.String(length=450), nullable=False),
    sa.Column('kind', sa.String(length=40), nullable=False),
    sa.Column('entity', sa.String(length=200), nullable=True),
    sa.Column('topic', sa.String(length=200), nullable=True),
    sa.Column('status', sa.String(length=20), nullable=False),
    sa.Column('version', sa.Integer(), nullable=False),
    sa.Column('interest', sa.Double(), nullable=False),
    sa.Column('draft_id', sa.Integer(), nullable=True),
    sa.Column('digest', sa.String(length=32), nullable=False),
    sa.Column('gone', sa.Boolean(), nullable=False),
    sa.Column('recheck', sa.JSON(), nullable=True),
    sa.Column('severity', sa.Integer(), nullable=False),
    sa.Column('updated_at', sa.DateTime(), nullable=False),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_slot'))
    )
    with op.batch_alter_table('slot', schema=None) as batch_op:
        batch_op.create_index('ix_slot_entity_interest', ['entity', 'interest'], unique=False)
        batch_op.create_index('ix_slot_kind', ['kind'], unique=False)
        batch_op.create_index('ix_slot_status_severity', ['status', 'severity'], unique=False)
        batch_op.create_index('ix_slot_topic_interest', ['topic', 'interest'], unique=False)

    op.create_table('topic',
    sa.Column('key', sa.String(length=200), nullable=False),
    sa.Column('label', sa.String(length=300), nullable=False),
    sa.Column('unit', sa.String(length=100), nullable=False),
    sa.Column('better', sa.String(length=10), nullable=False),
    sa.Column('decimals', sa.Integer(), nullable=False),
    sa.Column('category', sa.String(length=200), nullable=False),
    sa.Column('target', sa.Double(), nullable=True),
    sa.Column('weight', sa.Double(), nullable=False),
    sa.Column('source', sa.String(length=500), nullable=False),
    sa.Column('position', sa.Integer(), nullable=False),
    sa.PrimaryKeyConstraint('key', name=op.f('pk_topic'))
    )
    op.create_table('approval',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('slot_id', sa.String(length=450), nullable=False),
    sa.Column('text', sa.Text(), nullable=False),
    sa.Column('basis', sa.JSON(), nullable=False),
    sa.Column('by', sa.String(length=100), nullable=False),
    sa.Column('at', sa.DateTime(), nullable=False),
    sa.Column('dropped_at', sa.DateTime(), nullable=True),
    sa.ForeignKeyConstraint(['slot_id'], ['slot.id'], name=op.f('fk_approval_slot_id_slot')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_approval'))
    )
    with op.batch_alter_table('approval', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_approval_slot_id'), ['slot_id'], unique=False)

    op.create_table('draft',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('slot_id', sa.String(length=450), nullable=False),
    sa.Column('edition_id', sa.Integer(), nullable=False),
    sa.Column('text', sa.Text(), nullable=False),
    sa.Column('evidence', sa.JSON(), nullable=False),
    sa.Column('claims', sa.JSON(), nullable=False),
    sa.Column('phrasing', sa.Integer(), nullable=False),
    sa.Column('interest', sa.Double(), nullable=False),
    sa.ForeignKeyConstraint(['edition_id'], ['edition.id'], name=op.f('fk_draft_edition_id_edition')),
    sa.ForeignKeyConstraint(['slot_id'], ['slot.id'], name=op.f('fk_draft_slot_id_slot')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_draft'))
    )
    with op.batch_alter_table('draft', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_draft_slot_id'), ['slot_id'], unique=False)

    op.create_table('event',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('at', sa.DateTime(), nullable=False),
    sa.Column('by', sa.String(length=100), nullable=False),
    sa.Column('action', sa.String(length=40), nullable=False),
    sa.Column('slot_id', sa.String(length=450), nullable=True),
    sa.Column('edition_id', sa.Integer(), nullable=True),
    sa.Column('before', sa.Text(), nullable=True),
    sa.Column('after', sa.Text(), nullable=True),
    sa.Column('detail', sa.JSON(), nullable=False),
    sa.ForeignKeyConstraint(['edition_id'], ['edition.id'], name=op.f('fk_event_edition_id_edition')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_event'))
    )
    with op.batch_alter_table('event', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_event_slot_id'), ['slot_id'], unique=False)

    op.create_table('layer',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('slot_id', sa.String(length=450), nullable=False),
    sa.Column('type', sa.String(length=20), nullable=False),
    sa.Column('text', sa.Text(), nullable=True),
    sa.Column('base_text', sa.Text(), nullable=True),
    sa.Column('basis', sa.JSON(), nullable=False),
    sa.Column('by', sa.String(length=100), nullable=False),
    sa.Column('at', sa.DateTime(), nullable=False),
    sa.Column('dropped_at', sa.DateTime(), nullable=True),
    sa.Column('dropped_by', sa.String(length=100), nullable=True),
    sa.ForeignKeyConstraint(['slot_id'], ['slot.id'], name=op.f('fk_layer_slot_id_slot')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_layer'))
    )
    with op.batch_alter_table('layer', schema=None) as batch_op:
        batch_op.create_index(batch_op.f('ix_layer_slot_id'), ['slot_id'], unique=False)

    op.create_table('observation',
    sa.Column('id', sa.Integer(), nullable=False),
    sa.Column('entity', sa.String(length=200), nullable=False),
    sa.Column('topic', sa.String(length=200), nullable=False),
    sa.Column('period', sa.String(length=20), nullable=False),
    sa.Column('value', sa.Double(), nullable=True),
    sa.Column('margin', sa.Double(), nullable=True),
    sa.Column('status', sa.String(length=20), nullable=False),
    sa.Column('valid_from', sa.Integer(), nullable=False),
    sa.Column('valid_to', sa.Integer(), nullable=True),
    sa.ForeignKeyConstraint(['valid_from'], ['edition.id'], name=op.f('fk_observation_valid_from_edition')),
    sa.ForeignKeyConstraint(['valid_to'], ['edition.id'], name=op.f('fk_observation_valid_to_edition')),
    sa.PrimaryKeyConstraint('id', name=op.f('pk_observation'))
    )
    with op.batch_alter_table('observation', schema=None) as batch_op:
        batch_op.create_index('ix_observation_current', ['valid_to', 'entity', 'topic'], unique=False)
        batch_op.create_index('ix_observation_series', ['entity', 'topic', 'period'], unique=False)



def downgrade() -> None:
    """Undo this revision."""
    with op.batch_alter_table('observation', schema=None) as batch_op:
        batch_op.drop_index('ix_observation_series')
        batch_op.drop_index('ix_observation_current')

    op.drop_table('observation')
    with op.batch_alter_table('layer', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_layer_slot_id'))

    op.drop_table('layer')
    with op.batch_alter_table('event', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_event_slot_id'))

    op.drop_table('event')
    with op.batch_alter_table('draft', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_draft_slot_id'))

    op.drop_table('draft')
    with op.batch_alter_table('approval', schema=None) as batch_op:
        batch_op.drop_index(batch_op.f('ix_approval_slot_id'))

    op.drop_table('approval')
    op.drop_table('topic')
    with op.batch_alter_table('slot', schema=None) as batch_op:
        batch_op.drop_index('ix_slot_topic_interest')
        batch_op.drop_index('ix_slot_status_severity')
        batch_op.drop_index('ix_slot_kind')
        batch_op.drop_index('ix_slot_entity_interest')

    op.drop_table('slot')
    op.drop_table('setting')
    op.drop_table('entity')
    op.drop_table('edition')
