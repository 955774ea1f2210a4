"""Words the web pages show people: dates in one form, names for keys, statement titles, and the
engine's messages with command-line options turned into the buttons and boxes of the pages.

The engine's messages are written for the command line (tests pin that wording); the web shows the
same messages with each option replaced by what a person clicks or fills in on the page.
"""

from __future__ import annotations

from datetime import UTC, datetime
from typing import Any

from flask import Flask, g

from stetline import factwords, settings, words
from stetline.store import ops

#: command-line wording → the page's own words; longer phrases first, so that they win
WEB_WORDS: tuple[tuple[str, str], ...] = (
    ("; list them with: stetline list", "; find it from the overview, the lists of topics, or the search box"),
    ("publish with --allow-recheck",
     "tick “Publish even though statements wait in recheck” on the publish page"),
    ("(stetline approve --confirm-claims, or tick each claim on the web page)", "(tick each claim above the button)"),
    ("act as an existing account (--by NAME)", "sign in as an existing account"),
    ("(--role admin)", "(role: admin)"),
    ("choose another label with --edition", "type another label in the “Edition label” box"),
    ("give --force to replace it", "choose another name"),
    ("wait in recheck (--allow-recheck)", "wait in recheck"),
    ("--allow-recheck", "“Publish even though statements wait in recheck”"),
    ("edit it (stetline rewrite) before approving", "edit it in the “Rewrite” box before approving"),
    ("load an edition first (stetline load)", "load an edition first on the Data page"),
    ("--from must name an edition older than --to", "“From” must name an edition older than “To”"),
    ("`stetline suppress --lift`", "the “Lift suppression” button"),
)

MONTHS = ("January", "February", "March", "April", "May", "June", "July", "August", "September", "October",
          "November", "December")


def web_message(message: object) -> str:
    """An engine message (or error) as the web shows it: command-line options named as buttons and boxes."""
    text = str(message)
    for cli, web in WEB_WORDS:
        text = text.replace(cli, web)
    return text


def when(value: object) -> str:
    """A stored time in the one form the pages use: "2 December 2026, 10:31 UTC"; empty stays empty."""
    if value is None or value == "":
        return ""
    at: datetime
    if isinstance(value, datetime):
        at = value
    else:
        try:
            at = datetime.fromisoformat(str(value).replace("Z", "+00:00"))
        except ValueError:
            return str(value)
    if at.tzinfo is not None:
        at = at.astimezone(UTC)
    return f"{at.day} {MONTHS[at.month - 1]} {at.year}, {at:%H:%M} UTC"


def _names() -> tuple[dict[str, str], dict[str, str]]:
    """Topic keys to labels and entity keys to names, read once per request."""
    if "stetline_names" not in g:
        from stetline.web.db import session

        s = session()
        g.stetline_names = ({t.key: t.label for t in ops.topic_rows(s)}, {e.key: e.name for e in ops.entity_rows(s)})
    topics, entities = g.stetline_names
    return topics, entities


def key_names() -> dict[str, str]:
    """Entity keys to their names and topic keys to their labels."""
    topics, entities = _names()
    return {**topics, **entities}


def entity_noun() -> str:
    """What one entity is called in this workspace (the ``entity_noun`` setting), e.g. "town"."""
    if "entity_noun" not in g:
        from stetline.web.db import session

        values = settings.with_defaults(ops.get_settings(session()))
        g.entity_noun = str(values["entity_noun"]).strip() or "entity"
    return str(g.entity_noun)


def entity_nouns() -> str:
    """The entity noun in the plural with a capital, for the navigation: "Towns"."""
    return words.capitalise(words.noun_plural(entity_noun(), 2))


def slot_title(slot_id: str) -> str:
    """A statement's title from names: "Household recycling rate in Heronsford — change"."""
    kind, *keys = str(slot_id).split("/")
    topics, entities = _names()
    entity = topic = None
    if len(keys) >= 2:
        entity, topic = entities.get(keys[0], keys[0]), topics.get(keys[1], keys[1])
    elif keys and keys[0] in topics and kind != "profile":
        topic = topics[keys[0]]
    elif keys:
        entity = entities.get(keys[0], keys[0])
    where = " in ".join(x for x in (topic, entity) if x)
    label = kind.replace("_", " ").replace("-", " ")
    if len(keys) >= 3:  # a breakdown by group: "… — breakdown by age"
        label = f"{label} by {keys[2]}"
    return f"{where} — {label}" if where else words.capitalise(label)


def install(app: Flask) -> None:
    """Give every template the filters and names above."""
    app.jinja_env.filters.update({
        "when": when, "fact_words": factwords.fact_words, "claim_words": factwords.claim_words,
        "change_words": factwords.change_words, "web_message": web_message, "slot_title": slot_title,
        "claim_value": lambda v: factwords.claim_value(v, key_names()),
        "change_value": lambda v: factwords.change_value(v, key_names()),
    })

    @app.context_processor
    def _words() -> dict[str, Any]:
        return {"entity_nouns": entity_nouns}
