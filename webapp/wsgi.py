"""The WSGI entry point for a production server: the app for $STETLINE_WORKSPACE.

Run the migrations once (``stetline init``) before starting the workers.
"""

from __future__ import annotations

from engine.workspace import default_path, open_workspace
from webapp import create_app

app = create_app(open_workspace(default_path()))
