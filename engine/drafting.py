"""Drafts: every statement kind turns the fact table into slots, evidence, claims and text.

Each kind (a module under ``engine/kinds``) yields :class:`Candidate` objects: a slot with its
evidence, claims, interest score and the variables its template needs. This module compiles every
template once, picks a phrasing by a stable hash of the slot id, renders and tidies the text.
Templates a team copied into its workspace (``phrasing/KIND.j2``) render in the sandbox.

Interest scores run from 0 to about 1.2 and order statements within an entity, a topic and the
publication: the headline and profiles lead (0.7 to 1.0); extremes (best or worst of all),
targets, records, long streaks and significant or large changes (relative to the topic's
spread) score higher; missing or unchanged figures score lowest (0.1 to 0.2).
"""

from __future__ import annotations

import hashlib
import pickle  # only drafts this process's own workers made are unpickled
from collections import Counter
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, field, replace
from itertools import islice
from typing import Any

import jinja2
import orjson
import pandas as pd

from stetline import figures, nesting, periods, phrasing
from stetline.facts import Facts
from stetline.phrasing import HouseStyle
from stetline.rendering import Renderer, line_in, template_error

#: the kinds that state the figures of every entity × topic cell (Context.write_columns writes them ahead)
CELL_KINDS = frozenset({"standing", "change", "trend"})


@dataclass
class Candidate:
    """A slot a kind wants to draft, before its text is rendered."""

    slot: str
    kind: str
    entity: str | None
    topic: str | None
    evidence: dict[str, dict[str, Any]]
    claims: dict[str, Any]
    interest: float
    variables: dict[str, Any] = field(default_factory=dict)
    #: a composed kind's facts, stated or not ({"claims", "evidence"}); rechecks read them, never stored
    facts: dict[str, Any] | None = None


@dataclass
class Draft:
    """The machine text of a slot in an edition, with its evidence and claims."""

    slot: str
    kind: str
    entity: str | None
    topic: str | None
    text: str
    evidence: dict[str, dict[str, Any]]
    claims: dict[str, Any]
    interest: float
    phrasing: int
    #: a composed kind's facts, stated or not (see Candidate.facts); not stored, not in the digest
    facts: dict[str, Any] | None = None

    @property
    def evidence_json(self) -> str:
        """The evidence as stored: JSON, serialised once per draft."""
        return self._serialised()[0]

    @property
    def claims_json(self) -> str:
        """The claims as stored: JSON, serialised once per draft."""
        return self._serialised()[1]

    @property
    def digest(self) -> str:
        """A fingerprint of the text, evidence and claims: equal digests mean nothing changed.

        Made from the same JSON that is stored, so a load serialises each draft once. Key order
        is the order a kind builds its evidence in (fixed by the code, kept by the JSON round
        trip), so a draft read back from the workspace has the digest it was written with.
        """
        return self._serialised()[2]

    def to_row(self, with_facts: bool = True) -> tuple[Any, ...]:
        """The draft as plain values, its evidence and claims as their JSON: what a drafting process sends back.

        A composed draft's facts travel pickled (types kept exactly, a tenth of the memory of the
        dictionaries) and are unpickled only if reconciling reads them (a slot with human work);
        ``with_facts`` False leaves them behind (a slot without human work: nothing reads them).
        """
        facts = None if self.facts is None or not with_facts else pickle.dumps(self.facts, pickle.HIGHEST_PROTOCOL)
        return (self.slot, self.kind, self.entity, self.topic, self.text, self.interest, self.phrasing,
                self._serialised(), facts)

    def _serialised(self) -> tuple[str, str, str]:
        key = (self.text, id(self.evidence), id(self.claims))
        cached = self.__dict__.get("_serialised_as")
        if cached is None or cached[0] != key:
            evidence, claims = to_json(self.evidence), to_json(self.claims)
            cached = (key, (evidence, claims, digest(self.text, evidence, claims)))
            self.__dict__["_serialised_as"] = cached
        return cached[1]


