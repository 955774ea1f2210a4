"""a workspace made before the `kinds` setting keeps drafting the kinds it drafted

The setting `kinds` says which statement kinds a workspace drafts. A workspace that already holds
an edition, and has not chosen its kinds, gets them written down as the kinds it drafted so far
(every kind but the composed `blurb` and `roundup`), so an upgrade neither adds nor drops a kind.
A workspace without an edition takes the declared default. No schema change.

Revision ID: 0008
Revises: 0007
Create Date: 2026-12-02
"""
from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = '0008'
down_revision = '0007'
branch_labels = None
depends_on = None

#: the kinds drafted before this revision (stetline.settings.EARLIER_KINDS, written out: a revision never changes)
EARLIER_KINDS = "headline,profile,standing,change,trend,leaders,movement"


def upgrade() -> None:
    """Apply this revision."""
    bind = op.get_bind()
    setting = sa.table('setting', sa.column('key', sa.String(100)), sa.column('value', sa.JSON))
    edition = sa.table('edition', sa.column('id', sa.Integer))
    has_edition = bind.execute(sa.select(edition.c.id).limit(1)).first() is not None
    chosen = bind.execute(sa.select(setting.c.key).where(setting.c.key == 'kinds')).first() is not None
    if has_edition and not chosen:
        bind.execute(sa.insert(setting).values(key='kinds', value=EARLIER_KINDS))


def downgrade() -> None:
    """Undo this revision (the setting is left: older code ignores it)."""
