"""One large model checked by several processes at once.

The model is opened and its relationships walked once, in this process. Its members are then
sorted by GlobalId and shared out in contiguous runs, one per process; each process is a fork of
this one (it inherits the opened model and the maps, nothing is copied or re-read), reads its
members, joins their forces, runs the rule set, makes its suggestions and encodes its rows of
the JSON report. The parts come back in GlobalId order, so their results and JSON rows simply
follow one another: the report is the one a single process writes, byte for byte.

What a part cannot judge alone is settled over the whole model, here, before the fork or after:

* a tag that several members of the model share is ambiguous in every part (``shared_tags``);
* a force source that depends on the whole model (``whole_model``: the structural-analysis
  results, which also reports results of elements that are not members) is read once;
* a load-table row is unmatched only when no part used it (``matched_rows``, as across models);
* the parser's log, the other force sources' messages and the join's report are merged, and
  their lines written once.

The model is opened lazily (``modelcheck.ifc.index``), so each process also parses only the
entities of its own members. Sharing out needs Linux (fork, and ``/proc`` for
``_own_file_offset``); elsewhere, and for models too small to gain from it, the model is checked
in one process.

Example::

    checked = check_model_split("big.ifc", Job("steel-asd-us", ForceOptions()), parts=2)
"""

from __future__ import annotations

import os
import signal
import sys
from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from modelcheck.common.errors import ModelcheckError
from modelcheck.common.table import concat_rows
from modelcheck.common.timing import stage
from modelcheck.core.model import REPORT_MEMBER_COLUMNS, EncodedRows, ForceOptions, ModelData, ModelResult
from modelcheck.core.read import describe_model
from modelcheck.run import lifetime
from modelcheck.run.job import Job, Rows
from modelcheck.run.sinks import memory_file, release_rows, row_file, sink_for

if TYPE_CHECKING:
    from modelcheck.core.model import Coverage
    from modelcheck.ifc.index import ModelIndex
    from modelcheck.loads.join import ForceReport
    from modelcheck.loads.sources import SourceForces
    from modelcheck.loads.tables import LoadTable

#: below this many members a model is checked in one process (forking costs more than it saves)
MIN_MEMBERS_PER_PART = 2_000


def can_split() -> bool:
    """Whether a model can be shared out here: Linux, with fork (see ``_own_file_offset``)."""
    import multiprocessing

    return sys.platform.startswith("linux") and "fork" in multiprocessing.get_all_start_methods()


@dataclass
class _Shared:
    """What the forked processes inherit (set just before the fork, cleared after)."""

    idx: ModelIndex
    entities: list[Any]            # member entities in file order
    parts: list[list[int]]         # each part's members: positions in ``entities``, in file order
    gids: list[str]                # GlobalId of each entity (as the member table holds it)
    ruleset_ref: str
    units: str                     # the system the results are shown in ("SI" or "US")
    forces: ForceOptions
    shared_tags: dict[str, tuple[str, ...]]
    whole: dict[str, SourceForces]   # the whole_model force sources' reads, by name
    rows: Rows                     # what the reports need of the results (JSON rows, statuses only)
    log_start: int                 # parse-log entries before the fork
    parent_pid: int
    offsets: dict[int, int]        # file offsets of the parser's descriptors at the fork
    tables: tuple[LoadTable, ...]   # the load tables, whole: each part takes its rows
    part_starts: np.ndarray        # the first GlobalId of each part but the first (in sorted order)
    row_files: dict[int, int]      # part -> descriptor of the memory file its JSON rows go to (none: bytes)


_SHARED: _Shared | None = None


@dataclass
class _PartResult:
    error: str | None
    members: pd.DataFrame | None
    results: pd.DataFrame | None
    json_rows: EncodedRows | None   # a part's rows: the descriptor of its memory file (or the bytes)
    report: ForceReport | None
    sources: tuple[SourceForces, ...]   # what each force source read in the part, less its forces
    new_log: list[str]
    warnings: list[str]            # reader and unit warnings (parse problems are merged from new_log)
    matched_rows: set[str]
    member_count: int
    excluded: dict[str, list[str]] = field(default_factory=dict)   # left out by the rule set, by reason
    coverage: Coverage | None = None   # the part's
    member_warnings: dict[str, list[str]] = field(default_factory=dict)   # GlobalId -> the member's own


