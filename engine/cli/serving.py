"""Commands that start the web app: ``serve`` and ``demo``.

This is the one engine module allowed to import the web app (tests/test_architecture.py), and
only inside the command, when it runs. The app is served by waitress, a production WSGI server,
on every host: Werkzeug's development server is never used.
"""

from __future__ import annotations

import ipaddress
from pathlib import Path

import click

from stetline.cli.common import open_ws, workspace_option
from stetline.errors import StetlineError
from stetline.workspace import default_path, is_workspace

THREADS = 8  # waitress's worker threads: requests served at once


def is_loopback(host: str) -> bool:
    """Whether HOST is reachable only from this machine."""
    if host == "localhost":
        return True
    try:
        return ipaddress.ip_address(host).is_loopback
    except ValueError:
        return False


@click.command()
@click.option("--host", default="127.0.0.1", show_default=True, help="The address to listen on.")
@click.option("--port", default=5000, show_default=True, type=int, help="The port to listen on.")
@workspace_option
def serve(host: str, port: int, workspace: Path | None) -> None:
    """Serve the web app for the workspace (with waitress)."""
    from waitress import serve as waitress_serve

    from stetline import accounts
    from stetline import settings as declared
    from stetline.store import ops
    from stetline.web import create_app

    ws = open_ws(workspace)
    with ws.reading() as session:
        shared = accounts.has_accounts(session)
        https = bool(declared.with_defaults(ops.get_settings(session))["https"])
    if not shared and not is_loopback(host):
        raise StetlineError(
            f"this workspace has no accounts, so anyone who reaches {host} could act in it; "
            "serve it on 127.0.0.1, or add an admin first: stetline user add NAME --role admin"
        )
    if shared and not https and not is_loopback(host):  # others reach it: their sign-in must be encrypted
        click.echo("warning: the https setting is off, so sign-in cookies may travel unencrypted; serve the app "
                   "behind HTTPS and run `stetline settings https true`", err=True)
    app = create_app(ws, hosts=[host, "localhost", "127.0.0.1", "::1"])
    click.echo(f"Stetline is listening on http://{host}:{port}/ (Ctrl+C to stop)")
    waitress_serve(app, host=host, port=port, threads=THREADS)


@click.command()
@click.option("--no-serve", is_flag=True, help="Build the demo workspace and stop.")
@click.option("--host", default="127.0.0.1", show_default=True, help="The address to listen on.")
@click.option("--port", default=5000, show_default=True, type=int, help="The port to listen on.")
@workspace_option
def demo(no_serve: bool, host: str, port: int, workspace: Path | None) -> None:
    """Build the demo workspace (two editions, example layers, rechecks) and serve it."""
    from stetline import demo as demo_mod

    path = workspace or default_path()
    if path.exists() and any(path.iterdir()) and not (is_workspace(path) and demo_mod.is_demo(path)):
        raise StetlineError(f"{path} already holds other work; give an empty folder with -w")
    built = demo_mod.build(path, echo=click.echo)
    built.close()  # serving opens the workspace again
    if no_serve:
        click.echo(f"demo workspace ready in {built.path}; serve it with: stetline serve -w {built.path}")
        return
    click.get_current_context().invoke(serve, host=host, port=port, workspace=built.path)


COMMANDS = (serve, demo)
