"""Open a model and walk its relationships once into plain maps.

``build_index(path)`` is the only place that opens an IFC file for reading. Every later stage
(members, forces, annotation) asks these maps instead of asking each element for its inverses:
a relation entity is visited once, whatever the number of elements it relates.

Example::

    idx = build_index("sample_models/nettlebrook-hall.ifc")
    idx.units.factor("LENGTHUNIT")      # metres per file length unit
    idx.psets_named(element.id(), "Pset_MemberCommon")   # its sets of that name (occurrence only)
    property_si(idx, pset_prop)        # a property's value in SI base units, by the file's units
"""

from __future__ import annotations

import os
import re
from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import ifcopenshell

from modelcheck.common.errors import ModelReadError
from modelcheck.common.units import (
    MEASURE_UNIT_TYPE,
    UNITLESS_MEASURES,
    MissingUnit,
    UnitContext,
    UnitDefinitionError,
    UnusableOwnUnit,
    check_dimension,
    pint,
    unit_label,
    unit_quantity,
)
from modelcheck.ifc.opening import (  # noqa: F401  (re-exported: the index is where a model is opened)
    SUPPORTED_SCHEMAS,
    _open,
    _parser_problems,
    _schema_of,
    explain_parse_error,
    is_parse_error,
    open_model,
    open_model_checked,
    raise_if_parse_error,
)


@dataclass
class ModelIndex:
    """One opened model and the maps of its relationships (built once, then read only)."""

    path: str
    file: Any
    schema: str
    units: UnitContext
    type_of: dict[int, Any] = field(default_factory=dict)          # occurrence id -> type object
    psets_of: dict[int, list[int]] = field(default_factory=dict)   # object id -> ids of its psets / qsets
    material_of: dict[int, Any] = field(default_factory=dict)      # object id -> material select
    storey_of: dict[int, Any] = field(default_factory=dict)        # element id -> spatial structure
    assigned_to: dict[int, list[Any]] = field(default_factory=dict)  # product id -> assigned objects
    material_props: dict[int, list[Any]] = field(default_factory=dict)  # material id -> property entities
    profile_props: dict[int, list[Any]] = field(default_factory=dict)   # profile id -> property entities
    object_profile_props: dict[int, list[Any]] = field(default_factory=dict)  # IFC2X3: element id -> profile props
    parse_log: list[str] = field(default_factory=list)  # ifcopenshell's parser log, as drained
    file_fds: tuple[int, ...] = ()   # descriptors the (lazily reading) parser keeps open on the file
    _sets: dict[int, tuple[Any, str | None]] = field(default_factory=dict)  # set id -> (entity, Name)

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

    def _set(self, sid: int) -> tuple[Any, str | None]:
        """(entity, Name) of property or quantity set ``sid``, read when first asked for: a set is
        read only when a member's check needs it, and in the process that checks that member.
        (None, None) for a dangling reference."""
        hit = self._sets.get(sid)
        if hit is None:
            try:
                ent = self.file.by_id(sid)
            except RuntimeError as exc:
                raise_if_parse_error(self.path, exc)
                ent = None   # no such instance: a dangling reference, as if the set were not there
            name = None
            if ent is not None and ent.is_a("IfcRoot"):   # a set; anything else related here is not one
                name = ent.get_argument(2)   # IfcRoot.Name
            hit = self._sets[sid] = (ent, name if isinstance(name, str) else None)
        return hit

    def psets_named(self, eid: int, name: str) -> list[Any]:
        """The property or quantity sets called ``name`` of object ``eid`` (occurrence only)."""
        return [ent for ent, n in self.named_sets(eid) if n == name] if eid in self.psets_of else []

    def named_sets(self, eid: int) -> list[tuple[Any, str | None]]:
        """(entity, Name) of each property or quantity set of object ``eid`` (occurrence only), in
        the order the walk met them; for a caller that looks for several names at once."""
        sets = self._sets
        out = []
        for sid in self.psets_of.get(eid, ()):
            hit = sets.get(sid)
            out.append(hit if hit is not None else self._set(sid))
        return out

    def type_psets(self, typ: Any) -> list[Any]:
        return list(typ.HasPropertySets or ()) if typ is not None else []


def build_index(path: str | os.PathLike[str], model: Any = None) -> ModelIndex:
    """Open ``path`` (unless ``model`` is given) and walk its relationships once."""
    log, fds = "", tuple[int, ...]()
    if model is None:
        model, log, fds = _open(path)
    schema = _schema_of(model)
    try:
        units = UnitContext.from_model(model)
    except (UnitDefinitionError, AttributeError, RuntimeError, TypeError, ValueError, ArithmeticError) as exc:
        raise ModelReadError(f"unit assignment cannot be read: {explain_parse_error(path, exc)}{_VALIDATE_HINT}",
                             path=str(path)) from None
    if "LENGTHUNIT" in units.broken:   # every section and length of the model depends on it
        raise ModelReadError(f"the unit assignment's LENGTHUNIT cannot be used: {units.broken['LENGTHUNIT']}",
                             path=str(path))
    idx = ModelIndex(path=str(path), file=model, schema=schema, units=units, parse_log=[log] if log else [],
                     file_fds=fds)
    _guarded(path, _walk, model, idx)
    idx.drain_log()
    return idx


