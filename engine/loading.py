"""Load an edition (the first load and every refresh), or redraft the current one.

One transaction per load: validate the files, compute the facts, draft every statement,
reconcile with the human work already in the workspace, and write only what changed. A failed
load writes nothing; ``dry_run`` computes the same summary and writes nothing.
"""

from __future__ import annotations

import dataclasses
import gc
import hashlib
import sys
import threading
from collections.abc import Callable, Collection, Iterator, Mapping
from contextlib import contextmanager
from functools import lru_cache
from importlib import metadata
from pathlib import Path
from typing import Any

import pandas as pd
from sqlalchemy.orm import Session

from stetline import breakdowns, nesting
from stetline import renames as rename_mod
from stetline import settings as settings_mod
from stetline.accounts import authorize
from stetline.dataset import Dataset, Source, load_dataset
from stetline.drafting import Context, Draft
from stetline.errors import StetlineError
from stetline.facts import compute_facts
from stetline.kinds import COMPOSED, KINDS, composed_facts
from stetline.loadsummary import LoadSummary, count_unrenderable, finish, summarise, tally
from stetline.progress import Progress, no_progress
from stetline.reconcile import Decision, SlotState, reconcile, reconcile_drafted, reconcile_gone
from stetline.slotstatus import house_style, recheck_unrenderable
from stetline.store import ops
from stetline.store.models import Draft as DraftRow
from stetline.store.models import Edition, Observation
from stetline.store.models import Slot as SlotRow
from stetline.workers import draft_each_kind, draft_kinds, worker_count
from stetline.workspace import Workspace

_GC_LOCK = threading.Lock()
_gc_pauses = 0
_gc_was_enabled = False


@contextmanager
def _gc_paused() -> Iterator[None]:
    """Hold off the cyclic garbage collector while a load runs.

    A load builds millions of small objects that all stay alive until it ends (facts, drafts,
    evidence) and makes almost no reference cycles, so each automatic collection only walks an
    ever larger heap: about a fifth of a large load's time. Nested and concurrent loads share
    one pause; the collector runs again as it was when the last of them ends.
    """
    global _gc_pauses, _gc_was_enabled
    with _GC_LOCK:
        if _gc_pauses == 0:
            _gc_was_enabled = gc.isenabled()
            gc.disable()
        _gc_pauses += 1
    try:
        yield
    finally:
        with _GC_LOCK:
            _gc_pauses -= 1
            if _gc_pauses == 0 and _gc_was_enabled:
                gc.enable()


def _label(session: Session, requested: str | None, base: str) -> str:
    if requested is not None:
        requested = requested.strip()
        if not requested or "/" in requested:
            raise StetlineError("an edition label may not be empty or contain '/'")
        if ops.label_taken(session, requested):
            raise StetlineError(f"edition {requested!r} already exists; choose another label with --edition")
        return requested
    label, n = base, 1
    while ops.label_taken(session, label):
        n += 1
        label = f"{base}-r{n}"
    return label


#: where an edition's summary keeps the fingerprint of what its drafts were made from
DRAFTED_FROM = "drafted_from"
#: where an edition's summary keeps the latest period of each format its topics use
LATEST_PERIODS = "latest_periods"
#: libraries whose behaviour reaches the text of a draft
_DRAFTING_LIBRARIES = ("pandas", "numpy", "jinja2", "babel", "inflect")


@lru_cache(maxsize=1)
def _code_fingerprint() -> bytes:
    """The engine's own code and templates and the versions of the libraries drafting uses."""
    root = Path(__file__).parent
    h = hashlib.blake2b(digest_size=16)
    for path in sorted(root.rglob("*")):
        if path.suffix in (".py", ".j2") and "__pycache__" not in path.parts and path.is_file():
            h.update(path.relative_to(root).as_posix().encode("utf-8") + b"\0" + path.read_bytes() + b"\0")
    for name in _DRAFTING_LIBRARIES:
        try:
            h.update(f"{name}={metadata.version(name)};".encode())
        except metadata.PackageNotFoundError:
            h.update(f"{name}=?;".encode())
    h.update(sys.version.encode())
    return h.digest()


