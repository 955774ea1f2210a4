"""Load an edition (the first load and every refresh), or redraft the current one.

One transaction per load: validate the files, compute the facts, draft every statement,
reconcile with the human work already in the workspace, and write only what changed. A failed
load writes nothing; ``dry_run`` computes the same summary and writes nothing.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import pandas as pd
from sqlalchemy.orm import Session

from engine import settings as settings_mod
from engine.dataset import Dataset, Source, load_dataset
from engine.drafting import Context, Draft, Renderer, draft_all
from engine.errors import StetlineError
from engine.facts import compute_facts
from engine.kinds import KINDS
from engine.phrasing import HouseStyle
from engine.reconcile import REASONS, Decision, SlotState, reconcile
from engine.store import ops
from engine.store.models import Edition
from engine.workspace import Workspace


@dataclass
class LoadSummary:
    """What a load did (or, in a dry run, would do)."""

    edition: str
    drafted: int = 0
    updated: int = 0
    unchanged: int = 0
    recheck: dict[str, int] = field(default_factory=dict)
    sent_to_recheck: int = 0
    still_in_recheck: int = 0
    gone: int = 0
    rebased: int = 0
    drafts_written: int = 0
    observations_written: int = 0
    dry_run: bool = False
    slots: int = 0

    def to_json(self) -> dict[str, Any]:
        """The summary as a JSON object."""
        return dict(self.__dict__)

    def lines(self) -> list[str]:
        """The summary for people, one fact a line."""
        out = [
            f"edition {self.edition}: {self.slots} statements",
            f"  new, drafted:               {self.drafted}",
            f"  updated silently (no human work on them): {self.updated}",
            f"  unchanged:                  {self.unchanged}",
        ]
        total = self.sent_to_recheck
        out.append(f"  sent to recheck:            {total}")
        for reason in REASONS:
            if self.recheck.get(reason):
                out.append(f"    {reason}: {self.recheck[reason]}")
        if self.still_in_recheck:
            out.append(f"  already in recheck, still waiting: {self.still_in_recheck}")
        if self.gone:
            out.append(f"  no longer apply:            {self.gone} (any human work on them is kept)")
        if self.dry_run:
            out.insert(0, "dry run: nothing was written; the load would give")
        return out


def house_style(session: Session) -> tuple[HouseStyle, dict[str, Any]]:
    """The workspace's house style and all its settings."""
    values = settings_mod.with_defaults(ops.get_settings(session))
    style = HouseStyle(
        locale=values["locale"], serial_comma=bool(values["serial_comma"]),
        percent_word=values["percent_word"], small_numbers_in_words=bool(values["small_numbers_in_words"]),
    )
    return style, values


def _label(session: Session, requested: str | None, dataset: Dataset) -> str:
    if requested is not None:
        requested = requested.strip()
        if not requested or "/" in requested:
            raise StetlineError("an edition label may not be empty or contain '/'")
        if ops.label_taken(session, requested):
            raise StetlineError(f"edition {requested!r} already exists; choose another label with --edition")
        return requested
    base = dataset.latest_period
    label, n = base, 1
    while ops.label_taken(session, label):
        n += 1
        label = f"{base}-r{n}"
    return label


def draft_edition(
    ws: Workspace, session: Session, observations: pd.DataFrame, topics: pd.DataFrame,
    entities: pd.DataFrame, earlier: pd.DataFrame | None, edition: str,
) -> list[Draft]:
    """Draft every statement of an edition from its observations and metadata."""
    style, values = house_style(session)
    facts = compute_facts(observations, topics, entities, earlier)
    ctx = Context(
        facts, topics.set_index("topic").to_dict("index"), entities.set_index("entity").to_dict("index"),
        style, str(values["entity_noun"]), edition,
    )
    renderer = Renderer(style, ws.phrasing_dir)
    return list(draft_all(ctx, renderer, KINDS))


def _summarise(summary: LoadSummary, decisions: list[Decision], drafts: dict[str, Draft],
               states: dict[str, SlotState]) -> None:
    summary.slots = len(drafts)
    touched = 0
    for d in decisions:
        state = states.get(d.slot)
        if state is None:
            summary.drafted += 1
        elif d.recheck and state.status == "recheck":
            summary.still_in_recheck += 1
            touched += d.slot in drafts
        elif d.recheck:
            touched += d.slot in drafts
            summary.sent_to_recheck += 1
            for reason in d.reasons:
                summary.recheck[reason] = summary.recheck.get(reason, 0) + 1
        elif d.gone:
            summary.gone += 1
        elif d.silent:
            summary.updated += 1
        summary.rebased += len(d.rebase)
    summary.drafts_written = sum(1 for d in decisions if d.write_draft)
    summary.unchanged = summary.slots - summary.drafted - summary.updated - touched


