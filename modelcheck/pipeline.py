"""The pipeline as plain function calls: model file -> members -> + forces -> results.

Models are opened by ``read_model`` (or, for one large model shared out among processes, by
``modelcheck.parallel``), and reports are written by the reporters; everything in between is
DataFrames in SI. ``check_model`` is what one batch worker runs for one model, so it takes and
returns picklable values only.
"""

from __future__ import annotations

import glob
import os
from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from modelcheck.common.errors import ModelcheckError, UsageError
from modelcheck.common.table import REJECTED, concat_rows, empty_forces
from modelcheck.loads.sources import ForceOptions

if TYPE_CHECKING:
    from modelcheck.ifc.index import ModelIndex
    from modelcheck.loads.join import ForceReport
    from modelcheck.loads.sources import SourceForces
    from modelcheck.loads.tables import LoadTable
    from modelcheck.rules.ruleset import RuleSet

IFC_SUFFIXES = (".ifc", ".ifczip")


@dataclass
class ModelData:
    """Everything read from one model (or why it could not be read)."""

    path: str
    schema: str | None = None
    error: str | None = None
    system: str = "SI"                       # display units natural to the model
    units: str | None = None                 # the system its check results are shown in
    coverage: Coverage | None = None         # how its members fared in the check
    no_force_message: str | None = None      # the force_messages line naming members with no force
    exclusion_messages: list[str] = field(default_factory=list)   # the warnings naming excluded members
    members: pd.DataFrame | None = None
    member_count: int = 0
    forces: pd.DataFrame = field(default_factory=empty_forces)
    matched_rows: set[str] = field(default_factory=set)   # load-table row sources used here
    force_messages: list[str] = field(default_factory=list)
    force_report: dict[str, Any] = field(default_factory=dict)   # ForceReport.to_dict() less 'unmatched'
    warnings: list[str] = field(default_factory=list)      # model-level warnings
    parse_problem_count: int = 0   # how many of the warnings the reader gave were the parser's problems
    validation: list[str] = field(default_factory=list)    # schema validation findings (--validate)
    #: GlobalId -> the member's own warnings (plausibility, consistency between sources, values
    #: not used), for the members that have any; kept when the member table is let go
    member_warnings: dict[str, list[str]] = field(default_factory=dict)
    report: ForceReport | None = None   # the join's ForceReport, kept only for a part of a model (modelcheck.parallel)
    sources: tuple[SourceForces, ...] = ()   # a part of a model: what each source read there, less its forces


def expand_paths(items: list[str]) -> list[str]:
    """Model files from files, folders (searched recursively) and glob patterns, sorted, unique."""
    def in_folder(folder: str) -> list[str]:
        return sorted(str(p) for p in Path(folder).rglob("*") if p.suffix.lower() in IFC_SUFFIXES and p.is_file())

    out: list[str] = []
    for item in items:
        if any(ch in item for ch in "*?["):
            # a file the pattern names is a model; a folder it names is searched like a folder given
            found = [m for h in sorted(glob.glob(item, recursive=True))
                     for m in (in_folder(h) if os.path.isdir(h) else [h] if os.path.isfile(h) else [])]
            if not found:
                raise UsageError(f"pattern {item!r} matches no model file (nor a folder holding one)")
            out += found
        elif os.path.isdir(item):
            found = in_folder(item)
            if not found:
                raise UsageError(f"folder {item!r} holds no .ifc or .ifczip file")
            out += found
        else:
            out.append(item)
    from modelcheck.common.files import utf8_name

    for p in out:   # reports name every model: a name they cannot write stops the run before it starts
        if not utf8_name(p):
            raise UsageError(f"{p}: the file name is not UTF-8 text (reports are UTF-8 and name every model); "
                             "rename the file")
    return list(dict.fromkeys(out))   # the first of each, in order


def read_model(path: str, forces: ForceOptions | None = None, *, validate: bool = False) -> ModelData:
    """Read one model into a ModelData; a model that cannot be read gets ``error`` set."""
    from modelcheck.ifc.index import build_index

    data = ModelData(path=path)
    try:
        idx = build_index(path)
    except ModelcheckError as exc:
        data.error = str(exc)
        return data
    describe_model(data, idx, validate)
    read_into(data, idx, forces)
    return data


