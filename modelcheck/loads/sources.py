"""The force sources ("routes"): each gives some members an axial force per load case.

A source is one object with a ``name`` (its key in the join's report, ``used_by_route``), a
``precedence`` (the join keeps, per member and load case, the force of the source with the
lowest number: ``modelcheck.loads.join`` explains why the shipped order is what it is), a
``whole_model`` flag and ``read(idx, members, options) -> SourceForces``. :data:`FORCE_SOURCES`
lists them, one line each; nothing else names them.

Sources are read, and their messages listed, in the order of :data:`FORCE_SOURCES`; their
forces rank by ``precedence``. A source that the options turn off (``--no-analysis-results``,
no ``--loads``) still answers, with no forces: its name stays in the report with a count of 0.

When one large model is shared out among processes (``modelcheck.run.split``), a ``whole_model``
source is read once over the whole model before the fork (its result may depend on elements
that are not members, and its messages are the model's) and each part takes the rows of its own
members; any other source is read in each part, over the part's members, and its messages are
merged over the parts (:func:`merged_messages`).

Example::

    results = read_sources(idx, members, ForceOptions(tables=(table,)))
    forces, report = join_forces(members, ranked(results), messages=source_messages(results))
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Protocol

import pandas as pd

from modelcheck.loads.messages import MessageLog

if TYPE_CHECKING:
    from modelcheck.ifc.index import ModelIndex
    from modelcheck.loads.tables import LoadTable

#: the columns of a keyed source's rows (a load table's, as ``read_load_table`` gives them)
KEYED_COLUMNS: tuple[str, ...] = ("key_kind", "key", "load_case", "axial_force", "source")


@dataclass(frozen=True)
class ForceOptions:
    """What the command line says about the force sources."""

    tables: tuple[LoadTable, ...] = ()   # the load tables (read_load_table)
    property: tuple[str, str] | None = None   # (pset, property)
    analysis: bool = True
    analysis_frame: str | None = None   # --analysis-frame: None tests each member's flag


@dataclass(frozen=True)
class SourceForces:
    """What one source read.

    ``forces``: rows of ``table.FORCE_COLUMNS`` (model, global_id, load_case, axial_force in
    newtons, tension positive, source text), one per member and load case; or, with ``keyed``,
    rows of :data:`KEYED_COLUMNS` that name their member by GlobalId or tag (``key_kind``,
    ``key``), matched by the join in every model, with rows that match no member or an
    ambiguous tag reported. ``messages``: whole lines. ``log``: lines grouped by cause with the
    GlobalIds they concern, merged over the parts of a model shared out; a member the log
    names that is left with no force gets the log's reason as why its force P is missing."""

    name: str
    forces: pd.DataFrame
    keyed: bool = False
    messages: tuple[str, ...] = ()
    log: MessageLog | None = None

    def without_forces(self) -> SourceForces:
        """The messages and log alone (what a part of a model sends back)."""
        return SourceForces(self.name, self.forces.iloc[0:0], self.keyed, self.messages, self.log)


class ForceSource(Protocol):
    """One route by which members get axial forces."""

    @property
    def name(self) -> str:
        """Its key in the join's report (``used_by_route``)."""
        ...

    @property
    def precedence(self) -> int:
        """Its rank in the join: the lowest number wins."""
        ...

    @property
    def whole_model(self) -> bool:
        """Read once over a whole model shared out among processes (and not in each part)."""
        ...

    def read(self, idx: ModelIndex, members: pd.DataFrame, options: ForceOptions) -> SourceForces:
        """The forces of ``members`` (the member table of the model opened as ``idx``; when
        ``whole_model``, possibly only its ``model`` and ``global_id`` columns)."""
        ...


@dataclass(frozen=True)
class LoadTables:
    """The load tables given on the command line (``--loads``), in the order given."""

    name: str = "table"
    precedence: int = 10
    whole_model: bool = False

    def read(self, idx: ModelIndex, members: pd.DataFrame, options: ForceOptions) -> SourceForces:
        notes: list[str] = []
        frames = []
        for t in options.tables:
            if t.encoding == "cp1252" and len(t.frame):
                name = str(t.frame["source"].iloc[0]).rsplit(":row ", 1)[0]
                notes.append(f"{name}: not UTF-8; read as Windows-1252 (cp1252) text")
            frames.append(t.frame[list(KEYED_COLUMNS)])
        rows = (pd.concat(frames, ignore_index=True) if frames
                else pd.DataFrame(columns=list(KEYED_COLUMNS)))
        return SourceForces(self.name, rows, keyed=True, messages=tuple(notes))


