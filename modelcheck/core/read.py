"""Reading one model: open it, describe it (schema, display system, validation findings), read
its members and join their forces. A model that cannot be read gets ``error`` set, never a
traceback; the other models go on."""

from __future__ import annotations

import glob
import os
from pathlib import Path
from typing import TYPE_CHECKING, Any

from modelcheck.common.errors import ModelcheckError, UsageError
from modelcheck.common.table import empty_forces
from modelcheck.core.forces import attach_forces
from modelcheck.core.model import ForceOptions, ModelData

if TYPE_CHECKING:
    from modelcheck.ifc.index import ModelIndex

IFC_SUFFIXES = (".ifc", ".ifczip")


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
    from modelcheck.common.timing import stage

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