def describe_model(data: ModelData, idx: ModelIndex, validate: bool) -> None:
    """Schema, display system and (``validate``) the schema-validation findings of an opened model."""
    from modelcheck.report.quantities import system_for_model

    data.schema = idx.schema
    data.system = system_for_model(idx)
    if validate:
        data.validation = validate_model(idx)


def read_into(data: ModelData, idx: ModelIndex, forces: ForceOptions | None, entities: list[Any] | None = None,
              **join: Any) -> None:
    """Members (of ``entities`` only, when given) and their forces into ``data``; whatever the
    file holds that the schema forbids makes the model's error, not a traceback. ``join``: the
    extra arguments of ``attach_forces`` for a part of a model."""
    from modelcheck.ifc.reader import read_members

    path = data.path
    from modelcheck.timing import stage

    try:
        with stage("read members"):
            table = read_members(idx, entities=entities)
        data.members = table.frame
        data.member_count = len(table.frame)
        data.warnings = list(table.model_warnings)
        data.parse_problem_count = table.parse_problem_count
        if forces is not None:
            attach_forces(data, idx, forces, **join)
            if idx.drain_log():  # entities the force routes read were parsed (lazily) just now
                n = data.parse_problem_count
                data.warnings = list(idx.parse_problems) + data.warnings[n:]
    except ModelcheckError as exc:  # a syntax error met while reading an entity (lazy parsing)
        data.error = str(exc)
        data.members, data.member_count, data.forces = None, 0, empty_forces()
    except (AttributeError, TypeError, ValueError, ArithmeticError, RuntimeError) as exc:
        # ifcopenshell returns what the file holds even where the schema forbids it (text for a
        # number, a number for a reference); a member's own data is guarded in the reader, this
        # is the rest of the model (property sets, relationships, units of forces)
        from modelcheck.ifc.index import unreadable_model

        data.error = unreadable_model(path, exc)
        data.members, data.member_count, data.forces = None, 0, empty_forces()


def attach_forces(data: ModelData, idx: ModelIndex, opts: ForceOptions, *, given: dict[str, SourceForces] | None = None,
                  part: bool = False, shared_tags: dict[str, tuple[str, ...]] | None = None) -> None:
    """Join the forces of every source (``modelcheck.loads.sources``) onto one model's members.

    For a part of a model (``part``, ``modelcheck.parallel``): ``given`` are the reads of the
    sources read over the whole model, and ``shared_tags`` the model's tags several members
    share; ``data.report`` keeps the join's ForceReport and ``data.sources`` the sources' messages,
    for merging."""
    from modelcheck.loads.join import join_forces
    from modelcheck.loads.sources import ranked, read_sources, rejected_by, source_messages
    from modelcheck.timing import stage

    members = data.members
    assert members is not None, "attach_forces: the members are read first"
    with stage("forces from sources"):
        results = read_sources(idx, members, opts, given)
    with stage("join forces"):   # a part's messages are merged with the others' and listed by the caller
        forces, report = join_forces(members, ranked(results), messages=[] if part else source_messages(results),
                                     shared_tags=shared_tags)
    data.forces = forces
    _reject_forces(members, forces, rejected_by(results))
    unmatched_here = {u.source for u in report.unmatched}
    data.matched_rows = {s for r in results if r.keyed for s in r.forces["source"] if s not in unmatched_here}
    data.force_report = report.to_dict(unmatched=False)  # unmatched: judged over all models
    data.force_messages = list(report.messages) + join_lines(report)
    data.no_force_message = no_force_line(report)
    if part:
        data.report = report
        data.sources = tuple(r.without_forces() for r in results if r.name not in (given or {}))


def _reject_forces(members: pd.DataFrame, forces: pd.DataFrame, log: Any) -> None:
    """A member left with no force although a source gives one (a model property with no unit,
    not a number): the reason that source logged goes into its ``rejected`` pairs (as "P"), so
    that a check needing P says why rather than that the model has none."""
    idents = log.idents()
    if not idents or REJECTED not in members.columns:
        return
    with_force = set(forces["global_id"].tolist()) if len(forces) else set()
    gids = members["global_id"].to_numpy(dtype=object)
    rows = [i for i, g in enumerate(gids.tolist()) if g in idents and g not in with_force]
    if not rows:
        return
    column = members[REJECTED].to_numpy(dtype=object).copy()
    for i in rows:
        column[i] = tuple(column[i] or ()) + tuple(("P", text) for text in log.texts_of(str(gids[i])))
    members[REJECTED] = pd.Series(column, index=members.index, dtype=object)