def load_edition(
    ws: Workspace, observations: Source, topics: Source | None = None, entities: Source | None = None,
    *, label: str | None = None, by: str, dry_run: bool = False,
) -> LoadSummary:
    """Load an edition's files into the workspace and reconcile every slot; one transaction."""
    with ws.session() as session:
        dataset = load_dataset(
            observations, topics, entities,
            known_topics=ops.topics_frame(session), known_entities=ops.entities_frame(session),
        )
        edition_label = _label(session, label, dataset)
        current = ops.current_edition(session)
        earlier = _held(session, dataset.observations) if current is not None else None
        drafts = draft_edition(ws, session, dataset.observations, dataset.topics, dataset.entities, earlier, edition_label)
        states = ops.slot_states(session)
        decisions, by_slot = reconcile(states, drafts)
        summary = LoadSummary(edition_label, dry_run=dry_run)
        _summarise(summary, decisions, by_slot, states)
        if dry_run:
            session.rollback()
            return summary
        edition = Edition(
            label=edition_label, loaded_by=by, files=dataset.files, latest_period=dataset.latest_period,
            period_format=dataset.period_format, observations=len(dataset.observations),
        )
        session.add(edition)
        session.flush()
        ops.replace_metadata(session, dataset.topics, dataset.entities)
        written = ops.store_observations(session, edition.id, dataset.observations)
        summary.observations_written = written["inserted"]
        ops.apply_decisions(session, edition.id, decisions, by_slot, by)
        edition.summary = summary.to_json()
        ops.add_event(session, by, "load", edition_id=edition.id, detail=summary.to_json())
    return summary


def redraft(ws: Workspace, *, by: str) -> LoadSummary:
    """Redraft the current edition (after a phrasing or house-style change) and reconcile."""
    with ws.session() as session:
        edition = ops.current_edition(session)
        if edition is None:
            raise StetlineError("nothing to redraft: load an edition first (stetline load)")
        topics, entities = ops.topics_frame(session), ops.entities_frame(session)
        assert topics is not None and entities is not None
        obs = _with_times(ops.observations_frame(session), edition.period_format)
        previous = [e for e in ops.editions(session) if e.id < edition.id]
        earlier = ops.observations_frame(session, previous[-1].id) if previous else None
        drafts = draft_edition(ws, session, obs, topics, entities, earlier, edition.label)
        states = ops.slot_states(session)
        decisions, by_slot = reconcile(states, drafts)
        summary = LoadSummary(edition.label)
        _summarise(summary, decisions, by_slot, states)
        ops.apply_decisions(session, edition.id, decisions, by_slot, by)
        ops.add_event(session, by, "redraft", edition_id=edition.id, detail=summary.to_json())
    return summary


def _held(session: Session, new: pd.DataFrame) -> pd.DataFrame:
    """What earlier editions held for each observation, to tell a revised figure from a new one.

    A value that differs from the current one was revised by this load; a value equal to the
    current one keeps the revision the current edition made (so reloading the same data
    changes nothing).
    """
    current = ops.observations_frame(session)[["entity", "topic", "period", "value"]]
    replaced = ops.replaced_values(session)
    keys = ["entity", "topic", "period"]
    merged = current.merge(new[keys + ["value"]], on=keys, how="left", suffixes=("", "_new"))
    if not replaced.empty:
        merged = merged.merge(replaced.rename(columns={"value": "value_old"}), on=keys, how="left")
        same = (merged["value"] == merged["value_new"]) & merged["value_old"].notna()
        merged["value"] = merged["value"].where(~same, merged["value_old"])
    return merged[keys + ["value"]]


def _with_times(obs: pd.DataFrame, fmt: str) -> pd.DataFrame:
    from engine import periods

    obs = obs.drop(columns=["id"])
    obs["time"] = periods.times(obs["period"], fmt)
    obs["row"] = range(2, len(obs) + 2)
    obs["status"] = obs["status"].fillna("")
    return obs