def to_json(value: Any) -> str:
    """Evidence or claims as stored: compact JSON (a value JSON cannot hold is an error).

    orjson, several times faster than the standard library here (two of these per statement);
    the text parses back to the same values with any JSON reader.
    """
    return orjson.dumps(value, option=orjson.OPT_SERIALIZE_NUMPY).decode("utf-8")


def digest(text: str, evidence_json: str, claims_json: str) -> str:
    """Fingerprint a draft's text and its evidence and claims as serialised."""
    h = hashlib.blake2b(text.encode("utf-8"), digest_size=16)
    h.update(b"\0" + evidence_json.encode("utf-8") + b"\0" + claims_json.encode("utf-8"))
    return h.hexdigest()


def slot_id(kind: str, entity: str | None = None, topic: str | None = None) -> str:
    """The slot id: the kind, then the entity key if any, then the topic key if any, joined by '/'."""
    if entity is None:
        return kind if topic is None else f"{kind}/{topic}"
    return f"{kind}/{entity}" if topic is None else f"{kind}/{entity}/{topic}"


def topic_slot(kind: str, topic: str, level: str = "") -> str:
    """The slot id of a topic statement about one level: 'roundup/TOPIC' (main level), 'roundup/level-1/TOPIC'."""
    return slot_id(kind, level or None, topic)


def phrasing_index(slot: str, choices: int) -> int:
    """The phrasing a slot uses: a stable hash of its id, so the wording keeps across editions."""
    if choices <= 1:
        return 0
    h = hashlib.blake2b(slot.encode("utf-8"), digest_size=4).digest()
    return int.from_bytes(h, "big") % choices


def ev(value: Any, shown: str) -> dict[str, Any]:
    """One evidence entry: the raw value (JSON-safe) and the text the reader sees."""
    if isinstance(value, float):
        value = None if value != value else round(value, 10)  # NaN is the only float unequal to itself
    return {"value": value, "shown": shown}