def join_lines(report: ForceReport) -> list[str]:
    """One line per kind of join problem, naming up to ten ids."""
    out = []

    def ids(items: Any, attr: str) -> str:
        vals = [str(getattr(x, attr)) for x in items]
        return ", ".join(vals[:10]) + (f" … (+{len(vals) - 10})" if len(vals) > 10 else "")

    if report.duplicates:
        rows = [f"{d.global_id} [{d.load_case}]: {d.used} used, {', '.join(d.ignored)} not"
                for d in report.duplicates]
        out.append(f"{len(report.duplicates)} member(s) have several force rows for the same load case; "
                   "the first was used: " + "; ".join(rows[:10]) + (f" … (+{len(rows) - 10})" if len(rows) > 10 else ""))
    if report.ambiguous:
        out.append(f"{len(report.ambiguous)} tag(s) match several members and were applied to none: "
                   f"{ids(report.ambiguous, 'tag')}")
    missing = no_force_line(report)
    if missing is not None:
        out.append(missing)
    return out


def no_force_line(report: ForceReport) -> str | None:
    """The line of :func:`join_lines` naming the members with no force from any route (None: none).
    The console leaves it out: those members are in its unchecked list, with the reason."""
    if not report.missing:
        return None
    vals = [str(x.global_id) for x in report.missing]
    return (f"{len(vals)} member(s) have no axial force from any route: "
            + ", ".join(vals[:10]) + (f" … (+{len(vals) - 10})" if len(vals) > 10 else ""))


def validate_model(idx: ModelIndex) -> list[str]:
    """Schema-validation findings of ifcopenshell's own validator, one line each:
    ``file:line: #id IfcClass 'GlobalId': attribute: what is wrong`` (no line number in a zip)."""
    import ifcopenshell.validate

    log = ifcopenshell.validate.json_logger()
    ifcopenshell.validate.validate(idx.file, log)
    found: list[tuple[Any, Any, str]] = [(st.get("instance"), st.get("attribute"),
                                          " ".join(str(st.get("message", "")).split())) for st in log.statements]
    lines = _entity_lines(idx.path, {inst.id() for inst, _, _ in found if hasattr(inst, "id")})
    out = []
    for inst, attr, msg in found:
        if not hasattr(inst, "id"):
            out.append(f"{idx.path}: {msg}"[:400])
            continue
        where = f"{idx.path}:{lines[inst.id()]}" if inst.id() in lines else idx.path
        gid = getattr(inst, "GlobalId", None)
        who = f"#{inst.id()} {inst.is_a()}" + (f" {gid!r}" if isinstance(gid, str) else "")
        out.append(f"{where}: {who}: " + (f"{attr}: " if attr else "") + msg[:300])
    return out


def _entity_lines(path: str, ids: set[int]) -> dict[int, int]:
    """The line on which each of ``ids`` is defined ('#id=' at the start of a line) in an IFC-SPF
    file; {} for a zipped model."""
    import re
    import zipfile

    if not ids or zipfile.is_zipfile(path):
        return {}
    head = re.compile(rb"\s*#(\d+)\s*=")
    out: dict[int, int] = {}
    with open(path, "rb") as fh:
        for no, line in enumerate(fh, 1):
            m = head.match(line)
            if m and int(m.group(1)) in ids:
                out[int(m.group(1))] = no
                if len(out) == len(ids):
                    break
    return out


# ------------------------------------------------------------------------------ check
#: member columns the reporters show beside results (identity, section, material, the member's warnings)
REPORT_MEMBER_COLUMNS = ("model", "global_id", "ifc_class", "predefined_type", "object_type", "name", "tag",
                         "storey", "type_name", "section_name", "profile_type", "shape", "material",
                         "material_grade", "area", "r_min", "length", "d", "h", "b", "t", "tf", "tw", "E", "Fy",
                         "Fu", "alpha", "warnings")