_code_fingerprint()  # read when the code is imported, so it describes the code that runs


def drafting_inputs(ws: Workspace, ctx: Context) -> str:
    """A fingerprint of everything the drafts of an edition are made from.

    What the kinds and templates read: the facts (every frame, every column), the topic and
    entity metadata, the house style and entity noun, the workspace's phrasing templates, and
    the engine's code and libraries. Equal fingerprints mean drafting would give every slot the
    draft it already has. The edition label is left out: no kind reads ``Context.edition`` (one
    that does must add it here).
    """
    h = hashlib.blake2b(_code_fingerprint(), digest_size=16)
    for f in dataclasses.fields(ctx.facts):  # cells, topics, entities, series, latest period
        h.update(f.name.encode("utf-8") + b"=")
        _hash_value(h, getattr(ctx.facts, f.name))
    for f in dataclasses.fields(ctx):  # the metadata, house style, entity noun and any field to come
        if f.name not in ("facts", "edition") and not f.name.startswith("_"):
            h.update(f"{f.name}={getattr(ctx, f.name)!r};".encode())
    phrasing_dir = ws.phrasing_dir
    if phrasing_dir.is_dir():
        for path in sorted(p for p in phrasing_dir.rglob("*") if p.is_file()):
            h.update(path.relative_to(phrasing_dir).as_posix().encode("utf-8") + b"\0" + path.read_bytes() + b"\0")
    return h.hexdigest()


def _hash_value(h: Any, value: Any) -> None:
    """Feed a fact to a hash: a frame by its columns, types, index and every value."""
    if not isinstance(value, pd.DataFrame):
        h.update(repr(value).encode("utf-8") + b";")
        return
    h.update(repr([(str(c), str(t)) for c, t in value.dtypes.items()]).encode("utf-8"))
    try:
        h.update(pd.util.hash_pandas_object(value, index=True).to_numpy().tobytes())
    except TypeError:  # cells holding lists (a topic's leaders): written out in full
        h.update(repr(value.to_dict("split")).encode("utf-8"))
    h.update(b";")


def edition_context(
    session: Session, observations: pd.DataFrame, topics: pd.DataFrame,
    entities: pd.DataFrame, earlier: pd.DataFrame | None, edition: str, subgroups: pd.DataFrame | None = None,
) -> Context:
    """What the kinds draft an edition from: its facts (the subgroups' among them), metadata and house style."""
    style, values = house_style(session)
    facts = compute_facts(observations, topics, entities, earlier)
    facts.breakdowns = breakdowns.breakdown_facts(subgroups, observations, topics)
    return Context(
        facts, topics.set_index("topic").to_dict("index"), entities.set_index("entity").to_dict("index"),
        style, str(values["entity_noun"]), edition, settings_mod.kinds_of(values),
        nesting.nouns_of(str(values["level_nouns"])),
        evaluative_words=bool(values["evaluative_words"]), compare_with=str(values["compare_with"]),
    )


def draft_context(ws: Workspace, ctx: Context, progress: Progress = no_progress) -> list[Draft]:
    """Draft every statement of a context (in several processes for a large one; see workers)."""
    return draft_kinds(ctx, ws.phrasing_dir, worker_count(len(ctx.facts.cells)), progress)


def draft_edition(
    ws: Workspace, session: Session, observations: pd.DataFrame, topics: pd.DataFrame,
    entities: pd.DataFrame, earlier: pd.DataFrame | None, edition: str,
) -> list[Draft]:
    """Draft every statement of an edition from its observations and metadata."""
    return draft_context(ws, edition_context(session, observations, topics, entities, earlier, edition))


