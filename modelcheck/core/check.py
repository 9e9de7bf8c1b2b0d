"""Checking one model read into a ModelData: the rule set's rows, the suggestions for failing
members, the coverage of the members, and (when a runner gives a :class:`RowSink`) the rows of
the JSON report encoded as they are made.

    result = check_model("hall.ifc", "steel-asd-us", ForceOptions())
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator
from typing import TYPE_CHECKING, Any, BinaryIO

import numpy as np
import pandas as pd

from modelcheck.common.table import concat_rows
from modelcheck.core.model import (
    REPORT_MEMBER_COLUMNS,
    CheckRun,
    Coverage,
    EncodedRows,
    ForceOptions,
    ModelData,
    ModelResult,
    RowSink,
)
from modelcheck.core.read import read_model

if TYPE_CHECKING:
    from modelcheck.loads.tables import LoadTable
    from modelcheck.rules.ruleset import RuleSet

def check_model(path: str, ruleset_ref: str, forces: ForceOptions | None, validate: bool = False, *,
                units: str = "model", sink: RowSink | None = None) -> ModelResult:
    """Read one model, join its forces, run the rule set. ``units``: the system the results are
    shown in, "SI", "US" or "model" (the model's own: :func:`ruleset_for`); ``sink``: where the
    JSON rows go (:func:`check_read`)."""
    return check_read(read_model(path, forces, validate=validate), ruleset_ref, units=units, sink=sink)


def display_system(units: str, model_system: str) -> str:
    """The system a model's results are shown in: ``units`` ("SI", "US"), or for "model" the
    model's own (US customary when its length unit is the inch or the foot, else SI)."""
    return model_system if units == "model" else units


def ruleset_for(ruleset_ref: str, units: str, model_system: str) -> RuleSet:
    """The rule set at ``ruleset_ref`` showing its results in the system ``units`` picks for a
    model whose own system is ``model_system`` (:meth:`RuleSet.in_system`)."""
    from modelcheck.rules.ruleset import load_ruleset

    return load_ruleset(ruleset_ref).in_system(display_system(units, model_system))


def check_read(data: ModelData, ruleset_ref: str, *, units: str = "model",
               sink: RowSink | None = None) -> ModelResult:
    """Rules, suggestions and coverage of a model read into ``data``; with ``sink`` also its JSON
    rows, encoded into the sink as they are made (its ``rows()`` then stands for them)."""
    if data.error is not None or data.members is None:
        return ModelResult(data)
    ruleset = ruleset_for(ruleset_ref, units, data.system)
    data.units = ruleset.units
    from modelcheck.rules.select import excluded_members, exclusion_lines

    data.exclusion_messages = exclusion_lines(excluded_members(ruleset.select, data.members), ruleset.select)
    data.warnings = data.warnings + data.exclusion_messages
    data.member_warnings = member_warnings(data.members)
    results = evaluate_members(ruleset, data.members, data.forces, sink)
    rows = sink.rows() if sink is not None else None
    data.coverage = coverage_of(ruleset, data.members, results)
    # send back only what the reports read: a batch worker's result crosses a process boundary
    data.members = data.members.loc[:, list(REPORT_MEMBER_COLUMNS)]
    if sink is not None and sink.statuses_only:
        data.members = data.members.iloc[0:0]
    data.forces = data.forces.iloc[0:0]
    return ModelResult(data, results, rows)


def member_warnings(members: pd.DataFrame) -> dict[str, list[str]]:
    """GlobalId -> the warnings of the members that have any, by GlobalId (the order the reports
    list members in, whether or not the model was shared out); a GlobalId several members share:
    their warnings together, each once."""
    out: dict[str, list[str]] = {}
    if members is None or "warnings" not in members.columns:
        return out
    warns = members["warnings"].to_numpy(dtype=object)
    gids = members["global_id"].to_numpy(dtype=object)
    for i in np.flatnonzero([bool(w) for w in warns.tolist()]).tolist():
        have = out.setdefault(str(gids[i]), [])
        have += [w for w in warns[i] if w not in have]
    return dict(sorted(out.items()))


def merge_member_warnings(parts: list[dict[str, list[str]]]) -> dict[str, list[str]]:
    """The member warnings of the parts of one model, as ``member_warnings`` of the whole gives them."""
    out: dict[str, list[str]] = {}
    for part in parts:
        for gid, warns in part.items():
            have = out.setdefault(gid, [])
            have += [w for w in warns if w not in have]
    return dict(sorted(out.items()))


#: members evaluated at a time when the JSON rows are encoded as they come (a memory bound)
EVALUATE_CHUNK = 65536


def evaluate_members(ruleset: RuleSet, members: pd.DataFrame, forces: pd.DataFrame,
                     sink: RowSink | None = None) -> pd.DataFrame:
    """Results (with suggestions) of ``members``; with ``sink``, their JSON rows too.

    Without a sink: the results table. With one, the members go through in runs of
    ``EVALUATE_CHUNK`` consecutive GlobalIds, each run's rows encoded at once and written to the
    sink: the results of a large model never exist whole as rows of text beside their table.
    ``sink.statuses_only`` keeps only the status column of the results (the rows are then encoded
    without a results table). The rows are in the report's order (GlobalId, check, load case), as
    one run over all members would give them. The results carry the columns :data:`MEMBER_CODE`
    and (but for statuses only) :data:`STATUS_CODE`, which :func:`coverage_of` reads and drops.
    """
    from modelcheck.design.suggest import suggest
    from modelcheck.report.check_json import ROW_SEPARATOR, encode_results
    from modelcheck.rules.engine import check_rows, empty_results

    def evaluate(m: pd.DataFrame, f: pd.DataFrame) -> tuple[pd.DataFrame, np.ndarray, np.ndarray]:
        rows = check_rows(ruleset, m, f)
        res = empty_results() if rows is None else rows.frame()
        if (res["status"] == "fail").any():
            res = suggest(ruleset, m, f, res)
        if rows is None:
            return res, np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int8)
        return res, rows.member.astype(np.int64), rows.status.astype(np.int8)

    if sink is None:
        res, member, code = evaluate(members, forces)
        res[MEMBER_CODE], res[STATUS_CODE] = member, code
        return res
    kept: list[pd.DataFrame] = []
    offset = 0   # member codes run on over the runs of members
    with sink.open() as out:
        for m, f in _runs_of_members(members, forces):
            if sink.statuses_only:   # the rows are encoded without a results table, into the sink as joined
                status, member, text = _slim_rows(ruleset, m, f, out)
                # a categorical: small to send back, quick to count
                kept.append(pd.DataFrame({"status": status, MEMBER_CODE: member + offset}))
            else:
                res, member, code = evaluate(m, f)
                text = encode_results(res)
                res[MEMBER_CODE], res[STATUS_CODE] = member + offset, code
                kept.append(res)
            offset += len(m)
            if text:
                if out.tell():
                    out.write(ROW_SEPARATOR)
                out.write(text)
    return concat_rows(kept) if len(kept) > 1 else kept[0]


