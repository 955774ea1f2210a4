"""Bulk writing and the helpers every query module shares: id lists for IN (...), rows to frames.

Every bulk INSERT and UPDATE of the store goes through write_many: one statement compiled once,
its rows sent to the driver's executemany in chunks.
"""

from __future__ import annotations

import json
from collections.abc import Iterable, Iterator, Sequence
from contextlib import contextmanager
from typing import TYPE_CHECKING, Any

from sqlalchemy import insert, text, update
from sqlalchemy.orm import Session

if TYPE_CHECKING:  # imported where a frame is built: `stetline status` never needs pandas
    import pandas as pd

#: rows per executemany
CHUNK = 20_000
#: ids per IN (...) list: below SQLite's oldest limit on bound parameters (999)
IN_CHUNK = 900


def id_chunks(ids: Iterable[str]) -> Iterator[list[str]]:
    """The ids in lists short enough for one IN (...) each."""
    ids = list(ids)
    for start in range(0, len(ids), IN_CHUNK):
        yield ids[start:start + IN_CHUNK]


def to_frame(rows: Sequence[Any], columns: list[str], floats: tuple[str, ...] = ()) -> pd.DataFrame:
    """``pd.DataFrame(rows, columns=columns)``, built column by column (several times faster for
    many rows); the ``floats`` columns come as float64 with NaN for NULL."""
    import numpy as np
    import pandas as pd

    if not rows:
        return pd.DataFrame(rows, columns=columns)
    data: dict[str, Any] = {}
    for name, values in zip(columns, zip(*rows)):
        data[name] = np.array(values, dtype="float64") if name in floats else list(values)
    return pd.DataFrame(data, columns=columns)


def floats_or_none(values: pd.Series) -> list[float | None]:
    """A column as Python floats, None where missing."""
    out = values.astype("float64")
    return [None if v != v else v for v in out.tolist()]


def write_many(
    session: Session, model: Any, columns: list[str], rows: list[tuple[Any, ...]], *, where: str | None = None,
    serialised: frozenset[str] = frozenset(),
) -> None:
    """INSERT (or, with ``where``, UPDATE ... WHERE where = the last value of each row) many rows.

    The values go through each column's own bind processing (JSON, dates, booleans) exactly as
    an ORM insert would, then to the driver's executemany in chunks: no per-row statement
    compilation. Columns the rows leave out take their scalar or callable defaults, as in an
    ORM insert. Drivers with a placeholder style other than ? or %s use SQLAlchemy's own path.
    JSON columns named in ``serialised`` hold text already serialised (a draft's evidence and
    claims, serialised once for its digest too) and go to the driver as they are.
    """
    if not rows:
        return
    session.flush()  # as a session.execute would (autoflush): pending rows go first
    table = model.__table__
    dialect = session.get_bind().dialect
    placeholder = {"qmark": "?", "format": "%s", "pyformat": "%s"}.get(dialect.paramstyle)
    if placeholder is None:
        if serialised:
            at = [i for i, c in enumerate(columns) if c in serialised]
            rows = [tuple(json.loads(v) if i in at else v for i, v in enumerate(r)) for r in rows]
        _write_many_orm(session, model, columns, rows, where)
        return
    columns = list(columns)
    if where is None:
        rows, columns = _with_defaults(table, columns, rows)
    q = dialect.identifier_preparer.quote
    processors = [
        None if c in serialised else table.c[c].type.dialect_impl(dialect).bind_processor(dialect) for c in columns
    ]
    if where is None:
        sql = (f"INSERT INTO {q(table.name)} ({', '.join(q(c) for c in columns)}) "
               f"VALUES ({', '.join([placeholder] * len(columns))})")
    else:
        sets = ", ".join(f"{q(c)} = {placeholder}" for c in columns)
        sql = f"UPDATE {q(table.name)} SET {sets} WHERE {q(where)} = {placeholder}"
        processors.append(None)
    if any(processors):
        rows = _process(rows, processors)
    conn = session.connection()
    for start in range(0, len(rows), CHUNK):
        conn.exec_driver_sql(sql, rows[start:start + CHUNK])


