"""The WSGI entry point for a production server: the app for $STETLINE_WORKSPACE.

Run the migrations once (``stetline init``) before starting the workers.
"""

from __future__ import annotations

from stetline.web import create_app
from stetline.workspace import default_path, open_workspace

app = create_app(open_workspace(default_path()))
