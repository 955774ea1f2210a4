"""Nested entities: the optional ``parent`` column of the entities file (a town in a district in a region).

Checks the hierarchy before anything is written (an unknown parent, an entity its own parent, a
cycle of parents) and works out each entity's level: its depth counted from the top, 0 for an
entity without a parent. Ranks compare like with like, so an entity is ranked among the entities
of its own level; the deepest level with data keeps the plain topic slots (``roundup/TOPIC``) and
each level above gets ``KIND/level-N/TOPIC``, N counted from 1 at the top. Nothing here touches
the database or formats statements.
"""

from __future__ import annotations

import difflib

import pandas as pd

from stetline.errors import Problem

COLUMN = "parent"
#: the token of a level in a slot id: level-1 is the top level (entities without a parent)
LEVEL_PREFIX = "level-"


def parent_problems(entities: pd.DataFrame, file: str, rows: dict[str, int]) -> list[Problem]:
    """The problems of the entities' parents: unknown keys, an entity its own parent, cycles.

    ``entities`` is the metadata in force (the file's rows merged with the stored ones); ``rows``
    gives the file row of each entity the file names (stored rows have none). Each cycle is told
    once, at the row of its first entity in the file, listing its keys in order ("a → b → a").
    """
    parent = dict(zip(entities["entity"].astype("str"), entities[COLUMN].astype("str"), strict=True))
    known = list(parent)
    problems: list[Problem] = []
    for key, up in parent.items():
        if not up:
            continue
        if up == key:
            problems.append(Problem(file, rows.get(key), COLUMN, f"entity {key!r} is its own parent"))
        elif up not in parent:
            hint = difflib.get_close_matches(up, known, n=1, cutoff=0.5)
            tip = f"; did you mean {hint[0]!r}?" if hint else ""
            problems.append(Problem(file, rows.get(key), COLUMN,
                                    f"the parent {up!r} of entity {key!r} is not an entity key{tip}"))
    if problems:
        return problems
    done: set[str] = set()
    for start in parent:
        path: list[str] = []
        on_path: set[str] = set()
        key = start
        while key and key not in done and key not in on_path:
            path.append(key)
            on_path.add(key)
            key = parent[key]
        if key in on_path:  # the walk came back to itself: a cycle
            loop = path[path.index(key):]
            first = min(loop, key=lambda k: rows.get(k, len(rows) + known.index(k)))
            turn = loop[loop.index(first):] + loop[:loop.index(first)]
            problems.append(Problem(file, rows.get(first), COLUMN,
                                    f"a cycle of parents: {' → '.join(turn + [first])}"))
        done.update(path)
    return problems


def depths(entities: pd.DataFrame) -> pd.Series:
    """Each entity's depth (0 without a parent, 1 for a child of such …), indexed by entity key.

    Expects a checked hierarchy (no cycle); entities without the column are all at depth 0.
    """
    keys = entities["entity"].astype("str")
    if COLUMN not in entities.columns:
        return pd.Series(0, index=keys.to_numpy(), dtype="int64")
    parent = pd.Series(entities[COLUMN].astype("str").to_numpy(), index=keys.to_numpy())
    depth = pd.Series(0, index=parent.index, dtype="int64")
    above = parent.copy()
    for _ in range(len(parent)):  # one step up per pass: as many passes as the tree is deep
        has = above != ""
        if not has.any():
            break
        depth[has] += 1
        above = above.map(lambda k: parent.get(k, "") if k else "")
    return depth


def level_token(depth: int) -> str:
    """The level of a depth as a slot shows it: 'level-1' for the top level."""
    return f"{LEVEL_PREFIX}{int(depth) + 1}"


def level_noun(nouns: tuple[str, ...], depth: int, default: str) -> str:
    """What one entity of a level is called: the `level_nouns` setting's word for it, else the entity noun."""
    return nouns[depth] if 0 <= depth < len(nouns) and nouns[depth] else default


def nouns_of(text: str) -> tuple[str, ...]:
    """The `level_nouns` setting as a tuple, top level first ("district,town" → ("district", "town"))."""
    return tuple(n.strip() for n in str(text or "").split(",")) if str(text or "").strip() else ()


def parent_facts(cells: pd.DataFrame) -> None:
    """Add to each cell with a parent its place among its siblings and its comparison with the parent.

    Siblings are the entities with the same parent (the cell's own entity counted in its rank, not
    in their mean). ``sibling_rank`` / ``sibling_rank_of``: competition rank (1, 2, 2, 4) among
    the siblings reporting the topic, best first (neutral topics: highest first), like ``rank``.
    ``parent_basis`` is "parent" when the parent reports a usable value for the topic in the same
    period, else "siblings" when other siblings report one (their mean is then the reference),
    else "". ``parent_ref`` is that reference and ``parent_gap`` the entity's value minus it.
    Expects the columns entity, topic, parent, period, value, usable and score (see facts._ranks).
    """
    nested = cells["parent"] != ""
    score = cells["score"].where(nested)
    family = [cells["topic"], cells["parent"]]
    by_family = score.groupby(family)
    cells["sibling_rank"] = by_family.rank(method="min", ascending=False)
    cells["sibling_rank_of"] = by_family.transform("count").fillna(0).astype("int64")
    value = cells["value"].where(cells["usable"] & nested)
    total = value.groupby(family).transform("sum")
    count = value.groupby(family).transform("count")
    own = value.fillna(0.0)
    others = count - value.notna().astype("int64")
    siblings_mean = ((total - own) / others.where(others > 0)).where(nested)
    own_rows = cells[["entity", "topic", "period", "value", "usable"]]
    held = own_rows.loc[own_rows["usable"]].rename(columns={"entity": "parent", "value": "parent_value"})
    joined = cells[["parent", "topic", "period"]].merge(held[["parent", "topic", "period", "parent_value"]],
                                                        on=["parent", "topic", "period"], how="left")
    parent_value = pd.Series(joined["parent_value"].to_numpy(), index=cells.index).where(nested)
    cells["parent_value"] = parent_value
    cells["siblings_mean"] = siblings_mean
    cells["siblings_counted"] = others.where(nested).fillna(0).astype("int64")
    basis = pd.Series("", index=cells.index, dtype="object")
    basis[siblings_mean.notna()] = "siblings"
    basis[parent_value.notna()] = "parent"
    cells["parent_basis"] = basis
    cells["parent_ref"] = parent_value.where(parent_value.notna(), siblings_mean)
    cells["parent_gap"] = (cells["value"] - cells["parent_ref"]).where(cells["usable"])


def ancestors(parents: dict[str, str], key: str) -> list[str]:
    """The keys above an entity, nearest first (none for an entity at the top); expects no cycle."""
    out: list[str] = []
    up = parents.get(key, "")
    while up and up not in out:
        out.append(up)
        up = parents.get(up, "")
    return out


def tree_order(parents: dict[str, str]) -> list[str]:
    """Entity keys in the order of a tree: each parent followed by its children (file order among siblings)."""
    children: dict[str, list[str]] = {}
    for key, up in parents.items():
        children.setdefault(up if up in parents else "", []).append(key)
    out: list[str] = []
    stack = list(reversed(children.get("", [])))
    while stack:
        key = stack.pop()
        if key in out:
            continue
        out.append(key)
        stack.extend(reversed(children.get(key, [])))
    return out
