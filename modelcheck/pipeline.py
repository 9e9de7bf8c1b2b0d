"""The pipeline as plain function calls: model file -> members -> + forces -> results.

Only ``read_model`` touches a model file and only the reporters write; everything in between is
DataFrames in SI. ``check_model`` is what one batch worker runs for one model, so it takes and
returns picklable values only.
"""

from __future__ import annotations

import glob
import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import pandas as pd

from modelcheck.errors import ModelcheckError, UsageError
from modelcheck.table import empty_forces

IFC_SUFFIXES = (".ifc", ".ifczip")


@dataclass
class ModelData:
    """Everything read from one model (or why it could not be read)."""

    path: str
    schema: str | None = None
    error: str | None = None
    system: str = "SI"                       # display units natural to the model
    members: pd.DataFrame | None = None
    forces: pd.DataFrame = field(default_factory=empty_forces)
    matched_rows: set[str] = field(default_factory=set)   # load-table row sources used here
    force_messages: list[str] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)      # model-level warnings
    validation: list[str] = field(default_factory=list)    # schema validation findings (--validate)


@dataclass(frozen=True)
class ForceOptions:
    tables: tuple[pd.DataFrame, ...] = ()
    property: tuple[str, str] | None = None   # (pset, property)
    analysis: bool = True


def expand_paths(items: list[str]) -> list[str]:
    """Model files from files, folders (searched recursively) and glob patterns, sorted, unique."""
    out: list[str] = []
    for item in items:
        if any(ch in item for ch in "*?["):
            hits = sorted(glob.glob(item, recursive=True))
            if not hits:
                raise UsageError(f"pattern {item!r} matches no file")
            out += [h for h in hits if os.path.isfile(h)]
        elif os.path.isdir(item):
            found = sorted(str(p) for p in Path(item).rglob("*") if p.suffix.lower() in IFC_SUFFIXES)
            if not found:
                raise UsageError(f"folder {item!r} holds no .ifc or .ifczip file")
            out += found
        else:
            out.append(item)
    seen: set[str] = set()
    return [p for p in out if not (p in seen or seen.add(p))]


def read_model(path: str, forces: ForceOptions | None = None, *, validate: bool = False) -> ModelData:
    """Read one model into a ModelData; a model that cannot be read gets ``error`` set."""
    from modelcheck.ifc.index import build_index
    from modelcheck.ifc.reader import read_members
    from modelcheck.report.quantities import system_for_model

    data = ModelData(path=path)
    try:
        idx = build_index(path)
    except ModelcheckError as exc:
        data.error = str(exc)
        return data
    data.schema = idx.schema
    data.system = system_for_model(idx)
    if validate:
        data.validation = validate_model(idx)
    data.members = read_members(idx)
    data.warnings = list(data.members.attrs.get("model_warnings", []))
    if forces is not None:
        attach_forces(data, idx, forces)
    return data


def attach_forces(data: ModelData, idx: Any, opts: ForceOptions) -> None:
    """Join the forces of every route onto one model's members (precedence in loads.join)."""
    from modelcheck.loads import join

    result = join.forces_for_model(idx, data.members, list(opts.tables), opts.property, opts.analysis)
    data.forces = result.forces
    data.matched_rows = set(result.matched_rows)
    data.force_messages = list(result.messages)


def validate_model(idx: Any) -> list[str]:
    """Schema-validation findings of ifcopenshell's own validator, one line each."""
    import logging

    import ifcopenshell.validate

    class _Collect(logging.Handler):
        def __init__(self) -> None:
            super().__init__()
            self.lines: list[str] = []

        def emit(self, record: logging.LogRecord) -> None:
            msg = record.getMessage().strip().splitlines()
            if msg:
                self.lines.append(msg[0][:300])

    logger = logging.getLogger("modelcheck.validate")
    logger.propagate = False
    handler = _Collect()
    logger.addHandler(handler)
    logger.setLevel(logging.INFO)
    try:
        ifcopenshell.validate.validate(idx.file, logger)
    finally:
        logger.removeHandler(handler)
    return [f"{idx.path}: {line}" for line in handler.lines]
