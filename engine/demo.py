"""The demo: a fictional council's scorecard in two editions, with example human work.

Builds a workspace from the invented files in ``seed_data``: loads the first edition, adds the
kind of work an editorial team does (rewrites with typed numbers, a rewrite with live fields,
pins, an expert's notes, a suppression, approvals), loads the second edition and so shows
rechecks of every reason, then changes a house-style setting and redrafts.
"""

from __future__ import annotations

import secrets
import shutil
from collections.abc import Callable
from importlib import resources
from pathlib import Path

from stetline import accounts, actions, loading
from stetline.store import ops
from stetline.workspace import Workspace, init_workspace, is_workspace

DEMO_MARKER = "demo-workspace"
ACCOUNTS_FILE = "demo-accounts.txt"
TITLE = "Kestrel Sound Regional Council: Service Scorecard"

EDITOR, EXPERT, REVIEWER, ADMIN = "editor", "expert", "reviewer", "admin"

REWRITES = {
    "change/heronsford/recycling": (
        "Heronsford kept its lead on recycling: the household recycling rate improved from 56.6% in "
        "2023 to 59.0% in 2024, a rise of 2.4 percentage points."
    ),
    "standing/tidemere/recycling": (
        "Tidemere was 4th best of 14 towns for household recycling in 2024, at 53.5%, comfortably "
        "above the 50.0% target."
    ),
    "change/gorse-point/recycling": (
        "Gorse Point's recycling rate climbed 1.4 percentage points to 41.5% in 2024, its best year since 2020."
    ),
    "standing/larkholt/recycling": (
        "Larkholt recycles {{ value }} of its household waste, {{ rank }} best of {{ rank_of }} towns."
    ),
    "leaders/paper-timetables": (
        "Requests for paper timetables ranged from 19.7 per 1,000 residents in Puffin Holm to 8.8 in Tidemere."
    ),
}
PINS = ("leaders/broadband", "standing/north-quay/broadband")
NOTES = {
    "change/samphire-reach/recycling": "A kerbside food-waste round started in Samphire Reach in September 2024.",
    "profile/north-quay": "The harbour regeneration opened two business parks in North Quay in 2023.",
    "standing/wrackhaven/paper-timetables": "Printed timetables were withdrawn from Wrackhaven's library in 2024.",
}
APPROVALS = (
    "standing/high-ferrow/bus-punctuality", "leaders/recycling", "headline", "change/cairnbrook/recycling",
    "change/heronsford/recycling",
)
SUPPRESS = ("standing/puffin-holm/new-business",)
#: a quarterly statement approved on the first edition: the second turns its change on a year earlier round
SEASONAL_APPROVALS = ("blurb/heronsford/library-visits",)


def data_file(name: str) -> Path:
    """The path of a shipped demo file."""
    return Path(str(resources.files("stetline.seed_data") / name))


def is_demo(path: Path) -> bool:
    """True when the folder holds a workspace the demo built."""
    return (path / DEMO_MARKER).exists()


def create_accounts(ws: Workspace) -> dict[str, str]:
    """Create one demo account per role (the name is the role) with a fresh random password."""
    passwords = {name: secrets.token_urlsafe(9) for name in (ADMIN, EDITOR, EXPERT, REVIEWER)}
    with ws.session() as s:
        for name, password in passwords.items():
            accounts.add_account(s, name, name, password, by=ADMIN)
    listing = ws.path / ACCOUNTS_FILE
    listing.write_text("".join(f"{n}\t{n}\t{p}\n" for n, p in passwords.items()))
    listing.chmod(0o600)
    return passwords


def demo_passwords(path: Path) -> dict[str, str]:
    """The demo accounts' passwords, as the demo wrote them in the workspace."""
    lines = (path / ACCOUNTS_FILE).read_text().splitlines()
    return {name: password for name, _role, password in (line.split("\t") for line in lines)}


def build(path: Path, echo: Callable[[str], None] = print) -> Workspace:
    """Build (or rebuild) the demo workspace in a folder."""
    if is_workspace(path) and is_demo(path):
        for child in path.iterdir():
            if child.is_dir():
                shutil.rmtree(child)
            else:
                child.unlink()
    ws = init_workspace(path)
    (path / DEMO_MARKER).write_text("Built by `stetline demo`; rebuilt by running it again.\n")
    with ws.session() as s:
        ops.put_setting(s, "title", TITLE)
        ops.put_setting(s, "entity_noun", "town")
        ops.put_setting(s, "level_nouns", "district,town")
    passwords = create_accounts(ws)
    echo("demo accounts (name and role, password) — also in demo-accounts.txt in the workspace:")
    for name, password in passwords.items():
        echo(f"  {name:<9} {password}")

    echo("loading the first edition (data to 2024)")
    first = loading.load_edition(
        ws, data_file("observations-2024.csv"), data_file("topics.csv"), data_file("entities.csv"), by=ADMIN,
    )
    echo("\n".join(first.lines()))
    with ws.session() as s:
        for slot, text in REWRITES.items():
            actions.rewrite(s, slot, text, by=EDITOR)
        for slot in PINS:
            actions.pin(s, slot, by=EDITOR)
        for slot, text in NOTES.items():
            actions.annotate(s, slot, text, by=EXPERT)
        for slot in SUPPRESS:
            actions.suppress(s, slot, by=EDITOR)
        for slot in APPROVALS:
            actions.approve(s, slot, by=REVIEWER)
        for slot in SEASONAL_APPROVALS:
            actions.approve(s, slot, by=REVIEWER)
    echo("loading the second edition (data to 2025, with revisions to 2024; Larkholt is now Larkholt Vale)")
    second = loading.load_edition(ws, data_file("observations-2025.csv"), by=ADMIN,
                                  renames=data_file("renames-2025.csv"))
    echo("\n".join(second.lines()))
    with ws.session() as s:
        actions.approve(s, "headline", by=REVIEWER, confirm_claims=True)  # the reviewer read the new claims
        ops.put_setting(s, "serial_comma", True)
    echo("house style: serial comma on; redrafting")
    echo("\n".join(loading.redraft(ws, by=ADMIN).lines()))
    return ws
