"""What a load did (or, in a dry run, would do): the counts people and `--json` read."""

from __future__ import annotations

from collections.abc import Collection, Iterable
from dataclasses import dataclass, field
from typing import Any

from stetline import breakdowns
from stetline.reconcile import REASONS, Decision, SlotState
from stetline.status import Reason, Status
from stetline.store import ops


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
    slots: int = 0  # statements this edition drafted
    gone_waiting: int = 0  # of the slots gone in this load, those that wait in recheck (human work on them)
    totals: dict[str, int] = field(default_factory=dict)  # the workspace after the load (ops.Counts.totals)
    moved: list[str] = field(default_factory=list)  # with a mapping: each slot whose work moves (renames.Move)
    breakdowns_written: int = 0  # rows of subgroups written (new or changed)
    breakdowns_off: list[str] = field(default_factory=list)  # breakdowns in the data while the kind is off
    suggested_kinds: str = ""  # the `kinds` setting that would draft them

    def to_json(self) -> dict[str, Any]:
        """The summary as a JSON object (``workspace``: the totals after the load, in words)."""
        return {**self.__dict__, "workspace": ops.describe_totals(self.totals) if self.totals else None}

    def lines(self) -> list[str]:
        """The summary for people, one fact a line."""
        out = [
            f"edition {self.edition}: {self.slots} statements drafted",
            f"  new, drafted:               {self.drafted}",
            f"  updated silently (no human work on them): {self.updated}",
            f"  unchanged:                  {self.unchanged}",
        ]
        out.append(f"  sent to recheck:            {self.sent_to_recheck}")
        if self.sent_to_recheck:
            out.append("    for these reasons (a statement may have several):")
        for reason in REASONS:
            if self.recheck.get(reason):
                out.append(f"    {reason}: {self.recheck[reason]}")
        if self.still_in_recheck:
            out.append(f"  already in recheck, still waiting: {self.still_in_recheck}")
        if self.gone:
            out.append(f"  no longer apply:            {self.gone} (any human work on them is kept; "
                       f"{self.gone_waiting} of them wait in recheck)")
        if self.moved:
            out += [f"  statements whose human work moves to a new key: {len(self.moved)}",
                    *(f"    {line}" for line in self.moved)]
        if self.totals:
            out.append(f"workspace now: {ops.describe_totals(self.totals)}")
        if self.breakdowns_off:
            out.append(breakdowns.suggestion(self.breakdowns_off, self.suggested_kinds))
        if self.dry_run:
            out.insert(0, "dry run: nothing was written; the load would give")
        return out



def summarise(summary: LoadSummary, decisions: list[Decision], drafts: Collection[str],
               states: dict[str, SlotState]) -> None:
    """Count what the decisions do into the summary; ``drafts`` holds the id of every slot drafted this time."""
    finish(summary, tally(summary, decisions, drafts, states))


def tally(summary: LoadSummary, decisions: Iterable[Decision], drafts: Collection[str],
          states: dict[str, SlotState]) -> int:
    """Add some of a load's decisions to the summary (a load may count them a kind at a time).

    ``drafts``: the slots drafted with these decisions (none for the slots no draft came for);
    returns how many of them went to or stayed in recheck, for :func:`finish`.
    """
    summary.slots += len(drafts)
    touched = 0
    for d in decisions:
        state = states.get(d.slot)
        if d.gone:
            summary.gone += 1
            summary.gone_waiting += d.recheck is not None
        if state is None:
            summary.drafted += 1
        elif d.recheck and state.status == Status.RECHECK:
            summary.still_in_recheck += 1
            touched += d.slot in drafts
        elif d.recheck:
            touched += d.slot in drafts
            summary.sent_to_recheck += 1
            for reason in d.reasons:
                summary.recheck[reason] = summary.recheck.get(reason, 0) + 1
        elif d.gone:
            pass
        elif d.silent:
            summary.updated += 1
        summary.rebased += len(d.rebase)
        summary.drafts_written += d.write_draft
    return touched


def finish(summary: LoadSummary, touched: int) -> None:
    """Count the unchanged statements once every decision is tallied (``touched``: what tally returned)."""
    summary.unchanged = summary.slots - summary.drafted - summary.updated - touched


def count_unrenderable(summary: LoadSummary, slots: list[str]) -> None:
    """Count the statements whose draft no longer renders as sent to recheck."""
    if slots:
        summary.recheck[Reason.RENDER_FAILED] = summary.recheck.get(Reason.RENDER_FAILED, 0) + len(slots)
        summary.sent_to_recheck += len(slots)
