"""Join the forces of all sources to the members: precedence, matching and a report of every gap.

Sources and precedence
----------------------
The sources (also "routes") are listed in ``modelcheck.loads.sources.FORCE_SOURCES``, each with
its precedence. For each member and load case exactly one force is kept, from the first source
that gives one; the shipped sources rank:

1. **load tables** given on the command line (``--loads``), in the order given, row order within
   a file;
2. **IFC structural-analysis results** in the model;
3. **model property** named by the rule set.

Why this order: a table passed on the command line is the most deliberate input — someone
exported it for this check, now — so it overrides what the model happens to carry. Analysis
results in the model come from a structural analysis and outrank a property, which is typically
a value written by another trade (a hanger load) with no analysis behind it.
``source`` of each kept row says where it came from; every force a higher source displaced is
listed in the report (``overridden``). With ``precedence_by="member"`` the first source that gives
a member *any* force supplies *all* of that member's load cases instead.

Matching
--------
Matching is per model. A keyed source (the load tables) names members by key: a ``global_id``
row applies to the member with that GlobalId in every model that has it; a ``tag`` row applies in
each model that has exactly one member with that tag. A tag shared by several members of one
model is *ambiguous*: the row is applied to none of them (a force is never spread over members
by guess) and the report lists it. A row that matches no member in any model is *unmatched*. The
other sources give rows by model and GlobalId; one of a member not in the table is unmatched
too. Two rows for the same member and load case from the same source are *duplicates*: the first
is used, the others are listed. Members left with no force at all are *missing*. Nothing is
dropped silently: every one of these is counted and listed in the :class:`ForceReport`.

Example::

    results = read_sources(idx, members, ForceOptions(tables=(read_load_table(p),)))
    forces, report = join_forces(members, ranked(results), messages=source_messages(results))
    report.to_dict()["counts"]   # {"unmatched": 2, "duplicates": 0, ...}
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any, Literal, NamedTuple

import numpy as np
import pandas as pd

from modelcheck.common.table import FORCE_COLUMNS, empty_forces
from modelcheck.loads.sources import KEYED_COLUMNS, SourceForces


class UnmatchedRow(NamedTuple):
    """A row that matched no member here (a named tuple: a model checked in parts makes one for
    each row of a large table that belongs to the other parts, so it must be cheap)."""

    key_kind: str   # "global_id" | "tag"
    key: str
    load_case: str
    source: str


@dataclass(frozen=True)
class DuplicateForce:
    model: str
    global_id: str
    load_case: str
    used: str                   # source of the row kept
    ignored: tuple[str, ...]    # sources of the rows not used


@dataclass(frozen=True)
class AmbiguousTag:
    model: str
    tag: str
    global_ids: tuple[str, ...]   # the members sharing the tag in that model
    source: str


@dataclass(frozen=True)
class OverriddenForce:
    model: str
    global_id: str
    load_case: str
    used: str          # source of the force kept
    overridden: str    # source of the force of a lower-precedence route


@dataclass(frozen=True)
class MissingForce:
    model: str
    global_id: str


@dataclass(frozen=True)
class ForceReport:
    """Every force that found no member, and every member left without a force."""

    unmatched: tuple[UnmatchedRow, ...] = ()
    duplicates: tuple[DuplicateForce, ...] = ()
    ambiguous: tuple[AmbiguousTag, ...] = ()
    missing: tuple[MissingForce, ...] = ()
    overridden: tuple[OverriddenForce, ...] = ()
    messages: tuple[str, ...] = ()
    used_by_route: dict[str, int] = field(default_factory=dict)  # kept rows per source
    routes: tuple[str, ...] = ()   # the names of the sources joined, in order of precedence

    @property
    def counts(self) -> dict[str, int]:
        return {"unmatched": len(self.unmatched), "duplicates": len(self.duplicates),
                "ambiguous": len(self.ambiguous), "missing": len(self.missing),
                "overridden": len(self.overridden), "messages": len(self.messages)}

    def to_dict(self, *, unmatched: bool = True) -> dict[str, Any]:
        """Plain lists, dicts, strings and ints (``json.dumps`` works on it); without the
        ``unmatched`` list when ``unmatched=False`` (a row unmatched in one model may match in
        another: that is judged over all models)."""
        out: dict[str, Any] = {
            "counts": self.counts,
            "used_by_route": {r: int(self.used_by_route.get(r, 0)) for r in self.routes},
        }
        if unmatched:
            out["unmatched"] = [x._asdict() for x in self.unmatched]
        out.update({
            "duplicates": [{**vars(x), "ignored": list(x.ignored)} for x in self.duplicates],
            "ambiguous": [{**vars(x), "global_ids": list(x.global_ids)} for x in self.ambiguous],
            "missing": [dict(vars(x)) for x in self.missing],
            "overridden": [dict(vars(x)) for x in self.overridden],
            "messages": list(self.messages),
        })
        return out


def _members_coded(ids: pd.DataFrame) -> tuple[list[tuple[Any, Any]], Any]:
    """(the members' distinct (model, GlobalId) pairs, sorted; a function from a frame's model
    and global_id columns to each row's position among them, -1 for a pair not there). One model
    (the usual case, and always in a part of one): its GlobalIds alone are sorted and looked up
    by hash over arrays; several: by pair, one look-up per row."""
    models = ids["model"].unique()
    if len(models) == 1 and isinstance(models[0], str):
        model = models[0]
        gids = sorted(set(ids["global_id"].tolist()))
        index = pd.Index(gids, dtype=object)

        def one_model(frame: pd.DataFrame) -> np.ndarray:
            codes = index.get_indexer(frame["global_id"].to_numpy(dtype=object)).astype(np.int64)
            codes[(frame["model"] != model).to_numpy()] = -1
            return codes

        return [(model, g) for g in gids], one_model
    pairs = sorted(set(zip(ids["model"].tolist(), ids["global_id"].tolist(), strict=True)))
    code_of = {pair: i for i, pair in enumerate(pairs)}

    def any_models(frame: pd.DataFrame) -> np.ndarray:
        return np.fromiter((code_of.get(p, -1) for p in zip(frame["model"].tolist(), frame["global_id"].tolist(),
                                                                strict=True)), dtype=np.int64, count=len(frame))

    return pairs, any_models


def join_forces(members: pd.DataFrame, sources: Sequence[SourceForces] = (), *, messages: Sequence[str] = (),
                precedence_by: Literal["case", "member"] = "case",
                shared_tags: dict[str, tuple[str, ...]] | None = None) -> tuple[pd.DataFrame, ForceReport]:
    """The forces table (``FORCE_COLUMNS``) of ``members`` and the report of the join.

    ``sources``: what each source read (``modelcheck.loads.sources``), in order of precedence
    (the first wins; ``sources.ranked``); every one's name is a key of the report's
    ``used_by_route``. ``messages``: the sources' messages, copied into the report. See the
    module docstring for the rules. ``shared_tags``: when ``members`` is a part of one model, the
    tags several members of the whole model share (tag -> their GlobalIds): rows with those tags
    are ambiguous here too.
    """
    ids = members[["model", "global_id", "tag"]].copy()
    ids = ids[ids["global_id"].notna()]
    unmatched: list[UnmatchedRow] = []
    ambiguous: list[AmbiguousTag] = []
    routes = tuple(src.name for src in sources)

    # each member (model, GlobalId) as an integer, in sorted order: the rest of the join works on
    # integers (one hash or sort of text here instead of one per step)
    pairs, member_code = _members_coded(ids)

    parts: list[pd.DataFrame] = []
    for rank, src in enumerate(sources):
        frame = src.forces
        if frame is None or frame.empty:
            continue
        if src.keyed:
            rows = frame[list(KEYED_COLUMNS)].assign(_order=np.arange(len(frame)))
            matched, um, amb = _match_table(rows, ids, shared_tags or {})
            unmatched += um
            ambiguous += amb
            parts.append(matched.assign(_route=rank))
            continue
        fr = frame[list(FORCE_COLUMNS)].reset_index(drop=True)
        hit = member_code(fr) >= 0
        unmatched += [UnmatchedRow("global_id", g, c, s) for g, c, s in
                      fr.loc[~hit, ["global_id", "load_case", "source"]].itertuples(index=False)]
        parts.append(fr[hit].assign(_order=np.arange(int(hit.sum())), _route=rank))

    if parts:
        allf = pd.concat(parts, ignore_index=True)
    else:
        allf = empty_forces().assign(_order=pd.Series(dtype=int), _route=pd.Series(dtype=int))
    route = allf["_route"].to_numpy(dtype=np.int64)
    first = np.lexsort((allf["_order"].to_numpy(dtype=np.int64), route))   # by route, then row order
    allf = allf.iloc[first].reset_index(drop=True)
    route = route[first]
    member = member_code(allf)   # every row here is a member's
    case_codes, cases = pd.factorize(allf["load_case"], use_na_sentinel=False)
    case = member * (len(cases) + 1) + case_codes       # one integer per member and load case
    keys = ["model", "global_id", "load_case"]

    # duplicates: same member and case twice from one route -> first kept
    per_route = pd.Series(case * max(1, len(routes)) + route)
    dup_mask = per_route.duplicated(keep=False).to_numpy()
    duplicates = _duplicates(allf[dup_mask], keys)
    once = ~per_route.duplicated(keep="first").to_numpy()
    allf, member, case, route = allf[once], member[once], case[once], route[once]

    # precedence between routes: the rows are in route order, so a member's (or a member and
    # case's) first row is from its best route
    if precedence_by == "member":
        best = np.full(len(pairs), len(routes), dtype=np.int64)
        np.minimum.at(best, member, route)
        displaced = route != best[member]
    else:
        displaced = pd.Series(case).duplicated(keep="first").to_numpy()
    kept = allf[~displaced]
    overridden = _overridden(allf[displaced], kept, precedence_by)

    kept_member = member[~displaced]
    forces = kept.iloc[np.lexsort((kept["_order"].to_numpy(dtype=np.int64), route[~displaced], kept_member))]
    used = forces["_route"].value_counts()
    used_by_route = {routes[int(r)]: int(n) for r, n in used.items()}
    forces = forces[list(FORCE_COLUMNS)].reset_index(drop=True)
    forces["axial_force"] = forces["axial_force"].astype(float)

    have = np.bincount(kept_member, minlength=len(pairs)) > 0
    missing = [MissingForce(*pairs[i]) for i in np.flatnonzero(~have).tolist()]   # by GlobalId, as sorted

    report = ForceReport(unmatched=tuple(unmatched), duplicates=tuple(duplicates), ambiguous=tuple(ambiguous),
                         missing=tuple(missing), overridden=tuple(overridden),
                         messages=tuple(messages), used_by_route=used_by_route, routes=routes)
    return forces, report


def _match_table(rows: pd.DataFrame, ids: pd.DataFrame, shared: dict[str, tuple[str, ...]]
                 ) -> tuple[pd.DataFrame, list[UnmatchedRow], list[AmbiguousTag]]:
    """Table rows -> (member rows, unmatched rows, ambiguous tags), per model, by merges."""
    by_gid = rows[rows["key_kind"] == "global_id"]
    by_tag = rows[rows["key_kind"] == "tag"]
    cols = list(FORCE_COLUMNS) + ["_order"]

    models = ids["model"].unique()
    if len(models) == 1 and isinstance(models[0], str):   # one model: a hashed look-up among its GlobalIds
        found = pd.Index(ids["global_id"].unique(), dtype=object).get_indexer(by_gid["key"].to_numpy(dtype=object))
        g_hit = by_gid[found >= 0]
        g_hit = g_hit.assign(model=models[0], global_id=g_hit["key"])
    else:
        g = by_gid.merge(ids[["model", "global_id"]].drop_duplicates(), left_on="key", right_on="global_id",
                         how="left")
        g_hit = g[g["model"].notna()]

    tagged = ids.iloc[0:0]   # no tag rows (the usual table): the members' tags need no cleaning
    if len(by_tag):
        tagged = ids[ids["tag"].notna() & (ids["tag"].astype(str).str.strip() != "")]
    tagged = tagged.assign(tag=tagged["tag"].astype(str))
    t = by_tag.merge(tagged, left_on="key", right_on="tag", how="left")
    t_hit = t[t["model"].notna()]
    per_model = t_hit.groupby(["_order", "model"])["global_id"].transform("size")
    in_shared = t_hit["key"].isin(list(shared)) if shared else np.zeros(len(t_hit), dtype=bool)
    t_ok = t_hit[(per_model == 1) & ~in_shared]
    t_amb = t_hit[(per_model > 1) | in_shared]
    ambiguous = [
        AmbiguousTag(str(model), str(tag), shared.get(str(tag)) or tuple(sorted(map(str, gids))), str(src))
        for (_o, model, tag, src), gids in t_amb.groupby(["_order", "model", "key", "source"], sort=True)["global_id"]
    ]
    matched = pd.concat([g_hit[cols], t_ok[cols]], ignore_index=True)

    hit = np.zeros(len(rows), dtype=bool)
    hit[np.searchsorted(rows["_order"].to_numpy(), np.union1d(g_hit["_order"].to_numpy(dtype=np.int64),
                                                               t_hit["_order"].to_numpy(dtype=np.int64)))] = True
    um = rows[~hit]
    unmatched = list(map(UnmatchedRow._make, zip(*(um[c].tolist() for c in ("key_kind", "key", "load_case",
                                                                             "source")), strict=True)))
    return matched, unmatched, ambiguous


def _duplicates(dups: pd.DataFrame, keys: list[str]) -> list[DuplicateForce]:
    out = []
    for (model, gid, case, _r), grp in dups.groupby(keys + ["_route"], sort=True):
        srcs = list(grp.sort_values("_order")["source"])
        out.append(DuplicateForce(str(model), str(gid), str(case), srcs[0], tuple(srcs[1:])))
    return out


def _overridden(displaced: pd.DataFrame, kept: pd.DataFrame, by: str) -> list[OverriddenForce]:
    if displaced.empty:
        return []
    if by == "case":
        m = displaced.merge(kept[["model", "global_id", "load_case", "source"]],
                            on=["model", "global_id", "load_case"], suffixes=("", "_kept"))
        return [OverriddenForce(mo, g, c, sk, s) for mo, g, c, s, sk in
                m[["model", "global_id", "load_case", "source", "source_kept"]].itertuples(index=False)]
    first = kept.sort_values(["_route", "_order"]).drop_duplicates(["model", "global_id"])
    m = displaced.merge(first[["model", "global_id", "source"]], on=["model", "global_id"],
                        suffixes=("", "_kept"))
    return [OverriddenForce(mo, g, c, sk, s) for mo, g, c, s, sk in
            m[["model", "global_id", "load_case", "source", "source_kept"]].itertuples(index=False)]