def load_edition(
    ws: Workspace, observations: Source, topics: Source | None = None, entities: Source | None = None,
    *, label: str | None = None, by: str, dry_run: bool = False, progress: Progress = no_progress,
    renames: Source | None = None,
) -> LoadSummary:
    """Load an edition's files into the workspace and reconcile every slot; one transaction.

    ``progress`` hears each stage as it starts (and the drafting count as it grows); ``renames``
    is a mapping file of old and new entity keys (see stetline.renames).
    """
    with _gc_paused(), ws.session() as session:
        if not dry_run:
            authorize(session, by, "load")
            ops.hold_writers(session)  # before reading anything the load reconciles against
        progress("reading files", 0, None)
        dataset = load_dataset(
            observations, topics, entities,
            known_topics=ops.topics_frame(session), known_entities=ops.entities_frame(session),
        )
        latest_periods = dataset.latest_periods  # worked out once: each reading goes through every observation
        latest_period = dataset.latest_period_of(latest_periods)
        edition_label = _label(session, label, latest_period)
        mapping = None if renames is None else rename_mod.read_checked(session, renames, dataset.observations)
        plan = None
        current = ops.current_edition(session)
        stored = ops.observations_frame(session)  # the current observations, read once
        earlier = _held(session, dataset.observations, stored) if current is not None else None
        progress("computing facts", 0, None)
        ctx = edition_context(session, dataset.observations, dataset.topics, dataset.entities, earlier, edition_label,
                              dataset.breakdowns)
        del earlier
        inputs = drafting_inputs(ws, ctx)
        streamed = False
        if mapping is None and current is not None and (current.summary or {}).get(DRAFTED_FROM) == inputs:
            progress("reconciling", 0, None)
            states = ops.slot_states(session)
            decisions, by_slot, drafted = _reconcile_as_drafted(session, states, dataset.topics, dataset.entities, ctx)
        elif mapping is None and not dry_run:  # drafted, reconciled and written a kind at a time, below
            streamed, decisions, by_slot, drafted, states = True, [], {}, set(), {}
        else:
            states = ops.slot_states(session)
            drafts = draft_context(ws, ctx, progress)
            progress("reconciling", 0, len(drafts))
            if mapping is not None:
                plan = rename_mod.plan(session, mapping, states, {d.slot for d in drafts}, edition_label,
                                       dataset.entities)
            decisions, by_slot = reconcile(states, drafts)
            if plan is not None:
                rename_mod.mark_merged(plan, decisions)
            del drafts
            drafted = by_slot.keys()
        ctx_kinds = ctx.kinds
        summary = LoadSummary(edition_label, dry_run=dry_run, moved=plan.lines() if plan else [])
        summary.breakdowns_off, summary.suggested_kinds = breakdowns.unused(dataset.breakdowns, ctx_kinds)
        if not streamed:
            del ctx
            summarise(summary, decisions, drafted, states)
        if dry_run:
            session.rollback()
            return summary
        edition = Edition(
            label=edition_label, loaded_by=by, files=dataset.files, latest_period=latest_period,
            period_format=dataset.period_format, observations=len(dataset.observations),
        )
        session.add(edition)
        session.flush()
        ops.replace_metadata(session, dataset.topics, dataset.entities)
        # a first load inserts into empty tables: their indexes are built once the rows are in
        with ops.indexes_deferred(session, (SlotRow, DraftRow, Observation)) as deferred:
            if streamed:
                # the observations first: the frames compared for it are let go before the workers
                # start, and the drafting workers, forked next, read the slots' states none of
                _store_observations(session, edition.id, dataset, stored, summary, progress)
                del stored
                _write_as_drafted(ws, session, ctx, lambda: ops.slot_states(session), edition.id, by, progress,
                                  summary)
                del ctx
            else:  # a streamed load reports drafting as it writes
                progress("writing statements", 0, len(decisions))
                if plan is not None:
                    rename_mod.record(session, plan, edition.id, by)
                ops.apply_decisions(session, edition.id, decisions, by_slot, by)
                if plan is not None:
                    rename_mod.move(session, plan, by)
            del decisions, by_slot, states, drafted  # the drafts are written: free them before the observations
            count_unrenderable(summary, recheck_unrenderable(session, by=by))
            if not streamed:
                _store_observations(session, edition.id, dataset, stored, summary, progress)
            if deferred:
                progress("building indexes", 0, None)
        session.flush()
        summary.totals = ops.workspace_counts(session).totals()
        edition.summary = {**summary.to_json(), DRAFTED_FROM: inputs, LATEST_PERIODS: latest_periods}
        ops.add_event(session, by, "load", edition_id=edition.id, detail=summary.to_json())
    return summary


