"""Renamed and merged entities checked against an outside reference: ISO 3166-3.

ISO 3166-3 ("Codes for the representation of names of countries and their subdivisions — Part 3:
Code for formerly used names of countries") gives each withdrawn country code a four-letter code
whose first two letters are the old alpha-2 code and whose last two are the code that replaced it
(``BUMM``: Burma became Myanmar). The mapping below is read from that table as the ``pycountry``
package ships it (``pycountry.historic_countries``), never typed here: three renames (BU → MM,
ZR → CD, TP → TL) and two mergers into a code that stayed (DD → DE, YD → YE). The values are
invented; only the keys and names come from the standard.
"""

from __future__ import annotations

import csv
from pathlib import Path

import pycountry
import pytest
from helpers import Cli

RENAMED = ("BU", "ZR", "TP")  # ISO 3166-3: each withdrawn code's successor is a code new to the panel
MERGED = ("DD", "YD")  # ISO 3166-3: each withdrawn code's successor (DE, YE) is held already
STAYING = ("FR", "PT")  # current ISO 3166-1 codes untouched by the change, so the panel has a field to rank in


def _successors() -> dict[str, str]:
    """Old alpha-2 → new alpha-2, read from ISO 3166-3 as pycountry ships it (the last two letters of alpha_4)."""
    historic = {c.alpha_2: c for c in pycountry.historic_countries}
    return {old: historic[old].alpha_4[2:] for old in (*RENAMED, *MERGED)}


def _name(code: str) -> str:
    """The country's name: ISO 3166-1 for a current code, ISO 3166-3 for a withdrawn one (pycountry)."""
    current = pycountry.countries.get(alpha_2=code)
    if current is not None:
        return str(current.name)
    return str(next(c.name for c in pycountry.historic_countries if c.alpha_2 == code))


def _write(path: Path, header: list[str], rows: list[list[str]]) -> Path:
    with path.open("w", newline="", encoding="utf-8") as f:
        writer = csv.writer(f)
        writer.writerow(header)
        writer.writerows(rows)
    return path


def _observations(path: Path, keys: list[str], values: dict[str, tuple[float, float]]) -> Path:
    rows = [[key, "water", period, str(v)] for key in keys for period, v in zip(("2023", "2024"), values[key],
                                                                                  strict=True)]
    return _write(path, ["entity", "topic", "period", "value"], rows)


@pytest.fixture
def panel(cli: Cli, tmp_path: Path) -> tuple[Cli, dict[str, str]]:
    """A panel keyed by ISO codes: the first edition under the withdrawn codes, with human work on them."""
    successors = _successors()
    old_keys = [*RENAMED, *MERGED, *sorted(set(successors[m] for m in MERGED)), *STAYING]
    # invented values, the same in both editions for every key that stays or is renamed
    values = {key: (50.0 + 3 * i, 51.0 + 3 * i) for i, key in enumerate(old_keys)}
    for old in RENAMED:
        values[successors[old]] = values[old]
    everyone = sorted({*old_keys, *successors.values()})
    cli("init")
    cli("settings", "kinds", "profile,blurb", "--by", "admin")
    topics = _write(tmp_path / "topics.csv", ["topic", "label", "unit", "better", "decimals", "category", "target"],
                    [["water", "Households with piped water", "percent", "higher", "1", "Services", ""]])
    entities = _write(tmp_path / "entities.csv", ["entity", "name", "group"],
                      [[key, _name(key), "World"] for key in everyone])
    cli("load", str(_observations(tmp_path / "one.csv", old_keys, values)), "--topics", str(topics),
        "--entities", str(entities), "--edition", "one", "--by", "admin")
    cli("rewrite", "blurb/BU/water", "Piped water reached 51.0% of households in Burma in 2024.", "--by", "ann")
    cli("approve", "blurb/ZR/water", "--by", "rev")
    cli("annotate", "profile/TP", "The household survey moved to a new frame in 2024.", "--by", "exp")
    cli("rewrite", "blurb/DD/water", "In the east, piped water reached 60.0% of households.", "--by", "ann")
    cli("rewrite", "blurb/DE/water", "In the west, piped water reached 63.0% of households.", "--by", "bob")
    cli("approve", "blurb/YD/water", "--by", "rev")
    cli("rewrite", "blurb/YE/water", "In the north, piped water reached 69.0% of households.", "--by", "bob")
    new_keys = [successors.get(key, key) for key in old_keys if key not in MERGED]
    renames = _write(tmp_path / "renames.csv", ["old", "new"], [[o, n] for o, n in successors.items()])
    out = cli("load", str(_observations(tmp_path / "two.csv", new_keys, values)), "--renames", str(renames),
              "--edition", "two", "--by", "admin").stdout
    assert "blurb/BU/water → blurb/MM/water: 1 layer, 0 approvals, 0 comments" in out  # ISO 3166-3: BUMM
    return cli, successors


