"""Suggestions: for each failing member, the smallest replacement of the same shape family that passes.

Candidates per member (its material, length, names and load cases are kept):

* round bar → if its diameter is a standard thread (ASME B1.1 UNC / ISO 261 coarse) and one of
  its names says rod or thread, the sizes of that thread series; otherwise the round bars of the
  rule set's stock series;
* square bar → the square bars of the series;
* flat bar → the series' widths at its own thickness and at the next stock thickness;
* catalog section (W, HSS, L, IPE, HEA, CHS, SHS, RHS, recognised from the section name) → the
  sections of that family and shape in the shape tables; a rolled I, hollow or angle section
  whose name names no family there → every section of that shape in the rule set's table;
* any other shape (T, U, C, Z, ellipse, arbitrary, composite) → no suggestion, with a note.

A net area the member carries (column ``net_area``) is scaled with the gross area (the same
share of holes). All (failing member × candidate) pairs become one synthetic member table,
run through the rule set with the member's own forces (one :func:`run_checks` per chunk of
at most :data:`CHUNK` pairs). A candidate qualifies when none of its results fails and every
result is "pass", except a check that was already unchecked for the member itself (missing
data the section does not change, e.g. no length); such checks are listed in the suggestion's
``unchecked``. The smallest qualifying candidate (by area, then series order) is suggested. Round and square
bars and threaded rods are searched by bisection over their sorted sizes (every check improves
with size there), all failing members of a family at once; flats and catalog sections, where
a larger area need not pass where a smaller one fails, are tried exhaustively.

The ``suggestion`` goes on every failing result row of the member, None elsewhere; a failing
member without one gets a ``suggestion_note`` saying why.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from modelcheck.common.units import Q_
from modelcheck.common.vocabulary import CATALOG_SHAPES, STOCK_KINDS, Shape, quantity_object
from modelcheck.design import stock
from modelcheck.rules.select import Selector

if TYPE_CHECKING:
    from modelcheck.rules.ruleset import RuleSet

#: pairs per run_checks call (a memory bound for very large failing sets)
CHUNK = 200_000

#: a family of monotone sizes is searched by bisection only when its members × sizes exceed this:
#: below it, one evaluation of every size costs less than a round of evaluations per halving
#: (the smallest size that passes is the same either way)
EVERY_SIZE_PAIRS = 20_000

#: candidate families in which every check only gets better with the next size: searched by bisection
MONOTONE: tuple[str, ...] = tuple(k.name for k in STOCK_KINDS if k.monotone)

#: a threaded rod, as the shipped rule sets' rod selectors name one ("rod" or "thread" in any name)
_RODLIKE = Selector((("any_name", ("*rod*", "*thread*")),))


def _rodlike(members: pd.DataFrame) -> np.ndarray:
    return _RODLIKE.mask(members)


def _groups(members: pd.DataFrame, series: stock.StockSeries) -> tuple[list[Any], np.ndarray]:
    """Candidate-group key of every member (None: no suggestion) and a note where None."""
    from modelcheck.design.screw_threads import thread_tensile_area

    n = len(members)
    keys: list[Any] = [None] * n
    notes = np.full(n, None, dtype=object)
    shape = members["shape"].to_numpy(dtype=object) if "shape" in members.columns else np.full(n, None)
    d = pd.to_numeric(members.get("d", pd.Series(np.nan, index=members.index)), errors="coerce").to_numpy(float)
    h = pd.to_numeric(members.get("h", pd.Series(np.nan, index=members.index)), errors="coerce").to_numpy(float)
    b = pd.to_numeric(members.get("b", pd.Series(np.nan, index=members.index)), errors="coerce").to_numpy(float)
    names = members["section_name"].to_numpy(dtype=object) if "section_name" in members.columns else np.full(n, None)
    _, thread = thread_tensile_area(np.where(shape == Shape.ROUND_BAR, d, np.nan))
    rod = _rodlike(members)
    for i in range(n):
        s = shape[i]
        if s == Shape.ROUND_BAR:
            if thread[i] is not None and rod[i]:
                keys[i] = ("threaded", "UNC" if str(thread[i]).endswith("UNC") else "ISO coarse")
            else:
                keys[i] = ("round",)
        elif s == Shape.SQUARE_BAR:
            keys[i] = ("square",)
        elif s == Shape.FLAT_BAR:
            t = np.nanmin([h[i], b[i]]) if np.isfinite([h[i], b[i]]).any() else math.nan
            if math.isfinite(t) and t > 0:
                keys[i] = ("flat", float(t))
            else:
                notes[i] = "no suggestion: the flat bar has no thickness"
        elif s in CATALOG_SHAPES:
            fam = stock.catalog_family(names[i])
            if fam is not None:
                keys[i] = ("catalog", fam[0], (fam[1],), s)
            else:
                keys[i] = ("catalog", series.shapes, None, s)
        else:
            notes[i] = (f"no suggestion: no stock series or shape table for shape {s!r}" if s
                        else "no suggestion: the section's shape is unknown")
    return keys, notes


def _candidates(key: Any, series: stock.StockSeries) -> tuple[pd.DataFrame, str]:
    kind = key[0]
    if kind == "round":
        return stock.round_bars(series), "round bar"
    if kind == "square":
        return stock.square_bars(series), "square bar"
    if kind == "threaded":
        return stock.threaded_rods(key[1]), f"threaded rod ({key[1]})"
    if kind == "flat":
        t = key[1]
        thicker = [x for x in series.flat_thickness if x > t * (1 + 1e-9)]
        ts = (t,) + ((thicker[0],) if thicker else ())
        return stock.flat_bars(series, ts), "flat bar"
    _, table, families, shape = key
    fam = families[0] if families else f"any {shape} in {table}"
    return stock.catalog_shapes(table, families, shape), fam


def suggest(ruleset: RuleSet, members: pd.DataFrame, forces: pd.DataFrame | None, results: pd.DataFrame) -> pd.DataFrame:
    """``results`` with a ``suggestion`` column (dict or None) and a ``suggestion_note`` column.

    ``suggestion`` = ``{"designation", "area": Q, "ratio", "family", "check", "unchecked"}``:
    the replacement's area in the rule set's display unit of area, its governing
    ratio over all its checks and load cases and the check that sets it.
    """
    from modelcheck.rules.engine import _force_rows, member_key, run_checks

    out = results.copy(deep=False)   # the new columns are added to this frame only
    out["suggestion"] = pd.Series([None] * len(out), index=out.index, dtype=object)
    out["suggestion_note"] = pd.Series([None] * len(out), index=out.index, dtype=object)
    if not len(out) or not (out["status"] == "fail").any():
        return out
    mem = members.reset_index(drop=True)
    mkeys = member_key(mem["model"] if "model" in mem.columns else None, mem["global_id"])
    fail_rows = out["status"] == "fail"
    fkeys = member_key(out.loc[fail_rows, "model"], out.loc[fail_rows, "global_id"])
    failing = pd.unique(fkeys)
    mindex = pd.Index(mkeys)
    shared: set[str] = set()
    if mindex.is_unique:
        pos = mindex.get_indexer(failing)
    else:   # a broken model: members sharing a GlobalId cannot be told apart in the results
        shared = set(mkeys[mindex.duplicated(keep=False)])
        first = {k: i for i, k in reversed(list(enumerate(mkeys.tolist())))}
        pos = np.array([-1 if k in shared else first.get(k, -1) for k in failing], dtype=np.int64)
        rows = np.flatnonzero(fail_rows.to_numpy() & pd.Series(member_key(out["model"], out["global_id"])).isin(shared)
                              .to_numpy())
        # pandas-stubs take no array of positions with a column position here; pandas does
        note = "no suggestion: its GlobalId is shared by several members, so its results are theirs too"
        out.iloc[rows, out.columns.get_loc("suggestion_note")] = note   # type: ignore[index]
    pos = pos[pos >= 0]
    if not len(pos):
        return out
    sub = mem.iloc[pos].reset_index(drop=True)
    sub_keys = mkeys[pos]
    series = stock.stock_series(ruleset)
    group_keys, notes = _groups(sub, series)

    # the member's own forces, and the results it could not check itself (allowed to stay unchecked)
    if forces is not None and len(forces):   # the failing members' rows only (a large table: most are not)
        forces = forces[forces["global_id"].isin(sub["global_id"])]
    fr = _force_rows(sub, forces)
    fdf = pd.DataFrame({"member": fr["member"], "P": fr["P"], "load_case": fr["load_case"], "rank": fr["rank"]})
    fdf = fdf[np.isfinite(fdf["P"])].sort_values(["member", "rank"], kind="stable")
    own_unchecked = out[out["status"] == "unchecked"]
    allowed = set(member_key(own_unchecked["model"], own_unchecked["global_id"])
                  + "\x00" + own_unchecked["check"].astype(str).to_numpy(dtype=object)
                  + "\x00" + own_unchecked["load_case"].astype("string").fillna("").to_numpy(dtype=object))
    counter = [0]

    def evaluate(specs: list[tuple[np.ndarray, pd.DataFrame, str]]) -> pd.DataFrame:
        """Verdicts of (member, candidate) pairs: specs of (member indices, one candidate row each, family)."""
        parts, infos = [], []
        for idx, cands, family in specs:
            pair, info = _pairs(sub, idx, cands, family, counter)
            parts.append(pair)
            infos.append(info)
        if not parts:
            return pd.DataFrame()
        pairs = pd.concat(parts, ignore_index=True)
        info = pd.concat(infos, ignore_index=True)
        verdicts = []
        for start in range(0, len(pairs), CHUNK):
            chunk = pairs.iloc[start:start + CHUNK]
            cinfo = info.iloc[start:start + CHUNK]
            pf = cinfo[["pair", "member"]].merge(fdf, on="member", how="inner")
            forces_pairs = pd.DataFrame({
                "model": chunk.set_index("global_id").loc[pf["pair"], "model"].to_numpy(dtype=object)
                if "model" in chunk.columns else None,
                "global_id": pf["pair"].to_numpy(dtype=object), "load_case": pf["load_case"].to_numpy(dtype=object),
                "axial_force": pf["P"].to_numpy(dtype=float), "source": "suggestion"})
            res = run_checks(ruleset, chunk, forces_pairs, messages=False)
            verdicts.append(_verdicts(res, cinfo, sub_keys, allowed))
        return pd.concat(verdicts, ignore_index=True)

    by_group: dict[Any, list[int]] = {}
    for i, k in enumerate(group_keys):
        if k is not None:
            by_group.setdefault(k, []).append(i)
    exhaustive: list[tuple[np.ndarray, pd.DataFrame, str]] = []
    qualifying: list[pd.DataFrame] = []
    searches: list[tuple[np.ndarray, pd.DataFrame, str, np.ndarray, np.ndarray, dict[int, Any]]] = []
    for k, members_of_group in by_group.items():
        cands, family = _candidates(k, series)
        idx = np.asarray(members_of_group)
        if not len(cands):
            notes[idx] = f"no suggestion: no {family} sizes"
            continue
        nc = len(cands)
        if k[0] not in MONOTONE or len(idx) * nc <= EVERY_SIZE_PAIRS:
            exhaustive.append((np.repeat(idx, nc), pd.concat([cands] * len(idx), ignore_index=True)
                               .assign(_order=np.tile(np.arange(nc), len(idx))), family))
            continue
        searches.append((idx, cands, family, np.zeros(len(idx), dtype=int), np.full(len(idx), nc, dtype=int), {}))
    # a size family whose every check only improves with size: bisection for the first size that
    # qualifies, every member of every such family at once (log2(n) rounds, one evaluation each)
    while True:
        specs, spans = [], []
        for idx, cands, family, lo, hi, best in searches:
            act = np.flatnonzero(lo < hi)
            if len(act):
                mid = (lo[act] + hi[act]) // 2
                specs.append((idx[act], cands.iloc[mid].reset_index(drop=True).assign(_order=mid), family))
                spans.append((lo, hi, best, act, mid))
        if not specs:
            break
        ver = evaluate(specs)   # one verdict per pair, in the order of the specs
        start = 0
        for lo, hi, best, act, mid in spans:
            part = ver.iloc[start:start + len(act)]
            start += len(act)
            q = part["qualifies"].to_numpy(dtype=bool)
            hi[act[q]] = mid[q]
            lo[act[~q]] = mid[~q] + 1
            for j, row in zip(act[q], part[q].to_dict("records"), strict=True):
                best[int(j)] = row
    for idx, cands, _family, lo, _hi, best in searches:
        qualifying.append(pd.DataFrame([best[j] for j in range(len(idx)) if j in best and lo[j] < len(cands)]))
    if exhaustive:
        ver = evaluate(exhaustive)
        qualifying.append(ver[ver["qualifies"]])
    chosen: dict[int, dict[str, Any]] = {}
    frames = [q for q in qualifying if len(q)]
    if frames:
        ok = (pd.concat(frames, ignore_index=True).sort_values(["member", "area", "order"], kind="stable")
              .drop_duplicates("member"))
        area_unit = str(ruleset.display["area"])
        factor = float(Q_(1.0, "m**2").m_as(area_unit))
        for rec in ok.to_dict("records"):
            chosen[int(rec["member"])] = {
                "designation": rec["designation"],
                "area": quantity_object(rec["area"] * factor, area_unit, rec["source"]),
                "ratio": float(f"{rec['ratio']:.6g}"),
                "family": rec["family"],
                "check": rec["check"],
                "unchecked": list(rec["unchecked"]),
            }
    for i, k in enumerate(group_keys):
        if k is not None and i not in chosen and notes[i] is None:
            notes[i] = "no suggestion: no size of the same family passes every check"
    # onto the failing rows
    rows = np.flatnonzero((out["status"] == "fail").to_numpy())
    row_member = pd.Index(sub_keys).get_indexer(member_key(out["model"].to_numpy()[rows],
                                                           out["global_id"].to_numpy()[rows]))
    sugg = np.full(len(out), None, dtype=object)
    note_col = out["suggestion_note"].to_numpy(dtype=object).copy()
    for r, m in zip(rows[row_member >= 0].tolist(), row_member[row_member >= 0].tolist(), strict=True):
        if m in chosen:
            sugg[r] = chosen[m]
        else:
            note_col[r] = notes[m]
    out["suggestion"] = pd.Series(sugg, index=out.index, dtype=object)
    out["suggestion_note"] = pd.Series(note_col, index=out.index, dtype=object)
    return out


def _pairs(sub: pd.DataFrame, idx: np.ndarray, cands: pd.DataFrame, family: str,
           counter: list[int]) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Synthetic members: member ``idx[j]`` with candidate row ``j`` (material, length, names kept)."""
    pair = sub.iloc[idx].reset_index(drop=True)
    old_area = pd.to_numeric(pair["area"], errors="coerce").to_numpy(float) if "area" in pair.columns else None
    for c in stock.SECTION_OVERRIDES:      # nothing of the old section survives
        pair[c] = np.nan if c in stock.GEOMETRY_COLUMNS else None
    pair["shape"] = cands["shape"].to_numpy(dtype=object)
    pair["section_name"] = cands["designation"].to_numpy(dtype=object)
    for c in stock.GEOMETRY_COLUMNS:
        pair[c] = cands[c].to_numpy(dtype=float)
    pair["area_source"] = cands["source"].to_numpy(dtype=object)
    pair["r_min_source"] = cands["source"].to_numpy(dtype=object)
    if "net_area" in pair.columns and old_area is not None:
        with np.errstate(all="ignore"):
            share = pd.to_numeric(pair["net_area"], errors="coerce").to_numpy(float) / old_area
        pair["net_area"] = share * cands["area"].to_numpy(dtype=float)
    start = counter[0]
    counter[0] += len(pair)
    ids = np.asarray([f"sg{start + j}" for j in range(len(pair))], dtype=object)
    pair["global_id"] = ids
    info = pd.DataFrame({
        "pair": ids, "member": idx, "order": cands["_order"].to_numpy(dtype=int),
        "area": cands["area"].to_numpy(dtype=float), "designation": cands["designation"].to_numpy(dtype=object),
        "family": family, "source": cands["source"].to_numpy(dtype=object)})
    return pair, info


