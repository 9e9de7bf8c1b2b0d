"""Open a model and walk its relationships once into plain maps.

``build_index(path)`` is the only place that opens an IFC file for reading. Every later stage
(members, forces, annotation) asks these maps instead of asking each element for its inverses:
a relation entity is visited once, whatever the number of elements it relates.

Example::

    idx = build_index("sample_models/nettlebrook-hall.ifc")
    idx.units.factor("LENGTHUNIT")      # metres per file length unit
    idx.psets_of[element.id()]         # its property sets and quantity sets (occurrence only)
    property_si(idx, pset_prop)        # a property's value in SI base units, by the file's units
"""

from __future__ import annotations

import math
import os
import re
import zipfile
import zlib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import ifcopenshell

from modelcheck.errors import ModelReadError
from modelcheck.files import input_file
from modelcheck.units import (
    MEASURE_UNIT_TYPE,
    UNITLESS_MEASURES,
    MissingUnit,
    UnitContext,
    UnitDefinitionError,
    unit_label,
    unit_quantity,
)

SUPPORTED_SCHEMAS = ("IFC2X3", "IFC4", "IFC4X3")


@dataclass
class ModelIndex:
    """One opened model and the maps of its relationships (built once, then read only)."""

    path: str
    file: Any
    schema: str
    units: UnitContext
    type_of: dict[int, Any] = field(default_factory=dict)          # occurrence id -> type object
    psets_of: dict[int, list[Any]] = field(default_factory=dict)   # object id -> psets / qsets
    material_of: dict[int, Any] = field(default_factory=dict)      # object id -> material select
    storey_of: dict[int, Any] = field(default_factory=dict)        # element id -> spatial structure
    assigned_to: dict[int, list[Any]] = field(default_factory=dict)  # product id -> assigned objects
    material_props: dict[int, list[Any]] = field(default_factory=dict)  # material id -> property entities
    profile_props: dict[int, list[Any]] = field(default_factory=dict)   # profile id -> property entities
    object_profile_props: dict[int, list[Any]] = field(default_factory=dict)  # IFC2X3: element id -> profile props
    parse_log: list[str] = field(default_factory=list)  # ifcopenshell's parser log, as drained
    file_fds: tuple[int, ...] = ()   # descriptors the (lazily reading) parser keeps open on the file

    @property
    def parse_problems(self) -> tuple[str, ...]:
        """What ifcopenshell's parser logged while reading the file, one line each with its line."""
        return _parser_problems(Path(self.path), "".join(self.parse_log))

    def drain_log(self) -> bool:
        """Take what the parser logged since the last call (the file is parsed lazily: an entity
        is parsed when first read); True when it logged something."""
        text = ifcopenshell.get_log()
        if text and text.strip():
            self.parse_log.append(text)
            return True
        return False

    def explain(self, exc: BaseException) -> str:
        """An ifcopenshell error about the file's text, with its byte offset turned into a line."""
        return explain_parse_error(self.path, exc)

    def type_psets(self, typ: Any) -> list[Any]:
        return list(typ.HasPropertySets or ()) if typ is not None else []


def open_model(path: str | os.PathLike[str]) -> Any:
    """``ifcopenshell.open`` with every way a file can be broken turned into one clear error."""
    return open_model_checked(path)[0]


def open_model_checked(path: str | os.PathLike[str]) -> tuple[Any, tuple[str, ...]]:
    """``open_model``, and what the parser logged on the way (text it skipped, instances with
    attributes missing), one line each naming the file's line where the parser gives an offset."""
    model, log, _ = _open(path)
    return model, _parser_problems(Path(path), log)


def _fds_on(p: Path) -> tuple[int, ...]:
    """This process's open descriptors on file ``p`` (Linux; () elsewhere)."""
    try:
        st = p.stat()
        names = os.listdir("/proc/self/fd")
    except OSError:  # no /proc: not Linux; such systems do not share a model among processes
        return ()
    out = []
    for name in names:
        try:
            s = os.fstat(int(name))
        except (OSError, ValueError):
            continue
        if (s.st_dev, s.st_ino) == (st.st_dev, st.st_ino):
            out.append(int(name))
    return tuple(sorted(out))


