"""Settings, editions, entity and topic metadata, and the observations versioned by edition."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from sqlalchemy import select
from sqlalchemy.orm import Session, aliased

from stetline import periods
from stetline.store.models import BreakdownObservation, Edition, Entity, Observation, Setting, Topic

if TYPE_CHECKING:  # imported where a frame is built: `stetline status` never needs pandas
    import pandas as pd
from stetline.store.ops.bulk import floats_or_none, to_frame, write_many


def get_settings(session: Session) -> dict[str, Any]:
    """Every stored setting (without defaults)."""
    return {s.key: s.value for s in session.scalars(select(Setting))}


def put_setting(session: Session, key: str, value: Any) -> None:
    """Store a setting."""
    row = session.get(Setting, key)
    if row is None:
        session.add(Setting(key=key, value=value))
    else:
        row.value = value


def current_edition(session: Session) -> Edition | None:
    """The newest edition, or None before the first load."""
    return session.scalars(select(Edition).order_by(Edition.id.desc()).limit(1)).first()


def editions(session: Session) -> list[Edition]:
    """Every edition, oldest first."""
    return list(session.scalars(select(Edition).order_by(Edition.id)))


def edition_by_label(session: Session, label: str) -> Edition | None:
    """The edition with a label."""
    return session.scalars(select(Edition).where(Edition.label == label)).first()


def label_taken(session: Session, label: str) -> bool:
    """True when an edition already has this label."""
    return edition_by_label(session, label) is not None


def topic_rows(session: Session) -> list[Topic]:
    """Every topic, in file order."""
    return list(session.scalars(select(Topic).order_by(Topic.position)))


def entity_rows(session: Session) -> list[Entity]:
    """Every entity, in file order."""
    return list(session.scalars(select(Entity).order_by(Entity.position)))


def get_entity(session: Session, key: str) -> Entity | None:
    """An entity by key."""
    return session.get(Entity, key)


def get_topic(session: Session, key: str) -> Topic | None:
    """A topic by key."""
    return session.get(Topic, key)


def topics_frame(session: Session) -> pd.DataFrame | None:
    """The stored topic metadata as a frame shaped like engine.dataset's, or None if empty."""
    import pandas as pd

    rows = session.scalars(select(Topic).order_by(Topic.position)).all()
    if not rows:
        return None
    return pd.DataFrame([{
        "topic": r.key, "label": r.label, "unit": r.unit, "better": r.better,
        "decimals": r.decimals, "category": r.category,
        "target": float("nan") if r.target is None else r.target,
        "weight": r.weight, "source": r.source, "position": r.position,
        "change": r.change, "label_in_sentence": r.label_in_sentence, "article": r.article,
    } for r in rows]).astype({"target": "float64", "weight": "float64", "decimals": "int64"})


def entities_frame(session: Session) -> pd.DataFrame | None:
    """The stored entity metadata as a frame, or None if empty."""
    import pandas as pd

    rows = session.scalars(select(Entity).order_by(Entity.position)).all()
    if not rows:
        return None
    return pd.DataFrame([{"entity": r.key, "name": r.name, "group": r.group, "position": r.position,
                          "parent": r.parent, "article": r.article} for r in rows])


def replace_metadata(session: Session, topics: pd.DataFrame, entities: pd.DataFrame) -> None:
    """Store the metadata in force (rows not in the frames are kept: nothing is deleted)."""
    import pandas as pd

    existing_t = {t.key: t for t in session.scalars(select(Topic))}
    for r in topics.itertuples(index=False):
        values = dict(
            label=r.label, unit=r.unit, better=r.better, decimals=int(r.decimals), category=r.category,
            target=None if pd.isna(r.target) else float(r.target), weight=float(r.weight),
            source=r.source, position=int(r.position), change=getattr(r, "change", ""),
            label_in_sentence=getattr(r, "label_in_sentence", ""), article=getattr(r, "article", ""),
        )
        topic = existing_t.get(r.topic)
        if topic is None:
            session.add(Topic(key=r.topic, **values))
        else:
            _update(topic, values)
    existing_e = {e.key: e for e in session.scalars(select(Entity))}
    for r in entities.itertuples(index=False):
        values = dict(name=r.name, group=r.group, position=int(r.position), parent=getattr(r, "parent", ""),
                      article=getattr(r, "article", ""))
        entity = existing_e.get(r.entity)
        if entity is None:
            session.add(Entity(key=r.entity, **values))
        else:
            _update(entity, values)
    session.flush()


def _update(row: Topic | Entity, values: dict[str, Any]) -> None:
    """Set the attributes whose value differs (an unchanged row is not written)."""
    for k, v in values.items():
        if getattr(row, k) != v:
            setattr(row, k, v)


OBS_KEY = ["entity", "topic", "period"]
OBS_COLUMNS = ["value", "margin", "status"]
#: a subgroup's value is keyed by its breakdown and subgroup too, and carries the subgroup's share
BREAKDOWN_KEY = ["entity", "topic", "breakdown", "subgroup", "period"]
BREAKDOWN_COLUMNS = ["value", "margin", "status", "share"]
_FLOATS = ("value", "margin", "share")


def _valid_in(model: Any, columns: list[str], session: Session, edition_id: int | None) -> pd.DataFrame:
    """The rows of a versioned table valid in an edition (default: the current ones)."""
    q = select(model.id, *(getattr(model, c) for c in columns))
    if edition_id is None:
        q = q.where(model.valid_to.is_(None))
    else:
        q = q.where(model.valid_from <= edition_id).where((model.valid_to.is_(None)) | (model.valid_to > edition_id))
    floats = tuple(c for c in columns if c in _FLOATS)
    frame = to_frame(session.execute(q).all(), ["id", *columns], floats)
    return frame.astype(dict.fromkeys(floats, "float64"))