def _table_part(load_table: LoadTable, part_starts: np.ndarray, k: int) -> LoadTable:
    """A load table's rows for part ``k``: the GlobalId rows in its run of GlobalIds and every tag
    row. Cut in each part, at the same time. A GlobalId of no member goes to the part whose run it
    falls in, where it matches nothing: unmatched, as in any other part."""
    table = load_table.frame
    keys = table["key"].fillna("").to_numpy(dtype=object)
    part = np.searchsorted(part_starts, keys, side="right")
    return replace(load_table, frame=table[(part == k) | (table["key_kind"] != "global_id").to_numpy()])


def _bounds(gids: list[str], parts: int) -> list[tuple[int, int]]:
    """Contiguous runs of equal size that never split members sharing a GlobalId.

    Equal, although this process also starts the others and writes the report: a forked part
    writes its rows to a memory file, which costs about as much. With 100,000 members and two
    processes, a first part 5 % larger leaves this process finishing about 0.8 s after the other,
    and one 5 % smaller the other about 0.8 s after this."""
    n = len(gids)
    cuts = [0]
    for k in range(1, parts):
        c = max(cuts[-1], min(n, round(n * k / parts)))
        while 0 < c < n and gids[c] == gids[c - 1]:
            c += 1
        if cuts[-1] < c < n:
            cuts.append(c)
    cuts.append(n)
    return list(zip(cuts[:-1], cuts[1:], strict=True))


def _file_offsets(fds: tuple[int, ...]) -> dict[int, int]:
    """The current offset of each descriptor (just before the fork: what the parser believes)."""
    out = {}
    for fd in fds:
        try:
            out[fd] = os.lseek(fd, 0, os.SEEK_CUR)
        except OSError:
            continue
    return out


def _own_file_offset(offsets: dict[int, int]) -> None:
    """Give this (forked) process its own open file description of the model.

    The lazy parser reads entities from the file as they are first used, through a descriptor
    it keeps open. A fork shares that descriptor's file offset with the parent, so two processes
    seeking and reading at once would read each other's bytes. The descriptor is re-pointed, at
    the same number, to a fresh open of the same file (through /proc, which works even for a
    file already deleted, like the one extracted from an .ifczip), at the offset the parser
    believes it is at: the one it had at the fork."""
    for fd, offset in offsets.items():
        try:
            fresh = os.open(f"/proc/self/fd/{fd}", os.O_RDONLY)
        except OSError:
            continue
        os.lseek(fresh, offset, os.SEEK_SET)
        os.dup2(fresh, fd)
        os.close(fresh)


