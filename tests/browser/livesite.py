"""What the browser tests share: the live site's address and workspace, and a quiet server log."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from werkzeug.serving import WSGIRequestHandler

from stetline.workspace import Workspace

TABLET = {"width": 820, "height": 1180}


class QuietHandler(WSGIRequestHandler):
    """A request handler that does not print a line per request."""

    def log(self, type: str, message: str, *args: Any) -> None:
        pass


@dataclass
class Live:
    """The app served on a loopback port, and the workspace it serves."""

    url: str
    ws: Workspace

    def __call__(self, path: str) -> str:
        return self.url + path