@dataclass
class Context:
    """What the kinds draw on: the facts, metadata lookups, house style and wording helpers."""

    facts: Facts
    topics: dict[str, dict[str, Any]]
    entities: dict[str, dict[str, Any]]
    style: HouseStyle
    entity_noun: str
    edition: str = ""
    #: the kinds a workspace drafts (its `kinds` setting); empty: every kind
    kinds: tuple[str, ...] = ()
    #: what one entity of each level is called, top level first (the `level_nouns` setting)
    level_nouns: tuple[str, ...] = ()
    #: house style: "Fortunately"/"Unfortunately" before an entity's own change (never a gap between subgroups)
    evaluative_words: bool = False
    #: which comparison leads for quarters and months (the `compare_with` setting): year-earlier or previous
    compare_with: str = "year-earlier"
    # wording already worked out (the same counts, labels and means recur across thousands of cells)
    _values_shown: dict[tuple[str, float, bool], str] = field(
        default_factory=dict, init=False, repr=False, compare=False)
    _amounts_shown: dict[tuple[str, float, bool], str] = field(
        default_factory=dict, init=False, repr=False, compare=False)
    _of_n: dict[int, str] = field(default_factory=dict, init=False, repr=False, compare=False)
    _lower_labels: dict[str, str] = field(default_factory=dict, init=False, repr=False, compare=False)
    _period_names: dict[tuple[str, str], str] = field(default_factory=dict, init=False, repr=False, compare=False)
    _the_labels: dict[str, str] = field(default_factory=dict, init=False, repr=False, compare=False)
    _labels: dict[str, str] = field(default_factory=dict, init=False, repr=False, compare=False)
    _names: dict[str, str] = field(default_factory=dict, init=False, repr=False, compare=False)
    # the candidates of part kinds that composed kinds read, kept while one drafting pass runs
    _kept: dict[str, list[Candidate]] = field(default_factory=dict, init=False, repr=False, compare=False)
    # the part kinds a drafting pass reads more than once (the others are read as they come)
    _keep: set[str] = field(default_factory=set, init=False, repr=False, compare=False)
    # part kinds drafted as a composed kind reads them (draft_with_parts): each candidate goes to its callback too
    _tee: dict[str, Any] = field(default_factory=dict, init=False, repr=False, compare=False)

    def kept(self, kind: Any) -> list[Candidate]:
        """A kind's candidates, computed once per drafting pass (composed kinds read their parts')."""
        got = self._kept.get(kind.KIND)
        if got is None:
            got = self._kept[kind.KIND] = list(kind.candidates(self))
        return got

    def level_noun(self, depth: int) -> str:
        """What one entity of a level is called ("district"): the entity noun unless the setting names it."""
        return nesting.level_noun(self.level_nouns, int(depth), self.entity_noun)

    def of_level(self, n: int, depth: int) -> str:
        """'14 towns', 'three districts': a count of the entities of one level."""
        noun = self.level_noun(depth)
        return self.of_n(n) if noun == self.entity_noun else phrasing.plural(int(n), noun, self.style)

    def levels(self) -> list[tuple[str, Context]]:
        """Each level with data as (slot token, context of its entities alone), top level first.

        The main level (the deepest with data) has the empty token and keeps the plain topic slots;
        a flat dataset has only that level, and its context is this one.
        """
        facts = self.facts
        if len(facts.levels) <= 1:
            return [("", self)]
        out: list[tuple[str, Context]] = []
        for depth, topic_facts in sorted(facts.levels.items()):
            sub = replace(facts, cells=facts.cells.loc[facts.cells["depth"] == depth], topics=topic_facts,
                          entities=facts.entities.loc[facts.entities["depth"] == depth], main_depth=depth)
            token = "" if depth == facts.main_depth else nesting.level_token(depth)
            out.append((token, replace(self, facts=sub, entity_noun=self.level_noun(depth))))
        return out

    def part(self, kind: Any) -> Iterable[Candidate]:
        """A part kind's candidates for a composed kind: kept when the pass reads them again, else as they come.

        A worker drafting a blurb alone reads the standing, change and trend candidates of each cell
        once, so it holds none of them longer than its cell (a pass drafting those kinds too keeps them).
        """
        if kind.KIND in self._keep or kind.KIND in self._kept:
            return self.kept(kind)
        tee = self._tee.get(kind.KIND)
        return kind.candidates(self) if tee is None else _teed(kind.candidates(self), tee)

    @property
    def entity_nouns(self) -> str:
        """The plural of the entity noun ("towns")."""
        return phrasing.noun_plural(self.entity_noun, 2)

    def of_n(self, n: int) -> str:
        """'14 towns', 'three towns'."""
        n = int(n)
        shown = self._of_n.get(n)
        if shown is None:
            shown = self._of_n[n] = phrasing.plural(n, self.entity_noun, self.style)
        return shown

    def when(self, period: object, form: str = "noun") -> str:
        """A period as a sentence names it: "the third quarter of 2025", "March 2025" (form "noun");
        before a noun: "third-quarter 2025" (form "adjective"); "season": "third quarter", "March"."""
        label = str(period)
        shown = self._period_names.get((label, form))
        if shown is None:
            namer = {"noun": periods.period_name, "adjective": periods.period_adjective,
                     "season": periods.season_name}[form]
            shown = self._period_names[(label, form)] = namer(label, self.style.locale)
        return shown

    def name(self, entity: str) -> str:
        """An entity's name mid-sentence, with "the" where it needs one ("the Netherlands")."""
        shown = self._names.get(entity)
        if shown is None:
            meta = self.entities.get(entity, {})
            shown = phrasing.name_in_sentence(str(meta.get("name", entity)), str(meta.get("article") or ""))
            self._names[entity] = shown
        return shown

    def names(self, keys: Iterable[str]) -> str:
        """'A, B and C' of entity names (semicolons when a name holds a comma; long lists capped)."""
        return phrasing.join_names([self.name(k) for k in keys], self.style)

    @property
    def preposition(self) -> str:
        """The preposition before an entity's name: "in" a town, "at" a school."""
        return phrasing.preposition_for(self.entity_noun)

    def lower_label(self, topic: str) -> str:
        """A topic's label mid-sentence, bare ("household recycling rate", "GDP per person")."""
        shown = self._lower_labels.get(topic)
        if shown is None:
            meta = self.topics[topic]
            written = str(meta.get("label_in_sentence") or "").strip()
            shown = self._lower_labels[topic] = written or phrasing.in_sentence(str(meta["label"]))
        return shown

    def the_label(self, topic: str) -> str:
        """A topic's label mid-sentence as a noun phrase: "the vacancy rate", "life expectancy"."""
        shown = self._the_labels.get(topic)
        if shown is None:
            meta = self.topics[topic]
            chosen = str(meta.get("article") or "").strip().lower()
            bare = self.lower_label(topic)
            wants_the = chosen == "the" if chosen else phrasing.needs_the(bare)
            shown = self._the_labels[topic] = f"the {bare}" if wants_the else bare
        return shown

    def label(self, topic: str) -> str:
        """A topic's label for the start of a sentence: "The vacancy rate", "Life expectancy"."""
        shown = self._labels.get(topic)
        if shown is None:
            shown = self._labels[topic] = phrasing.capitalise(self.the_label(topic))
        return shown

    def change_size(self, topic: str, x: float, previous: float | None) -> str:
        """The size of a change in the unit the topic's `change` column asks for (see figures.change_size)."""
        meta = self.topics[topic]
        return phrasing.change_size(abs(float(x)), previous, str(meta["unit"]), int(meta["decimals"]),
                                    str(meta.get("change") or ""), self.style)

    def change_in(self, topic: str) -> str:
        """How a topic's changes are sized: "points", "relative" or "unit"."""
        meta = self.topics[topic]
        return phrasing.change_in(str(meta["unit"]), str(meta.get("change") or ""))

    def value(self, topic: str, x: float, wide: bool = False) -> str:
        """A value of a topic as shown: its decimals and unit (``wide``: see :meth:`wide`)."""
        x = float(x)
        key = (topic, x, wide)
        shown = self._values_shown.get(key)
        if shown is None:
            meta = self.topics[topic]
            shown = phrasing.value(x, str(meta["unit"]), int(meta["decimals"]), self.style, wide)
            self._values_shown[key] = shown
        return shown

    def amount(self, topic: str, x: float, wide: bool = False) -> str:
        """The size of a difference in the topic's own terms: points for percent, else unit."""
        x = float(x)
        key = (topic, x, wide)
        shown = self._amounts_shown.get(key)
        if shown is None:
            meta = self.topics[topic]
            if meta["unit"] == "percent":
                shown = phrasing.points(abs(x), int(meta["decimals"]), self.style)
            else:
                shown = phrasing.value(abs(x), str(meta["unit"]), int(meta["decimals"]), self.style, wide)
            self._amounts_shown[key] = shown
        return shown

    @staticmethod
    def wide(*values: Any) -> bool:
        """True when a statement's figures of one topic include one scaled in words (a million or more).

        Its other figures from a thousand up are then scaled too, so one statement never mixes
        "2.4 million" with "45,678" (a topic shown with decimals is never scaled).
        """
        sizes = [abs(float(x)) for x in values if x is not None and x == x]
        return any(size >= 1_000_000 for size in sizes)

    def write_columns(self) -> None:
        """Write the cells' figures column by column, one topic at a time, ahead of the kinds.

        The values (value, previous value, group and overall means, target) and the differences
        (gaps to the means, change) the cell kinds show, each written once per topic through
        figures.values_shown and amounts_shown, which give value()'s and amount()'s text; the
        kinds then find every one already written.
        """
        cells = self.facts.cells
        values = [c for c in ("value", "prev_value", "group_mean", "all_mean", "target") if c in cells.columns]
        amounts = [c for c in ("group_gap", "all_gap", "change") if c in cells.columns]
        for topic, rows in cells.groupby("topic", sort=False)[values + amounts]:
            self._write(str(topic), rows[values], self._values_shown, figures.values_shown)
            self._write(str(topic), rows[amounts], self._amounts_shown, figures.amounts_shown)

    def write_values(self, topics: Any, values: Any) -> None:
        """Write more values of the cells' topics column by column (as write_columns does), e.g. a series' first."""
        frame = pd.DataFrame({"topic": list(topics), "x": pd.to_numeric(pd.Series(list(values)), errors="coerce")})
        for topic, rows in frame.groupby("topic", sort=False)[["x"]]:
            self._write(str(topic), rows, self._values_shown, figures.values_shown)

    def _write(self, topic: str, rows: pd.DataFrame, cache: dict[tuple[str, float, bool], str], write: Any) -> None:
        meta = self.topics.get(topic)
        if meta is None:
            return
        xs = pd.unique(rows.to_numpy(dtype="float64").ravel())
        xs = [x for x in xs.tolist() if x == x and (topic, x, False) not in cache]
        for x, shown in zip(xs, write(xs, str(meta["unit"]), int(meta["decimals"]), self.style)):
            cache[(topic, x, False)] = shown