def _run_part(k: int) -> _PartResult:
    """Check part ``k`` of the shared model (in a forked process, or in this one)."""
    from modelcheck.core.read import read_into
    from modelcheck.loads.sources import part_of
    from modelcheck.rules.ruleset import load_ruleset

    st = _SHARED
    assert st is not None, "the parts of a model run only under check_model_split"
    idx = st.idx
    if os.getpid() != st.parent_pid:
        _own_file_offset(st.offsets)
    positions = st.parts[k]
    # read in file order: the lazy parser reads the file in blocks, and members in GlobalId order
    # would be scattered over it (each read wasting most of its block)
    entities = [st.entities[i] for i in positions]
    data = ModelData(path=idx.path)
    given = part_of(st.whole, {st.gids[i] for i in positions}) if st.whole else {}
    # each load table cut down to the rows this part can match: its GlobalIds, and every tag row
    with stage(f"part {k}: its load table rows"):
        opts = replace(st.forces, tables=tuple(_table_part(t, st.part_starts, k) for t in st.tables))
    with stage(f"part {k}: read + forces"):
        read_into(data, idx, opts, entities, given=given, part=True, shared_tags=st.shared_tags)
    new_log = list(idx.parse_log[st.log_start:])
    if data.error is not None or data.members is None:
        return _PartResult(data.error, None, None, None, None, (), new_log, [], set(), 0)
    n_parse = data.parse_problem_count
    # what the model-wide parts of the warnings were is rebuilt by the caller from the merged log
    warnings = [w for w in data.warnings[n_parse:]]
    ruleset = load_ruleset(st.ruleset_ref).in_system(st.units)
    from modelcheck.core.check import coverage_of, evaluate_members
    from modelcheck.rules.select import excluded_members

    excluded = excluded_members(ruleset.select, data.members)

    # each part's rows go to a memory file made before the fork, as they are joined: never
    # whole in memory as text, never pickled back; the report streams them in
    sink = sink_for(st.rows, st.row_files.get(k))
    with stage(f"part {k}: rules, suggestions, JSON"):
        results = evaluate_members(ruleset, data.members, data.forces, sink)
    rows = sink.rows() if sink is not None else None
    coverage = coverage_of(ruleset, data.members, results)
    from modelcheck.core.check import member_warnings

    own_warnings = member_warnings(data.members)
    members = data.members.loc[:, list(REPORT_MEMBER_COLUMNS)]
    members["_pos"] = positions
    if st.rows is Rows.JSON_ONLY:  # no report reads them
        members = members.iloc[0:0]
    report = data.report
    if report is not None and os.getpid() != st.parent_pid:
        report = replace(report, unmatched=())   # judged from matched_rows; not worth the pickling
    return _PartResult(None, members, results, rows, report, data.sources, new_log, warnings, data.matched_rows,
                       data.member_count, excluded, coverage, own_warnings)


class _Forked:
    """``fn(*args)`` run in a forked process while this one goes on; ``result()`` waits for it
    and gives its value, or raises what it raised (a project error as the same class and
    message; any other as a RuntimeError naming it). ``what`` names the work in the message
    given when the process dies without an answer. The work must not read a model this process
    opened (the two would share its file offset) unless it first takes a file offset of its own
    (``_own_file_offset``, as ``_run_part`` does)."""

    def __init__(self, what: str, fn: Any, *args: Any) -> None:
        import pickle

        self._what = what
        self._done = False
        self._value: Any = None
        self._error: Exception | None = None   # raised again at every later call
        # the answer goes into a memory file, not a pipe: the helper writes it at once and ends
        # (giving its memory back), instead of waiting for this process to drain a pipe block by
        # block, each block a switch between the two
        fd = memory_file("modelcheck-helper")
        pid = os.fork()
        if pid == 0:   # the helper: work, send, end without the parent's exit handlers
            try:
                from modelcheck.run.pool import die_with_parent

                die_with_parent()   # never left running once the command has ended
                try:
                    payload: tuple[str, Any] = ("ok", fn(*args))
                except ModelcheckError as exc:
                    payload = ("error", (type(exc).__name__, str(exc)))
                except Exception as exc:  # noqa: BLE001  (a bug: named in the parent, not lost)
                    payload = ("crash", f"{type(exc).__name__}: {exc}")
                with os.fdopen(fd, "wb") as out:
                    pickle.dump(payload, out, protocol=pickle.HIGHEST_PROTOCOL)
            finally:
                os._exit(0)
        self._pid, self._fd = pid, fd

    def result(self) -> Any:
        if self._error is not None:
            raise self._error
        if not self._done:
            try:
                self._value = self._receive()
                self._done = True
            except Exception as exc:
                self._error = exc
                raise
        return self._value

    def _receive(self) -> Any:
        import pickle

        from modelcheck.common import errors

        os.waitpid(self._pid, 0)   # the answer is whole once the helper has ended
        os.lseek(self._fd, 0, os.SEEK_SET)   # where the helper's writes left the shared offset
        with os.fdopen(self._fd, "rb") as src:
            data = src.read()
        try:
            kind, value = pickle.loads(data)
        except Exception:  # noqa: BLE001  (the helper died before it could send anything)
            raise ModelcheckError(f"the process {self._what} stopped unexpectedly "
                                  "(out of memory?); '--jobs 1' does it in this process") from None
        if kind == "error":
            cls = getattr(errors, value[0], ModelcheckError)
            raise cls(value[1])
        if kind == "crash":
            raise RuntimeError(f"{self._what} failed: {value}")
        return value

    def close(self) -> None:
        """Stop the helper if its answer was never asked for (the check stopped before): it would
        otherwise work on for nothing."""
        if not self._done and self._error is None:
            self._error = ModelcheckError(f"{self._what}: not done (the check had stopped)")
            os.close(self._fd)
            try:
                os.kill(self._pid, signal.SIGKILL)
            except ProcessLookupError:
                pass
            os.waitpid(self._pid, 0)