def _open(path: str | os.PathLike[str]) -> tuple[Any, str, tuple[int, ...]]:
    """The opened model, the parser's raw log of the open and the descriptors it keeps open.

    The model is opened lazily (``ifcopenshell.open(..., lazy=True)``): one quick indexing pass,
    and each entity parsed when it is first read. A checker reads a small part of a model's
    entities (none of its placements, styles or most of its geometry), so this is where it saves
    most of the open's time and memory. The price: a syntax error inside an entity shows when
    that entity is read, as a RuntimeError naming its byte offset (see ``explain_parse_error``).
    """
    p = input_file(path, ModelReadError, "an IFC file")
    name = str(path)
    size = p.stat().st_size
    if size == 0:
        raise ModelReadError("empty file, not an IFC model", path=name)
    with open(p, "rb") as fh:
        head = fh.read(64)
    if zipfile.is_zipfile(p):
        if p.suffix.lower() != ".ifczip":
            raise ModelReadError("is a zip archive, not an IFC model (rename to .ifczip if it holds one)", path=name)
        tail = _zipped_model_tail(p)
        if tail is not None and b"END-ISO-10303-21" not in tail:
            raise ModelReadError("the model in the zip archive is truncated or empty: it does not end with "
                                 "END-ISO-10303-21;", path=name)
    elif not head.lstrip().startswith(b"ISO-10303-21"):
        if head.lstrip().startswith(b"<"):
            raise ModelReadError("is XML; only IFC-SPF (.ifc) and .ifczip are read", path=name)
        raise ModelReadError("not an IFC-SPF file (it does not start with ISO-10303-21)", path=name)
    if not zipfile.is_zipfile(p):
        with open(p, "rb") as fh:
            fh.seek(max(0, size - 256))
            tail = fh.read()
        if b"END-ISO-10303-21" not in tail:
            raise ModelReadError("file is truncated: it does not end with END-ISO-10303-21;", path=name)
    ifcopenshell.get_log()  # drop what earlier opens in this process left in the parser's log
    try:
        model = ifcopenshell.open(str(p), lazy=True)
    except (ifcopenshell.Error, RuntimeError, OSError, ValueError, UnicodeDecodeError, LookupError) as exc:
        text = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        logged = _parser_messages(p, ifcopenshell.get_log())
        if logged:  # "Syntax error during parse, check logs": say what the log says, and where
            line, msg = logged[0]
            text = text.removesuffix(", check logs") + (f" at line {line}" if line else "") + f": {msg}"
        raise ModelReadError(f"cannot be parsed as IFC: {text}", path=name) from None
    schema = _schema_of(model)
    if schema not in SUPPORTED_SCHEMAS:
        raise ModelReadError(f"schema {model.schema!r} is not supported (IFC2X3, IFC4, IFC4X3)", path=name)
    return model, ifcopenshell.get_log(), _fds_on(p)


def explain_parse_error(path: str | os.PathLike[str], exc: BaseException) -> str:
    """``str(exc)`` with ifcopenshell's 'at offset N' turned into 'at line L' of a plain IFC-SPF file."""
    text = " ".join(str(exc).split()) or type(exc).__name__
    m = re.search(r"\bat offset (\d+)", text)
    if m is None:
        return text
    p = Path(path)
    try:
        if zipfile.is_zipfile(p):
            return text
        offset = int(m.group(1))
        with open(p, "rb") as fh:
            line = fh.read(offset).count(b"\n") + 1
    except OSError:
        return text
    text = text[:m.start()] + f"at line {line}" + text[m.end():]
    return text.replace("invalid valid token", "is not a valid token")


def is_parse_error(exc: BaseException) -> bool:
    """Whether an ifcopenshell RuntimeError is the lazy parser meeting text that is not IFC-SPF."""
    return isinstance(exc, RuntimeError) and re.search(r"\bat offset \d+", str(exc)) is not None


def raise_if_parse_error(path: str | os.PathLike[str], exc: BaseException) -> None:
    """A syntax error found while reading an entity makes the whole model unreadable, as it would
    have at the open had the file been parsed eagerly: one line naming the file and its line."""
    if is_parse_error(exc):
        raise ModelReadError(f"cannot be parsed as IFC: {explain_parse_error(path, exc)}", path=str(path)) from None


def _zipped_model_tail(p: Path) -> bytes | None:
    """The last bytes of the IFC-SPF file in a zip (the one ifcopenshell.open would read), or None."""
    try:
        with zipfile.ZipFile(p) as zf:
            name = next((n for n in zf.namelist() if Path(n).suffix.lower() in (".ifc", ".ifcxml")), None)
            if name is None or Path(name).suffix.lower() != ".ifc":
                return None  # no model in it, or ifcXML: ifcopenshell.open says so
            tail = b""
            with zf.open(name) as fh:
                while chunk := fh.read(1 << 20):
                    tail = (tail + chunk)[-256:]
            return tail
    except (zipfile.BadZipFile, zlib.error, OSError, EOFError, NotImplementedError) as exc:
        raise ModelReadError(f"the zip archive cannot be read: {exc}", path=str(p)) from None


