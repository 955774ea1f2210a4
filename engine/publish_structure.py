"""The report as a reader wants it: sections, category sub-headings, figures and charts around the statements.

By entity: an overview (the headline), one section per entity (its profile, then a sub-heading
per topic category; under it each topic's blurb, the part statements of that topic folded after
it, a figure table and a chart of the series with the entity among all), then one section per
topic (its roundup and the other topic statements, a ranked table of every entity and a chart).
By topic: the overview (headline and profiles), then one section per topic with its entities'
statements under it. Every format renders this one structure, so statements come in the same
order everywhere; sources are listed once per section, and caveats repeated word for word
become one numbered note.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from stetline.phrasing import noun_plural, ordinal
from stetline.publication import Figures, Publication, Statement

#: the order statements take within a section's lead and within one item
KIND_ORDER = ("headline", "profile", "roundup", "blurb", "standing", "change", "trend", "breakdown",
              "leaders", "movement")
#: above this many entity × topic items, entity sections carry figure tables but no charts
MAX_ITEM_CHARTS = 600


@dataclass
class Item:
    """One topic within an entity section (or one entity within a topic section)."""

    key: str
    heading: str
    statements: list[Statement]
    figures: Figures | None = None
    chart: Any = None  # a stetline.charts.ChartSpec, or None


@dataclass
class Group:
    """A sub-heading (a topic category, or the entities of a topic) and its items."""

    heading: str
    items: list[Item]


@dataclass
class TableRow:
    """One entity in a topic section's ranked table."""

    rank: str
    name: str
    value: str
    change: str


@dataclass
class Section:
    """One section of the report: lead statements, groups of items, a ranked table and a chart."""

    key: str
    heading: str
    kind: str  # "overview", "entity" or "topic"
    lead: list[Statement] = field(default_factory=list)
    groups: list[Group] = field(default_factory=list)
    table: list[TableRow] = field(default_factory=list)
    table_period: str = ""
    chart: Any = None
    sources: list[str] = field(default_factory=list)

    def statements(self) -> list[Statement]:
        """Every statement of the section in reading order."""
        return self.lead + [st for g in self.groups for item in g.items for st in item.statements]


def _kind_key(st: Statement) -> tuple[int, float]:
    rank = KIND_ORDER.index(st.kind) if st.kind in KIND_ORDER else len(KIND_ORDER)
    return rank, -st.interest


def _category_order(pub: Publication) -> list[str]:
    """Topic keys grouped by category, categories in the order they first appear."""
    cats: dict[str, list[str]] = {}
    for key, data in pub.topics.items():
        cats.setdefault(data.category, []).append(key)
    for key in pub.topic_labels:
        if key not in pub.topics:
            cats.setdefault("", []).append(key)
    return [k for keys in cats.values() for k in keys]


def _sources(pub: Publication, topics: list[str]) -> list[str]:
    seen: list[str] = []
    for t in topics:
        source = pub.sources.get(t)
        if source and source not in seen:
            seen.append(source)
    return seen


def _topic_section(pub: Publication, key: str, lead: list[Statement]) -> Section:
    data = pub.topics.get(key)
    section = Section(key, pub.topic_labels.get(key, key), "topic", sorted(lead, key=_kind_key))
    if data is not None:
        section.table_period = data.period_shown or data.period
        for entity, _value in data.latest:
            f = data.figures[entity]
            rank = f"{f.rank}" if f.rank is not None else ""
            section.table.append(TableRow(rank, pub.entity_names.get(entity, entity), f.value, f.change))
        section.chart = data.ranking
    section.sources = _sources(pub, [key])
    return section


def structure(pub: Publication) -> list[Section]:
    """The publication's statements arranged as the report prints them (see the module docstring)."""
    every = [st for _k, _h, sts in pub.sections for st in sts]
    by_topic = pub.sections_by == "topic"
    overview = Section("", "Overview", "overview")
    entity_lead: dict[str, list[Statement]] = {}
    topic_lead: dict[str, list[Statement]] = {}
    cells: dict[tuple[str, str], list[Statement]] = {}
    for st in every:
        if st.entity and st.topic:
            cells.setdefault((st.entity, st.topic), []).append(st)
        elif st.entity and not by_topic:
            entity_lead.setdefault(st.entity, []).append(st)
        elif st.topic:
            topic_lead.setdefault(st.topic, []).append(st)
        else:
            overview.lead.append(st)
    overview.lead.sort(key=_kind_key)
    topic_order = _category_order(pub)
    with_charts = len(cells) <= MAX_ITEM_CHARTS
    sections = [overview] if overview.lead else []
    if by_topic:
        for key in topic_order:
            items = []
            for entity in pub.entity_names:
                sts = cells.get((entity, key))
                if sts:
                    data = pub.topics.get(key)
                    figures = data.figures.get(entity) if data else None
                    items.append(Item(entity, pub.entity_names[entity], sorted(sts, key=_kind_key), figures))
            if items or topic_lead.get(key):
                section = _topic_section(pub, key, topic_lead.get(key, []))
                if items:
                    section.groups.append(Group(noun_plural(pub.entity_noun, 2).capitalize(), items))
                sections.append(section)
        return sections
    for entity, name in pub.entity_names.items():
        groups: dict[str, Group] = {}
        used: list[str] = []
        for key in topic_order:
            sts = cells.get((entity, key))
            if not sts:
                continue
            data = pub.topics.get(key)
            category = data.category if data else ""
            group = groups.setdefault(category, Group(category or "Other", []))
            chart = data.series_charts.get(entity) if data and with_charts else None
            figures = data.figures.get(entity) if data else None
            group.items.append(Item(key, pub.topic_labels.get(key, key), sorted(sts, key=_kind_key), figures, chart))
            used.append(key)
        lead = sorted(entity_lead.get(entity, []), key=_kind_key)
        if lead or groups:
            sections.append(Section(entity, name, "entity", lead, list(groups.values()),
                                    sources=_sources(pub, used)))
    for key in topic_order:
        if key in topic_lead or key in pub.topics:
            sections.append(_topic_section(pub, key, topic_lead.get(key, [])))
    return sections


def ordered(sections: list[Section]) -> list[Statement]:
    """Every statement of the report in reading order."""
    return [st for s in sections for st in s.statements()]


def footnotes(sections: list[Section]) -> tuple[list[str], dict[int, int]]:
    """The caveats as numbered notes (each text once) and each statement's number (by id)."""
    notes: list[str] = []
    numbers: dict[int, int] = {}
    for st in ordered(sections):
        if st.caveat:
            if st.caveat not in notes:
                notes.append(st.caveat)
            numbers[id(st)] = notes.index(st.caveat) + 1
    return notes, numbers


def sources_line(sources: list[str]) -> str:
    """"Source: X." or "Sources: X; Y." (empty without sources)."""
    if not sources:
        return ""
    return ("Sources: " if len(sources) > 1 else "Source: ") + "; ".join(sources) + "."


def figure_headers(figures: Figures) -> list[str]:
    """The headings of an item's figure table: the period, the rank, the change and the previous period
    (quarters and months in their short form, "Q3 2025")."""
    previous = figures.previous_period_shown or figures.previous_period
    change = f"Change since {previous}" if previous else "Change"
    return [figures.period_shown or figures.period, "Rank", change, previous or "Previous"]


def figure_cells(figures: Figures) -> list[str]:
    """The cells of an item's figure table."""
    rank = f"{ordinal(figures.rank)} of {figures.rank_of}" if figures.rank and figures.rank_of else "–"
    return [figures.value, rank, figures.change or "–", figures.previous or "–"]