def _slim_rows(ruleset: RuleSet, members: pd.DataFrame, forces: pd.DataFrame,
               sink: BinaryIO | None = None) -> tuple[pd.Categorical, np.ndarray, bytes]:
    """(statuses, positions of their members in ``members``, JSON rows) of ``members``: what a
    JSON-only report needs. The suggestions are
    worked out on a results table of the failing members' rows only. With ``sink`` the rows are
    written to it (after a separator when it holds rows already) and come back as b""."""
    from modelcheck.common.table import STATUS_RANK
    from modelcheck.design.suggest import suggest
    from modelcheck.report.check_json import encode_check_rows
    from modelcheck.rules.engine import FAIL, check_rows

    rows = check_rows(ruleset, members, forces)
    if rows is None:
        return pd.Categorical([], categories=list(STATUS_RANK)), np.zeros(0, dtype=np.int64), b""
    suggestions: dict[int, Any] = {}
    failing = rows.status == FAIL
    if failing.any():
        sel = np.flatnonzero(np.isin(rows.member, rows.member[failing]))   # every row of a failing member
        found = suggest(ruleset, members, forces, rows.frame(sel))["suggestion"].to_numpy(dtype=object)
        suggestions = {int(sel[j]): found[j] for j in np.flatnonzero(pd.notna(found)).tolist()}
    # pandas-stubs want the codes as a sequence of ints; an int8 array is what pandas takes best
    return (pd.Categorical.from_codes(rows.status, categories=list(STATUS_RANK)),   # type: ignore[call-overload]
            rows.member.astype(np.int64),
            encode_check_rows(rows, suggestions, sink))


