"""The WSGI entry point for a production server: the app for $STETLINE_WORKSPACE.

Run the migrations once (``stetline init``) before starting the workers, and name the host names
the public reaches the server by in $STETLINE_HOSTS (comma-separated; loopback names are always
answered): any other Host header gets 400.
"""

from __future__ import annotations

from stetline.web import create_app
from stetline.workspace import default_path, open_workspace

app = create_app(open_workspace(default_path()))