def _verdicts(res: pd.DataFrame, cinfo: pd.DataFrame, sub_keys: np.ndarray, allowed: set[str]) -> pd.DataFrame:
    """Per pair: qualifies, governing ratio and check, and the checks left unchecked (as for the member)."""
    v = cinfo.copy()
    if not len(res):
        v["qualifies"] = False
        v["ratio"] = np.nan
        v["check"] = None
        v["unchecked"] = [[] for _ in range(len(v))]
        return v
    pair_pos = pd.Index(cinfo["pair"]).get_indexer(res["global_id"].to_numpy(dtype=object))
    member = cinfo["member"].to_numpy()[pair_pos]
    own = (sub_keys[member] + "\x00" + res["check"].astype(str).to_numpy(dtype=object) + "\x00"
           + res["load_case"].astype("string").fillna("").to_numpy(dtype=object))
    status = res["status"].to_numpy(dtype=object)
    excused = (status == "unchecked") & pd.Series(own, dtype=object).isin(allowed).to_numpy()
    bad = (status == "fail") | ((status == "unchecked") & ~excused)
    frame = pd.DataFrame({"pair": pair_pos, "bad": bad, "pass": status == "pass",
                          "ratio": res["ratio"].to_numpy(dtype=float), "check": res["check"].to_numpy(dtype=object),
                          "excused": excused})
    agg = frame.groupby("pair").agg(bad=("bad", "any"), n_pass=("pass", "sum"))
    gov = frame[frame["pass"]].sort_values(["pair", "ratio"], ascending=[True, False],
                                           kind="stable").drop_duplicates("pair").set_index("pair")
    exc = frame[frame["excused"]].groupby("pair")["check"].agg(lambda s: sorted(set(s)))
    n = len(v)
    bad_arr = np.ones(n, dtype=bool)
    npass = np.zeros(n, dtype=int)
    bad_arr[agg.index.to_numpy()] = agg["bad"].to_numpy(dtype=bool)
    npass[agg.index.to_numpy()] = agg["n_pass"].to_numpy(dtype=int)
    ratio = np.full(n, np.nan)
    check = np.full(n, None, dtype=object)
    ratio[gov.index.to_numpy()] = gov["ratio"].to_numpy(dtype=float)
    check[gov.index.to_numpy()] = gov["check"].to_numpy(dtype=object)
    unchecked = np.empty(n, dtype=object)
    for i in range(n):
        unchecked[i] = []
    for p, lst in exc.items():
        unchecked[int(p)] = lst   # type: ignore[call-overload]  # pandas-stubs type index labels as Hashable
    v["qualifies"] = ~bad_arr & (npass > 0)
    v["ratio"] = ratio
    v["check"] = check
    v["unchecked"] = unchecked
    return v
