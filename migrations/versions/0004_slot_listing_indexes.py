"""slot listing indexes cover the status counts

The entity and topic pages list a page of statements by interest (ties by id) and count the
statements of each status; the recheck queue lists by severity (ties by id), counts what waits
and offers the kinds, entities and topics waiting as filters. With the id in the index a page is
read off it without sorting, and with the other columns in it the counts and the filter choices
read the index alone, however many statements the workspace has.

Revision ID: 0004
Revises: 0003
Create Date: 2026-12-02
"""
from __future__ import annotations

from alembic import op

revision = '0004'
down_revision = '0003'
branch_labels = None
depends_on = None


def upgrade() -> None:
    """Apply this revision."""
    with op.batch_alter_table('slot', schema=None) as batch_op:
        batch_op.drop_index('ix_slot_entity_interest')
        batch_op.drop_index('ix_slot_topic_interest')
        batch_op.drop_index('ix_slot_status_severity')
        batch_op.create_index('ix_slot_entity_listing', ['entity', 'interest', 'id', 'status', 'gone'], unique=False)
        batch_op.create_index('ix_slot_topic_listing', ['topic', 'interest', 'id', 'status', 'gone'], unique=False)
        batch_op.create_index('ix_slot_recheck_queue', ['status', 'severity', 'id', 'gone', 'kind', 'entity', 'topic'],
                              unique=False)


def downgrade() -> None:
    """Undo this revision."""
    with op.batch_alter_table('slot', schema=None) as batch_op:
        batch_op.drop_index('ix_slot_recheck_queue')
        batch_op.drop_index('ix_slot_topic_listing')
        batch_op.drop_index('ix_slot_entity_listing')
        batch_op.create_index('ix_slot_status_severity', ['status', 'severity'], unique=False)
        batch_op.create_index('ix_slot_topic_interest', ['topic', 'interest'], unique=False)
        batch_op.create_index('ix_slot_entity_interest', ['entity', 'interest'], unique=False)