def test_the_renames_of_iso_3166_3_move_the_work_to_the_new_codes(panel: tuple[Cli, dict[str, str]]) -> None:
    cli, successors = panel
    # ISO 3166-3: BU → MM, ZR → CD, TP → TL; each slot of the withdrawn code gives its work to the new code's
    moved = cli.json("show", f"blurb/{successors['BU']}/water")
    assert moved["layer"]["by"] == "ann"
    assert moved["layer"]["text"] == "Piped water reached 51.0% of households in Burma in 2024."
    # the renames change no value; the mergers (DDDE, YDYE) take two codes out of the field, nine to seven, and
    # that change alone is rechecked, on the new code's statement
    assert moved["recheck"]["reasons"] == ["numbers-changed"]
    assert {"fact": "rank_of", "old": "nine", "new": "seven"} in moved["recheck"]["changes"]
    assert [h["action"] for h in cli.json("history", f"blurb/{successors['ZR']}/water")][:2] == ["approve", "move"]
    assert [n["text"] for n in cli.json("show", f"profile/{successors['TP']}")["notes"]] == [
        "The household survey moved to a new frame in 2024."]
    for old in RENAMED:
        left = cli.json("show", f"blurb/{old}/water")
        assert left["layer"] is None and left["gone"] is True and left["recheck"] is None  # nothing under slot-gone
        history = cli.json("history", f"blurb/{successors[old]}/water")
        words = [h["detail"].get("words") for h in history if h["action"] == "move"]
        assert words == [f"moved from blurb/{old}/water on load of edition two"]


def test_the_mergers_of_iso_3166_3_offer_both_texts(panel: tuple[Cli, dict[str, str]]) -> None:
    cli, successors = panel
    # ISO 3166-3: DDDE (the German Democratic Republic into Germany) and YDYE (Democratic Yemen into Yemen)
    germany = cli.json("show", f"blurb/{successors['DD']}/water")
    assert germany["status"] == "recheck" and "merged" in germany["recheck"]["reasons"]
    assert [(c["slot"], c["text"], c["author"]) for c in germany["recheck"]["merged"]] == [
        ("blurb/DE/water", "In the west, piped water reached 63.0% of households.", "bob"),
        ("blurb/DD/water", "In the east, piped water reached 60.0% of households.", "ann"),
    ]
    yemen = cli.json("show", f"blurb/{successors['YD']}/water")
    assert [(c["slot"], c["type"], c["approved"]) for c in yemen["recheck"]["merged"]] == [
        ("blurb/YE/water", "rewrite", False), ("blurb/YD/water", "draft", True)]
    cli("choose", f"blurb/{successors['DD']}/water", "--text", "2", "--by", "ed")
    chosen = cli.json("show", f"blurb/{successors['DD']}/water")
    assert chosen["text"] == "In the east, piped water reached 60.0% of households." and chosen["recheck"] is None