def _guarded(path: str | os.PathLike[str], walk: Any, *args: Any) -> None:
    """``walk(*args)`` with what a broken relationship raises turned into one clear error."""
    try:
        walk(*args)
    except RuntimeError as exc:  # dangling reference or unparsable instance deep in the file
        raise_if_parse_error(path, exc)
        raise ModelReadError(f"broken relationship in the model: {explain_parse_error(path, exc)}",
                             path=str(path)) from None
    except (AttributeError, TypeError) as exc:  # a relationship holding a value of the wrong type
        raise ModelReadError(f"broken relationship in the model: {type(exc).__name__}: {exc}{_VALIDATE_HINT}",
                             path=str(path)) from None


#: ifcopenshell reads values the schema forbids as they are; the validator names each one
_VALIDATE_HINT = " ('modelcheck check --validate' lists where the file breaks the IFC schema)"


def unreadable_model(path: str, exc: BaseException) -> str:
    """The error of a model whose data broke a reader after it opened: a syntax error met while
    parsing lazily (with its line), or a value the schema does not allow."""
    if is_parse_error(exc):
        return f"{path}: cannot be parsed as IFC: {explain_parse_error(path, exc)}"
    return f"{path}: cannot be read: a value the IFC schema does not allow ({type(exc).__name__}: {exc}){_VALIDATE_HINT}"


#: the end of a relationship's text whose last two attributes are its list of related objects and
#: the relating one: "…,(#1,#2,#3),#9)"
_RELATED_TAIL = re.compile(r",\((#\d+(?:,#\d+)*)\),#(\d+)\)$")


def _related_ids(rel: Any) -> list[int]:
    """Entity ids of attribute 4 (RelatedObjects / RelatedElements) of a relationship whose
    relating object is its last attribute, read from the relationship's STEP text: a type or a
    storey may relate tens of thousands of elements, and making an entity object for each only to
    ask its id is most of the walk's time. Any other shape of text: read the usual way."""
    m = _RELATED_TAIL.search(rel.to_string())
    if m is None:
        return [obj.id() for obj in rel.get_argument(4) or ()]
    return [int(x) for x in m.group(1).replace("#", "").split(",")]


def _walk(model: Any, idx: ModelIndex) -> None:
    for rel in model.by_type("IfcRelDefinesByType"):
        typ = rel.get_argument(5)   # RelatingType
        for oid in _related_ids(rel):
            idx.type_of[oid] = typ
    _walk_property_sets(model, idx.psets_of)
    _walk_the_rest(model, idx)


def _walk_property_sets(model: Any, psets: dict[int, list[int]]) -> None:
    for rel in model.by_type("IfcRelDefinesByProperties"):
        # the sets are named by id here and read when a member needs them (``ModelIndex._set``):
        # a model often has a set per element, and reading each one is most of a walk's time
        m = _RELATED_TAIL.search(rel.to_string())
        if m is not None:
            sids = [int(m.group(2))]
            ids = [int(x) for x in m.group(1).replace("#", "").split(",")]
        else:   # a set of definitions (IFC4), a dangling reference or an unusual text: read as usual
            pdef = rel.get_argument(5)   # RelatingPropertyDefinition (the same place in every schema)
            pdefs = [d for d in (pdef if isinstance(pdef, tuple) else (pdef,)) if d is not None]
            sids = [d.id() for d in pdefs if hasattr(d, "id")]
            ids = [obj.id() for obj in rel.get_argument(4) or ()]   # RelatedObjects
        for oid in ids:
            psets.setdefault(oid, []).extend(sids)


def _walk_the_rest(model: Any, idx: ModelIndex) -> None:
    for rel in model.by_type("IfcRelAssociatesMaterial"):
        mat = rel.get_argument(5)   # RelatingMaterial
        for oid in _related_ids(rel):
            idx.material_of[oid] = mat
    for rel in model.by_type("IfcRelContainedInSpatialStructure"):
        st = rel.get_argument(5)   # RelatingStructure
        for oid in _related_ids(rel):
            idx.storey_of[oid] = st
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
            check_dimension(MEASURE_UNIT_TYPE.get(measure, ""), q)
        except (UnitDefinitionError, pint.PintError) as exc:
            raise UnusableOwnUnit(f"#{unit_entity.id()}: {exc}") from None
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
        raise UnusableOwnUnit(f"the property's Unit is {unit!r}, not a unit entity")
    return measure_si(idx, nv.is_a(), float(raw), unit)


def find_property(psets: Iterable[Any], pset_name: str, prop_name: str, *, named: bool = False) -> Any:
    """The property ``prop_name`` of the first property set called ``pset_name`` among ``psets``
    that holds one (case-sensitive names), or None: the one look-up of a property by set and
    property name (the reader's net section, the force route's property).

    ``named``: every set of ``psets`` is already known to be called ``pset_name``
    (``ModelIndex.psets_named``)."""
    return property_with(psets, pset_name, prop_name, named=named)[0]


def property_with(psets: Iterable[Any], pset_name: str, prop_name: str, beside: str | None = None, *,
                  named: bool = False) -> tuple[Any, list[Any]]:
    """``find_property``, and the properties called ``beside`` in the set it was found in
    (empty where there is none, or no property was found).

    Attributes are read by position (IfcPropertySet: Name 2, HasProperties 4; IfcProperty: Name
    0, the same in every schema): several times faster than by name."""
    for ps in psets:
        if ps.is_a("IfcPropertySet") and (named or ps.get_argument(2) == pset_name):
            found = None
            near: list[Any] = []
            for p in ps.get_argument(4) or ():
                pname = p.get_argument(0)
                if pname == prop_name:
                    if found is None:
                        found = p
                elif beside is not None and pname == beside:
                    near.append(p)
            if found is not None:
                return found, near
    return None, []