def observations_frame(session: Session, edition_id: int | None = None) -> pd.DataFrame:
    """The observations (totals) valid in an edition (default: the current ones)."""
    return _valid_in(Observation, OBS_KEY + OBS_COLUMNS, session, edition_id)


def breakdowns_frame(session: Session, edition_id: int | None = None) -> pd.DataFrame:
    """The observations of subgroups valid in an edition (default: the current ones)."""
    return _valid_in(BreakdownObservation, BREAKDOWN_KEY + BREAKDOWN_COLUMNS, session, edition_id)


def store_observations(
    session: Session, edition_id: int, observations: pd.DataFrame, current: pd.DataFrame | None = None,
) -> dict[str, int]:
    """Version the observations: close rows that changed or left, insert new and changed rows.

    ``current`` is what observations_frame(session) gives, when the caller has already read it.
    """
    old = observations_frame(session) if current is None else current
    return _version(session, Observation, OBS_KEY, OBS_COLUMNS, edition_id, observations, old)


def store_breakdowns(session: Session, edition_id: int, breakdowns: pd.DataFrame) -> dict[str, int]:
    """Version the subgroups' observations as the totals are: only rows that changed or left are written."""
    return _version(session, BreakdownObservation, BREAKDOWN_KEY, BREAKDOWN_COLUMNS, edition_id, breakdowns,
                    breakdowns_frame(session))


def _version(session: Session, model: Any, key: list[str], compared: list[str], edition_id: int,
             rows: pd.DataFrame, old: pd.DataFrame) -> dict[str, int]:
    """Close the rows of ``old`` that changed or left, insert the new and changed rows of ``rows``."""
    new = rows[key + compared]
    merged = new.merge(old, on=key, how="outer", suffixes=("", "_old"), indicator=True)

    def same(a: pd.Series, b: pd.Series) -> pd.Series:
        return (a == b) | (a.isna() & b.isna())

    both = merged["_merge"] == "both"
    unchanged = both
    for c in compared:
        unchanged = unchanged & same(merged[c], merged[f"{c}_old"])
    to_close = merged.loc[(merged["_merge"] == "right_only") | (both & ~unchanged), "id"].dropna().astype("int64")
    to_insert = merged.loc[(merged["_merge"] == "left_only") | (both & ~unchanged), key + compared]
    ids = to_close.tolist()
    write_many(session, model, ["valid_to"], [(edition_id, i) for i in ids], where="id")
    n = len(to_insert)
    columns = {c: floats_or_none(to_insert[c]) if c in _FLOATS else to_insert[c].tolist() for c in key + compared}
    columns.update(valid_from=[edition_id] * n, valid_to=[None] * n)
    write_many(session, model, list(columns), list(zip(*columns.values())))
    return {"closed": len(ids), "inserted": n}


def replaced_values(session: Session, before: int | None = None) -> pd.DataFrame:
    """For each current observation that replaced an earlier value, the value it replaced.

    That is the row the current one took over from: same key, closed by the edition that opened
    the current row. A key that left the data and came back later replaced nothing (the load
    that brought it back had nothing to compare it with). With ``before``, only rows closed by
    an edition older than that edition id count (what that edition's own load saw). One probe of
    the observation index per current row, however many editions are stored.
    """

    old, cur = aliased(Observation), aliased(Observation)
    q = select(old.entity, old.topic, old.period, old.value).join(
        cur, (cur.valid_to.is_(None)) & (cur.entity == old.entity) & (cur.topic == old.topic)
        & (cur.period == old.period) & (old.valid_to == cur.valid_from),
    )
    if before is not None:
        q = q.where(old.valid_to < before)
    frame = to_frame(session.execute(q).all(), ["entity", "topic", "period", "value"], ("value",))
    return frame.astype({"value": "float64"}) if not frame.empty else frame


def series(session: Session, entity: str, topic: str) -> list[Observation]:
    """The current observations of one entity on one topic, in period order."""
    rows = session.scalars(select(Observation).where(
        Observation.valid_to.is_(None), Observation.entity == entity, Observation.topic == topic,
    ))
    return sorted(rows, key=lambda o: periods.period_time(o.period))


def topic_series(session: Session, topic: str) -> tuple[dict[str, list[float | None]], list[str]]:
    """Every entity's current values on one topic, one per period (None when missing), and the periods in order."""
    rows = session.execute(select(Observation.entity, Observation.period, Observation.value, Observation.status).where(
        Observation.valid_to.is_(None), Observation.topic == topic)).all()
    ordered = sorted({r.period for r in rows}, key=periods.period_time)
    at = {p: i for i, p in enumerate(ordered)}
    lines: dict[str, list[float | None]] = {}
    for r in rows:
        line = lines.setdefault(r.entity, [None] * len(ordered))
        if r.value is not None and r.status != "confidential":
            line[at[r.period]] = float(r.value)
    return lines, ordered


def latest_values(session: Session, topic: str) -> tuple[str | None, list[tuple[str, float]]]:
    """The topic's latest period with a value, and every entity's value in it (highest first)."""
    rows = session.execute(select(Observation.entity, Observation.period, Observation.value).where(
        Observation.valid_to.is_(None), Observation.topic == topic, Observation.value.is_not(None),
        Observation.status.is_distinct_from("confidential"),  # a withheld value is not shown
    )).all()
    if not rows:
        return None, []
    latest = max({r.period for r in rows}, key=periods.period_time)
    values = sorted(((r.entity, float(r.value)) for r in rows if r.period == latest), key=lambda p: (-p[1], p[0]))
    return latest, values
