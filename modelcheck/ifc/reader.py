"""Turn every axial member of a model into one row of the member table (SI, with provenance).

Example::

    from modelcheck.ifc.index import build_index
    from modelcheck.ifc.reader import read_members
    members = read_members(build_index("sample_models/nettlebrook-hall.ifc")).frame
    members[["global_id", "area", "area_source", "length", "Fy"]]

What is read, in the order each source ranks (the first one present is used; every other one
present is compared with it and a disagreement beyond ``AREA_TOLERANCE`` / ``LENGTH_TOLERANCE``
becomes a warning on the member, both values named):

* section: IfcMaterialProfileSetUsage / IfcMaterialProfileSet on the occurrence, then on its
  type; the body (IfcExtrudedAreaSolid swept area, IfcSweptDiskSolid radii, also through
  IfcMappedItem and the first operand of clippings); the profile a profile-properties entity
  names (ProfileDefinition), then the area it states: Pset_ProfileMechanical on the profile or
  the element (IFC2X3: IfcStructuralProfileProperties); the quantity sets' CrossSectionArea.
* length: the Axis representation (any curve ``modelcheck.ifc.curves`` measures), the extrusion
  depth, the swept-disk directrix, the quantity sets' Length (a column's Height where there is
  no Length); last, NetVolume over the section's area, marked as derived.
* quantity sets rank Qto_* first, then BaseQuantities (IFC2X3 exports), then any other
  IfcElementQuantity; each quantity is taken from the first set that has it.
* an area read in a stated area unit (the file's AREAUNIT or the value's own unit) that is
  ``UNIT_CONTRADICTION`` times or more away from the area worked out from lengths, and that the
  outline bound does not already refuse, is not used: the member carries a warning with both
  values and both sources.
* material: on the occurrence (directly or via profile / layer / constituent sets and lists),
  else on its type. Its category and grade from IfcMaterial.Category and its name
  (``modelcheck.materials.names``; "unknown" when nothing recognises them). Mechanical values by the
  trade's property names (``MATERIAL_PROPERTIES``) from any material property set, buildingSMART's
  first (Pset_*, IFC2X3's IfcMechanical(Steel)MaterialProperties and IfcGeneralMaterialProperties),
  then the others (named after the material or the program) in file order; then a yield strength
  the name states; then the material library. Each value outside its category's plausible range
  is flagged and not used.

Each shared entity (profile, material, type, mapped representation) is computed once and cached
by entity id; the relationships come from the model index walked once.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from operator import itemgetter
from typing import Any, NamedTuple

import numpy as np
import pandas as pd

from modelcheck.common.table import frame_of, member_columns
from modelcheck.common.units import UNITLESS_MEASURES, MissingUnit, UnusableOwnUnit, UnusableUnit
from modelcheck.common.vocabulary import Shape
from modelcheck.ifc.curves import CurveError, curve_extent, edge_curve_length
from modelcheck.ifc.index import (
    ModelIndex,
    SIValue,
    find_property,
    measure_si,
    property_si,
    raise_if_parse_error,
)
from modelcheck.ifc.profiles import ProfileSection, UnsupportedProfile, section_of

#: classes that are always axial-member candidates (subtypes included)
MEMBER_CLASSES = ("IfcMember", "IfcColumn", "IfcBeam", "IfcTendon")
#: classes taken only when their body is a profile sweep
SWEEP_CLASSES = ("IfcBuildingElementProxy", "IfcDiscreteAccessory", "IfcFastener", "IfcMechanicalFastener")

#: where a member's net area (at holes or threads) is read: property set and property, our own
#: names (buildingSMART defines none for it), an IfcAreaMeasure on the occurrence or its type
NET_AREA_PROPERTY = ("MC_NetSection", "NetArea")
#: in the same set, the optional shear lag factor U (Ae = U An), a ratio 0 < U <= 1
SHEAR_LAG_PROPERTY = ("MC_NetSection", "ShearLagFactor")
_NET_SET = NET_AREA_PROPERTY[0]

#: bodies that sweep a profile along a directrix curve (the whole curve where no parameters trim it)
_DIRECTRIX_SWEEPS = frozenset({"IfcFixedReferenceSweptAreaSolid", "IfcSurfaceCurveSweptAreaSolid",
                               "IfcDirectrixCurveSweptAreaSolid"})
#: quantities read from a member's quantity sets: name -> (quantity class, measure, value attribute)
_QUANTITIES = {"CrossSectionArea": ("IfcQuantityArea", "IfcAreaMeasure", "AreaValue"),
               "Length": ("IfcQuantityLength", "IfcLengthMeasure", "LengthValue"),
               "Height": ("IfcQuantityLength", "IfcLengthMeasure", "LengthValue"),
               "NetVolume": ("IfcQuantityVolume", "IfcVolumeMeasure", "VolumeValue")}
#: classes whose Height quantity is their length (a column stands; a beam's Height is its depth)
_HEIGHT_IS_LENGTH = frozenset({"IfcColumn", "IfcColumnStandardCase"})
#: names of sets that are never quantity sets (buildingSMART's property sets, our own)
_NOT_QUANTITY_SETS = ("Pset_", "MC_")

#: two areas of one member this many times apart, one read in a stated area unit and one worked
#: out from lengths, mean the stated unit is not what the value means (two orders of magnitude:
#: cm² for mm² is 100, ft² for in² 144, m² for mm² a million)
UNIT_CONTRADICTION = 100.0
AREA_TOLERANCE = 0.02     # 2 % between two sources of the cross-section area
LENGTH_TOLERANCE = 0.05   # 5 % between two sources of the length (end cuts make axis ≠ body)
#: an axis or sweep path longer than the distance between its ends by more than this share is
#: curved (a bow of about 1/160 of the length: drawn so, not a straight member's tolerance)
STRAIGHTNESS = 1e-4
#: what a curved axis or sweep path adds to its length source
NOT_STRAIGHT = ", not straight"

#: plausible section and length bounds for an axial member (SI) — beyond them a value is doubted
#: (common practice: the thinnest rolled or drawn wall, the finest wire rope strand and the
#: shortest member anyone models lie well inside them)
MAX_SECTION_DIM = 2.0     # m: no rod, brace or post of these kinds is 2 m across
MIN_SECTION_DIM = 1e-4    # m (0.1 mm): no wall, flange or bar is thinner
MAX_LENGTH = 200.0        # m
MIN_LENGTH = 1e-3         # m (1 mm)
MIN_AREA = 1e-8           # m² (0.01 mm²)


@dataclass(frozen=True)
class Section:
    area: float
    r_min: float
    source: str
    name: str | None = None
    profile_type: str | None = None
    shape: str | None = None
    dims: dict[str, float] = field(default_factory=dict)
    r_source: str | None = None   # where r_min came from, when not from ``source``
    #: the area is a number read in a stated area unit (the file's AREAUNIT or the value's own
    #: unit), not worked out from lengths in the file's LENGTHUNIT
    stated_unit: bool = False


@dataclass(frozen=True)
class MaterialInfo:
    name: str | None
    category: str | None
    grade: str | None
    values: dict[str, tuple[float, str]]   # E/Fy/Fu/alpha -> (SI value, source)
    warnings: tuple[str, ...] = ()
    #: (quantity, what was found and why it was not used) of each value the material's
    #: properties give but the reader rejects (the member table's ``rejected``)
    rejected: tuple[tuple[str, str], ...] = ()
    #: library values that differ for round hollow sections (ASTM A500's Fy), used in place of
    #: ``values``' for a member of that shape: quantity -> (SI value, source)
    round_values: tuple[tuple[str, tuple[float, str]], ...] = ()


class NetSection(NamedTuple):
    """A member's net area (at holes or threads) and shear lag factor U, each with where it was
    read; NaN and None for a value the model does not give (or gives unusably)."""

    area: float
    area_source: str | None
    shear_lag: float
    shear_lag_source: str | None


#: the net section of a member whose model holds none
_NO_NET = NetSection(math.nan, None, math.nan, None)


class MemberRow(NamedTuple):
    """One member as the reader found it: the member table's row before the section and material
    (objects shared by many members) are spread into their columns by ``_assemble``."""

    global_id: str                 # '#<entity id>' for a member without one
    ifc_class: str
    predefined_type: str | None
    object_type: str | None
    name: str | None
    tag: str | None
    storey: str | None
    type_name: str | None
    section: Section | None        # the chosen section (None: none usable)
    material: MaterialInfo | None
    length: float                  # m; NaN where none is usable
    length_source: str | None
    warnings: list[str]            # the member's own (its material's are added when assembled)
    entity_id: int
    net: NetSection
    rejected: tuple[tuple[str, str], ...]   # (column, what was found and why it was not used)


class TypeFacts(NamedTuple):
    """What every member of one element type shares, worked out once per type."""

    typ: Any                       # the type entity (the cache entry keeps it alive: its id stays its own)
    name: str | None
    material_select: Any           # the type's IfcMaterialSelect, or None
    material: MaterialInfo | None
    section: Section | None        # the section its profile set gives, or None
    problem: str | None            # why its profile set gives no section, or None
    net: NetSection                # used when the occurrence states no net section of its own
    net_warnings: tuple[str, ...]
    net_rejected: tuple[tuple[str, str], ...]


@dataclass(frozen=True)
class MemberTable:
    """The member table of one model (``modelcheck.common.table``) with the model-level warnings
    met while reading it."""

    frame: pd.DataFrame
    #: the parser's problems first (``parse_problem_count`` of them), then the reader's, the
    #: analysis members not checked, and the unit assignments that could not be used
    model_warnings: tuple[str, ...]
    parse_problem_count: int


class _Reader:
    """One pass over one model; caches shared entities by id."""

    def __init__(self, idx: ModelIndex, use_library: bool = True) -> None:
        self.idx = idx
        self.use_library = use_library
        self.model_warnings: list[str] = []
        try:
            self.lf: float | None = idx.units.factor("LENGTHUNIT")
        except MissingUnit:
            self.lf = None
            self.model_warnings.append("the model assigns no LENGTHUNIT: no length or section is read")
        try:
            self.angle = idx.units.factor("PLANEANGLEUNIT")
        except UnusableUnit as exc:   # stated, but not usable: no angle is read (never the radian instead)
            self.angle = math.nan
            self.model_warnings.append(f"{exc}: no angle of a profile is read")
        except MissingUnit:
            self.angle = 1.0  # IFC's own default for plane angles is the radian (IfcPlaneAngleMeasure)
        self._profile_cache: dict[int, Section | str] = {}
        self._named_profile_cache: dict[int, Section | str] = {}   # profile-properties id -> its profile
        self._material_cache: dict[int, MaterialInfo] = {}
        self._round_variants: dict[int, tuple[MaterialInfo, MaterialInfo]] = {}
        self._body_cache: dict[int, tuple[Section | str | None, tuple[float, str] | None]] = {}
        self._type_facts_cache: dict[int, TypeFacts] = {}
        self._same: dict[tuple[int, int], tuple[Section, Section, bool]] = {}
        self._select_objects: dict[int, tuple[Any, tuple[MaterialInfo | None, Section | str | None]]] = {}
        self._doubts: dict[int, tuple[Section, str | None]] = {}   # sections are shared: judged once
        self._type_cache: dict[int, tuple[str | None, Any, list[Any]]] = {}
        self._select_cache: dict[int, tuple[MaterialInfo | None, Section | str | None]] = {}
        self._pos_cache: dict[str, tuple[bool, int | None]] = {}
        self._storey_names: dict[int, tuple[Any, str | None]] = {}

    # ------------------------------------------------------------------ profiles
    def profile(self, prof: Any, scale: float = 1.0) -> Section | str:
        """Section of a profile entity in SI, or the reason it cannot be computed."""
        key = prof.id()
        if key not in self._profile_cache:
            self._profile_cache[key] = self._profile_uncached(prof)
        sec = self._profile_cache[key]
        if isinstance(sec, Section) and scale != 1.0:
            return replace(sec, area=sec.area * scale**2, r_min=sec.r_min * scale, source=f"{sec.source} ×{scale:g}",
                           dims={k: v * scale for k, v in sec.dims.items()})
        return sec

    def _profile_uncached(self, prof: Any) -> Section | str:
        if self.lf is None:
            return "no LENGTHUNIT in the model"
        try:
            with np.errstate(all="ignore"):  # absurd dimensions overflow; the result is refused below, quietly
                ps: ProfileSection = section_of(prof, angle_factor=self.angle)
        except UnsupportedProfile as exc:
            return str(exc)
        except (RuntimeError, AttributeError, TypeError, ValueError, ArithmeticError) as exc:
            raise_if_parse_error(self.idx.path, exc)
            return f"{prof.is_a()} #{prof.id()} cannot be computed: {exc}"
        lf = self.lf
        return Section(ps.area * lf * lf, ps.r_min * lf, ps.source, ps.name, prof.is_a(), ps.shape,
                       {k: v * lf for k, v in ps.dims.items()})

    # --------------------------------------------------------------------- types
    def type_info(self, typ: Any) -> tuple[str | None, Any, list[Any]]:
        """(type name, material select of the type, type property sets)."""
        key = typ.id()
        if key not in self._type_cache:
            self._type_cache[key] = (typ.Name, self.idx.material_of.get(key), list(typ.HasPropertySets or ()))
        return self._type_cache[key]

    # -------------------------------------------------------------------- bodies
    def body(self, rep_items: list[Any], scale: float = 1.0,
             depth: int = 0) -> tuple[Section | str | None, tuple[float, str] | None]:
        """(section or reason, (length, source)) from body items; None where the body says nothing."""
        for item in rep_items:
            sec, length = self._body_item(item, scale, depth)
            if sec is not None or length is not None:
                return sec, length
        return None, None

    def _body_item(self, item: Any, scale: float, depth: int) -> tuple[Section | str | None, tuple[float, str] | None]:
        if depth > 8:
            return None, None
        cls = item.is_a()
        lf = self.lf
        if cls in ("IfcExtrudedAreaSolid", "IfcExtrudedAreaSolidTapered"):
            swept, depth_value = item.get_argument(0), item.get_argument(3)  # SweptArea, Depth
            sec: Section | str = (self.profile(swept, scale) if swept is not None
                   else f"{cls} #{item.id()} has no SweptArea (a null or dangling reference)")
            length = None
            if lf is not None and depth_value is not None:
                length = (float(depth_value) * lf * scale, f"{cls}.Depth")
            return sec, length
        if cls == "IfcSweptDiskSolid":
            if lf is None:
                return "no LENGTHUNIT in the model", None
            r = float(item.Radius) * lf * scale
            ri = float(item.InnerRadius or 0.0) * lf * scale
            src = f"IfcSweptDiskSolid #{item.id()}"
            if not (r > 0 and 0 <= ri < r):
                sec = f"{src}: radius {item.Radius} / inner radius {item.InnerRadius} is not a section"
            else:
                area = math.pi * (r * r - ri * ri)
                rg = math.sqrt(r * r + ri * ri) / 2.0  # circle / annulus, I = π(R⁴−r⁴)/4
                dims = {"d": 2 * r} | ({"t": r - ri} if ri > 0 else {})
                sec = Section(area, rg, src, None, "IfcSweptDiskSolid", Shape.ROUND_TUBE if ri > 0 else Shape.ROUND_BAR,
                              dims)
            clen = self.curve_length(item.Directrix) if item.Directrix is not None else None
            length = (clen[0] * lf * scale, f"IfcSweptDiskSolid.Directrix{clen[1]}") if isinstance(clen, tuple) else None
            return sec, length
        if cls in _DIRECTRIX_SWEEPS:
            # a profile swept along a curve (curved beams): the profile's section, the curve's length
            swept = item.SweptArea
            sec = (self.profile(swept, scale) if swept is not None
                   else f"{cls} #{item.id()} has no SweptArea (a null or dangling reference)")
            length = None
            directrix = item.Directrix
            if lf is not None and directrix is not None and item.StartParam is None and item.EndParam is None:
                clen = self.curve_length(directrix)
                if isinstance(clen, tuple):
                    length = (clen[0] * lf * scale, f"{cls}.Directrix{clen[1]}")
            return sec, length
        if cls == "IfcMappedItem":
            src = item.MappingSource
            target = item.MappingTarget
            s = scale
            if target is not None:
                s1 = target.Scale if target.Scale is not None else 1.0
                if target.is_a("IfcCartesianTransformationOperator3DnonUniform"):
                    s2 = target.Scale2 if target.Scale2 is not None else s1
                    s3 = target.Scale3 if target.Scale3 is not None else s1
                    if not (math.isclose(s1, s2) and math.isclose(s1, s3)):
                        return f"IfcMappedItem #{item.id()} scales non-uniformly", None
                s = scale * float(s1)
            mapped = src.MappedRepresentation if src is not None else None
            if mapped is None:
                return f"IfcMappedItem #{item.id()} maps no representation (a null or dangling reference)", None
            return self.body(list(mapped.Items or ()), s, depth + 1)
        if cls in ("IfcBooleanClippingResult", "IfcBooleanResult"):
            op = item.FirstOperand
            return self._body_item(op, scale, depth + 1) if op is not None else (None, None)
        return None, None

    def curve_length(self, curve: Any) -> tuple[float, str] | str:
        """(length of a curve in file units (``modelcheck.ifc.curves``), what its length source adds:
        "" for a straight curve, else ``NOT_STRAIGHT`` and how much longer it is than the distance
        between its ends), or why it cannot be measured."""
        if curve.is_a() == "IfcPolyline":
            points = curve.get_argument(0)
            if len(points) == 2:   # the usual axis: its two ends
                return math.dist(points[0].get_argument(0), points[1].get_argument(0)), ""
        try:
            length, chord = curve_extent(curve, self.angle)
        except CurveError as exc:
            return str(exc)
        if length <= chord * (1.0 + STRAIGHTNESS):
            return length, ""
        bow = f"{length / chord - 1.0:.2%} longer than between its ends" if chord > 0 else "its ends meet"
        return length, f"{NOT_STRAIGHT} ({bow})"

    # ----------------------------------------------------------------- materials
    def material(self, select: Any) -> tuple[MaterialInfo | None, list[Any]]:
        """Material info of a material select, and the profiles it carries (profile sets)."""
        mats, profiles = _unpack_material(select)
        if not mats:
            return None, profiles
        mat = mats[0]
        info = self._material_info(mat)
        if len({m.id() for m in mats}) > 1:
            from modelcheck.materials.library import UNKNOWN

            names = ", ".join(sorted({str(m.Name) for m in mats}))
            # structural categories among them (not "other": a coat of paint, an insulation)
            kinds = sorted({c for c in (self._material_info(m).category for m in mats)
                            if c is not None and c not in ("other", UNKNOWN)})
            if len(kinds) > 1:
                # steel and concrete in one member (reinforced concrete, a filled tube, a flitch
                # beam): taking the first would check a composite section as one material. With
                # one non-metal among them the member is of that category (so that rule sets
                # excluding it exclude the member); otherwise which carries the force is unknown
                non_metal = [k for k in kinds if k in ("concrete", "timber", "masonry")]
                kind = non_metal[0] if len(non_metal) == 1 else UNKNOWN
                why = (f"read as {kind}, a composite member: no metal's values are used" if kind != UNKNOWN
                       else "which one carries the force is not known, so none is used")
                return MaterialInfo(names, kind, None, {}, (
                    f"several materials of different categories ({names}: {', '.join(kinds)}); {why}",)), profiles
            info = replace(info, warnings=info.warnings + (f"several materials ({names}); using {mat.Name!r}",))
        return info, profiles

    def _material_info(self, mat: Any) -> MaterialInfo:
        key = mat.id()
        if key in self._material_cache:
            return self._material_cache[key]
        from modelcheck.materials.library import UNKNOWN, match_material
        from modelcheck.materials.names import read_name

        values: dict[str, tuple[float, str]] = {}
        round_values: dict[str, tuple[float, str]] = {}
        warnings: list[str] = []
        rejected: dict[str, str] = {}
        found: dict[str, tuple[str, str]] = {}   # quantity -> (value as written, with its unit; where)
        ranked = sorted(self.idx.material_props.get(key, ()), key=_material_set_rank)
        for mp in ranked:
            self._read_material_props(mp, values, rejected, found)
        name = mat.Name
        reading = read_name(name, getattr(mat, "Category", None))
        category = reading.category
        grade = reading.grade
        if reading.Fy is not None and "Fy" not in values:
            values["Fy"] = (reading.Fy, f"material name {name!r} (pattern {reading.Fy_pattern}: {reading.Fy_text})")
        if self.use_library:
            lib = match_material(name, category)
            if lib is None and grade is not None:
                lib = match_material(grade, category)   # 'A992Fy50': the grade read from the name
            if lib is not None:
                grade = lib.grade
                if category in ("steel", UNKNOWN) or not reading.known:
                    category = lib.category   # a steel name the library knows as stainless
                for q in ("E", "Fy", "Fu", "alpha"):
                    v = lib.value(q)
                    if q not in values and v is not None and not math.isnan(v):
                        values[q] = (float(v), lib.source(q) or f"material library: {lib.grade}")
                        if q in rejected:   # the model's own value could not be used: say what is
                            rejected[q] += (f"; the material library's value for {lib.grade}, "
                                            f"{_fmt_si(q, float(v))}, is used instead")
                for q, v, src, _ in lib.round_values:
                    if values.get(q, (None, None))[1] == lib.source(q):   # the library's value is the one used
                        round_values[q] = (v, src)
        if category == UNKNOWN:
            warnings.append(f"material {name!r}: category unknown (neither its name nor its Category matches a "
                            "pattern of rulesets/material-names.toml)")
        self._plausibility(category, values, rejected, found)
        _strengths_in_order(values, rejected, found)
        values.pop("density", None)   # screened above; no check uses it
        warnings += [f"material {name!r}, {q}: {why}" for q, why in rejected.items()]
        round_values = {q: rv for q, rv in round_values.items() if q in values}   # not dropped as implausible
        info = MaterialInfo(name, category, grade, values, tuple(warnings), tuple(rejected.items()),
                            tuple(round_values.items()))
        self._material_cache[key] = info
        return info

    _IFC2X3_ATTRS = {"YoungModulus": ("E", "IfcModulusOfElasticityMeasure"),
                     "ThermalExpansionCoefficient": ("alpha", "IfcThermalExpansionCoefficientMeasure"),
                     "YieldStress": ("Fy", "IfcPressureMeasure"),
                     "UltimateStress": ("Fu", "IfcPressureMeasure"),
                     "MassDensity": ("density", "IfcMassDensityMeasure")}

    def _read_material_props(self, mp: Any, values: dict[str, tuple[float, str]], rejected: dict[str, str],
                             found: dict[str, tuple[str, str]]) -> None:
        """The trade's property names from one material property set, in whatever set the model
        puts them (see ``MATERIAL_PROPERTIES``), into ``values``; a quantity found already (in a
        higher-ranked set) is kept. A value given without a usable unit goes into ``rejected``
        (what was found and why it is not used); ``found`` keeps each value as the file writes it."""
        cls = mp.is_a()
        q: str | None
        v: SIValue | None
        if cls in ("IfcMechanicalMaterialProperties", "IfcMechanicalSteelMaterialProperties",
                   "IfcGeneralMaterialProperties"):
            for attr, (q, measure) in self._IFC2X3_ATTRS.items():
                raw = getattr(mp, attr, None)
                if raw is None or q in values:
                    continue
                where = f"{cls} #{mp.id()}.{attr}"
                try:
                    v = measure_si(self.idx, measure, float(raw))
                except MissingUnit as exc:
                    if q != "density":   # screened only: nothing is missing without it
                        rejected.setdefault(q, f"{_number_as_written(raw)} in {where} {_unit_problem(exc)}; not used")
                    continue
                values[q] = (v.value, f"{where} [{v.unit}]")
                found[q] = (f"{_number_as_written(v.raw)} {v.unit}".rstrip(), where)
            return
        name = getattr(mp, "Name", None)
        label = name or f"{cls} #{mp.id()}"
        props = getattr(mp, "Properties", None) if cls != "IfcExtendedMaterialProperties" \
            else getattr(mp, "ExtendedProperties", None)
        for prop in props or ():
            q = MATERIAL_PROPERTIES.get(_property_key(prop.Name))
            if q is None or q in values or not prop.is_a("IfcPropertySingleValue"):
                continue
            where = f"{label}.{prop.Name}"
            try:
                v = _material_value(self.idx, prop)
            except MissingUnit as exc:
                if q != "density":   # screened only: nothing is missing without it
                    rejected.setdefault(q, f"{_number_as_written(_raw_text(prop))} in {where} {_unit_problem(exc)} and the value "
                                           "carries no unit of its own; not used")
                continue
            if v is not None:
                values[q] = (v.value, f"{where} [{v.unit}]")
                found[q] = (f"{_number_as_written(v.raw)} {v.unit}".rstrip(), where)

    def _plausibility(self, category: str | None, values: dict[str, tuple[float, str]], rejected: dict[str, str],
                      found: dict[str, tuple[str, str]]) -> None:
        """A value outside its category's plausible range is not used: NaN in ``values``, and
        what was found and why in ``rejected``."""
        from modelcheck.materials.library import plausible_ranges

        ranges = plausible_ranges(category)
        for q, (v, src) in list(values.items()):
            r = ranges.get(q)
            if r is None or r.contains(v):
                continue
            shown, where = found.get(q, (_fmt_si(q, v), src))
            if shown != _fmt_si(q, v):   # the file's own unit, and the value in the range's terms
                shown = f"{shown} (= {_fmt_si(q, v)})"
            rejected[q] = (f"{shown} in {where} is outside the plausible range for "
                           f"{r.category if r.category != 'unknown' else 'any material'} ({r.text}); not used")
            values[q] = (math.nan, f"doubted: {src}")

    # -------------------------------------------------------------------- member
    def selection(self, sel: Any) -> tuple[MaterialInfo | None, Section | str | None]:
        """(material, section of its profile set) of a material select; cached by entity id, and by
        object too (a relationship's select is one object shared by all its members)."""
        same = self._select_objects.get(id(sel))
        if same is not None and same[0] is sel:   # the entry keeps sel alive: its id stays its own
            return same[1]
        key = sel.id()
        hit = self._select_cache.get(key)
        if hit is None:
            minfo, profs = self.material(sel)
            sec: Section | str | None = None
            if profs:
                sec = self.profile(profs[0]) if len(profs) == 1 else self._composite(profs)
            hit = self._select_cache[key] = (minfo, sec)
        self._select_objects[id(sel)] = (sel, hit)
        return hit

    def _type_facts(self, typ: Any) -> TypeFacts:
        """What every member of type ``typ`` shares, worked out once per type (cached)."""
        type_name, type_sel, type_sets = self.type_info(typ)
        tinfo, type_sec = self.selection(type_sel) if type_sel is not None else (None, None)
        cand = problem = None
        if isinstance(type_sec, Section):
            cand = replace(type_sec, source=f"{type_sec.source} (via type {type_name!r})")
        elif type_sec is not None:
            problem = type_sec
        net_warnings: list[str] = []
        net_rejected: list[tuple[str, str]] = []
        net = self._net_from(type_sets, "type", net_warnings, net_rejected) if type_sets else None
        hit = self._type_facts_cache[id(typ)] = TypeFacts(typ, type_name, type_sel, tinfo, cand, problem,
                                                          net or _NO_NET, tuple(net_warnings), tuple(net_rejected))
        return hit

    def member(self, el: Any, analysis: bool = False) -> MemberRow:
        """One member: identity values, the chosen Section, MaterialInfo, length and warnings."""
        idx = self.idx
        eid = el.id()
        ga = el.get_argument
        cls = el.is_a()
        pos = self._pos_cache.get(cls) or self._positions(cls)
        warnings: list[str] = []
        rejected: list[tuple[str, str]] = []   # (column, what was found and why it was not used)
        typ = idx.type_of.get(eid)
        type_name = type_sel = tinfo = type_cand = type_problem = None
        facts: TypeFacts | None = None
        if typ is not None:
            facts = self._type_facts_cache.get(id(typ))
            if facts is None or facts.typ is not typ:   # the entry keeps typ alive: its id stays its own
                facts = self._type_facts(typ)
            type_name, type_sel, tinfo, type_cand, type_problem = (facts.name, facts.material_select, facts.material,
                                                                   facts.section, facts.problem)
        predefined = ga(pos[1]) if pos[1] is not None else None
        object_type = ga(4)
        if predefined is None and typ is not None:
            predefined = getattr(typ, "PredefinedType", None)
        if predefined == "USERDEFINED" and not object_type and typ is not None:
            object_type = getattr(typ, "ElementType", None)

        # --- material and profile sets: the occurrence's own, else its type's
        own_sel = idx.material_of.get(eid)
        minfo, own_sec = self.selection(own_sel) if own_sel is not None else (None, None)
        if minfo is None:
            minfo = tinfo

        # --- section candidates, ranked
        candidates: list[Section] = []
        problems: list[str] = []
        if own_sec is not None:
            if isinstance(own_sec, Section):
                candidates.append(own_sec)
            else:
                problems.append(own_sec)
        elif type_cand is not None:
            candidates.append(type_cand)
        elif type_problem is not None:
            problems.append(type_problem)
        rep = ga(6)
        body_sec = body_len = axis_len = None
        if rep is not None:
            body_sec, body_len, axis_len = self._representation(rep)
        if isinstance(body_sec, Section):
            if not (candidates and self._same_profile(candidates[0], body_sec)):
                candidates.append(body_sec)  # the same profile entity twice needs no comparison
        elif isinstance(body_sec, str):
            problems.append(body_sec)
        if cls == "IfcTendon":
            tendon = self._tendon(el)
            if tendon is not None:
                candidates.append(tendon)
        psets = idx.psets_of.get(eid)
        mech_sets: list[Any] = []
        qsets: list[Any] = []        # quantity sets, ranked: Qto_*, then BaseQuantities, then any other
        base_sets: list[Any] = []
        other_sets: list[Any] = []
        net: NetSection | None = None
        if psets:   # the occurrence's own sets, each looked at once
            net_sets = []
            for ent, n in idx.named_sets(eid):
                if n is None:
                    continue
                if n == _NET_SET:
                    net_sets.append(ent)
                elif n == "Pset_ProfileMechanical":
                    mech_sets.append(ent)
                elif n.startswith("Qto_"):
                    qsets.append(ent)
                elif n == "BaseQuantities":
                    base_sets.append(ent)
                elif not n.startswith(_NOT_QUANTITY_SETS) and ent.is_a("IfcElementQuantity"):
                    other_sets.append(ent)
            qsets += base_sets + other_sets
            if net_sets:
                net = self._net_from(net_sets, "occurrence", warnings, rejected)
        if net is None:
            if facts is not None:
                net = facts.net
                if facts.net_warnings:
                    warnings.extend(facts.net_warnings)
                    rejected.extend(facts.net_rejected)
            else:
                net = _NO_NET
        if idx.profile_props or mech_sets or idx.object_profile_props:
            mech, mech_problems = self._profile_mechanical(
                self._profiles_of(own_sel, type_sel) if idx.profile_props else [], mech_sets, eid, candidates)
            candidates.extend(mech)
            problems.extend(mech_problems)
        qarea = qlen = qvol = None
        if qsets:
            qarea, qlen, qvol = self._quantities(qsets, cls, warnings, rejected)
        if qarea is not None:
            candidates.append(qarea)

        if len(candidates) > 1:
            candidates = self._unit_contradictions(candidates, warnings)
        section = None
        doubts = self._doubts
        doubted: list[str] = []
        for cand in candidates:
            hit = doubts.get(id(cand))
            if hit is None or hit[0] is not cand:
                hit = doubts[id(cand)] = (cand, _doubt_section(cand))   # the entry keeps cand alive
            doubt = hit[1]
            if doubt:
                warnings.append(doubt)
                doubted.append(doubt)
                continue
            if section is None:
                section = cand
                continue
            beyond = _beyond_family(section, cand)
            if beyond:
                warnings.append(beyond)
                continue
            rel = (cand.area - section.area) / section.area
            if abs(rel) > AREA_TOLERANCE:
                warnings.append(
                    f"inconsistent area: {section.source} gives {section.area * 1e6:.6g} mm², "
                    f"{cand.source} gives {cand.area * 1e6:.6g} mm² ({rel:+.1%}); using the first")
            if math.isnan(section.r_min) and not math.isnan(cand.r_min):
                section = replace(section, r_min=cand.r_min, r_source=cand.source)
        if section is None and problems:
            warnings.extend(dict.fromkeys(problems))  # the profile set and the body often name one profile
        if section is None and (doubted or problems):
            rejected.append(("section", "; ".join(dict.fromkeys(doubted + problems))))

        # --- length candidates, ranked
        axis_problem = None
        if isinstance(axis_len, str):
            axis_problem, axis_len = axis_len, None
        if analysis:
            tl = self._topology_length(el, warnings)
            lengths = [x for x in (tl, axis_len, body_len, qlen) if x is not None]
        else:
            lengths = [x for x in (axis_len, body_len, qlen) if x is not None]
        if axis_problem is not None:
            warnings.append(axis_problem)
        length, length_src = math.nan, None
        doubted_lengths: list[str] = []
        for val, src in lengths:
            if not (math.isfinite(val) and MIN_LENGTH <= val <= MAX_LENGTH):
                doubt = (f"{val:.6g} m from {src} is not plausible for a member (outside "
                         f"{MIN_LENGTH * 1e3:g} mm – {MAX_LENGTH:g} m); not used")
                warnings.append(f"length {doubt}")
                doubted_lengths.append(doubt)
                continue
            if length_src is None:
                length, length_src = val, src
            elif abs(val - length) / length > LENGTH_TOLERANCE:
                warnings.append(f"inconsistent length: {length_src} gives {length:.6g} m, "
                                f"{src} gives {val:.6g} m; using the first")
        if length_src is None and qvol is not None and section is not None:
            # the last resort: the member's net volume over its section's area
            val = qvol[0] / section.area
            src = f"{qvol[1]} / area from {section.source} (derived)"
            if math.isfinite(val) and MIN_LENGTH <= val <= MAX_LENGTH:
                length, length_src = val, src
            else:
                doubt = (f"{val:.6g} m from {src} is not plausible for a member (outside "
                         f"{MIN_LENGTH * 1e3:g} mm – {MAX_LENGTH:g} m); not used")
                warnings.append(f"length {doubt}")
                doubted_lengths.append(doubt)
        if section is not None and net.area_source is not None and net.area > section.area * (1 + AREA_TOLERANCE):
            too_large = (f"net area {net.area * 1e6:.6g} mm² from {net.area_source} is more than the gross area "
                         f"{section.area * 1e6:.6g} mm² from {section.source}; not used")
            warnings.append(too_large)
            rejected.append(("net_area", too_large))
            net = _NO_NET
        if section is not None and length_src is not None:
            larger = _larger_than_length(section, length, length_src)
            if larger:   # a profile drawn in elevation, an extrusion in the wrong unit: neither is used
                warnings.append(larger)
                rejected += [("section", larger), ("length", larger)]
                section, length, length_src = None, math.nan, None
        if length_src is None and doubted_lengths:
            rejected.append(("length", "; ".join(doubted_lengths)))
        if length_src is not None and NOT_STRAIGHT in length_src:
            # measured exactly along the curve, but an arch or a bent bar bends under an axial load
            warnings.append(f"curved: its length {length * 1e3:.6g} mm is from {length_src}; the checks take it "
                            "as a straight member of that length")
        if minfo is not None and minfo.round_values and section is not None and section.shape == Shape.ROUND_TUBE:
            minfo = self._round_variant(minfo)
        storey = idx.storey_of.get(eid)
        storey_name = None
        if storey is not None:
            hit = self._storey_names.get(id(storey))
            if hit is None or hit[0] is not storey:   # the entry keeps storey alive
                hit = self._storey_names[id(storey)] = (storey, storey.Name)
            storey_name = hit[1]
        gid = ga(0)
        if not isinstance(gid, str):  # the schema requires one; name the member by its entity instead
            warnings.append(f"has no GlobalId (IFC requires one): named #{eid} here")
            gid = f"#{eid}"
        return MemberRow(gid, cls, predefined, object_type, ga(2), ga(7) if pos[0] else None, storey_name,
                         type_name, section, minfo, length, length_src, warnings, eid, net, tuple(rejected))

    def _round_variant(self, minfo: MaterialInfo) -> MaterialInfo:
        """``minfo`` with its values for round hollow sections (one object per material)."""
        hit = self._round_variants.get(id(minfo))
        if hit is None or hit[0] is not minfo:   # the entry keeps minfo alive: its id stays its own
            hit = self._round_variants[id(minfo)] = (
                minfo, replace(minfo, values={**minfo.values, **dict(minfo.round_values)}, round_values=()))
        return hit[1]

    def _unit_contradictions(self, candidates: list[Section], warnings: list[str]) -> list[Section]:
        """The candidates without those whose area, read in a stated area unit, contradicts the
        area worked out from lengths (a profile's dimensions in the LENGTHUNIT) by a factor of
        ``UNIT_CONTRADICTION`` or more: such a unit cannot be what the value means. Each dropped
        one is a warning naming both values and both sources; the geometry's value is kept."""
        base = next((c for c in candidates if not c.stated_unit and _doubt_section(c) is None), None)
        if base is None:
            return candidates
        kept = []
        for c in candidates:
            # (an area the section's outline cannot hold is flagged as such, by the ranking below)
            if c.stated_unit and c.area > 0 and math.isfinite(c.area) and _beyond_family(base, c) is None:
                factor = max(c.area / base.area, base.area / c.area)
                if factor >= UNIT_CONTRADICTION:
                    warnings.append(
                        f"unit contradiction: {c.source} gives {c.area * 1e6:.6g} mm², {base.source} gives "
                        f"{base.area * 1e6:.6g} mm² from its dimensions, {factor:.3g} times "
                        f"{'less' if c.area < base.area else 'more'}: the stated unit cannot be what the value "
                        f"means; {c.source} not used")
                    continue
            kept.append(c)
        return kept

    def _same_profile(self, a: Section, b: Section) -> bool:
        """Whether two sections name the same profile entity (their sources' first two words);
        sections are shared, so each pair is judged once."""
        hit = self._same.get((id(a), id(b)))
        if hit is None or hit[0] is not a or hit[1] is not b:   # the entry keeps both alive
            hit = self._same[(id(a), id(b))] = (a, b, a.source.split(" ", 2)[:2] == b.source.split(" ", 2)[:2])
        return hit[2]

    def _net_from(self, sets: list[Any], where: str, warnings: list[str],
                  rejected: list[tuple[str, str]]) -> NetSection | None:
        """The net area and shear lag factor from ``sets`` (of the occurrence or its type):
        (An, source, U, source), NaN and None for a value not given or not usable; None where
        the sets hold neither. A net area given but not usable goes into ``rejected`` with why."""
        pset_name, prop_name = NET_AREA_PROPERTY
        sets = list(sets)
        prop = find_property(sets, pset_name, prop_name)
        lag = find_property(sets, *SHEAR_LAG_PROPERTY)
        if prop is None and lag is None:
            return None
        net: tuple[float, str | None] = (math.nan, None)
        if prop is not None:
            try:
                v = property_si(self.idx, prop)
            except MissingUnit as exc:
                warnings.append(f"{pset_name}.{prop_name} not used: {exc}")
                rejected.append(("net_area", f"{pset_name}.{prop_name} ({where}) {_unit_problem(exc)}; not used"))
                v = None
            else:
                if v is None or not (math.isfinite(v.value) and v.value > 0):
                    warnings.append(f"{pset_name}.{prop_name} is not a positive area; not used")
                    rejected.append(("net_area", f"{pset_name}.{prop_name} ({where}) is not a positive area; "
                                                 "not used"))
                    v = None
            if v is not None:
                net = (v.value, f"{pset_name}.{prop_name} ({where}) [{v.unit}]")
        u: tuple[float, str | None] = (math.nan, None)
        if lag is not None:
            label = ".".join(SHEAR_LAG_PROPERTY)
            try:
                w = property_si(self.idx, lag)
            except MissingUnit:
                w = None
            if w is None or w.measure not in UNITLESS_MEASURES or w.unit or not (0 < w.value <= 1):
                warnings.append(f"{label} is not a ratio between 0 and 1 (an IfcPositiveRatioMeasure); not used")
            else:
                u = (w.value, f"{label} ({where})")
        return NetSection(net[0], net[1], u[0], u[1])

    def _positions(self, cls: str) -> tuple[bool, int | None]:
        """(has Tag at index 7, index of PredefinedType) for an entity class; cached."""
        hit = self._pos_cache.get(cls)
        if hit is None:
            import ifcopenshell.ifcopenshell_wrapper as w

            decl = w.schema_by_name(self.idx.file.schema_identifier).declaration_by_name(cls)
            # an entity class's declaration is an entity (ifcopenshell's hints name only its base class)
            names = [a.name() for a in decl.all_attributes()]   # type: ignore[attr-defined]
            hit = self._pos_cache[cls] = (len(names) > 7 and names[7] == "Tag",
                                          names.index("PredefinedType") if "PredefinedType" in names else None)
        return hit

    def _profiles_of(self, own_sel: Any, type_sel: Any) -> list[Any]:
        for sel in (own_sel, type_sel):
            if sel is not None:
                profs = _unpack_material(sel)[1]
                if profs:
                    return profs
        return []

    def _quantities(self, qsets: list[Any], cls: str, warnings: list[str], rejected: list[tuple[str, str]]
                    ) -> tuple[Section | None, tuple[float, str] | None, tuple[float, str] | None]:
        """(CrossSectionArea, Length, NetVolume) of a member in SI from its quantity sets, each the
        first one found in the sets' rank order (``qsets`` comes ranked: Qto_*, BaseQuantities, any
        other IfcElementQuantity). A column's Height is its length where no set gives a Length. A
        quantity without a usable unit goes into ``rejected`` with why."""
        found: dict[str, tuple[float, str]] = {}
        for ps in qsets:
            if not ps.is_a("IfcElementQuantity"):
                continue
            qname = ps.Name or ""
            for q in ps.Quantities or ():
                n = q.Name
                if n in found:
                    continue
                wanted = _QUANTITIES.get(n)
                if wanted is None or not q.is_a(wanted[0]):
                    continue
                measure, attr = wanted[1], wanted[2]
                raw = getattr(q, attr, None)
                if raw is None:
                    continue
                try:
                    v = measure_si(self.idx, measure, float(raw), getattr(q, "Unit", None))
                except MissingUnit as exc:
                    warnings.append(f"{qname}.{n} not used: {exc}")
                    column = "section" if n == "CrossSectionArea" else "length"
                    rejected.append((column, f"{qname}.{n} {_unit_problem(exc)}; not used"))
                    continue
                found[n] = (v.value, f"{qname}.{n} [{v.unit}]")
        qarea = None
        if "CrossSectionArea" in found:
            value, src = found["CrossSectionArea"]
            qarea = Section(value, math.nan, src, stated_unit=True)
        qlen = found.get("Length")
        if qlen is None and "Height" in found and cls in _HEIGHT_IS_LENGTH:
            qlen = found["Height"]
        return qarea, qlen, found.get("NetVolume")

    def _tendon(self, el: Any) -> Section | None:
        """IfcTendon's own CrossSectionArea / NominalDiameter attributes."""
        try:
            a = el.CrossSectionArea
            d = el.NominalDiameter
            if a is not None:
                v = measure_si(self.idx, "IfcAreaMeasure", float(a))
                dims = {"d": measure_si(self.idx, "IfcLengthMeasure", float(d)).value} if d is not None else {}
                return Section(v.value, math.nan, f"IfcTendon.CrossSectionArea [{v.unit}]", None, None,
                               Shape.ROUND_BAR if dims else None, dims, stated_unit=True)
            if d is not None:
                dv = measure_si(self.idx, "IfcLengthMeasure", float(d)).value
                return Section(math.pi * dv * dv / 4, dv / 4, "IfcTendon.NominalDiameter", None, None,
                               Shape.ROUND_BAR, {"d": dv})
        except MissingUnit:
            return None
        return None

    def _representation(self, rep: Any) -> tuple[Section | str | None, tuple[float, str] | None,
                                                  tuple[float, str] | str | None]:
        """(body section or reason, body length, axis length or why the axis cannot be measured)."""
        body_sec = body_len = None
        axis_len: tuple[float, str] | str | None = None
        lf = self.lf
        for r in rep.get_argument(2) or ():
            ident = r.get_argument(1)
            if ident == "Axis":
                if not isinstance(axis_len, tuple) and lf is not None:
                    for it in r.get_argument(3) or ():
                        cl = self.curve_length(it)
                        if isinstance(cl, str):
                            axis_len = axis_len or f"Axis not measured: {cl}"
                            continue
                        axis_len = (cl[0] * lf, f"Axis{cl[1]}")
                        break
            elif ident in ("Body", None) and body_sec is None:
                items = r.get_argument(3)
                first = items[0] if items else None
                if first is not None and first.is_a() == "IfcExtrudedAreaSolid":
                    # the common body, a representation of its own per member: not worth caching
                    # (what body() gives for it: its first item decides)
                    body_sec, body_len = self._body_item(first, 1.0, 0)
                    continue
                key = r.id()
                hit = self._body_cache.get(key)
                if hit is None:
                    hit = self._body_cache[key] = self.body(list(items or ()))
                body_sec, body_len = hit
        return body_sec, body_len, axis_len

    def _composite(self, profiles: list[Any]) -> Section | str:
        """Several profiles in one set: read as one composite profile only if the profile module can."""
        areas = []
        for p in profiles:
            s = self.profile(p)
            if not isinstance(s, Section):
                return s
            areas.append(s)
        return ("material profile set with several profiles (" + ", ".join(s.source for s in areas)
                + "): their relative placement is not stated; not combined")

    def _profile_mechanical(self, profiles: list[Any], psets: list[Any], eid: int | None = None,
                            known: list[Section] | None = None) -> tuple[list[Section], list[str]]:
        """(section candidates, reasons) from Pset_ProfileMechanical (profile or element) / IFC2X3
        IfcStructuralProfileProperties (on the profile, or on the element through
        IfcRelAssociatesProfileProperties).

        A properties entity names its profile (ProfileDefinition): that profile's own section comes
        first (geometry, from its dimensions in the LENGTHUNIT) unless ``known`` holds it already,
        then the area the properties state (in the AREAUNIT), which carries the profile's class."""
        sources: list[tuple[str, dict[str, SIValue], Any]] = []
        out: list[Section] = []
        reasons: list[str] = []
        props = [pp for prof in profiles[:1] for pp in self.idx.profile_props.get(prof.id(), ())]
        if eid is not None:
            props += self.idx.object_profile_props.get(eid, [])
        seen = {f"{p.is_a()} #{p.id()}" for p in profiles} | {" ".join(k.source.split(" ", 2)[:2]) for k in known or ()}
        for pp in props:
            prof = getattr(pp, "ProfileDefinition", None)
            if prof is not None and f"{prof.is_a()} #{prof.id()}" not in seen:
                seen.add(f"{prof.is_a()} #{prof.id()}")
                sec = self._named_profile_cache.get(pp.id())
                if sec is None:
                    sec = self.profile(prof)
                    if isinstance(sec, Section):   # shared by every member of these properties
                        sec = replace(sec, source=f"{sec.source} (the profile of {pp.is_a()} #{pp.id()})")
                    self._named_profile_cache[pp.id()] = sec
                if isinstance(sec, Section):
                    out.append(sec)
                else:
                    reasons.append(sec)
            if pp.is_a("IfcStructuralProfileProperties") or pp.is_a("IfcGeneralProfileProperties"):
                vals: dict[str, SIValue] = {}
                for attr, measure in (("CrossSectionArea", "IfcAreaMeasure"),
                                      ("MomentOfInertiaY", "IfcMomentOfInertiaMeasure"),
                                      ("MomentOfInertiaZ", "IfcMomentOfInertiaMeasure"),
                                      ("MomentOfInertiaYZ", "IfcMomentOfInertiaMeasure")):
                    raw = getattr(pp, attr, None)
                    if raw is not None:
                        try:
                            vals[attr] = measure_si(self.idx, measure, float(raw))
                        except MissingUnit:
                            pass  # reported below as a missing r_min / area source
                sources.append((f"{pp.is_a()} #{pp.id()}", vals, prof))
            elif getattr(pp, "Name", None) == "Pset_ProfileMechanical":
                sources.append((f"Pset_ProfileMechanical #{pp.id()}", self._props_si(pp.Properties), prof))
        for ps in psets:
            if ps.is_a("IfcPropertySet") and ps.Name == "Pset_ProfileMechanical":
                sources.append((f"Pset_ProfileMechanical #{ps.id()}", self._props_si(ps.HasProperties),
                                profiles[0] if profiles else None))
        for src, vals, prof in sources:
            a = vals.get("CrossSectionArea")
            if a is None:
                continue
            r = math.nan
            iy, iz = vals.get("MomentOfInertiaY"), vals.get("MomentOfInertiaZ")
            if iy is not None and iz is not None and a.value > 0:
                iyz = vals["MomentOfInertiaYZ"].value if "MomentOfInertiaYZ" in vals else 0.0
                c, d = (iy.value + iz.value) / 2, math.hypot((iy.value - iz.value) / 2, iyz)
                if c - d > 0:
                    r = math.sqrt((c - d) / a.value)
            name = getattr(prof, "ProfileName", None) if prof is not None else None
            out.append(Section(a.value, r, f"{src}.CrossSectionArea [{a.unit}]",
                               name if isinstance(name, str) else None,
                               prof.is_a() if prof is not None else None, stated_unit=True))
            break
        return out, reasons

    def _props_si(self, props: Any) -> dict[str, SIValue]:
        out: dict[str, SIValue] = {}
        for p in props or ():
            if p.is_a("IfcPropertySingleValue"):
                try:
                    v = property_si(self.idx, p)
                except MissingUnit:
                    continue
                if v is not None:
                    out[p.Name] = v
        return out

    def _topology_length(self, el: Any, warnings: list[str]) -> tuple[float, str] | None:
        """Length of an analysis curve member from its IfcEdge topology (an IfcEdgeCurve along its
        curve: ``curves.edge_curve_length``)."""
        if self.lf is None or el.Representation is None:
            return None
        for r in el.Representation.Representations or ():
            for it in r.Items or ():
                if it.is_a("IfcEdgeCurve"):
                    try:
                        return edge_curve_length(it, self.angle) * self.lf, f"IfcEdgeCurve #{it.id()}"
                    except CurveError as exc:
                        warnings.append(f"analysis edge not measured: {exc}")
                        continue
                if it.is_a("IfcEdge"):
                    try:
                        a = np.array(it.EdgeStart.VertexGeometry.Coordinates, dtype=float)
                        b = np.array(it.EdgeEnd.VertexGeometry.Coordinates, dtype=float)
                    except AttributeError:
                        continue
                    return float(np.linalg.norm(b - a)) * self.lf, f"IfcEdge #{it.id()}"
        return None


#: the trade's names of material properties (as analysis and authoring tools write them, in any
#: material property set) -> the quantity they give; compared without case and spaces
MATERIAL_PROPERTIES: dict[str, str] = {
    "youngmodulus": "E", "youngsmodulus": "E", "modulusofelasticity": "E", "elasticmodulus": "E",
    "yieldstress": "Fy", "yieldstrength": "Fy",
    "ultimatestress": "Fu", "ultimatestrength": "Fu", "tensilestrength": "Fu",
    "thermalexpansioncoefficient": "alpha", "coefficientofthermalexpansion": "alpha",
    "massdensity": "density", "density": "density",
}


def _property_key(name: Any) -> str:
    return "".join(str(name or "").split()).replace("_", "").casefold()


def _material_set_rank(mp: Any) -> int:
    """buildingSMART's sets first (Pset_*, IFC2X3's typed material properties), then any other
    set (named after the material or the program), in file order."""
    if not mp.is_a("IfcExtendedMaterialProperties") and mp.is_a() != "IfcMaterialProperties":
        return 0   # IFC2X3 IfcMechanical(Steel)MaterialProperties, IfcGeneralMaterialProperties
    name = getattr(mp, "Name", None) or ""
    return 0 if name.startswith("Pset_") else 1


def _material_value(idx: ModelIndex, prop: Any) -> SIValue | None:
    """A material property's value in SI: its own unit (an IfcMeasureWithUnit in its place, or
    the property's Unit) first, else the model's unit for its measure type."""
    nv = getattr(prop, "NominalValue", None)
    if nv is not None and hasattr(nv, "is_a") and not hasattr(nv, "wrappedValue") and nv.is_a("IfcMeasureWithUnit"):
        comp = nv.ValueComponent
        raw = getattr(comp, "wrappedValue", None)
        if isinstance(raw, bool) or not isinstance(raw, int | float):
            return None
        return measure_si(idx, comp.is_a(), float(raw), nv.UnitComponent)
    return property_si(idx, prop)


def _raw_text(prop: Any) -> str:
    nv = getattr(prop, "NominalValue", None)
    return str(getattr(nv, "wrappedValue", nv))


def _doubt_section(sec: Section) -> str | None:
    """Why a section is not plausible for an axial member (None when it is): an area that is no
    section, a dimension under 0.1 mm or over 2 m, an area or a radius of gyration its own
    dimensions cannot give."""
    big = {k: v for k, v in sec.dims.items() if math.isfinite(v) and v > MAX_SECTION_DIM}
    if big:
        k, v = next(iter(big.items()))
        return (f"section from {sec.source} has {k} = {v:.4g} m, not plausible for an axial member "
                f"(over {MAX_SECTION_DIM:g} m); not used")
    small = {k: v for k, v in sec.dims.items()   # a radius may be as small as it likes
             if k != "r_root" and not (math.isfinite(v) and v >= MIN_SECTION_DIM)}
    if small:
        k, v = next(iter(small.items()))
        return (f"section from {sec.source} has {k} = {v * 1e3:.4g} mm, not plausible for an axial member "
                f"(under {MIN_SECTION_DIM * 1e3:g} mm); not used")
    if not (math.isfinite(sec.area) and sec.area >= MIN_AREA):
        return f"section from {sec.source} has area {sec.area:.6g} m², which is not a section; not used"
    if not math.isnan(sec.r_min) and not (math.isfinite(sec.r_min) and sec.r_min > 0):
        return f"section from {sec.source} has radius of gyration {sec.r_min:.6g} m, which is not a section; not used"
    box = _extent(sec)
    if box is not None:
        return _beyond_box(sec, box, sec.source)
    return None


def _extent(sec: Section) -> tuple[float, float] | None:
    """The width and height of the rectangle a section of a known family fits in (m), or None."""
    d = sec.dims
    if "d" in d:
        return d["d"], d["d"]
    if "h" in d and "b" in d:
        # a Z section's flanges point both ways from the web: up to twice FlangeWidth across
        return (2 * d["b"] if sec.shape == Shape.ZED else d["b"]), d["h"]
    return None


def _beyond_box(sec: Section, box: tuple[float, float], box_source: str | None) -> str | None:
    """A section's area or radius of gyration that no section inside ``box`` can have: the area
    is at most the box's, and a radius of gyration at most half the box's smaller side (the
    variance of a quantity between two bounds is at most a quarter of their range squared)."""
    w, h = box
    tol = 1 + AREA_TOLERANCE
    of = "its own dimensions" if box_source == sec.source else f"the section from {box_source}"
    if sec.area > w * h * tol:
        return (f"area {sec.area * 1e6:.6g} mm² from {sec.source} is more than a section within "
                f"{w * 1e3:.4g} × {h * 1e3:.4g} mm ({of}) can have ({w * h * 1e6:.6g} mm²): a unit slip?; not used")
    if math.isfinite(sec.r_min) and sec.r_min > min(w, h) / 2 * tol:
        return (f"radius of gyration {sec.r_min * 1e3:.6g} mm from {sec.source} is more than a section within "
                f"{w * 1e3:.4g} × {h * 1e3:.4g} mm ({of}) can have ({min(w, h) / 2 * 1e3:.4g} mm); not used")
    return None


def _beyond_family(section: Section, cand: Section) -> str | None:
    """A further source of a member's section (quantity set, profile properties) whose values the
    chosen section's outline cannot hold: not compared, not used, said with both values."""
    box = _extent(section)
    if box is None or _extent(cand) is not None:
        return None
    return _beyond_box(cand, box, section.source)


def _larger_than_length(section: Section, length: float, length_src: str) -> str | None:
    """A section wider than the member is long: no axial member, but a profile drawn in elevation
    and extruded by a thickness, or a length in the wrong unit."""
    box = _extent(section)
    size, what = ((max(box), "its largest dimension") if box is not None
                  else (math.sqrt(section.area), "the side of a square of its area"))
    if size <= length:
        return None
    return (f"the section from {section.source} ({what} {size * 1e3:.6g} mm, area {section.area * 1e6:.6g} mm²) "
            f"is larger than the member's length {length * 1e3:.6g} mm from {length_src}: a profile drawn in "
            "elevation, or a unit slip?; neither is used")


def _unpack_material(select: Any) -> tuple[list[Any], list[Any]]:
    """(materials, profiles) of any IfcMaterialSelect."""
    if select is None:
        return [], []
    cls = select.is_a()
    if cls == "IfcMaterial":
        return [select], []
    if cls in ("IfcMaterialProfileSetUsage", "IfcMaterialProfileSetUsageTapering"):
        return _unpack_material(select.ForProfileSet)
    if cls == "IfcMaterialProfileSet":
        mps = list(select.MaterialProfiles or ())
        return [m.Material for m in mps if m.Material is not None], [m.Profile for m in mps if m.Profile is not None]
    if cls == "IfcMaterialProfile":
        return ([select.Material] if select.Material else []), ([select.Profile] if select.Profile else [])
    if cls == "IfcMaterialLayerSetUsage":
        return _unpack_material(select.ForLayerSet)
    if cls == "IfcMaterialLayerSet":
        return [la.Material for la in select.MaterialLayers or () if la.Material is not None], []
    if cls == "IfcMaterialLayer":
        return ([select.Material] if select.Material else []), []
    if cls == "IfcMaterialConstituentSet":
        return [c.Material for c in select.MaterialConstituents or () if c.Material is not None], []
    if cls == "IfcMaterialConstituent":
        return ([select.Material] if select.Material else []), []
    if cls == "IfcMaterialList":
        return list(select.Materials or ()), []
    return [], []


def _strengths_in_order(values: dict[str, tuple[float, str]], rejected: dict[str, str],
                        found: dict[str, tuple[str, str]]) -> None:
    """A tensile strength Fu below the yield strength Fy cannot be: the tensile strength is the
    largest stress of the tensile test. One of the two is wrong (swapped, or from another grade)
    and nothing says which, so neither is used: NaN in ``values``, each named in ``rejected``."""
    fy, fu = values.get("Fy"), values.get("Fu")
    from modelcheck.materials.library import STRENGTH_ROUNDING

    if (fy is None or fu is None or not (math.isfinite(fy[0]) and math.isfinite(fu[0]))
            or fu[0] >= fy[0] * (1 - STRENGTH_ROUNDING)):
        return

    def shown(q: str, v: float, src: str) -> str:
        text, where = found.get(q, (_fmt_si(q, v), src))
        if text != _fmt_si(q, v):   # the file's own unit, then in MPa
            text = f"{text} (= {_fmt_si(q, v)})"
        return f"{text} in {where}"

    fy_text, fu_text = shown("Fy", *fy), shown("Fu", *fu)
    rejected["Fy"] = (f"{fy_text} is above the tensile strength Fu, {fu_text}: a tensile strength is never "
                      "below the yield strength, so one of them is wrong (swapped?); not used")
    rejected["Fu"] = (f"{fu_text} is below the yield strength Fy, {fy_text}: a tensile strength is never "
                      "below the yield strength, so one of them is wrong (swapped?); not used")
    values["Fy"] = (math.nan, f"doubted: {fy[1]}")
    values["Fu"] = (math.nan, f"doubted: {fu[1]}")


def _fmt_si(q: str, v: float) -> str:
    if not math.isfinite(v):
        return "not a finite number"
    if q in ("E", "Fy", "Fu"):
        return f"{v / 1e6:.6g} MPa"
    if q == "alpha":
        return f"{v:.3g} 1/K"
    if q == "density":
        return f"{v:.6g} kg/m³"
    return f"{v:.6g}"


def _unit_problem(exc: MissingUnit) -> str:
    """'has no unit (…)' or, for a unit the file states but that cannot be used, 'has no usable unit (…)'
    ('… of its own' where the value carries that unit itself)."""
    if isinstance(exc, UnusableOwnUnit):
        return f"has no usable unit of its own ({exc.reason})"
    return f"has no usable unit ({exc})" if isinstance(exc, UnusableUnit) else f"has no unit ({exc})"


def _number_as_written(raw: Any) -> str:
    """A number as the file writes it, shortly (210000.0 -> '210000', 29000000.0 -> '29000000')."""
    try:
        v = float(raw)
    except (TypeError, ValueError):
        return repr(raw)
    if math.isfinite(v) and v == int(v) and abs(v) < 1e15:
        return str(int(v))
    return f"{v:.6g}" if math.isfinite(v) else "a value that is not a finite number"


def _has_sweep_body(el: Any) -> bool:
    rep = el.Representation
    if rep is None:
        return False
    for r in rep.Representations or ():
        for it in r.Items or ():
            cur = it
            for _ in range(8):
                if cur.is_a("IfcMappedItem"):
                    src = cur.MappingSource
                    mapped = src.MappedRepresentation if src is not None else None
                    items = mapped.Items if mapped is not None else None
                    cur = items[0] if items else None
                elif cur.is_a("IfcBooleanResult"):
                    cur = cur.FirstOperand
                else:
                    break
                if cur is None:
                    break
            if cur is not None and (cur.is_a("IfcSweptAreaSolid") or cur.is_a("IfcSweptDiskSolid")):
                return True
    return False


def member_entities(idx: ModelIndex) -> list[tuple[Any, bool]]:
    """(element, is_analysis_member) for every axial-member candidate, in file order."""
    f = idx.file
    seen: set[int] = set()

    def by_type(cls: str) -> list[Any]:
        try:
            return f.by_type(cls)
        except RuntimeError:  # class not in this schema
            return []

    keyed: list[tuple[int, Any, bool]] = []   # (entity id, element, is_analysis_member)
    for cls in MEMBER_CLASSES:
        for el in by_type(cls):
            eid = el.id()
            if eid not in seen:
                seen.add(eid)
                keyed.append((eid, el, False))
    for cls in SWEEP_CLASSES:
        for el in by_type(cls):
            eid = el.id()
            if eid not in seen and _has_sweep_body(el):
                seen.add(eid)
                keyed.append((eid, el, False))
    assigned = {o.id() for objs in idx.assigned_to.values() for o in objs}
    # also the reversed assignment: the curve member relating, the physical element related
    assigned |= {pid for pid, objs in idx.assigned_to.items() if any(o.is_a("IfcElement") for o in objs)}
    for el in by_type("IfcStructuralCurveMember"):
        eid = el.id()
        if eid not in assigned:
            keyed.append((eid, el, True))
    keyed.sort(key=itemgetter(0))
    return [(el, analysis) for _, el, analysis in keyed]


def _is_member_element(el: Any) -> bool:
    """Whether ``el`` is an axial-member candidate (``member_entities``'s rule for a physical element)."""
    return (any(el.is_a(c) for c in MEMBER_CLASSES)
            or (any(el.is_a(c) for c in SWEEP_CLASSES) and _has_sweep_body(el)))


def analysis_members_not_checked(idx: ModelIndex) -> list[str]:
    """One line per kind of physical element that analysis curve members stand for but that is not
    an axial member (a footing, a slab): those curve members are not checked, and say so."""
    by_class: dict[str, list[str]] = {}
    pairs = [(pid, o) for pid, objs in idx.assigned_to.items() for o in objs]
    if not pairs:
        return []
    f = idx.file
    stands_for: dict[int, tuple[Any, list[Any]]] = {}   # curve member id -> (it, its physical elements)
    for pid, o in pairs:
        prod = f.by_id(pid)
        if o.is_a("IfcStructuralCurveMember") and prod.is_a("IfcElement"):
            stands_for.setdefault(o.id(), (o, []))[1].append(prod)
        elif prod.is_a("IfcStructuralCurveMember") and o.is_a("IfcElement"):
            stands_for.setdefault(prod.id(), (prod, []))[1].append(o)
    for cm, prods in stands_for.values():
        if any(_is_member_element(p) for p in prods):
            continue
        kinds = " / ".join(sorted({p.is_a() for p in prods}))
        by_class.setdefault(kinds, []).append(str(cm.GlobalId))
    lines = []
    for kinds, gids in sorted(by_class.items()):
        gids.sort()
        shown = ", ".join(gids[:10]) + (f" and {len(gids) - 10} more" if len(gids) > 10 else "")
        n = len(gids)
        lines.append(f"{n} analysis curve member{'s' if n != 1 else ''} ({shown}) stand{'s' if n == 1 else ''} "
                     f"for {kinds}, not an axial member: not checked")
    return lines


def member_keys(idx: ModelIndex, entities: list[tuple[Any, bool]]) -> tuple[list[str], list[str | None]]:
    """(GlobalId, Tag) of each entity as the member table will hold them: '#id' for a member with
    no GlobalId, None for no Tag. Reads two attributes per member, nothing below them."""
    reader = _Reader(idx, False)
    gids: list[str] = []
    tags: list[str | None] = []
    for el, _ in entities:
        gid = tag = None
        try:
            gid = el.get_argument(0)
            if reader._positions(el.is_a())[0]:
                tag = el.get_argument(7)
        except RuntimeError as exc:
            raise_if_parse_error(idx.path, exc)
        gids.append(gid if isinstance(gid, str) else f"#{el.id()}")
        tags.append(tag if isinstance(tag, str) else None)
    return gids, tags


def read_members(idx: ModelIndex, *, use_library: bool = True,
                 entities: list[tuple[Any, bool]] | None = None) -> MemberTable:
    """The member table of one model (see ``modelcheck.common.table``) and its model-level
    warnings; of ``entities`` only (as ``member_entities`` gives them) when given."""
    reader = _Reader(idx, use_library)
    rows: list[MemberRow] = []
    for el, analysis in (member_entities(idx) if entities is None else entities):
        try:
            rows.append(reader.member(el, analysis))
        except (RecursionError, SystemError) as exc:
            # a cycle of references below this member that no reader step bounds (ifcopenshell
            # reports Python's RecursionError inside its attribute read as a SystemError)
            if not isinstance(exc, RecursionError) and not isinstance(exc.__cause__, RecursionError):
                raise
            rows.append(_unreadable_member(el, f"member cannot be read: the entities below #{el.id()} refer "
                                               "to themselves in a cycle"))
        except RuntimeError as exc:  # a dangling or malformed entity deep below this member
            raise_if_parse_error(idx.path, exc)
            rows.append(_unreadable_member(el, f"member cannot be read: {idx.explain(exc)}"))
        except (AttributeError, TypeError, ValueError, ArithmeticError) as exc:
            # ifcopenshell hands back whatever the file holds, even where the schema allows
            # no such value (text for a number, a number for a reference): this member only
            rows.append(_unreadable_member(
                el, f"member cannot be read: an entity below #{el.id()} holds a value the IFC schema does "
                    f"not allow ({type(exc).__name__}: {exc}); 'modelcheck check --validate' lists them"))
    df = _assemble(idx.path, rows)
    idx.drain_log()  # what parsing the members' entities logged (the file is parsed lazily)
    problems = idx.parse_problems
    warnings = (tuple(problems) + tuple(reader.model_warnings) + tuple(analysis_members_not_checked(idx))
                + tuple(idx.units.problems))
    return MemberTable(df, warnings, len(problems))


def _unreadable_member(el: Any, warning: str) -> MemberRow:
    """The row of a member whose data could not be read: identity only, unchecked, the reason."""
    try:
        gid = el.GlobalId
    except RuntimeError:
        gid = None
    if not isinstance(gid, str):
        gid = f"#{el.id()}"
    name, tag = (_text_attribute(el, "Name"), _text_attribute(el, "Tag"))
    return MemberRow(gid, el.is_a(), None, None, name, tag, None, None, None, None, math.nan, None, [warning],
                     el.id(), _NO_NET, (("*", warning),))


def _text_attribute(el: Any, attr: str) -> str | None:
    """A text attribute of an entity whose data may break the schema: the text, or None."""
    try:
        value = getattr(el, attr, None)
    except RuntimeError:
        return None
    return value if isinstance(value, str) else None


def _distinct(objects: list[Any]) -> tuple[np.ndarray, list[Any]]:
    """(code of each item, the distinct objects by identity, in order of first appearance)."""
    seen: dict[int, int] = {}
    distinct: list[Any] = []
    codes = np.empty(len(objects), dtype=np.intp)
    for i, o in enumerate(objects):
        c = seen.get(id(o))
        if c is None:
            c = seen[id(o)] = len(distinct)
            distinct.append(o)
        codes[i] = c
    return codes, distinct


_NO_SECTION = Section(math.nan, math.nan, "")
_NO_MATERIAL = MaterialInfo(None, None, None, {})


def _assemble(path: str, rows: list[MemberRow]) -> pd.DataFrame:
    """Columns from the member rows; section and material columns come from shared objects."""
    n = len(rows)
    cols: dict[str, Any] = {"model": [path] * n}
    # the rows turned into one sequence per field of MemberRow
    fields: dict[str, tuple[Any, ...]] = (dict(zip(MemberRow._fields, zip(*rows, strict=True), strict=True)) if n
                                          else dict.fromkeys(MemberRow._fields, ()))
    for column in ("global_id", "ifc_class", "predefined_type", "object_type", "name", "tag", "storey", "type_name"):
        cols[column] = list(fields[column])
    # members share a few section and material objects: each column is made per distinct object
    sec_code, secs = _distinct([s if s is not None else _NO_SECTION for s in fields["section"]])
    mat_code, mats = _distinct([m if m is not None else _NO_MATERIAL for m in fields["material"]])
    warns, rejects, nets = fields["warnings"], fields["rejected"], fields["net"]

    def per(objects: list[Any], codes: np.ndarray, value: Any, dtype: Any = object) -> np.ndarray:
        out = np.empty(len(objects), dtype=dtype)
        out[:] = [value(o) for o in objects]
        return out[codes]

    cols["section_name"] = per(secs, sec_code, lambda s: s.name)
    cols["profile_type"] = per(secs, sec_code, lambda s: s.profile_type)
    cols["shape"] = per(secs, sec_code, lambda s: s.shape)
    for d in ("d", "h", "b", "tf", "tw", "t", "r_root"):
        cols[d] = per(secs, sec_code, lambda s, d=d: s.dims.get(d, math.nan), float)
    cols["material"] = per(mats, mat_code, lambda m: m.name)
    cols["material_category"] = per(mats, mat_code, lambda m: m.category)
    cols["material_grade"] = per(mats, mat_code, lambda m: m.grade)
    cols["area"] = per(secs, sec_code, lambda s: s.area, float)
    cols["area_source"] = per(secs, sec_code, lambda s: s.source or None)
    cols["r_min"] = per(secs, sec_code, lambda s: s.r_min, float)
    cols["r_min_source"] = per(secs, sec_code, lambda s: None if math.isnan(s.r_min) else (s.r_source or s.source))
    cols["length"] = np.array(fields["length"], dtype=float)
    cols["length_source"] = list(fields["length_source"])
    nan_pair = (math.nan, None)
    for q in ("E", "Fy", "Fu", "alpha"):
        cols[q] = per(mats, mat_code, lambda m, q=q: m.values.get(q, nan_pair)[0], float)
        cols[f"{q}_source"] = per(mats, mat_code, lambda m, q=q: m.values.get(q, nan_pair)[1])
    mat_warnings = [m.warnings for m in mats]
    cols["warnings"] = [list(mat_warnings[c]) + w if mat_warnings[c] else w
                        for c, w in zip(mat_code.tolist(), warns, strict=True)]
    mat_rejected = [m.rejected for m in mats]
    cols["rejected"] = _objects([mat_rejected[c] + r if mat_rejected[c] else r
                                 for c, r in zip(mat_code.tolist(), rejects, strict=True)])
    cols["warnings"] = _objects(cols["warnings"])
    cols["entity_id"] = np.array(fields["entity_id"], dtype=np.int64)
    cols["net_area"] = np.array([x.area for x in nets], dtype=float)
    cols["net_area_source"] = [x.area_source for x in nets]
    cols["shear_lag"] = np.array([x.shear_lag for x in nets], dtype=float)
    cols["shear_lag_source"] = [x.shear_lag_source for x in nets]
    # numbers as floats; texts as objects with None for missing (frame_of), never NaN
    return frame_of({k: cols[k] for k in member_columns()})


def _objects(items: list[Any]) -> pd.Series:
    """One object per member (a list or tuple each, kept as it is)."""
    return pd.Series(np.fromiter(items, dtype=object, count=len(items)), dtype=object)
