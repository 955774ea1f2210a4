"""Alembic environment: runs the migrations against the URL set by stetline.store.db."""

from __future__ import annotations

from alembic import context
from sqlalchemy import text

from stetline.store.db import make_engine
from stetline.store.models import Base

config = context.config
target_metadata = Base.metadata


def run_migrations_offline() -> None:
    """Emit the migration SQL without a database connection."""
    context.configure(
        url=config.get_main_option("sqlalchemy.url"), target_metadata=target_metadata,
        literal_binds=True, render_as_batch=True,
    )
    with context.begin_transaction():
        context.run_migrations()


def run_migrations_online() -> None:
    """Run the migrations on a live connection (SQLite batch mode with foreign keys off)."""
    url = config.get_main_option("sqlalchemy.url")
    assert url is not None
    engine = make_engine(url)
    with engine.connect() as connection:
        if connection.dialect.name == "sqlite":
            connection.execute(text("PRAGMA foreign_keys=OFF"))
            connection.commit()
        context.configure(connection=connection, target_metadata=target_metadata, render_as_batch=True)
        with context.begin_transaction():
            context.run_migrations()
        connection.commit()
    engine.dispose()


if context.is_offline_mode():
    run_migrations_offline()
else:
    run_migrations_online()
