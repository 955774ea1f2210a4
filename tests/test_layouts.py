"""Report layouts and phrasing a team copies into its workspace and edits."""

from __future__ import annotations

from pathlib import Path

from helpers import Cli, every_kind, resolve_every_recheck


def _resolve_all(cli: Cli) -> None:
    resolve_every_recheck(cli)  # a rewrite that no longer renders is reverted, as its editor would


def test_a_copied_layout_changes_the_publication(demo_cli: Cli, tmp_path: Path) -> None:
    _resolve_all(demo_cli)
    out = demo_cli("layout", "copy", "md")
    copied = Path(out.stdout.split("wrote ")[1].split(";")[0])
    assert copied.read_text().startswith("{#- The built-in Markdown report layout.")
    copied.write_text(copied.read_text().replace("# {{ title }}", "# {{ title }} (council draft)"))
    demo_cli("publish", "-o", str(tmp_path / "r.md"), "--by", "admin")
    title = "# Kestrel Sound Regional Council: Service Scorecard (council draft)"
    assert (tmp_path / "r.md").read_text().startswith(title)
    again = demo_cli("layout", "copy", "md", ok=False)
    assert "exists already" in again.stderr


def test_a_broken_layout_is_a_clear_error(demo_cli: Cli, tmp_path: Path) -> None:
    _resolve_all(demo_cli)
    demo_cli("layout", "copy", "html")
    path = demo_cli.path / "layouts" / "html.j2"
    path.write_text("{{ title.__class__.__mro__ }}")
    result = demo_cli("publish", "--format", "html", "-o", str(tmp_path / "r.html"), "--by", "admin", ok=False)
    assert "layout" in result.stderr and "cannot be rendered" in result.stderr


def test_copied_phrasing_rewords_drafts_after_a_redraft(demo_cli: Cli) -> None:
    every_kind(demo_cli.path)  # standing statements are a part kind
    demo_cli("phrasing", "copy", "standing")
    path = demo_cli.path / "phrasing" / "standing.j2"
    path.write_text(path.read_text().replace(" was {{ ev.value }}{{ caveat }} in {{ period }}",
                                             " stood at {{ ev.value }}{{ caveat }} in {{ period }}"))
    demo_cli("redraft", "--by", "admin")
    drafts = [i["draft"] for i in demo_cli.json("list", "--kind", "standing") if not i["gone"]]
    assert any(" stood at " in d for d in drafts)
    import re

    old_wording = re.compile(r"^[A-Z][\w ]+ in [A-Z][\w ]+ was \d")
    assert [d for d in drafts if old_wording.match(d)] == []


def test_copied_phrasing_rewords_the_sentences_about_averages(demo_cli: Cli) -> None:
    # every sentence of change and headline statements is in their templates, so a team can reword it
    every_kind(demo_cli.path)  # change statements are a part kind
    demo_cli("phrasing", "copy", "change")
    demo_cli("phrasing", "copy", "headline")
    change = demo_cli.path / "phrasing" / "change.j2"
    change.write_text(change.read_text().replace("the average change was", "the typical change was"))
    headline = demo_cli.path / "phrasing" / "headline.j2"
    headline.write_text(headline.read_text().replace("moved most: it", "moved furthest: it")
                        .replace('plural("indicator")', 'plural("measure")'))
    before = [i["draft"] for i in demo_cli.json("list", "--kind", "change") if not i["gone"]]
    # the average is said in a change statement only where the town went against it
    assert sum("the average change was" in d for d in before) > 0
    demo_cli("redraft", "--by", "admin")
    after = [i["draft"] for i in demo_cli.json("list", "--kind", "change") if not i["gone"]]
    assert [d for d in after if "the average change was" in d] == []
    assert sum("the typical change was" in d for d in after) == sum("the average change was" in d for d in before)
    (top,) = [i["draft"] for i in demo_cli.json("list", "--kind", "headline")]
    assert "the median broadband download speed moved furthest: it rose by" in top
    assert "of 11 measures" in top  # the demo: 11 directed indicators in 2025, one of them quarterly


def test_a_broken_phrasing_template_is_a_clear_error_and_changes_nothing(demo_cli: Cli) -> None:
    before = demo_cli.json("list")
    demo_cli("phrasing", "copy", "headline")
    path = demo_cli.path / "phrasing" / "headline.j2"
    path.write_text("In {{ period }}:\n{{ indicators }} moved.\n")  # a variable headline statements do not offer
    result = demo_cli("redraft", "--by", "admin", ok=False)
    assert "headline.j2, line 2" in result.stderr and "'indicators' is undefined" in result.stderr
    assert "Traceback" not in result.stderr
    path.write_text("{% if %}\n")
    result = demo_cli("redraft", "--by", "admin", ok=False)
    assert "headline.j2, line 1" in result.stderr
    assert demo_cli.json("list") == before
