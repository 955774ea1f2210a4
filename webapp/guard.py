"""Checks and headers on every request: the Host the server answers to, where a form comes
from, and the browser protections of every response.

A page answers only to the host names the server was started for (a foreign Host, as a DNS
rebinding attack sends, gets 400 before anything else runs). A form posted from another site
(its Origin, or failing that its Referer, names another host) is refused; a post with neither is
judged by its CSRF token alone. Every response carries a Content-Security-Policy that allows this
site's own scripts, styles and images only, and may not be shown in another site's frame.
"""

from __future__ import annotations

import os
from collections.abc import Iterable
from urllib.parse import urlsplit

from flask import Flask, current_app, render_template, request
from werkzeug.wrappers import Response

LOOPBACK = ("localhost", "127.0.0.1", "::1")
#: more host names to answer to, comma-separated (the names a proxy or the public use)
HOSTS_VARIABLE = "STETLINE_HOSTS"
SAFE_METHODS = frozenset({"GET", "HEAD", "OPTIONS"})
CONTENT_SECURITY_POLICY = (
    "default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self' data:; object-src 'none'; "
    "base-uri 'none'; form-action 'self'; frame-ancestors 'none'"
)
HEADERS = {
    "Content-Security-Policy": CONTENT_SECURITY_POLICY,
    "X-Frame-Options": "DENY",
    "X-Content-Type-Options": "nosniff",
    "Referrer-Policy": "same-origin",
}


def host_name(host: str) -> str:
    """The name part of a Host header, lower-case, without port or IPv6 brackets."""
    host = host.strip().lower()
    if host.startswith("["):
        return host[1:host.find("]")] if "]" in host else host
    return host.rsplit(":", 1)[0] if host.count(":") == 1 else host


def site_path(target: str) -> str | None:
    """The target when it is a path on this site, else None.

    A path starts with one "/" and has no scheme, no host, no back-slash and no white space or
    control character: browsers drop tabs and line breaks inside an address, so "/<tab>/host"
    would lead to "//host", another site.
    """
    if not target.startswith("/") or target.startswith("//") or "\\" in target:
        return None
    if any(ch.isspace() or not ch.isprintable() for ch in target):
        return None
    parts = urlsplit(target)
    return target if not parts.scheme and not parts.netloc else None


def install(app: Flask, hosts: Iterable[str] | None) -> None:
    """Check Host and form origins before every request, and add the protective headers after it.

    The host names answered are the ones given (loopback names when none) and those in
    $STETLINE_HOSTS.
    """
    extra = [h for h in os.environ.get(HOSTS_VARIABLE, "").split(",") if h.strip()]
    app.config["STETLINE_HOSTS"] = frozenset(host_name(h) for h in [*(hosts or LOOPBACK), *extra])
    app.before_request(_check_request)
    app.after_request(_protect)


def _check_request() -> Response | tuple[str, int] | None:
    if host_name(request.host) not in current_app.config["STETLINE_HOSTS"]:
        return Response("This server does not answer to that host name.\n", 400, mimetype="text/plain")
    if request.method in SAFE_METHODS:
        return None
    source = request.headers.get("Origin") or request.headers.get("Referer")
    if source is None:
        return None  # neither: the CSRF token decides
    if source == "null" or urlsplit(source).netloc.lower() != request.host.lower():
        message = "The form was refused: it was sent from another site. Nothing was changed."
        return render_template("error.html", heading="Form refused", message=message), 400
    return None


def _protect(response: Response) -> Response:
    for name, value in HEADERS.items():
        response.headers.setdefault(name, value)
    return response