@dataclass(frozen=True)
class AnalysisResults:
    """The model's IFC structural-analysis results (``modelcheck.loads.analysis``)."""

    name: str = "analysis"
    precedence: int = 20
    whole_model: bool = True

    def read(self, idx: ModelIndex, members: pd.DataFrame, options: ForceOptions) -> SourceForces:
        from modelcheck.common.table import empty_forces

        if not options.analysis:
            return SourceForces(self.name, empty_forces())
        from modelcheck.loads.analysis import forces_from_analysis

        forces, messages = forces_from_analysis(idx, members, frame=options.analysis_frame)
        return SourceForces(self.name, forces, messages=tuple(messages))


@dataclass(frozen=True)
class ModelProperty:
    """A property of each member in the model (``modelcheck.loads.properties``)."""

    name: str = "property"
    precedence: int = 30
    whole_model: bool = False

    def read(self, idx: ModelIndex, members: pd.DataFrame, options: ForceOptions) -> SourceForces:
        from modelcheck.common.table import empty_forces

        log = MessageLog(idx.path)
        if options.property is None:
            return SourceForces(self.name, empty_forces(), log=log)
        from modelcheck.loads.properties import forces_from_property

        forces, _ = forces_from_property(idx, members, options.property[0], options.property[1], log=log)
        return SourceForces(self.name, forces, log=log)


#: every force source, one line each, in the order they are read and their messages listed
FORCE_SOURCES: tuple[ForceSource, ...] = (
    LoadTables(),
    ModelProperty(),
    AnalysisResults(),
)


def read_sources(idx: ModelIndex, members: pd.DataFrame, options: ForceOptions,
                 given: Mapping[str, SourceForces] | None = None) -> list[SourceForces]:
    """What every source gives ``members``, in the order of :data:`FORCE_SOURCES`; a source
    named in ``given`` (read before, over the whole model) is not read again."""
    given = given or {}
    return [given[s.name] if s.name in given else s.read(idx, members, options) for s in FORCE_SOURCES]


def read_whole_model(idx: ModelIndex, members: pd.DataFrame, options: ForceOptions) -> dict[str, SourceForces]:
    """What every ``whole_model`` source gives the model opened as ``idx`` (``members``: at
    least the ``model`` and ``global_id`` of each of its members), by name."""
    return {s.name: s.read(idx, members, options) for s in FORCE_SOURCES if s.whole_model}


def part_of(whole: Mapping[str, SourceForces], global_ids: set[str]) -> dict[str, SourceForces]:
    """The whole-model reads cut down to the members of a part (``global_ids``), without their
    messages (those are the model's, listed once: :func:`merged_messages`)."""
    out = {}
    for name, r in whole.items():
        forces = r.forces
        if len(forces):
            forces = forces[forces["global_id"].isin(global_ids)]
        out[name] = SourceForces(name, forces, r.keyed)
    return out


def ranked(results: Iterable[SourceForces]) -> list[SourceForces]:
    """``results`` in order of precedence (the join's order: the first wins)."""
    rank = {s.name: s.precedence for s in FORCE_SOURCES}
    return sorted(results, key=lambda r: rank[r.name])


def source_messages(results: Sequence[SourceForces]) -> list[str]:
    """Every message of ``results``, source by source: its lines, then its log's."""
    out: list[str] = []
    for r in results:
        out += r.messages
        if r.log is not None:
            out += r.log.messages()
    return out


def merged_messages(parts: Sequence[Sequence[SourceForces]], whole: Mapping[str, SourceForces]) -> list[str]:
    """The messages of a model shared out, as one process reading it whole gives them: source by
    source, a ``whole_model`` one's from its read over the whole model (``whole``), any other's
    from its reads in the parts (``parts``: each part's results, :meth:`SourceForces.without_forces`),
    each line once and the logs merged."""
    out: list[str] = []
    for s in FORCE_SOURCES:
        if s.name in whole:
            out += source_messages([whole[s.name]])
            continue
        reads = [r for part in parts for r in part if r.name == s.name]
        out += list(dict.fromkeys(m for r in reads for m in r.messages))
        logs = [r.log for r in reads if r.log is not None]
        if logs:
            log = MessageLog(logs[0].model)
            for one in logs:
                log.merge(one)
            out += log.messages()
    return out


@dataclass(frozen=True)
class _Reasons:
    """Why each member named in the sources' logs got no force from them (``rejected_by``)."""

    logs: tuple[MessageLog, ...] = field(default_factory=tuple)

    def idents(self) -> set[str]:
        return set().union(*(log.idents() for log in self.logs)) if self.logs else set()

    def texts_of(self, ident: str) -> list[str]:
        return [t for log in self.logs for t in log.texts_of(ident)]


def rejected_by(results: Sequence[SourceForces]) -> _Reasons:
    """The sources' logs, read as one: ``idents()`` and ``texts_of(gid)``."""
    return _Reasons(tuple(r.log for r in results if r.log is not None))
