"""What a runner is asked to do for each model: the :class:`Job`, and which rows the reports
need (:class:`Rows`)."""

from __future__ import annotations

from dataclasses import dataclass
from enum import Enum

from modelcheck.core.model import ForceOptions


class Rows(Enum):
    """What the reports need of a model's results."""

    TABLE = "table"           # the results table; every report encodes what it needs from it
    JSON = "json"             # also the JSON report's rows, encoded where the work runs
    JSON_ONLY = "json-only"   # the JSON rows are the only report: of the table, the statuses alone


@dataclass(frozen=True)
class Job:
    """The check to run on each model (picklable: it goes to worker processes and clusters)."""

    ruleset_ref: str                  # the rule set's file (``RuleSet.path``)
    forces: ForceOptions
    validate: bool = False            # --validate: schema-validation findings as warnings
    units: str = "model"              # results shown in "SI", "US" or each model's own system
    rows: Rows = Rows.TABLE