_LOG_LINE = re.compile(r"^\[(?:error|warning)\]\s+(?:\[[A-Z]+\d*\]\s+)?\[[^\]]*\]\s*(?P<msg>\S.*)$")
_LOG_LIMIT = 10


def _parser_messages(p: Path, log: str, limit: int = _LOG_LIMIT) -> list[tuple[int | None, str]]:
    """(line, message) of the first ``limit`` messages in ifcopenshell's parser log; the line where
    the message gives a byte offset into a plain IFC-SPF file."""
    msgs = [m["msg"] for ln in log.splitlines() if (m := _LOG_LINE.match(ln.strip()))][:limit]
    offsets = [int(m.group(1)) if (m := re.search(r"at offset (\d+)", s)) else None for s in msgs]
    lines: dict[int, int] = {}
    wanted = sorted({o for o in offsets if o is not None})
    if wanted and not zipfile.is_zipfile(p):
        with open(p, "rb") as fh:
            data = fh.read(wanted[-1])
        lines = {o: data.count(b"\n", 0, o) + 1 for o in wanted}
    return [(lines.get(o) if o is not None else None, s) for s, o in zip(msgs, offsets, strict=True)]


def _parser_problems(p: Path, log: str) -> tuple[str, ...]:
    """ifcopenshell's parser log as model warnings: 'file:line: IFC parser: message'."""
    total = sum(1 for ln in log.splitlines() if _LOG_LINE.match(ln.strip()))
    out = [f"{p}:{line}: IFC parser: {msg}" if line else f"{p}: IFC parser: {msg}"
           for line, msg in _parser_messages(p, log)]
    if total > len(out):
        out.append(f"{p}: IFC parser: {total - len(out)} more message(s)")
    return tuple(out)


def _schema_of(model: Any) -> str:
    s = str(getattr(model, "schema_identifier", None) or model.schema).upper()
    if s.startswith("IFC4X3"):
        return "IFC4X3"
    if s.startswith("IFC2X3"):
        return "IFC2X3"
    if s.startswith("IFC4"):
        return "IFC4"
    return s


def build_index(path: str | os.PathLike[str], model: Any = None) -> ModelIndex:
    """Open ``path`` (unless ``model`` is given) and walk its relationships once."""
    log, fds = "", ()
    if model is None:
        model, log, fds = _open(path)
    schema = _schema_of(model)
    try:
        units = UnitContext.from_model(model)
    except (UnitDefinitionError, AttributeError, RuntimeError, TypeError, ValueError, ArithmeticError) as exc:
        raise ModelReadError(f"unit assignment cannot be read: {explain_parse_error(path, exc)}{_VALIDATE_HINT}",
                             path=str(path)) from None
    idx = ModelIndex(path=str(path), file=model, schema=schema, units=units, parse_log=[log] if log else [],
                     file_fds=fds)
    try:
        _walk(model, idx)
    except RuntimeError as exc:  # dangling reference or unparsable instance deep in the file
        raise_if_parse_error(path, exc)
        raise ModelReadError(f"broken relationship in the model: {explain_parse_error(path, exc)}",
                             path=str(path)) from None
    except (AttributeError, TypeError) as exc:  # a relationship holding a value of the wrong type
        raise ModelReadError(f"broken relationship in the model: {type(exc).__name__}: {exc}{_VALIDATE_HINT}",
                             path=str(path)) from None
    idx.drain_log()
    return idx


#: ifcopenshell reads values the schema forbids as they are; the validator names each one
_VALIDATE_HINT = " ('modelcheck check --validate' lists where the file breaks the IFC schema)"


