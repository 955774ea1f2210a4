"""Stetline's engine: load editions, compute facts, draft statements, reconcile human layers.

The engine is a library. It never imports Flask or the web app (except ``stetline.cli.serving``,
whose commands start it), and only ``stetline.store`` speaks SQL.
"""

__version__ = "0.1.0"