def _store_observations(session: Session, edition_id: int, dataset: Dataset, stored: pd.DataFrame,
                        summary: LoadSummary, progress: Progress) -> None:
    """Version the edition's observations and subgroups against the stored ones; counted into the summary."""
    progress("writing observations", 0, len(dataset.observations))
    summary.observations_written = ops.store_observations(session, edition_id, dataset.observations, stored)["inserted"]
    summary.breakdowns_written = ops.store_breakdowns(session, edition_id, dataset.breakdowns)["inserted"]


class _Versions(Mapping[str, int]):
    """Each slot's version as its state was read (what apply_decisions needs), without a dict of its own."""

    def __init__(self, states: dict[str, SlotState]) -> None:
        self.states = states

    def __getitem__(self, slot: str) -> int:
        return self.states[slot].version

    def __iter__(self) -> Iterator[str]:
        return iter(self.states)

    def __len__(self) -> int:
        return len(self.states)


def _write_as_drafted(ws: Workspace, session: Session, ctx: Context, read_states: Callable[[], dict[str, SlotState]],
                      edition_id: int, by: str, progress: Progress, summary: LoadSummary) -> None:
    """Draft, reconcile, write and count a batch at a time (one kind, or part of one), holding no more drafts than that.

    The same decisions, in the same order, and the same rows as reconciling every draft at once
    (reconcile.reconcile), then the slots no draft came for; the summary counts them all. The
    slots' states are read once the drafting has started (forked workers share none of them), and
    each kind's are let go once it is written: what stays is the slots no draft came for.
    """
    states: dict[str, SlotState] | None = None
    touched = 0
    human = ops.slots_with_work(session)  # only their composed facts are read
    for batch in draft_each_kind(ctx, ws.phrasing_dir, worker_count(len(ctx.facts.cells)), progress, facts_for=human):
        if states is None:
            states = read_states()
        some, by_slot = reconcile_drafted(states, batch)
        del batch
        ops.apply_decisions(session, edition_id, some, by_slot, by, _Versions(states))
        touched += tally(summary, some, by_slot.keys(), states)
        for slot in by_slot:
            states.pop(slot, None)
        del some, by_slot
    if states is None:
        states = read_states()
    progress("reconciling", 0, summary.slots)  # the slots no draft came for
    gone = reconcile_gone(states, ())
    progress("writing statements", summary.slots, summary.slots + len(gone))
    ops.apply_decisions(session, edition_id, gone, {}, by, _Versions(states))
    touched += tally(summary, gone, (), states)
    finish(summary, touched)


def _reconcile_as_drafted(
    session: Session, states: dict[str, SlotState], topics: pd.DataFrame, entities: pd.DataFrame, ctx: Context,
) -> tuple[list[Decision], dict[str, Draft], Collection[str]]:
    """Reconcile when drafting would give every slot the draft it already has.

    The slots not gone are exactly those the last load drafted, each with its draft unchanged:
    a slot without human work gets no decision (its digest is the same), a gone one none either,
    so only slots carrying human work are decided, against their stored drafts, in the order
    drafting yields them (composed drafts given their unstated facts again, as drafting would).
    """
    drafted = {sid for sid, state in states.items() if not state.gone}
    human = {sid: state for sid, state in states.items() if sid in drafted and state.human}
    drafts = sorted(ops.current_drafts(session, human), key=_draft_position(topics, entities))
    composed = {d.kind for d in drafts if d.kind in COMPOSED}
    if composed:  # a composed draft is judged on facts it may not state: the stored draft lacks them
        facts = composed_facts(ctx, composed, {d.slot for d in drafts if d.kind in COMPOSED})
        for d in drafts:
            d.facts = facts.get(d.slot) if d.kind in COMPOSED else None
    decisions, by_slot = reconcile(human, drafts)
    return decisions, by_slot, drafted


