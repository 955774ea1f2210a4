"""Alembic environment and versions of Stetline's schema (shipped inside the wheel)."""
