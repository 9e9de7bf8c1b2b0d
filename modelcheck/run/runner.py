"""Running a check over many models behind one interface: an :class:`Executor` checks a list of
model paths for a :class:`~modelcheck.run.job.Job` and gives one ModelResult per path, in the
order of the paths, whatever runs where.

* :class:`InProcess` - one model after the other here; with ``parts`` > 1 a single large model is
  shared out among that many forked processes (``modelcheck.run.split``);
* :class:`LocalPool` - several models at once, one per worker process (``modelcheck.run.pool``);
* :class:`DaskCluster` - the models as tasks on a Dask cluster (``modelcheck.run.cluster``).

``run_check`` chooses one from the command's options, runs it and gathers the results into one
CheckRun (``modelcheck.core.check.gather``).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, Protocol

from modelcheck.core.check import check_model, gather
from modelcheck.core.model import CheckRun, ForceOptions, ModelData, ModelResult
from modelcheck.run.job import Job, Rows
from modelcheck.run.sinks import release_rows, row_file, sink_for
from modelcheck.run.tricks import without

if TYPE_CHECKING:
    from modelcheck.rules.ruleset import RuleSet

Progress = Callable[[], None]


class Executor(Protocol):
    def check(self, paths: list[str], job: Job, progress: Progress | None = None) -> list[ModelResult]:
        """One result per path, in the order of ``paths``; ``progress`` is called once per model."""
        ...


def check_one(path: str, job: Job, parts: int = 1, fd: int | None = None) -> ModelResult:
    """One model checked for ``job``: the unit of work of every executor. ``parts`` > 1 shares it
    out among that many processes when it is large enough (else it is checked here); ``fd``: the
    file its JSON rows go to (a worker's: made by the parent before the workers started)."""
    if parts > 1:
        from modelcheck.run.split import check_model_split

        split = check_model_split(path, job, parts=parts)
        if split is not None:
            return split
    return check_model(path, job.ruleset_ref, job.forces, job.validate, units=job.units, sink=sink_for(job.rows, fd))


@dataclass(frozen=True)
class InProcess:
    """The models one after the other in this process; a single model with ``parts`` > 1 is
    shared out among that many processes."""

    parts: int = 1

    def check(self, paths: list[str], job: Job, progress: Progress | None = None) -> list[ModelResult]:
        # JSON rows made here as the models are checked: where they would be made anyway from a
        # results table for the report alone, without that table (statuses only); into a memory
        # file, as they are joined, block by block (a shared-out model's parts make their own)
        here = job.rows is Rows.JSON_ONLY or (job.rows is Rows.JSON and self.parts > 1)
        if not here:
            job = replace(job, rows=Rows.TABLE)
        checked: list[ModelResult] = []
        fd = None
        try:
            for i, p in enumerate(paths):
                fd = row_file(i) if here else None
                checked.append(check_one(p, job, self.parts, fd))
                if fd is not None and checked[-1].json_rows != fd:
                    release_rows([fd])   # not used: the model was shared out, or could not be read
                fd = None
                if progress is not None:
                    progress()
        except BaseException:
            release_rows([fd] + [c.json_rows for c in checked if isinstance(c.json_rows, int)])
            raise
        return checked


@dataclass(frozen=True)
class LocalPool:
    """Several models at once in at most ``jobs`` worker processes, one model each at a time."""

    jobs: int

    def check(self, paths: list[str], job: Job, progress: Progress | None = None) -> list[ModelResult]:
        from modelcheck.run.pool import Died, run_each
        from modelcheck.run.split import can_split

        # each model's rows go to a memory file its process inherits (so it must be forked, not
        # started afresh): not sent back through a pipe
        inherit = job.rows is not Rows.TABLE and can_split()
        files = [row_file(i) if inherit else None for i in range(len(paths))]
        checked: list[ModelResult] = []
        try:
            # a worker that dies (out of memory, killed) makes the model it was on an error, and
            # the others are checked as usual
            answers = run_each(check_one, [(p, job, 1, files[i]) for i, p in enumerate(paths)], self.jobs, progress)
            checked += [ModelResult(ModelData(path=p, error=f"{p}: the process checking this model ended "
                                              f"without a result ({a.why}); the model was not checked"))
                        if isinstance(a, Died) else a for p, a in zip(paths, answers, strict=True)]
        finally:
            used = {c.json_rows for c in checked if isinstance(c.json_rows, int)}
            release_rows([f for f in files if f is not None and f not in used])
        return checked


@dataclass(frozen=True)
class DaskCluster:
    """The models as tasks on the Dask cluster at ``address`` (results as a table: no rows are
    encoded on the workers)."""

    address: str

    def check(self, paths: list[str], job: Job, progress: Progress | None = None) -> list[ModelResult]:
        from modelcheck.run.cluster import run_on_cluster

        return run_on_cluster(self.address, paths, job.ruleset_ref, job.forces, job.validate, progress=progress,
                              units=job.units)


def choose_executor(models: int, jobs: int, scheduler: str | None) -> Executor:
    """``scheduler``: its cluster; several models and ``jobs`` > 1: a local pool; else this
    process, sharing a single model out among ``jobs`` processes."""
    if scheduler:
        return DaskCluster(scheduler)
    if jobs > 1 and models > 1:
        return LocalPool(jobs)
    return InProcess(parts=jobs if models == 1 and not without("split") else 1)


def run_check(paths: list[str], ruleset: RuleSet, forces: ForceOptions, *, jobs: int = 1,
              validate: bool = False, progress: Progress | None = None, scheduler: str | None = None,
              rows: Rows = Rows.TABLE, units: str = "model") -> CheckRun:
    """Check every model; unreadable ones are recorded with their error, the rest go on.

    ``jobs`` > 1 runs several models in that many local worker processes, and shares a single large
    model out among that many processes; ``scheduler`` sends the models to a Dask cluster
    instead. Results come back in the order of ``paths`` either way. ``rows``: what the reports
    need (:class:`Rows`). ``units``: "model" shows each model's results in its own system, "SI"
    or "US" all in that one.
    """
    if rows is Rows.JSON_ONLY and without("slim"):
        rows = Rows.JSON
    job = Job(str(ruleset.path), forces, validate, units, rows)
    checked = choose_executor(len(paths), jobs, scheduler).check(paths, job, progress)
    return gather(ruleset, checked, forces.tables, rows is not Rows.TABLE)