def _draft_position(topics_frame: pd.DataFrame, entities_frame: pd.DataFrame) -> Any:
    """A sort key giving drafts in the order draft_all yields them: by kind, then the kind's rows
    (entity x topic cells by entity then topic key; entities and topics in metadata order)."""
    kinds = {k.KIND: i for i, k in enumerate(KINDS)}
    entities = {key: i for i, key in enumerate(entities_frame["entity"])}
    topics = {key: i for i, key in enumerate(topics_frame["topic"])}

    def key(d: Draft) -> tuple[Any, ...]:
        if d.entity is not None and d.topic is not None:  # a kind with both scopes (breakdown) gives cells first
            rest: tuple[Any, ...] = (0, d.entity, d.topic, d.slot)
        elif d.entity is not None:
            rest = (1, entities.get(d.entity, -1), d.entity)
        elif d.topic is not None:
            rest = (2, topics.get(d.topic, -1), d.topic)
        else:
            rest = ()
        return (kinds.get(d.kind, len(kinds)),) + rest

    return key


def redraft(ws: Workspace, *, by: str, progress: Progress = no_progress) -> LoadSummary:
    """Redraft the current edition (after a phrasing or house-style change) and reconcile."""
    with _gc_paused(), ws.session() as session:
        progress("computing facts", 0, None)
        authorize(session, by, "redraft")
        ops.hold_writers(session)
        edition = ops.current_edition(session)
        if edition is None:
            raise StetlineError("nothing to redraft: load an edition first (stetline load)")
        topics, entities = ops.topics_frame(session), ops.entities_frame(session)
        assert topics is not None and entities is not None
        obs = _with_times(ops.observations_frame(session), edition.period_format)
        previous = [e for e in ops.editions(session) if e.id < edition.id]
        earlier = None
        if previous:  # what the edition's own load compared against, so a redraft agrees with it
            stored = ops.observations_frame(session, previous[-1].id)
            earlier = _held(session, obs, stored, before=edition.id)
        subgroups = _with_times(ops.breakdowns_frame(session), edition.period_format)
        ctx = edition_context(session, obs, topics, entities, earlier, edition.label, subgroups)
        inputs = drafting_inputs(ws, ctx)
        summary = LoadSummary(edition.label)
        _write_as_drafted(ws, session, ctx, lambda: ops.slot_states(session), edition.id, by, progress, summary)
        del ctx
        count_unrenderable(summary, recheck_unrenderable(session, by=by))
        session.flush()
        summary.totals = ops.workspace_counts(session).totals()
        edition.summary = {**(edition.summary or {}), DRAFTED_FROM: inputs}
        ops.add_event(session, by, "redraft", edition_id=edition.id, detail=summary.to_json())
    return summary


def _held(session: Session, new: pd.DataFrame, stored: pd.DataFrame | None = None,
          before: int | None = None) -> pd.DataFrame:
    """What earlier editions held for each observation, to tell a revised figure from a new one.

    A value that differs from the stored one was revised by this load; a value equal to the
    stored one keeps the revision the stored edition made (so reloading the same data changes
    nothing). ``stored`` is the edition compared against (default: the current one); a redraft
    passes the edition before its own and ``before`` = its own id, to see what its load saw.
    """
    if stored is None:
        stored = ops.observations_frame(session)
    current = stored[["entity", "topic", "period", "value"]]
    replaced = ops.replaced_values(session, before)
    keys = ["entity", "topic", "period"]
    merged = current.merge(new[keys + ["value"]], on=keys, how="left", suffixes=("", "_new"))
    if not replaced.empty:
        merged = merged.merge(replaced.rename(columns={"value": "value_old"}), on=keys, how="left")
        same = (merged["value"] == merged["value_new"]) & merged["value_old"].notna()
        merged["value"] = merged["value"].where(~same, merged["value_old"])
    return merged[keys + ["value"]]


def _with_times(obs: pd.DataFrame, fmt: str) -> pd.DataFrame:
    from stetline import periods

    obs = obs.drop(columns=["id"])
    obs["time"] = periods.times(obs["period"], None if fmt == periods.MIXED else fmt)
    obs["row"] = range(2, len(obs) + 2)
    obs["status"] = obs["status"].fillna("")
    return obs