def draft_all(ctx: Context, renderer: Renderer, kinds: Iterable[Any]) -> Iterator[Draft]:
    """Draft every slot of every kind, in kind order; the parts of composed kinds are worked out once."""
    kinds = list(kinds)
    readers = Counter(part for kind in kinds for part in getattr(kind, "PARTS", ()))
    readers.update(kind.KIND for kind in kinds if kind.KIND in readers)
    shared = {part for part, n in readers.items() if n > 1}  # parts read twice in this pass: kept
    if ({kind.KIND for kind in kinds} | set(readers)) & CELL_KINDS:
        ctx.write_columns()
    ctx._keep = shared
    try:
        yield from _draft_kinds(ctx, renderer, kinds, shared)
    finally:
        ctx._kept.clear()
        ctx._keep = set()


def draft_with_parts(ctx: Context, renderer: Renderer, composed: Any, parts: dict[Any, Any]) -> Iterator[Draft]:
    """Draft a composed kind and, as it reads them, its part kinds: each part draft goes to ``parts[kind]``.

    The composed kind reads every candidate of its parts once, in order, so each part's drafts
    come out as drafting that kind alone gives them, and none is kept past its thousand cells.
    """
    def sink(kind: Any, send: Any) -> Any:
        template = renderer.template(kind.KIND)
        return lambda c: send(draft_one(kind, template, c))

    ctx._tee = {kind.KIND: sink(kind, send) for kind, send in parts.items()}
    try:
        yield from draft_all(ctx, renderer, [composed])
    finally:
        ctx._tee = {}