def check_model_split(path: str, job: Job, *, parts: int) -> ModelResult | None:
    """Check one model for ``job`` in ``parts`` processes; None when this system cannot fork: the
    caller then checks it in one process as usual (as this does a model too small to share out)."""
    global _SHARED
    ruleset_ref, forces, validate, units = job.ruleset_ref, job.forces, job.validate, job.units
    from modelcheck.ifc.index import build_index
    from modelcheck.ifc.reader import member_entities, member_keys

    if parts < 2 or not can_split():
        return None
    data = ModelData(path=path)
    try:
        with stage("open + walk"):
            idx = build_index(path)
        with stage("member entities"):
            entities = member_entities(idx)
        large = len(entities) >= 2 * MIN_MEMBERS_PER_PART
        if not large:
            return _in_one_process(data, idx, job)
        with stage("member keys"):
            gids, tags = member_keys(idx, entities)
    except ModelcheckError as exc:
        data.error = str(exc)
        return ModelResult(data)
    with stage("describe model"):
        describe_model(data, idx, validate)
    parts = min(parts, len(entities) // MIN_MEMBERS_PER_PART)
    with stage("members in GlobalId order"):
        order = sorted(range(len(entities)), key=gids.__getitem__)
    sorted_gids = [gids[i] for i in order]
    by_tag: dict[str, list[str]] = {}
    for g, t in zip(gids, tags, strict=True):
        if t is not None and t.strip():
            by_tag.setdefault(t, []).append(g)
    shared_tags = {t: tuple(sorted(gs)) for t, gs in by_tag.items() if len(gs) > 1}
    from modelcheck.loads.sources import read_whole_model

    try:
        whole = read_whole_model(idx, pd.DataFrame({"model": [path] * len(gids), "global_id": gids}), forces)
    except (AttributeError, TypeError, ValueError, ArithmeticError, RuntimeError) as exc:
        from modelcheck.ifc.index import unreadable_model

        data.error = unreadable_model(path, exc)
        return ModelResult(data)
    idx.drain_log()
    with stage("share out"):
        bounds = _bounds(sorted_gids, parts)
        runs = [sorted(order[a:b]) for a, b in bounds]
        part_starts = np.array([sorted_gids[a] for a, _ in bounds[1:]], dtype=object)
    tables = forces.tables
    files = {k: row_file(k) for k in range(len(bounds))} if job.rows is not Rows.TABLE else {}
    row_files = {k: fd for k, fd in files.items() if fd is not None}
    from modelcheck.core.check import display_system

    data.units = display_system(units, data.system)
    _SHARED = _Shared(idx, entities, runs, gids, ruleset_ref, data.units,
                      forces, shared_tags, whole, job.rows, len(idx.parse_log),
                      os.getpid(), _file_offsets(idx.file_fds), tables, part_starts, row_files)
    try:
        with stage("parts"):
            outs = _run_parts(len(_SHARED.parts))
    except BaseException:
        release_rows(list(row_files.values()))
        raise
    finally:
        lifetime.keep(_SHARED, order, sorted_gids, by_tag)
        _SHARED = None
    with stage("merge parts"):
        checked = _merge(data, idx, outs, whole, ruleset_ref)
    kept = checked.json_rows if isinstance(checked.json_rows, list) else []
    release_rows([fd for fd in row_files.values() if fd not in kept])   # a part that stopped early
    return checked


def _run_parts(n: int) -> list[_PartResult]:
    """Part 0 here, the others in forked processes at the same time. Each forked part ends as
    soon as it has sent its result: the memory it gives back then is what the kernel hands out
    first, to the report's page cache among others (memory this process has not touched for a
    while may have gone back to the host of a virtual machine, and is slow to fault in again)."""
    path = _SHARED.idx.path if _SHARED is not None else "the model"
    forks = [_Forked(f"checking part {k + 1} of {n} of {path}", _run_part, k) for k in range(1, n)]
    try:
        first = _run_part(0)
        with stage("parts: wait + transfer"):
            return [first] + [f.result() for f in forks]
    finally:
        for f in forks:
            f.close()


def _in_one_process(data: ModelData, idx: ModelIndex, job: Job) -> ModelResult:
    """A model too small to share out, checked here (its rows as bytes)."""
    from modelcheck.core.check import check_read
    from modelcheck.core.read import read_into

    describe_model(data, idx, job.validate)
    read_into(data, idx, job.forces)
    return check_read(data, job.ruleset_ref, units=job.units, sink=sink_for(job.rows))


def _merge(data: ModelData, idx: ModelIndex, outs: list[_PartResult], whole: dict[str, SourceForces],
           ruleset_ref: str) -> ModelResult:
    """The parts' members, results, JSON rows and messages as one model's."""
    from modelcheck.core.check import merge_member_warnings
    from modelcheck.core.forces import join_lines, no_force_line
    from modelcheck.loads.join import ForceReport
    from modelcheck.loads.sources import merged_messages

    for out in outs:
        idx.parse_log.extend(out.new_log)
    errors = [o.error for o in outs if o.error]
    if errors:
        release_rows([o.json_rows for o in outs if isinstance(o.json_rows, int)])
        data.error = errors[0]
        return ModelResult(data)
    members = concat_rows([o.members for o in outs if o.members is not None])   # every part's (no error)
    members = members.sort_values("_pos", kind="stable").drop(columns="_pos").reset_index(drop=True)
    results = concat_rows([o.results for o in outs if o.results is not None])
    data.members = members
    data.member_count = sum(o.member_count for o in outs)
    data.member_warnings = merge_member_warnings([o.member_warnings for o in outs])
    data.warnings = list(idx.parse_problems) + list(dict.fromkeys(w for o in outs for w in o.warnings))
    excluded: dict[str, list[str]] = {}
    for o in outs:
        for label, gids in o.excluded.items():
            excluded.setdefault(label, []).extend(gids)
    from modelcheck.rules.ruleset import load_ruleset
    from modelcheck.rules.select import exclusion_lines

    data.exclusion_messages = exclusion_lines({k: sorted(v) for k, v in sorted(excluded.items())},
                                              load_ruleset(ruleset_ref).select)
    data.warnings += data.exclusion_messages
    data.matched_rows = set().union(*(o.matched_rows for o in outs))
    coverages = [o.coverage for o in outs if o.coverage is not None]   # every part's (no error)
    data.coverage = sum(coverages[1:], coverages[0])
    reports = [o.report for o in outs if o.report is not None]
    if reports:
        ambiguous = list(dict.fromkeys(a for r in reports for a in r.ambiguous))
        used: dict[str, int] = {}
        for r in reports:
            for route, count in r.used_by_route.items():
                used[route] = used.get(route, 0) + count
        report = ForceReport(
            duplicates=tuple(d for r in reports for d in r.duplicates), ambiguous=tuple(ambiguous),
            missing=tuple(sorted((m for r in reports for m in r.missing), key=lambda x: (x.model, x.global_id))),
            overridden=tuple(o for r in reports for o in r.overridden),
            messages=tuple(merged_messages([o.sources for o in outs], whole)), used_by_route=used,
            routes=reports[0].routes)
        data.force_report = report.to_dict(unmatched=False)
        data.force_messages = list(report.messages) + join_lines(report)
        data.no_force_message = no_force_line(report)
    rows = None
    if all(o.json_rows is not None for o in outs):
        rows = [o.json_rows for o in outs if o.json_rows is not None]
    return ModelResult(data, results, rows)