def _walk(model: Any, idx: ModelIndex) -> None:
    for rel in model.by_type("IfcRelDefinesByType"):
        typ = rel.RelatingType
        for obj in rel.RelatedObjects or ():
            idx.type_of[obj.id()] = typ
    for rel in model.by_type("IfcRelDefinesByProperties"):
        pdef = rel.RelatingPropertyDefinition
        pdefs = [d for d in (pdef if isinstance(pdef, tuple) else (pdef,)) if d is not None]  # None: dangling
        for obj in rel.RelatedObjects or ():
            idx.psets_of.setdefault(obj.id(), []).extend(pdefs)
    for rel in model.by_type("IfcRelAssociatesMaterial"):
        mat = rel.RelatingMaterial
        for obj in rel.RelatedObjects or ():
            idx.material_of[obj.id()] = mat
    for rel in model.by_type("IfcRelContainedInSpatialStructure"):
        st = rel.RelatingStructure
        for el in rel.RelatedElements or ():
            idx.storey_of[el.id()] = st
    for rel in model.by_type("IfcRelAssignsToProduct"):
        prod = rel.RelatingProduct
        if prod is not None:
            idx.assigned_to.setdefault(prod.id(), []).extend(rel.RelatedObjects or ())
    for mp in model.by_type("IfcMaterialProperties"):  # IFC2X3 mechanical subtypes included
        mat = getattr(mp, "Material", None)
        if mat is not None:
            idx.material_props.setdefault(mat.id(), []).append(mp)
    if idx.schema != "IFC2X3":
        for pp in model.by_type("IfcProfileProperties"):
            prof = pp.ProfileDefinition
            if prof is not None:
                idx.profile_props.setdefault(prof.id(), []).append(pp)
    else:
        for pp in model.by_type("IfcProfileProperties"):
            prof = getattr(pp, "ProfileDefinition", None)
            if prof is not None:
                idx.profile_props.setdefault(prof.id(), []).append(pp)
        for rel in model.by_type("IfcRelAssociatesProfileProperties"):
            pp = rel.RelatingProfileProperties
            for obj in rel.RelatedObjects or ():
                idx.object_profile_props.setdefault(obj.id(), []).append(pp)


@dataclass(frozen=True)
class SIValue:
    value: float       # in SI base units
    raw: float         # as written
    unit: str          # the file's unit label for it
    measure: str       # IFC measure type


def measure_si(idx: ModelIndex, measure: str, raw: float, unit_entity: Any = None) -> SIValue:
    """A raw number of IFC measure type ``measure`` in SI base units.

    A unit on the property itself wins over the project's assignment. Raises MissingUnit when
    neither states one (never assumed).
    """
    if unit_entity is not None:
        try:
            q = unit_quantity(unit_entity)
        except UnitDefinitionError as exc:
            raise MissingUnit(f"usable unit ({exc})") from None
        return SIValue(float(raw) * float(q.to_base_units().magnitude), float(raw),
                       unit_label(unit_entity), measure)
    if measure in UNITLESS_MEASURES:
        return SIValue(float(raw), float(raw), "", measure)
    unit_type = MEASURE_UNIT_TYPE.get(measure)
    if unit_type is None:
        raise MissingUnit(f"unit for {measure}")
    return SIValue(float(raw) * idx.units.factor(unit_type), float(raw), idx.units.label(unit_type), measure)


def property_si(idx: ModelIndex, prop: Any) -> SIValue | None:
    """An IfcPropertySingleValue's NominalValue in SI (None when it has none)."""
    nv = getattr(prop, "NominalValue", None)
    if nv is None or not hasattr(nv, "wrappedValue"):  # none, or no typed value (which the schema requires)
        return None
    raw = nv.wrappedValue
    if isinstance(raw, bool) or not isinstance(raw, int | float):
        return None
    unit = getattr(prop, "Unit", None)
    if unit is not None and not hasattr(unit, "is_a"):
        raise MissingUnit(f"usable unit (the property's Unit is {unit!r})")
    return measure_si(idx, nv.is_a(), float(raw), unit)


def find_property(psets: list[Any], pset_name: str, prop_name: str) -> Any:
    """The named property in the named set among ``psets`` (case-sensitive names), or None."""
    for ps in psets:
        if ps.is_a("IfcPropertySet") and ps.Name == pset_name:
            for p in ps.HasProperties or ():
                if p.Name == prop_name:
                    return p
    return None


def find_quantity(psets: list[Any], prop_name: str, prefix: str = "Qto_") -> tuple[Any, Any]:
    """(quantity set, quantity) named ``prop_name`` in any set whose name starts with ``prefix``."""
    for ps in psets:
        if ps.is_a("IfcElementQuantity") and (ps.Name or "").startswith(prefix):
            for q in ps.Quantities or ():
                if q.Name == prop_name:
                    return ps, q
    return None, None


def finite_positive(x: float) -> bool:
    return math.isfinite(x) and x > 0