@dataclass
class CheckedModel:
    """What one worker sends back for one model (picklable)."""

    data: ModelData
    results: pd.DataFrame | None = None
    json_rows: bytes | int | list[bytes | int] | None = None   # the results as JSON rows, encoded where the
    # work ran: bytes, the descriptor of a memory file holding them, or consecutive chunks of either


def check_model(path: str, ruleset_ref: str, forces: ForceOptions, validate: bool = False,
                encode_json: bool = False, parts: int = 1, slim: bool = False,
                row_file: int | None = None, units: str = "model") -> CheckedModel:
    """Read one model, join its forces, run the rule set: the unit of work of a batch.

    ``encode_json`` also encodes the results as the JSON report's rows here, in the worker, so
    a batch does not encode every model's results one after another in the parent. ``parts`` > 1
    shares a large model out to that many processes (``modelcheck.parallel``). ``slim`` (with
    ``encode_json``): the JSON rows are the only report wanted, so of the results table only the
    status column comes back (what the summary and the exit code read). ``row_file``: the
    descriptor of a file (a batch worker's: made by the parent before the workers started) the
    rows go to instead of coming back as bytes. ``units``: the system the results are shown in,
    "SI", "US" or "model" (the model's own: :func:`ruleset_for`)."""
    if parts > 1:
        from modelcheck.parallel import check_model_split

        split = check_model_split(path, ruleset_ref, forces, parts=parts, validate=validate,
                                  encode_json=encode_json, slim=slim, units=units)
        if split is not None:
            return split
    data = read_model(path, forces, validate=validate)
    return finish_check(data, ruleset_ref, encode_json, slim, row_file, units)


def display_system(units: str, model_system: str) -> str:
    """The system a model's results are shown in: ``units`` ("SI", "US"), or for "model" the
    model's own (US customary when its length unit is the inch or the foot, else SI)."""
    return model_system if units == "model" else units


def ruleset_for(ruleset_ref: str, units: str, model_system: str) -> RuleSet:
    """The rule set at ``ruleset_ref`` showing its results in the system ``units`` picks for a
    model whose own system is ``model_system`` (:meth:`RuleSet.in_system`)."""
    from modelcheck.rules.ruleset import load_ruleset

    return load_ruleset(ruleset_ref).in_system(display_system(units, model_system))


def finish_check(data: ModelData, ruleset_ref: str, encode_json: bool, slim: bool = False,
                 row_file: int | None = None, units: str = "model") -> CheckedModel:
    """Rules, suggestions and (``encode_json``) JSON rows of a model read into ``data``; the rows
    into the file open as ``row_file`` when given (its descriptor stands for them)."""
    if data.error is not None or data.members is None:
        return CheckedModel(data)
    ruleset = ruleset_for(ruleset_ref, units, data.system)
    data.units = ruleset.units
    from modelcheck.rules.select import excluded_members, exclusion_lines

    data.exclusion_messages = exclusion_lines(excluded_members(ruleset.select, data.members), ruleset.select)
    data.warnings = data.warnings + data.exclusion_messages
    data.member_warnings = member_warnings(data.members)
    if encode_json and row_file is not None:
        with os.fdopen(os.dup(row_file), "wb") as sink:
            results, _ = evaluate_members(ruleset, data.members, data.forces, encode_json=True, slim=slim,
                                          sink=sink)
        rows: Any = row_file
    else:
        results, rows = evaluate_members(ruleset, data.members, data.forces, encode_json=encode_json, slim=slim)
    data.coverage = coverage_of(ruleset, data.members, results)
    # send back only what the reports read: a batch worker's result crosses a process boundary
    data.members = data.members.loc[:, list(REPORT_MEMBER_COLUMNS)]
    if slim and rows is not None:
        data.members = data.members.iloc[0:0]
    data.forces = data.forces.iloc[0:0]
    return CheckedModel(data, results, rows)


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


