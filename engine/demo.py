"""The demo: a fictional council's scorecard in two editions, with example human work.

Builds a workspace from the invented files in ``seed_data``: loads the first edition, adds the
kind of work an editorial team does on the statements a report prints (rewrites with typed numbers,
rewrites with live fields, pins, an expert's notes, comments, a suppression, approvals; on breakdowns
by age band too), loads the second edition and so shows rechecks of every reason but ``merged``, then
changes a house-style setting and redrafts.
"""

from __future__ import annotations

import secrets
import shutil
from collections.abc import Callable
from importlib import resources
from pathlib import Path

from stetline import accounts, actions, comments, loading, settings
from stetline.store import ops
from stetline.workspace import Workspace, init_workspace, is_workspace

DEMO_MARKER = "demo-workspace"
ACCOUNTS_FILE = "demo-accounts.txt"
TITLE = "Kestrel Sound Regional Council: Service Scorecard"

EDITOR, EXPERT, REVIEWER, ADMIN = "editor", "expert", "reviewer", "admin"

# The human work sits on the statements a report prints (blurbs, roundups, the headline and a profile),
# chosen by what the second edition changes (seed_data/README.md): some rechecks for a contradicted claim,
# some for new numbers only, two for a discontinued indicator, one for a live field that no longer renders.
REWRITES = {
    # 2025 contradicts it: Gorse Point's recycling rate turns from rising to falling (claim-changed)
    "blurb/gorse-point/recycling": (
        "Gorse Point's recycling rate climbed 1.4 percentage points to 41.5% in 2024, its best year since 2020."
    ),
    # only the numbers move in 2025 (numbers-changed, with a clean proposal); a reviewer approves it too
    "blurb/heronsford/parks-satisfaction": (
        "Heronsford residents remain among the most satisfied with their parks: 82% in 2024, well above the "
        "Estuary average of 68%."
    ),
    "roundup/parks-satisfaction": (
        "Satisfaction with local parks ranged from 86% in Cairnbrook to 58% in Samphire Reach in 2024, a gap of "
        "28 percentage points."
    ),
    # live fields: the text follows the new figures by itself (no recheck) …
    "blurb/little-thrift/parks-satisfaction": (
        "In {{ period }}, {{ value }} of Little Thrift's residents were satisfied with their local parks, "
        "{{ rank }} of {{ rank_of }} towns."
    ),
    # … until a field names a fact the new draft no longer has: the run of longer re-let times ends in 2025
    # (claim-changed, and render-failed for the streak)
    "blurb/puffin-holm/relet-days": (
        "Re-let times in Puffin Holm have lengthened for {{ streak }} years in a row, to {{ value }} in "
        "{{ period }}, the longest of {{ rank_of }} towns."
    ),
    # Larkholt is renamed Larkholt Vale in 2025 (seed_data/renames-2025.csv): the rewrite moves to the new key
    # with its history; it waits in recheck because one claim it rests on changed: its run above the same
    # quarter a year earlier grew from seven quarters to 11 (claim-changed)
    "blurb/larkholt/library-visits": (
        "Library visits in the town ran at {{ value }} in {{ period }}, {{ rank }} of {{ rank_of }} towns."
    ),
    # by age band, Tidemere's best group turns from 65+ to 16-34 and its worst from 16-34 to 35-64 in 2025
    # (claim-changed: the demo drafts the breakdown kind, KINDS); the editor reworded only the opening, so the
    # proposal merges the new groups in without a conflict, for a person to check
    "breakdown/tidemere/parks-satisfaction/age": (
        "In Tidemere, satisfaction with local parks differed by age in 2024 (67% overall): the 65+ group had the "
        "best figure (71%) and the 16-34 group the worst (62%), 9 percentage points apart, within the margins of "
        "error. The 65+ group makes up 15% of the whole and the 16-34 group 18%."
    ),
    # paper timetable requests are discontinued in 2025 (slot-gone)
    "roundup/paper-timetables": (
        "Requests for paper timetables ranged from 19.7 per 1,000 residents in Puffin Holm to 8.8 in Tidemere."
    ),
}
#: North Quay takes the broadband lead from Wrackhaven, and its four-year run becomes five (claim-changed)
PINS = ("roundup/broadband", "blurb/north-quay/broadband")
NOTES = {
    "blurb/samphire-reach/recycling": "A kerbside food-waste round started in Samphire Reach in September 2024.",
    "profile/north-quay": "The harbour regeneration opened two business parks in North Quay in 2023.",
    "blurb/wrackhaven/paper-timetables": "Printed timetables were withdrawn from Wrackhaven's library in 2024.",
}
COMMENTS = {
    "blurb/gorse-point/recycling": (
        (EXPERT, "The 2024 rise follows the new garden-waste collections; worth a clause if there is room."),
        (EDITOR, "Kept it short for the summary page; the collections are in the Environment chapter."),
    ),
    "blurb/high-ferrow/bus-punctuality": (
        (REVIEWER, "Checked against the operator's monitoring returns before approving."),
    ),
}
APPROVALS = (
    "blurb/high-ferrow/bus-punctuality", "roundup/recycling", "headline", "roundup/bathing-water",
    "blurb/heronsford/parks-satisfaction",
    # North Quay's gap between age bands widens from 9 to 10 points in 2025, its groups unchanged (numbers-changed)
    "breakdown/north-quay/parks-satisfaction/age",
)
SUPPRESS = ("blurb/puffin-holm/new-business",)
#: the kinds the demo drafts: a new workspace's, and the breakdown kind for its parks satisfaction by age band
KINDS = (*settings.DEFAULT_KINDS, "breakdown")
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
        ops.put_setting(s, "kinds", ",".join(KINDS))
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
        for slot, thread in COMMENTS.items():
            for author, text in thread:
                comments.add_comment(s, slot, text, by=author)
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