#: a part kind drafted as a composed kind reads it works this many cells at a time
_TEE_CHUNK = 1_000


def _teed(candidates: Iterable[Candidate], tee: Any) -> Iterator[Candidate]:
    """The candidates, each sent to ``tee`` first, a thousand at a time: each kind's code runs over many
    cells in a row (a cell at a time through four kinds and their templates took a quarter longer)."""
    stream = iter(candidates)
    while chunk := list(islice(stream, _TEE_CHUNK)):
        for c in chunk:
            tee(c)
        yield from chunk


def _draft_kinds(ctx: Context, renderer: Renderer, kinds: list[Any], shared: set[str]) -> Iterator[Draft]:
    for kind in kinds:
        template = renderer.template(kind.KIND)
        for c in (ctx.kept(kind) if kind.KIND in shared else kind.candidates(ctx)):
            yield draft_one(kind, template, c)


def draft_one(kind: Any, template: jinja2.Template, c: Candidate) -> Draft:
    """Render one candidate of a kind with the kind's compiled template: its draft."""
    choice = phrasing_index(c.slot, kind.PHRASINGS)
    try:
        shown = {name: entry["shown"] for name, entry in c.evidence.items()}
        text = phrasing.tidy(template.render(c.variables, p=choice, ev=shown, c=c.claims))
    except jinja2.TemplateError as exc:
        where = template.filename or f"{kind.KIND}.j2"
        raise template_error(kind.KIND, where, line_in(exc, where), exc, c.slot) from None
    return Draft(c.slot, c.kind, c.entity, c.topic, text, c.evidence, c.claims, round(c.interest, 4), choice, c.facts)
