"""Bulk operations and queries on the workspace database; the session belongs to the caller.

Writes are bulk and touch only rows that changed: observations are versioned by edition, a
draft row is written only when a slot's text, evidence or claims change, and layers and
approvals are never deleted (dropping stamps ``dropped_at``). One module per concern, each
importing only the ones listed before it:

- bulk: write_many (every bulk INSERT and UPDATE), indexes built after a first load's rows, id lists for
  IN (...), rows to frames
- editions: settings, editions, entity and topic metadata, observations
- slots: a slot, its draft, layers and approvals
- listing: the listed predicate, slot filters, listings and status counts, recheck choices, the current
  drafts of a kind (claims and evidence)
- refresh: slot states for reconcile, a refresh's decisions written in bulk
- history: events, comment threads, drafts and layers as of an edition
- moves: human work given from one slot to another (renamed and merged entities)
- search: the texts of listed slots that hold every word of a query

Callers write ``ops.name(...)``; the names below are the public ones.
"""

from __future__ import annotations

from stetline.store.ops.bulk import indexes_deferred
from stetline.store.ops.editions import (
    breakdowns_frame,
    current_edition,
    edition_by_label,
    editions,
    entities_frame,
    entity_rows,
    get_entity,
    get_settings,
    get_topic,
    label_taken,
    latest_values,
    observations_frame,
    put_setting,
    replace_metadata,
    replaced_values,
    series,
    store_breakdowns,
    store_observations,
    topic_rows,
    topic_series,
    topics_frame,
)
from stetline.store.ops.history import (
    COMMENT_KINDS,
    add_comment,
    add_event,
    comments_for,
    drafts_as_of,
    events_after,
    events_by_action,
    events_for,
    first_edition_of,
    gone_as_of,
    latest_event,
    layer_types_by_slot,
    moves_between,
    recent_events,
)
from stetline.store.ops.listing import (
    Counts,
    CurrentDraft,
    SlotFilter,
    count_slots,
    current_of_kind,
    describe_totals,
    list_slots,
    listed,
    recheck_options,
    recheck_reason_counts,
    status_counts,
    status_counts_by,
    status_counts_of,
    workspace_counts,
)
from stetline.store.ops.moves import (
    comment_counts,
    drop_work,
    entity_slots,
    layer_authors,
    move_rows,
    write_bases,
)
from stetline.store.ops.refresh import (
    Applied,
    apply_decisions,
    current_drafts,
    hold_writers,
    slot_states,
    slot_versions,
    slots_with_work,
    table_counts,
)
from stetline.store.ops.search import (
    MAX_SEARCH_TERMS,
    SEARCH_LIMIT,
    SearchHit,
    SearchPage,
    search,
    search_terms,
)
from stetline.store.ops.slots import (
    active_approval,
    active_layers,
    add_approval,
    add_layer,
    all_active_approvals,
    all_active_layers,
    approvals_for,
    drop,
    get_draft,
    get_slot,
    last_approval,
    layers_for,
    slot_statuses,
    text_layer_history,
)

__all__ = [
    "get_settings", "put_setting", "current_edition", "editions", "edition_by_label", "label_taken",
    "topic_rows", "entity_rows", "get_entity", "get_topic", "topics_frame", "entities_frame",
    "replace_metadata", "observations_frame", "store_observations", "breakdowns_frame", "store_breakdowns",
    "replaced_values", "series", "latest_values",
    "topic_series", "get_slot", "get_draft", "active_layers", "text_layer_history", "active_approval", "last_approval",
    "add_layer", "drop", "add_approval", "layers_for", "approvals_for", "all_active_layers",
    "all_active_approvals", "slot_statuses", "listed", "SlotFilter", "list_slots", "count_slots",
    "status_counts", "status_counts_by", "status_counts_of", "recheck_options", "recheck_reason_counts",
    "Counts", "describe_totals", "workspace_counts", "CurrentDraft", "current_of_kind",
    "indexes_deferred", "hold_writers", "slot_states", "slots_with_work", "current_drafts", "Applied",
    "apply_decisions", "slot_versions",
    "table_counts",
    "add_event", "events_for", "recent_events", "events_by_action", "latest_event", "events_after", "first_edition_of",
    "COMMENT_KINDS", "add_comment", "comments_for", "drafts_as_of", "gone_as_of", "layer_types_by_slot",
    "moves_between",
    "entity_slots", "comment_counts", "move_rows", "write_bases", "drop_work", "layer_authors",
    "SEARCH_LIMIT", "MAX_SEARCH_TERMS", "SearchHit", "SearchPage", "search_terms", "search",
]
