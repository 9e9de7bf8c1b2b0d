"""Turn every axial member of a model into one row of the member table (SI, with provenance).

Example::

    from modelcheck.ifc.index import build_index
    from modelcheck.ifc.reader import read_members
    members = read_members(build_index("sample_models/mezzanine.ifc"))
    members[["global_id", "area", "area_source", "length", "Fy"]]

What is read, in the order each source ranks (the first one present is used; every other one
present is compared with it and a disagreement beyond ``AREA_TOLERANCE`` / ``LENGTH_TOLERANCE``
becomes a warning on the member, both values named):

* section: IfcMaterialProfileSetUsage / IfcMaterialProfileSet on the occurrence, then on its
  type; the body (IfcExtrudedAreaSolid swept area, IfcSweptDiskSolid radii, also through
  IfcMappedItem and the first operand of clippings); Pset_ProfileMechanical on the profile or the
  element (IFC2X3: IfcStructuralProfileProperties); Qto_*BaseQuantities.CrossSectionArea.
* length: the Axis representation, the extrusion depth, the swept-disk directrix, Qto_*.Length.
* material: on the occurrence (directly or via profile / layer / constituent sets and lists),
  else on its type. Mechanical values from Pset_MaterialMechanical / Pset_MaterialSteel
  (IfcMechanical(Steel)MaterialProperties in IFC2X3), else from the material library.

Each shared entity (profile, material, type, mapped representation) is computed once and cached
by entity id; the relationships come from the model index walked once.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
import pandas as pd

from modelcheck.ifc.index import ModelIndex, SIValue, find_quantity, measure_si, property_si
from modelcheck.ifc.profiles import ProfileSection, UnsupportedProfile, section_of
from modelcheck.table import QUANTITY_COLUMNS, member_columns
from modelcheck.units import MissingUnit

#: classes that are always axial-member candidates (subtypes included)
MEMBER_CLASSES = ("IfcMember", "IfcColumn", "IfcBeam", "IfcTendon")
#: classes taken only when their body is a profile sweep
SWEEP_CLASSES = ("IfcBuildingElementProxy", "IfcDiscreteAccessory", "IfcFastener", "IfcMechanicalFastener")

AREA_TOLERANCE = 0.02     # 2 % between two sources of the cross-section area
LENGTH_TOLERANCE = 0.05   # 5 % between two sources of the length (end cuts make axis ≠ body)

#: plausible section and length bounds for an axial member (SI) — beyond them a value is doubted
MAX_SECTION_DIM = 2.0     # m: no rod, brace or post of these kinds is 2 m across
MAX_LENGTH = 200.0        # m
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


@dataclass(frozen=True)
class MaterialInfo:
    name: str | None
    category: str | None
    grade: str | None
    values: dict[str, tuple[float, str]]   # E/Fy/Fu/alpha -> (SI value, source)
    warnings: tuple[str, ...] = ()


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
        except MissingUnit:
            self.angle = 1.0  # IFC's own default for plane angles is the radian (IfcPlaneAngleMeasure)
        self._profile_cache: dict[int, Section | str] = {}
        self._material_cache: dict[int, MaterialInfo] = {}
        self._body_cache: dict[int, tuple[Section | str | None, tuple[float, str] | None]] = {}
        self._type_cache: dict[int, tuple[str | None, Any, list[Any]]] = {}

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
            ps: ProfileSection = section_of(prof, angle_factor=self.angle)
        except UnsupportedProfile as exc:
            return str(exc)
        except (RuntimeError, AttributeError, TypeError, ValueError, ZeroDivisionError) as exc:
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
    def body(self, rep_items: list[Any], scale: float = 1.0) -> tuple[Section | str | None, tuple[float, str] | None]:
        """(section or reason, (length, source)) from body items; None where the body says nothing."""
        for item in rep_items:
            sec, length = self._body_item(item, scale, 0)
            if sec is not None or length is not None:
                return sec, length
        return None, None

    def _body_item(self, item: Any, scale: float, depth: int) -> tuple[Section | str | None, tuple[float, str] | None]:
        if depth > 8:
            return None, None
        cls = item.is_a()
        lf = self.lf
        if cls in ("IfcExtrudedAreaSolid", "IfcExtrudedAreaSolidTapered"):
            sec = self.profile(item.SweptArea, scale)
            length = None
            if lf is not None and item.Depth is not None:
                length = (float(item.Depth) * lf * scale, f"{cls} #{item.id()} Depth")
            return sec, length
        if cls == "IfcSweptDiskSolid":
            if lf is None:
                return "no LENGTHUNIT in the model", None
            r = float(item.Radius) * lf * scale
            ri = float(item.InnerRadius or 0.0) * lf * scale
            src = f"IfcSweptDiskSolid #{item.id()}"
            if not (r > 0 and 0 <= ri < r):
                sec: Section | str = f"{src}: radius {item.Radius} / inner radius {item.InnerRadius} is not a section"
            else:
                area = math.pi * (r * r - ri * ri)
                rg = math.sqrt(r * r + ri * ri) / 2.0  # circle / annulus, I = π(R⁴−r⁴)/4
                dims = {"d": 2 * r} | ({"t": r - ri} if ri > 0 else {})
                sec = Section(area, rg, src, None, "IfcSweptDiskSolid", "round-tube" if ri > 0 else "round-bar", dims)
            clen = self.curve_length(item.Directrix)
            length = (clen * lf * scale, f"{src} Directrix") if clen is not None else None
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
            return self.body(list(src.MappedRepresentation.Items or ()), s)
        if cls in ("IfcBooleanClippingResult", "IfcBooleanResult"):
            op = item.FirstOperand
            return self._body_item(op, scale, depth + 1) if op is not None else (None, None)
        return None, None

    def curve_length(self, curve: Any) -> float | None:
        """Length of a straight-segment curve in file units (None if not a polyline-like curve)."""
        cls = curve.is_a()
        if cls == "IfcPolyline":
            pts = np.array([p.Coordinates for p in curve.Points], dtype=float)
        elif cls == "IfcIndexedPolyCurve":
            if curve.Segments:
                for seg in curve.Segments:
                    if seg.is_a("IfcArcIndex"):
                        return None
            pts = np.array(curve.Points.CoordList, dtype=float)
        elif cls == "IfcTrimmedCurve" and curve.BasisCurve.is_a("IfcLine"):
            t1, t2 = curve.Trim1, curve.Trim2
            p1 = next((t for t in t1 if hasattr(t, "Coordinates")), None)
            p2 = next((t for t in t2 if hasattr(t, "Coordinates")), None)
            if p1 is not None and p2 is not None:
                pts = np.array([p1.Coordinates, p2.Coordinates], dtype=float)
            else:
                v1 = next((t.wrappedValue for t in t1 if t.is_a("IfcParameterValue")), None)
                v2 = next((t.wrappedValue for t in t2 if t.is_a("IfcParameterValue")), None)
                if v1 is None or v2 is None:
                    return None
                mag = float(curve.BasisCurve.Dir.Magnitude)
                return abs(float(v2) - float(v1)) * mag
        else:
            return None
        if len(pts) < 2:
            return None
        return float(np.sum(np.linalg.norm(np.diff(pts, axis=0), axis=1)))

    # ----------------------------------------------------------------- materials
    def material(self, select: Any) -> tuple[MaterialInfo | None, list[Any]]:
        """Material info of a material select, and the profiles it carries (profile sets)."""
        mats, profiles = _unpack_material(select)
        if not mats:
            return None, profiles
        mat = mats[0]
        info = self._material_info(mat)
        if len({m.id() for m in mats}) > 1:
            names = ", ".join(sorted({str(m.Name) for m in mats}))
            info = MaterialInfo(info.name, info.category, info.grade, info.values,
                                info.warnings + (f"several materials ({names}); using {mat.Name!r}",))
        return info, profiles

    def _material_info(self, mat: Any) -> MaterialInfo:
        key = mat.id()
        if key in self._material_cache:
            return self._material_cache[key]
        values: dict[str, tuple[float, str]] = {}
        warnings: list[str] = []
        for mp in self.idx.material_props.get(key, ()):
            self._read_material_props(mp, values, warnings)
        category = getattr(mat, "Category", None)
        grade = None
        if self.use_library:
            from modelcheck.materials import match_material

            lib = match_material(mat.Name, category)
            if lib is not None:
                grade = lib.grade
                category = category or lib.category
                for q in ("E", "Fy", "Fu", "alpha"):
                    if q not in values and not math.isnan(getattr(lib, q)):
                        values[q] = (float(getattr(lib, q)), lib.sources.get(q, f"material library: {lib.grade}"))
        self._plausibility(mat, category, values, warnings)
        info = MaterialInfo(mat.Name, category, grade, values, tuple(warnings))
        self._material_cache[key] = info
        return info

    _IFC2X3_ATTRS = {"YoungModulus": ("E", "IfcModulusOfElasticityMeasure"),
                     "ThermalExpansionCoefficient": ("alpha", "IfcThermalExpansionCoefficientMeasure"),
                     "YieldStress": ("Fy", "IfcPressureMeasure"),
                     "UltimateStress": ("Fu", "IfcPressureMeasure")}
    _PSET_PROPS = {("Pset_MaterialMechanical", "YoungModulus"): "E",
                   ("Pset_MaterialMechanical", "ThermalExpansionCoefficient"): "alpha",
                   ("Pset_MaterialSteel", "YieldStress"): "Fy",
                   ("Pset_MaterialSteel", "UltimateStress"): "Fu"}

    def _read_material_props(self, mp: Any, values: dict[str, tuple[float, str]], warnings: list[str]) -> None:
        cls = mp.is_a()
        if cls in ("IfcMechanicalMaterialProperties", "IfcMechanicalSteelMaterialProperties"):
            for attr, (q, measure) in self._IFC2X3_ATTRS.items():
                raw = getattr(mp, attr, None)
                if raw is None or q in values:
                    continue
                try:
                    v = measure_si(self.idx, measure, float(raw))
                except MissingUnit as exc:
                    warnings.append(f"{cls} #{mp.id()}.{attr} = {raw} not used: {exc}")
                    continue
                values[q] = (v.value, f"{cls} #{mp.id()}.{attr} [{v.unit}]")
            return
        name = getattr(mp, "Name", None)
        for prop in getattr(mp, "Properties", None) or ():
            q = self._PSET_PROPS.get((name, prop.Name))
            if q is None or q in values or not prop.is_a("IfcPropertySingleValue"):
                continue
            try:
                v = property_si(self.idx, prop)
            except MissingUnit as exc:
                warnings.append(f"{name}.{prop.Name} = {prop.NominalValue.wrappedValue} not used: {exc}")
                continue
            if v is not None:
                values[q] = (v.value, f"{name}.{prop.Name} [{v.unit}]")

    def _plausibility(self, mat: Any, category: str | None, values: dict[str, tuple[float, str]],
                      warnings: list[str]) -> None:
        from modelcheck.materials import plausible_range

        ranges = plausible_range(category)
        for q, (v, src) in list(values.items()):
            lo, hi = ranges.get(q, (-math.inf, math.inf))
            if not (math.isfinite(v) and lo <= v <= hi):
                warnings.append(
                    f"material {mat.Name!r}: {q} = {_fmt_si(q, v)} from {src} is outside the plausible "
                    f"range {_fmt_si(q, lo)}–{_fmt_si(q, hi)} for {category or 'an unknown category'}; not used")
                values[q] = (math.nan, f"doubted: {src}")

    # -------------------------------------------------------------------- member
    def member_row(self, el: Any, cols: dict[str, list[Any]], analysis: bool = False) -> None:
        idx = self.idx
        eid = el.id()
        warnings: list[str] = []
        typ = idx.type_of.get(eid)
        type_name, type_mat, type_psets = self.type_info(typ) if typ is not None else (None, None, [])
        predefined = getattr(el, "PredefinedType", None)
        object_type = el.ObjectType if hasattr(el, "ObjectType") else None
        if predefined is None and typ is not None:
            predefined = getattr(typ, "PredefinedType", None)
        if predefined == "USERDEFINED" and not object_type and typ is not None:
            object_type = getattr(typ, "ElementType", None)
        storey = idx.storey_of.get(eid)
        psets = idx.psets_of.get(eid, [])

        # --- material and profile sets (occurrence first, then type)
        own_sel = idx.material_of.get(eid)
        minfo, own_profiles = self.material(own_sel) if own_sel is not None else (None, [])
        tinfo, type_profiles = self.material(type_mat) if type_mat is not None else (None, [])
        if minfo is None and tinfo is not None:
            minfo = tinfo
        if minfo is not None:
            warnings.extend(minfo.warnings)

        # --- section candidates, ranked
        candidates: list[Section] = []
        problems: list[str] = []
        for profs, where in ((own_profiles, "occurrence"), (type_profiles, f"type {type_name!r}")):
            if not profs:
                continue
            sec = self.profile(profs[0]) if len(profs) == 1 else self._composite(profs)
            if isinstance(sec, Section):
                candidates.append(sec if where == "occurrence" else replace(sec, source=f"{sec.source} (via {where})"))
            else:
                problems.append(sec)
            break  # the occurrence's own set overrides the type's
        body_sec, body_len = (None, None)
        axis_len = None
        rep = el.Representation
        if rep is not None:
            body_sec, body_len, axis_len = self._representation(rep)
        if isinstance(body_sec, Section):
            candidates.append(body_sec)
        elif isinstance(body_sec, str):
            problems.append(body_sec)
        mech = self._profile_mechanical(own_profiles or type_profiles, psets)
        if mech is not None:
            candidates.append(mech)
        qset, qarea = find_quantity(psets, "CrossSectionArea")
        if qarea is not None and qarea.is_a("IfcQuantityArea"):
            try:
                v = measure_si(idx, "IfcAreaMeasure", float(qarea.AreaValue), getattr(qarea, "Unit", None))
                candidates.append(Section(v.value, math.nan, f"{qset.Name}.CrossSectionArea [{v.unit}]"))
            except MissingUnit as exc:
                problems.append(f"{qset.Name}.CrossSectionArea = {qarea.AreaValue} not used: {exc}")

        section = None
        for cand in candidates:
            doubt = _doubt_section(cand)
            if doubt:
                warnings.append(doubt)
                continue
            if section is None:
                section = cand
            else:
                rel = abs(cand.area - section.area) / section.area
                if rel > AREA_TOLERANCE:
                    warnings.append(
                        f"inconsistent area: {section.source} gives {section.area * 1e6:.6g} mm², "
                        f"{cand.source} gives {cand.area * 1e6:.6g} mm² ({rel:+.1%}); using the first")
                if math.isnan(section.r_min) and not math.isnan(cand.r_min):
                    section = replace(section, r_min=cand.r_min, r_source=cand.source)
        if section is None:
            warnings.extend(problems)

        # --- length candidates, ranked
        lengths: list[tuple[float, str]] = [x for x in (axis_len, body_len) if x is not None]
        qset_l, qlen = find_quantity(psets, "Length")
        if qlen is not None and qlen.is_a("IfcQuantityLength"):
            try:
                v = measure_si(idx, "IfcLengthMeasure", float(qlen.LengthValue), getattr(qlen, "Unit", None))
                lengths.append((v.value, f"{qset_l.Name}.Length [{v.unit}]"))
            except MissingUnit as exc:
                warnings.append(f"{qset_l.Name}.Length = {qlen.LengthValue} not used: {exc}")
        if analysis:
            tl = self._topology_length(el)
            if tl is not None:
                lengths.insert(0, tl)
        length = (math.nan, None)
        for val, src in lengths:
            if not (math.isfinite(val) and 0 < val <= MAX_LENGTH):
                warnings.append(f"length {val:.6g} m from {src} is not plausible for a member; not used")
                continue
            if length[1] is None:
                length = (val, src)
            elif abs(val - length[0]) / length[0] > LENGTH_TOLERANCE:
                warnings.append(f"inconsistent length: {length[1]} gives {length[0]:.6g} m, "
                                f"{src} gives {val:.6g} m; using the first")

        # --- write the row
        put = _Putter(cols)
        put("model", idx.path)
        put("global_id", el.GlobalId)
        put("ifc_class", el.is_a())
        put("predefined_type", predefined)
        put("object_type", object_type)
        put("name", el.Name)
        put("tag", getattr(el, "Tag", None))
        put("storey", storey.Name if storey is not None else None)
        put("type_name", type_name)
        if section is not None:
            put("section_name", section.name)
            put("profile_type", section.profile_type)
            put("shape", section.shape)
            for d in ("d", "h", "b", "tf", "tw", "t"):
                put(d, section.dims.get(d, math.nan))
            put("area", section.area)
            put("area_source", section.source)
            put("r_min", section.r_min)
            put("r_min_source", (_r_source(section) if not math.isnan(section.r_min) else None))
        else:
            for c in ("section_name", "profile_type", "shape", "area_source", "r_min_source"):
                put(c, None)
            for c in ("d", "h", "b", "tf", "tw", "t", "area", "r_min"):
                put(c, math.nan)
        put("length", length[0])
        put("length_source", length[1])
        if minfo is not None:
            put("material", minfo.name)
            put("material_category", minfo.category)
            put("material_grade", minfo.grade)
        else:
            put("material", None)
            put("material_category", None)
            put("material_grade", None)
        for q in ("E", "Fy", "Fu", "alpha"):
            v, s = (minfo.values.get(q, (math.nan, None)) if minfo is not None else (math.nan, None))
            put(q, v)
            put(f"{q}_source", s)
        put("warnings", warnings)

    def _representation(self, rep: Any) -> tuple[Section | str | None, tuple[float, str] | None, tuple[float, str] | None]:
        body_sec = body_len = axis_len = None
        for r in rep.Representations or ():
            ident = r.RepresentationIdentifier
            items = list(r.Items or ())
            if ident == "Axis" and axis_len is None and self.lf is not None:
                for it in items:
                    cl = self.curve_length(it)
                    if cl is not None:
                        axis_len = (cl * self.lf, f"Axis {it.is_a()} #{it.id()}")
                        break
            elif ident in ("Body", None) and body_sec is None:
                key = r.id()
                if key not in self._body_cache:
                    self._body_cache[key] = self.body(items)
                body_sec, body_len = self._body_cache[key]
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

    def _profile_mechanical(self, profiles: list[Any], psets: list[Any]) -> Section | None:
        """Pset_ProfileMechanical (profile or element) / IFC2X3 IfcStructuralProfileProperties."""
        sources: list[tuple[str, dict[str, SIValue]]] = []
        for prof in profiles[:1]:
            for pp in self.idx.profile_props.get(prof.id(), ()):
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
                    sources.append((f"{pp.is_a()} #{pp.id()}", vals))
                elif getattr(pp, "Name", None) == "Pset_ProfileMechanical":
                    sources.append((f"Pset_ProfileMechanical #{pp.id()}", self._props_si(pp.Properties)))
        for ps in psets:
            if ps.is_a("IfcPropertySet") and ps.Name == "Pset_ProfileMechanical":
                sources.append((f"Pset_ProfileMechanical #{ps.id()}", self._props_si(ps.HasProperties)))
        for src, vals in sources:
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
            return Section(a.value, r, f"{src}.CrossSectionArea")
        return None

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

    def _topology_length(self, el: Any) -> tuple[float, str] | None:
        """Length of an analysis curve member from its IfcEdge topology."""
        if self.lf is None or el.Representation is None:
            return None
        for r in el.Representation.Representations or ():
            for it in r.Items or ():
                if it.is_a("IfcEdge"):
                    try:
                        a = np.array(it.EdgeStart.VertexGeometry.Coordinates, dtype=float)
                        b = np.array(it.EdgeEnd.VertexGeometry.Coordinates, dtype=float)
                    except AttributeError:
                        continue
                    return float(np.linalg.norm(b - a)) * self.lf, f"IfcEdge #{it.id()}"
        return None


class _Putter:
    __slots__ = ("cols",)

    def __init__(self, cols: dict[str, list[Any]]) -> None:
        self.cols = cols

    def __call__(self, key: str, value: Any) -> None:
        self.cols[key].append(value)


def _r_source(sec: Section) -> str:
    return sec.r_source or sec.source


def _doubt_section(sec: Section) -> str | None:
    if not (math.isfinite(sec.area) and sec.area >= MIN_AREA):
        return f"section from {sec.source} has area {sec.area:.6g} m², which is not a section; not used"
    big = {k: v for k, v in sec.dims.items() if math.isfinite(v) and v > MAX_SECTION_DIM}
    if big:
        k, v = next(iter(big.items()))
        return (f"section from {sec.source} has {k} = {v:.4g} m, not plausible for an axial member "
                f"(over {MAX_SECTION_DIM:g} m); not used")
    return None


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


def _fmt_si(q: str, v: float) -> str:
    if not math.isfinite(v):
        return str(v)
    if q in ("E", "Fy", "Fu"):
        return f"{v / 1e6:.6g} MPa"
    if q == "alpha":
        return f"{v:.3g} 1/K"
    return f"{v:.6g}"


def _has_sweep_body(el: Any) -> bool:
    rep = el.Representation
    if rep is None:
        return False
    for r in rep.Representations or ():
        for it in r.Items or ():
            cur = it
            for _ in range(8):
                if cur.is_a("IfcMappedItem"):
                    items = cur.MappingSource.MappedRepresentation.Items
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
    out: list[tuple[Any, bool]] = []

    def by_type(cls: str) -> list[Any]:
        try:
            return f.by_type(cls)
        except RuntimeError:  # class not in this schema
            return []

    for cls in MEMBER_CLASSES:
        for el in by_type(cls):
            if el.id() not in seen:
                seen.add(el.id())
                out.append((el, False))
    for cls in SWEEP_CLASSES:
        for el in by_type(cls):
            if el.id() not in seen and _has_sweep_body(el):
                seen.add(el.id())
                out.append((el, False))
    assigned = {o.id() for objs in idx.assigned_to.values() for o in objs}
    for el in by_type("IfcStructuralCurveMember"):
        if el.id() not in assigned:
            out.append((el, True))
    out.sort(key=lambda t: t[0].id())
    return out


def read_members(idx: ModelIndex, *, use_library: bool = True) -> pd.DataFrame:
    """The member table of one model (see ``modelcheck.table``)."""
    reader = _Reader(idx, use_library)
    columns = member_columns()
    cols: dict[str, list[Any]] = {c: [] for c in columns}
    for el, analysis in member_entities(idx):
        try:
            reader.member_row(el, cols, analysis)
        except (RuntimeError, AttributeError) as exc:  # a broken entity deep below this member
            _drop_partial(cols)
            _broken_row(cols, idx, el, f"member cannot be read: {exc}")
    df = pd.DataFrame(cols, columns=columns)
    for q in QUANTITY_COLUMNS:
        df[q] = df[q].astype(float)
    for d in ("d", "h", "b", "tf", "tw", "t"):
        df[d] = df[d].astype(float)
    df.attrs["model_warnings"] = reader.model_warnings + list(idx.units.problems)
    return df


def _drop_partial(cols: dict[str, list[Any]]) -> None:
    n = min(len(v) for v in cols.values())
    for v in cols.values():
        del v[n:]


def _broken_row(cols: dict[str, list[Any]], idx: ModelIndex, el: Any, why: str) -> None:
    for key, vals in cols.items():
        if key in QUANTITY_COLUMNS or key in ("d", "h", "b", "tf", "tw", "t"):
            vals.append(math.nan)
        else:
            vals.append(None)
    cols["model"][-1] = idx.path
    try:
        cols["global_id"][-1] = el.GlobalId
        cols["ifc_class"][-1] = el.is_a()
    except RuntimeError:
        cols["global_id"][-1] = f"#{el.id()}"
    cols["warnings"][-1] = [why]