def _process(rows: list[tuple[Any, ...]], processors: list[Any]) -> list[tuple[Any, ...]]:
    """Apply each column's bind processor to its values (column-wise, then back to rows)."""
    cols: list[Any] = list(zip(*rows))
    for i, proc in enumerate(processors):
        if proc is None:
            continue
        col = cols[i]
        if len(set(map(id, col))) == 1:  # one value throughout (a timestamp, a flag): process it once
            cols[i] = [proc(col[0])] * len(col)
        else:
            cols[i] = list(map(proc, col))
    return list(zip(*cols))


def _with_defaults(
    table: Any, columns: list[str], rows: list[tuple[Any, ...]],
) -> tuple[list[tuple[Any, ...]], list[str]]:
    """Add the columns an insert leaves out that have a Python-side default."""
    extra: list[tuple[str, Any]] = []
    for col in table.columns:
        if col.name in columns or col.default is None:
            continue
        default = col.default
        if default.is_scalar:
            extra.append((col.name, lambda value=default.arg: value))
        elif default.is_callable:
            extra.append((col.name, lambda fn=default.arg: fn(None)))
    if not extra:
        return rows, columns
    out = [row + tuple(make() for _, make in extra) for row in rows]
    return out, columns + [name for name, _ in extra]


def _write_many_orm(session: Session, model: Any, columns: list[str], rows: list[tuple[Any, ...]],
                    where: str | None) -> None:
    """write_many through SQLAlchemy's own executemany (drivers with another placeholder style)."""
    if where is None:
        records = [dict(zip(columns, r)) for r in rows]
        for start in range(0, len(records), CHUNK):
            session.execute(insert(model), records[start:start + CHUNK])
    else:
        records = [dict(zip(columns + [where], r)) for r in rows]
        for start in range(0, len(records), CHUNK):
            session.execute(update(model), records[start:start + CHUNK])


@contextmanager
def indexes_deferred(session: Session, models: Sequence[Any]) -> Iterator[bool]:
    """Build the secondary indexes of empty tables after the rows the body inserts, not during.

    When every table of ``models`` is empty (a first load), their secondary indexes are dropped
    and, once the body has written its rows, created again from the definitions the database
    itself held, in the same transaction: one sort per index instead of a B-tree insert per row.
    Primary keys and unique constraints stay. Yields whether the indexes were deferred; when any
    table holds a row nothing is dropped. An error in the body rolls the transaction back, and
    with it the drop.
    """
    tables = [m.__table__.name for m in models]
    session.flush()
    if any(session.execute(text(f"SELECT 1 FROM {t} LIMIT 1")).first() is not None for t in tables):
        yield False
        return
    definitions = [d for t in tables for d in _index_definitions(session, t)]
    q = session.get_bind().dialect.identifier_preparer.quote
    for name, _sql in definitions:
        session.execute(text(f"DROP INDEX {q(name)}"))
    yield True
    session.flush()
    for _name, sql in definitions:
        session.execute(text(sql))


def _index_definitions(session: Session, table: str) -> list[tuple[str, str]]:
    """(name, CREATE INDEX statement) of a table's secondary indexes, as the database holds them."""
    dialect = session.get_bind().dialect.name
    if dialect == "sqlite":  # automatic indexes (primary keys, unique constraints) have no sql
        rows = session.execute(text(
            "SELECT name, sql FROM sqlite_master WHERE type = 'index' AND tbl_name = :t AND sql IS NOT NULL "
            "ORDER BY name"), {"t": table})
    elif dialect == "postgresql":  # indexes that back a constraint stay
        rows = session.execute(text(
            "SELECT ic.relname, pg_get_indexdef(ix.indexrelid) FROM pg_index ix "
            "JOIN pg_class ic ON ic.oid = ix.indexrelid JOIN pg_class tc ON tc.oid = ix.indrelid "
            "WHERE tc.relname = :t AND tc.relnamespace = current_schema()::regnamespace "
            "AND NOT EXISTS (SELECT 1 FROM pg_constraint c WHERE c.conindid = ix.indexrelid) "
            "ORDER BY ic.relname"), {"t": table})
    else:
        return []
    return [(str(name), str(sql)) for name, sql in rows]
