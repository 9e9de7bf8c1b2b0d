"""The forces of one model's members: every force source (``modelcheck.loads.sources``: load
tables, a model property, IFC structural-analysis results) joined onto the members,
with the lines that name what the join could not use, and the load-table rows no model used."""

from __future__ import annotations

from collections.abc import Iterable
from typing import TYPE_CHECKING, Any

import pandas as pd

from modelcheck.common.table import REJECTED
from modelcheck.core.model import ForceOptions, ModelData

if TYPE_CHECKING:
    from modelcheck.ifc.index import ModelIndex
    from modelcheck.loads.join import ForceReport
    from modelcheck.loads.sources import SourceForces
    from modelcheck.loads.tables import LoadTable


def attach_forces(data: ModelData, idx: ModelIndex, opts: ForceOptions, *, given: dict[str, SourceForces] | None = None,
                  part: bool = False, shared_tags: dict[str, tuple[str, ...]] | None = None) -> None:
    """Join the forces of every source (``modelcheck.loads.sources``) onto one model's members.

    For a part of a model (``part``, ``modelcheck.run.split``): ``given`` are the reads of the
    sources read over the whole model, and ``shared_tags`` the model's tags several members
    share; ``data.report`` keeps the join's ForceReport and ``data.sources`` the sources' messages,
    for merging."""
    from modelcheck.common.timing import stage
    from modelcheck.loads.join import join_forces
    from modelcheck.loads.sources import ranked, read_sources, rejected_by, source_messages

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
