"""annotate and suppress take the same selection as the web app's bulk work, confirmed by count."""

from __future__ import annotations

from helpers import Cli


def test_annotate_a_selection_after_confirming_the_count(demo_cli: Cli) -> None:
    refused = demo_cli("annotate", "--topic", "population", "Mid-year estimates.", "--by", "expert",
                       input="n\n", ok=False)
    assert "Annotate" in refused.output and "statement(s)?" in refused.output
    assert all(not i["notes"] for i in demo_cli.json("list", "--topic", "population"))
    out = demo_cli("annotate", "--topic", "population", "Mid-year estimates.", "--by", "expert", "--yes")
    items = demo_cli.json("list", "--topic", "population")
    assert f"{len(items)} statement(s): annotate done" in out.stdout
    assert all(n["text"] == "Mid-year estimates." for i in items for n in i["notes"][-1:])
    history = demo_cli.json("history", "blurb/tidemere/population")
    assert history[-1]["action"] == "annotate"  # each statement its own event


def test_suppress_a_selection_skips_what_is_already_suppressed(demo_cli: Cli) -> None:
    out = demo_cli("suppress", "--entity", "puffin-holm", "--kind", "blurb", "--by", "editor", "--yes")
    assert "skipped blurb/puffin-holm/new-business: already suppressed" in out.stdout
    assert all(i["suppressed"] for i in demo_cli.json("list", "--entity", "puffin-holm", "--kind", "blurb"))


def test_a_statement_and_a_selection_together_are_refused(demo_cli: Cli) -> None:
    result = demo_cli("suppress", "headline", "--topic", "population", "--by", "editor", ok=False)
    assert "not both" in result.stderr
    result = demo_cli("annotate", "--by", "expert", "only text", ok=False)
    assert "give SLOT TEXT" in result.stderr
