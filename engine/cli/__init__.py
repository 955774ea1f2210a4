"""The ``stetline`` command: a thin shell that parses options, calls the engine and prints.

The commands live in one module per subject: ``statements`` (status, list, show and the actions),
``editions`` (loading, publishing, layouts, backups), ``accounts`` (accounts and settings) and
``serving`` (the web app). Every error becomes one line on stderr and exit code 1; nothing here
holds business rules. Starting the command imports no pandas, Jinja2, Babel, inflect or web app:
each command imports what it needs when it runs.
"""

from __future__ import annotations

import click

from stetline.cli import accounts, editions, serving, statements
from stetline.cli.common import Shell


@click.group(cls=Shell, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="stetline")
def main() -> None:
    """Draft, keep and recheck the statements of a recurring data report."""


for _module in (editions, statements, accounts, serving):
    for _command in _module.COMMANDS:
        main.add_command(_command)
