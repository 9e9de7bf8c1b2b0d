"""The values handed from stage to stage: the force options of a run, one model's data as read,
how its members fared (Coverage), one model's result and the whole run; and the one interface
through which a runner says where a model's JSON rows go (:class:`RowSink`)."""

from __future__ import annotations

from contextlib import AbstractContextManager
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, BinaryIO, Protocol

import pandas as pd

from modelcheck.common.table import empty_forces
from modelcheck.loads.sources import ForceOptions  # noqa: F401  (the force sources' options, handed on by every stage)

if TYPE_CHECKING:
    from modelcheck.loads.join import ForceReport
    from modelcheck.loads.sources import SourceForces
    from modelcheck.rules.ruleset import RuleSet

#: the rows of a model's JSON report as encoded where the work ran: the bytes, or the descriptor
#: of a file holding them (the runner's, see ``modelcheck.run.sinks``)
EncodedRows = bytes | int


#: member columns the reporters show beside results (identity, section, material, the member's warnings)
REPORT_MEMBER_COLUMNS = ("model", "global_id", "ifc_class", "predefined_type", "object_type", "name", "tag",
                         "storey", "type_name", "section_name", "profile_type", "shape", "material",
                         "material_grade", "area", "r_min", "length", "d", "h", "b", "t", "tf", "tw", "r_root", "E", "Fy",
                         "Fu", "alpha", "warnings")


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
    report: ForceReport | None = None   # the join's ForceReport, kept only for a part of a model
    sources: tuple[SourceForces, ...] = ()   # a part of a model: what each source read there, less its forces


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


@dataclass
class ModelResult:
    """One model checked (picklable: a worker process sends it back)."""

    data: ModelData
    results: pd.DataFrame | None = None
    json_rows: EncodedRows | list[EncodedRows] | None = None   # the results as JSON rows, encoded where
    # the work ran (a RowSink's ``rows()``), or consecutive chunks of them (the parts of a model)


@dataclass(frozen=True)
class CheckRun:
    """The whole run: what every reporter takes."""

    ruleset: RuleSet
    models: list[ModelData]
    results: pd.DataFrame
    members: pd.DataFrame            # REPORT_MEMBER_COLUMNS of every readable model
    unmatched_rows: list[dict[str, str]]
    json_rows: list[EncodedRows] | None = None   # consecutive chunks of rows, when encoded where the work ran


class RowSink(Protocol):
    """Where one model's (or part's) JSON report rows go, chosen by the runner: the check's
    output step (``check.evaluate_members``) encodes the rows into ``open()``'s binary file, run
    by run of members, a separator between two rows; ``rows()`` is what stands for them then.
    ``statuses_only``: the JSON rows are the only report wanted, so of the results table only
    the statuses are kept (what the summary and the exit code read)."""

    @property
    def statuses_only(self) -> bool: ...

    def open(self) -> AbstractContextManager[BinaryIO]: ...

    def rows(self) -> EncodedRows: ...