def _runs_of_members(members: pd.DataFrame,
                     forces: pd.DataFrame) -> Iterator[tuple[pd.DataFrame, pd.DataFrame]]:
    """(members, their forces) in runs of at most EVALUATE_CHUNK consecutive GlobalIds (a repeated
    GlobalId stays in one run); one run, as given, when the members fit in one (the engine orders
    the rows of a run itself)."""
    if len(members) <= EVALUATE_CHUNK:
        yield members, forces
        return
    order = members["global_id"].astype(str).to_numpy(dtype=object)
    ranked = members.iloc[np.argsort(order, kind="stable")].reset_index(drop=True)
    gids = ranked["global_id"].astype(str).to_numpy(dtype=object)
    runs: list[tuple[int, int]] = []
    start, n = 0, len(ranked)
    while start < n:
        stop = min(n, start + EVALUATE_CHUNK)
        while 0 < stop < n and gids[stop] == gids[stop - 1]:
            stop += 1
        runs.append((start, stop))
        start = stop
    run_of = {g: r for r, (a, b) in enumerate(runs) for g in gids[a:b].tolist()}
    f_run = np.fromiter((run_of.get(g, -1) for g in forces["global_id"].astype(str).tolist()), dtype=np.int64,
                        count=len(forces))
    for r, (start, stop) in enumerate(runs):
        yield ranked.iloc[start:stop], forces[f_run == r]


#: the results' columns of each row's member (its position in the member table checked) and
#: status code (table.STATUS_RANK), read and dropped by coverage_of
MEMBER_CODE, STATUS_CODE = "_member", "_status"


def coverage_of(ruleset: RuleSet, members: pd.DataFrame, results: pd.DataFrame) -> Coverage:
    """The Coverage of ``members`` (one model, or a part of one) by their ``results``; the
    results' member positions and status codes (:data:`MEMBER_CODE`, :data:`STATUS_CODE`) are
    read and dropped here."""
    from modelcheck.common.table import STATUS_RANK

    if MEMBER_CODE in results.columns:
        codes = results.pop(MEMBER_CODE).to_numpy(dtype=np.int64)
        n = len(members)
    elif len(results):
        codes, uniques = pd.factorize(results["global_id"].astype(object))
        n = len(uniques)
    else:
        codes, n = np.zeros(0, dtype=np.int64), 0
    counts = [0, 0, 0]
    given = results.pop(STATUS_CODE).to_numpy(dtype=np.int64) if STATUS_CODE in results.columns else None
    if len(codes):
        status = results["status"]
        if given is not None:
            rank = given
        elif isinstance(status.dtype, pd.CategoricalDtype) and list(status.cat.categories) == list(STATUS_RANK):
            rank = status.cat.codes.to_numpy()
        else:   # each distinct text ranked once
            found, names = pd.factorize(status)
            rank = np.array([STATUS_RANK[str(x)] for x in names], dtype=np.int64)[found]
        worst = np.full(n, len(STATUS_RANK), dtype=np.int64)
        np.minimum.at(worst, codes, rank.astype(np.int64))
        counts = np.bincount(worst, minlength=len(STATUS_RANK) + 1)[:len(STATUS_RANK)].tolist()
    left_out = ~ruleset.select.mask(members)
    excluded = tuple(ruleset.select.left_out(members[left_out])) if left_out.any() else ()
    by = dict(zip(STATUS_RANK, counts, strict=True))
    return Coverage(len(members), int(by["pass"]), int(by["fail"]), int(by["unchecked"]), excluded)


def gather(ruleset: RuleSet, checked: list[ModelResult], tables: Iterable[LoadTable],
           rows_encoded: bool) -> CheckRun:
    """The models' results as one run, in the order given: results and report member columns
    concatenated, the load-table rows no model used, and (``rows_encoded``: the runner had the
    JSON rows encoded where the work ran) the rows' chunks when every checked model has them."""
    from modelcheck.common.table import RESULT_COLUMNS
    from modelcheck.core.forces import unmatched_rows

    frames = [c.results for c in checked if c.results is not None and len(c.results)]
    results = (concat_rows(frames) if frames
               else pd.DataFrame({c: pd.Series(dtype=object) for c in RESULT_COLUMNS}))
    mframes = [c.data.members.loc[:, list(REPORT_MEMBER_COLUMNS)] for c in checked
               if c.data.members is not None and len(c.data.members)]
    members = (concat_rows(mframes) if mframes
               else pd.DataFrame({c: pd.Series(dtype=object) for c in REPORT_MEMBER_COLUMNS}))
    for c in checked:  # the heavy member table is not needed past this point
        if c.data.members is not None:
            c.data.members = c.data.members.iloc[0:0]
    used: set[str] = set().union(*(c.data.matched_rows for c in checked))
    unmatched = unmatched_rows(tables, used)
    rows: list[EncodedRows] | None = None
    if rows_encoded and all(c.json_rows is not None or c.results is None for c in checked):
        rows = [chunk for c in checked for chunk in
                (c.json_rows if isinstance(c.json_rows, list) else [c.json_rows or b""])]
    return CheckRun(ruleset, [c.data for c in checked], results, members, unmatched, rows)