def evaluate_members(ruleset: RuleSet, members: pd.DataFrame, forces: pd.DataFrame, *, encode_json: bool = False,
                     slim: bool = False, sink: Any = None) -> tuple[pd.DataFrame, Any]:
    """Results (with suggestions) of ``members`` and, with ``encode_json``, their JSON rows.

    With ``encode_json`` the members go through in runs of ``EVALUATE_CHUNK`` consecutive
    GlobalIds, each run's rows encoded at once and handed to ``sink`` (a writable binary file;
    bytes returned when None): the results of a large model never exist whole as rows of text
    beside their table. ``slim`` keeps only the status column of the results. The rows are in the
    report's order (GlobalId, check, load case), as one run over all members would give them.
    The results carry the columns :data:`MEMBER_CODE` and (but for ``slim``) :data:`STATUS_CODE`,
    which :func:`coverage_of` reads and drops.
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

    if not encode_json:
        res, member, code = evaluate(members, forces)
        res[MEMBER_CODE], res[STATUS_CODE] = member, code
        return res, None
    kept: list[pd.DataFrame] = []
    encoded: list[bytes] = []
    offset = 0   # member codes run on over the runs of members
    for m, f in _runs_of_members(members, forces):
        if slim:   # the statuses alone come back: the rows are encoded without a results table
            status, member, text = _slim_rows(ruleset, m, f, sink)   # into the sink, when given, as they are joined
            # a categorical: small to send back, quick to count
            kept.append(pd.DataFrame({"status": status, MEMBER_CODE: member + offset}))
        else:
            res, member, code = evaluate(m, f)
            text = encode_results(res)
            res[MEMBER_CODE], res[STATUS_CODE] = member + offset, code
            kept.append(res)
        offset += len(m)
        if text:
            if sink is None:
                encoded.append(text)
            else:
                if sink.tell():
                    sink.write(ROW_SEPARATOR)
                sink.write(text)
    results = concat_rows(kept) if len(kept) > 1 else kept[0]
    return results, (ROW_SEPARATOR.join(encoded) if sink is None else None)


def _slim_rows(ruleset: RuleSet, members: pd.DataFrame, forces: pd.DataFrame,
               sink: Any = None) -> tuple[pd.Categorical, np.ndarray, bytes]:
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


def _runs_of_members(members: pd.DataFrame, forces: pd.DataFrame) -> Any:
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


@dataclass(frozen=True)
class Coverage:
    """How the members of one model fared: each counted once, by its worst status (fail >
    unchecked > pass), or as left out by the rule set's selection (with the reason), or as
    selected but met by no check (``uncovered``)."""

    found: int = 0
    passed: int = 0
    failed: int = 0
    unchecked: int = 0
    excluded: tuple[tuple[str, int], ...] = ()   # (reason, members), most first

    @property
    def checked(self) -> int:
        """Members with a verdict (pass or fail) on their checks."""
        return self.passed + self.failed

    @property
    def excluded_count(self) -> int:
        return sum(n for _, n in self.excluded)

    @property
    def uncovered(self) -> int:
        return max(0, self.found - self.passed - self.failed - self.unchecked - self.excluded_count)

    @property
    def verified_nothing(self) -> bool:
        """Members were found, and not one of them could be checked."""
        return self.found > 0 and self.checked == 0

    def __add__(self, other: Coverage) -> Coverage:
        """Two parts of one model as one."""
        excluded: dict[str, int] = dict(self.excluded)
        for reason, n in other.excluded:
            excluded[reason] = excluded.get(reason, 0) + n
        return Coverage(self.found + other.found, self.passed + other.passed, self.failed + other.failed,
                        self.unchecked + other.unchecked,
                        tuple(sorted(excluded.items(), key=lambda kv: (-kv[1], kv[0]))))


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


@dataclass(frozen=True)
class CheckRun:
    """The whole run: what every reporter takes."""

    ruleset: RuleSet
    models: list[ModelData]
    results: pd.DataFrame
    members: pd.DataFrame            # REPORT_MEMBER_COLUMNS of every readable model
    unmatched_rows: list[dict[str, str]]
    json_rows: list[bytes | int] | None = None   # consecutive chunks of rows (bytes, or descriptors of files),
    # when encoded in the workers


def run_check(paths: list[str], ruleset: RuleSet, forces: ForceOptions, *, jobs: int = 1,
              validate: bool = False, progress: Any = None, scheduler: str | None = None,
              encode_json: bool = False, slim: bool = False, units: str = "model") -> CheckRun:
    """Check every model; unreadable ones are recorded with their error, the rest go on.

    ``jobs`` > 1 runs several models in that many local worker processes, and shares a single large
    model out among that many processes (``modelcheck.parallel``); ``scheduler`` sends the models
    to a Dask cluster instead. Results come back in the order of ``paths`` either way. ``units``:
    "model" shows each model's results in its own system, "SI" or "US" all in that one.
    """
    from modelcheck.common.table import RESULT_COLUMNS

    ref = str(ruleset.path)
    checked: list[CheckedModel] = []
    if scheduler:
        from modelcheck.distributed import run_on_cluster

        checked = run_on_cluster(scheduler, paths, ref, forces, validate, progress=progress, units=units)
    elif jobs > 1 and len(paths) > 1:
        from modelcheck.batch import Died, run_each
        from modelcheck.parallel import can_split, release_rows, row_file

        # each model's rows go to a memory file its process inherits (so it must be forked, not
        # started afresh): not sent back through a pipe
        inherit = encode_json and can_split()
        files = [row_file(i) if inherit else None for i in range(len(paths))]
        try:
            # a worker that dies (out of memory, killed) makes the model it was on an error, and
            # the others are checked as usual
            answers = run_each(check_model, [(p, ref, forces, validate, encode_json, 1, slim, files[i], units)
                                             for i, p in enumerate(paths)], jobs, progress)
            checked += [CheckedModel(ModelData(path=p, error=f"{p}: the process checking this model ended "
                                               f"without a result ({a.why}); the model was not checked"))
                        if isinstance(a, Died) else a for p, a in zip(paths, answers, strict=True)]
        finally:
            in_use = {c.json_rows for c in checked if isinstance(c.json_rows, int)}
            release_rows([f for f in files if f is not None and f not in in_use])
    else:
        # one model and several processes: the model is shared out among them
        from modelcheck.parallel import release_rows, row_file

        parts = jobs if len(paths) == 1 else 1
        # JSON rows made here as the models are checked: where they would be made anyway from a
        # results table for the report alone, without that table (slim); into a memory file, as
        # they are joined, block by block (a shared-out model's parts make their own)
        here = encode_json and (parts > 1 or slim)
        fd = None
        try:
            for i, p in enumerate(paths):
                fd = row_file(i) if here else None
                checked.append(check_model(p, ref, forces, validate, here, parts, slim, fd, units))
                if fd is not None and checked[-1].json_rows != fd:
                    release_rows([fd])   # not used: the model was shared out, or could not be read
                fd = None
                if progress is not None:
                    progress()
        except BaseException:
            release_rows([fd] + [c.json_rows for c in checked if isinstance(c.json_rows, int)])
            raise
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
    unmatched = unmatched_rows(forces.tables, used)
    rows = None
    if encode_json and all(c.json_rows is not None or c.results is None for c in checked):
        rows = [chunk for c in checked for chunk in
                (c.json_rows if isinstance(c.json_rows, list) else [c.json_rows or b""])]
    return CheckRun(ruleset, [c.data for c in checked], results, members, unmatched, rows)


def unmatched_lines(rows: list[dict[str, str]]) -> list[str]:
    """One line per load table: how many of its rows match no member, with the first keys."""
    by_file: dict[str, list[str]] = {}
    for r in rows:
        by_file.setdefault(r["source"].rsplit(":row", 1)[0], []).append(f"{r['key']} ({r['source'].rsplit(':', 1)[-1]})")
    return [f"{f}: {len(keys)} row(s) match no member: " + ", ".join(keys[:10])
            + (f" … (+{len(keys) - 10})" if len(keys) > 10 else "") for f, keys in by_file.items()]


def unmatched_rows(tables: Iterable[LoadTable], used: set[str]) -> list[dict[str, str]]:
    """The rows of the load tables that no member used (``used``: their sources), each with its key."""
    rows = []
    for t in tables:
        left = t.frame.loc[~t.frame["source"].isin(used), ["key", "source"]]   # one hashed look-up over the column
        rows += [{"key": str(key), "source": src} for key, src in zip(left["key"], left["source"], strict=True)]
    return rows
