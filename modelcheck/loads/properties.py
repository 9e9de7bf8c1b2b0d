"""Axial forces written into the model as a property (typical for hanger loads from the MEP trade).

The user names the property as ``PsetName.PropName`` (the sample models use
``MC_MemberForces.AxialForce``; ``Pset_`` names are buildingSMART's and not used for this).
For each member:

1. the property on the occurrence (IfcRelDefinesByProperties) wins; else
2. the property inherited from its type object (IfcTypeObject.HasPropertySets); else
3. the member gets no force from this route (the join reports it as missing).

The value must be an IfcPropertySingleValue. Its unit is the property's own ``Unit`` when it
has one (it must be a force), else the project's FORCEUNIT for an ``IfcForceMeasure``. A value
whose unit neither states — no FORCEUNIT in the model, or a plain ``IfcReal`` — gives no force
and a message: a unit is never assumed. A text value (``IfcLabel``/``IfcText``) such as
``'12.5 kN'`` is read with the load-table unit rules. Sign: tension positive, as everywhere.

Example::

    idx = build_index("sample_models/hangers.ifc")
    forces, messages = forces_from_property(idx, members, "MC_MemberForces", "AxialForce")
    forces.source  # "MC_MemberForces.AxialForce (occurrence)" / "… (type HR-M16 hanger)"
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any

import ifcopenshell
import numpy as np
import pandas as pd
import pint

from modelcheck.common.table import FORCE_COLUMNS, empty_forces, frame_of
from modelcheck.common.units import (
    MissingUnit,
    UnitDefinitionError,
    UnusableUnit,
    parse_number,
    unit_label,
    unit_quantity,
    ureg,
)
from modelcheck.ifc.index import ModelIndex, property_with
from modelcheck.loads.messages import MessageLog
from modelcheck.loads.tables import DEFAULT_LOAD_CASE, VALUE_RE, ForceUnitError, force_unit_factor

_NUMBER_UNIT = re.compile(VALUE_RE)   # a number and its unit, as a load table's cell is read
_TEXT_MEASURES = frozenset({"IfcLabel", "IfcText", "IfcIdentifier"})
_UNITLESS_NUMBERS = frozenset({"IfcReal", "IfcNumericMeasure", "IfcInteger", "IfcPositiveInteger",
                               "IfcCountMeasure"})


@dataclass(frozen=True)
class _Reading:
    """What one property entity says: a raw number and the key of its unit, or a problem."""

    raw: float = float("nan")
    unit_key: str = ""      # "FORCEUNIT", "#<unit entity id>" or "N" (already newtons)
    unit_label: str = ""
    problem: str = ""


def parse_property_name(text: str) -> tuple[str, str]:
    """'MC_MemberForces.AxialForce' -> ('MC_MemberForces', 'AxialForce'); ValueError if malformed.

    The split is at the last dot, so a property-set name may itself hold dots.
    """
    pset, dot, prop = text.strip().rpartition(".")
    if not dot or not pset.strip() or not prop.strip():
        raise ValueError(f"{text!r} is not 'PropertySetName.PropertyName'")
    return pset.strip(), prop.strip()


def forces_from_property(idx: ModelIndex, members: pd.DataFrame, pset_name: str, prop_name: str,
                         load_case: str | None = None, *,
                         log: MessageLog | None = None) -> tuple[pd.DataFrame, list[str]]:
    """Forces of this model's members from property ``pset_name.prop_name``.

    ``members`` is the member table (rows of other models are ignored: this model's rows are
    those whose ``model`` equals ``idx.path``). Returns the forces table (``FORCE_COLUMNS``,
    newtons, load case: a ``LoadCase`` label in the same property set, else ``load_case``, else
    ``'default'``) and messages for values that could not be
    used. Members without the property simply get no row. With ``log`` given, the messages go
    into it instead (the returned list is empty): a model checked in parts merges the parts' logs.
    """
    own_log = log is None
    case = load_case if load_case is not None else DEFAULT_LOAD_CASE
    label = f"{pset_name}.{prop_name}"
    if log is None:
        log = MessageLog(idx.path)
    sel = members["model"] == idx.path
    mine = members.loc[sel, "global_id"]
    # the reader's entity ids spare a by_guid look-up per member; tables built by hand lack them
    eids = (dict(zip(mine, members.loc[sel, "entity_id"], strict=True)) if "entity_id" in members.columns
            else {})
    f = idx.file
    type_cache: dict[int, tuple[Any, Any, str]] = {}   # id(type) -> (type, its property or None, origin)
    reading_cache: dict[int, _Reading] = {}
    gids: list[str] = []
    raws: list[float] = []
    keys: list[str] = []
    sources: list[str] = []
    cases: list[str] = []
    # a LoadCase label beside the force in the same property set names the case of that force
    prop_cases: dict[int, str] = {}

    def _find(psets: Any, pset: str, name: str, named: bool = False) -> Any:
        # ``named``: the sets are already those called ``pset``
        found, near = property_with(psets, pset, name, "LoadCase", named=named)
        if found is not None:
            label = None
            for p in near:   # IfcPropertySingleValue: NominalValue 2, in every schema
                if p.is_a("IfcPropertySingleValue") and p.get_argument(2) is not None:
                    label = str(p.get_argument(2).wrappedValue).strip() or None
            if label:
                prop_cases[found.id()] = label
        return found

    source_of: dict[str, str] = {}   # one source text per origin, shared by its rows
    for gid in mine.dropna().unique():
        eid = eids.get(gid)
        if eid is None:
            try:
                eid = f.by_guid(gid).id()
            except RuntimeError:
                log.add("is not in the model (no such GlobalId): no property read", gid)
                continue
        psets = idx.psets_named(eid, pset_name)
        prop = _find(psets, pset_name, prop_name, True) if psets else None
        origin = "occurrence"
        if prop is None:
            typ = idx.type_of.get(eid)
            if typ is None:
                continue
            hit = type_cache.get(id(typ))
            if hit is None or hit[0] is not typ:   # the entry keeps typ alive: its id stays its own
                tid = typ.id()
                found = _find(idx.type_psets(typ), pset_name, prop_name)
                hit = type_cache[id(typ)] = (typ, found, f"type {typ.Name}" if typ.Name else f"type #{tid}")
            _, prop, origin = hit
            if prop is None:
                continue
        raw = _plain_force(prop)
        pid = prop.id()
        if raw is not None:
            key = "FORCEUNIT"
        else:
            reading = reading_cache.get(pid)
            if reading is None:
                reading = reading_cache[pid] = _read(prop, idx)
            if reading.problem:
                log.add(f"{label} ({origin}): {reading.problem}; no force taken", gid)
                continue
            raw, key = reading.raw, reading.unit_key
        gids.append(gid)
        raws.append(raw)
        cases.append(prop_cases.get(pid, case))
        keys.append(key)
        sources.append(source_of.get(origin) or source_of.setdefault(origin, f"{label} ({origin})"))
    if not gids:
        return empty_forces(), log.messages() if own_log else []
    # unit factors: one per distinct unit, then one vectorised multiplication
    key_arr = np.asarray(keys, dtype=object)
    codes, uniques = pd.factorize(key_arr)
    factors = np.empty(len(uniques), dtype=float)
    usable = np.ones(len(uniques), dtype=bool)
    for k, key in enumerate(uniques):
        try:
            factors[k] = _factor(idx, key)
        except UnusableUnit as exc:
            usable[k] = False
            for gid in np.asarray(gids, dtype=object)[codes == k]:
                log.add(f"{label} is an IfcForceMeasure without its own unit, and {exc}; no force taken", gid)
        except MissingUnit:
            usable[k] = False
            for gid in np.asarray(gids, dtype=object)[codes == k]:
                log.add(f"{label} is an IfcForceMeasure without its own unit, and the model assigns no "
                        "FORCEUNIT; no force taken (the unit is never assumed)", gid)
    ok = usable[codes]
    forces = np.asarray(raws, dtype=float) * factors[codes]
    out = frame_of({
        "model": np.full(int(ok.sum()), idx.path, dtype=object),
        "global_id": np.asarray(gids, dtype=object)[ok],
        "load_case": np.asarray(cases, dtype=object)[ok],
        "axial_force": forces[ok],
        "source": np.asarray(sources, dtype=object)[ok],
    })[list(FORCE_COLUMNS)]
    return out, log.messages() if own_log else []


def _factor(idx: ModelIndex, key: str) -> float:
    if key == "N":
        return 1.0
    if key == "FORCEUNIT":
        return idx.units.factor("FORCEUNIT")
    return float(unit_quantity(idx.file.by_id(int(key[1:]))).to_base_units().magnitude)


def _plain_force(prop: Any) -> float | None:
    """The number of the common case, read directly: a single value holding a finite
    IfcForceMeasure with no unit of its own (in the model's FORCEUNIT). None for anything else
    (``_read`` then says what it holds)."""
    if prop.is_a() != "IfcPropertySingleValue" or prop.get_argument(3) is not None:   # Unit
        return None
    nv = prop.get_argument(2)   # NominalValue
    if not isinstance(nv, ifcopenshell.entity_instance) or nv.is_a() != "IfcForceMeasure":
        return None
    value = nv.get_argument(0)
    return value if type(value) is float and math.isfinite(value) else None


def _read(prop: Any, idx: ModelIndex) -> _Reading:
    """The raw number and unit key of one property entity (cached per entity)."""
    if not prop.is_a("IfcPropertySingleValue"):
        return _Reading(problem=f"is an {prop.is_a()}, not a single value")
    nv = prop.get_argument(2)   # NominalValue
    if nv is None:
        return _Reading(problem="has no value")
    try:   # a typed value (IfcForceMeasure(…)) is all the schema allows here
        measure = nv.is_a()
        value = nv.get_argument(0)   # wrappedValue
    except (AttributeError, TypeError, IndexError, RuntimeError):
        return _Reading(problem=f"holds {nv!r}, not a typed IFC value (the file breaks the IFC schema)")
    unit = prop.get_argument(3)   # Unit
    if unit is not None and not hasattr(unit, "is_a"):
        return _Reading(problem=f"its unit is {unit!r}, not a unit entity (the file breaks the IFC schema)")
    if measure in _TEXT_MEASURES:
        return _read_text(str(value))
    if isinstance(value, bool) or not isinstance(value, int | float):
        return _Reading(problem=f"is {measure} {value!r}, not a number")
    raw = float(value)
    if not np.isfinite(raw):
        return _Reading(problem=f"is {raw!r}, not a finite number")
    if unit is not None:
        try:
            q = unit_quantity(unit)
        except (UnitDefinitionError, pint.PintError) as exc:
            return _Reading(problem=f"its unit #{unit.id()} cannot be read ({exc})")
        if q.dimensionality != ureg.newton.dimensionality:
            return _Reading(problem=f"its unit {unit_label(unit)!r} is not a force")
        if measure not in ("IfcForceMeasure", *_UNITLESS_NUMBERS):
            return _Reading(problem=f"is an {measure}, not a force")
        return _Reading(raw=raw, unit_key=f"#{unit.id()}", unit_label=unit_label(unit))
    if measure == "IfcForceMeasure":
        return _Reading(raw=raw, unit_key="FORCEUNIT", unit_label=idx.units.label("FORCEUNIT"))
    if measure in _UNITLESS_NUMBERS:
        return _Reading(problem=f"is a plain {measure} with no unit; a force needs IfcForceMeasure "
                                "or a unit on the property")
    return _Reading(problem=f"is an {measure}, not a force")


def _read_text(text: str) -> _Reading:
    m = _NUMBER_UNIT.match(text)
    if m is None:
        return _Reading(problem=f"is the text {text!r}, not a force")
    if not m.group("unit"):
        return _Reading(problem=f"is the text {text!r}: a number with no unit")
    try:
        factor = force_unit_factor(m.group("unit"))
        number = float(parse_number(m.group("num")))
    except ForceUnitError as exc:
        return _Reading(problem=f"is the text {text!r}: {exc}")
    except (ZeroDivisionError, OverflowError):
        return _Reading(problem=f"is the text {text!r}: not a finite number")
    return _Reading(raw=number * factor, unit_key="N", unit_label=m.group("unit"))
