"""Write small IFC models in code: the one builder behind the sample models, tests and benchmark.

Example::

    from modelcheck.testing.author import ModelBuilder
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0)
    mb.member("IfcMember", name="Hanger H1", profile=rod, material=steel, length=2400.0,
              predefined_type="MEMBER")
    mb.write("hangers.ifc")

Values are given in the model's own units (``units="mm"``: lengths in mm, forces in N, stresses
in N/mm²; ``"m"``: m, kN, kN/m²… see ``UNIT_SYSTEMS``). Nothing here guesses; it writes what it
is told. Entities are created with ``create_entity`` directly (fast enough for 100,000 members).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from typing import Any

import ifcopenshell
import ifcopenshell.guid

# unit system name -> definitions used by _assign_units
UNIT_SYSTEMS = ("mm", "m", "inch-kip", "foot-kip")


class ModelBuilder:
    """Builds one IFC model: project, units, contexts, site/building/storeys, members."""

    def __init__(self, schema: str = "IFC4", units: str = "mm", *, name: str = "Project",
                 force_unit: bool = True, with_units: bool = True) -> None:
        if units not in UNIT_SYSTEMS:
            raise ValueError(f"units must be one of {UNIT_SYSTEMS}")
        self.schema = schema
        self.units = units
        self.f = ifcopenshell.file(schema=schema)
        f = self.f
        self._owner = self._owner_history() if schema == "IFC2X3" else None
        self.origin = f.createIfcCartesianPoint((0.0, 0.0, 0.0))
        self.world = f.createIfcAxis2Placement3D(self.origin, None, None)
        self.context = f.createIfcGeometricRepresentationContext(None, "Model", 3, 1.0e-5, self.world, None)
        self.body_ctx = f.createIfcGeometricRepresentationSubContext(
            "Body", "Model", None, None, None, None, self.context, None, "MODEL_VIEW", None)
        self.axis_ctx = f.createIfcGeometricRepresentationSubContext(
            "Axis", "Model", None, None, None, None, self.context, None, "GRAPH_VIEW", None)
        self.project = f.create_entity("IfcProject", GlobalId=self.guid(), OwnerHistory=self._owner,
                                       Name=name, RepresentationContexts=[self.context])
        if with_units:
            self.project.UnitsInContext = self._assign_units(force_unit)
        self.site = self._spatial("IfcSite", "Site", None)
        self.building = self._spatial("IfcBuilding", "Building", self.site)
        self.storeys: dict[str, Any] = {}
        self._contained: dict[int, list[Any]] = {}
        self._material_assoc: dict[int, list[Any]] = {}
        self._type_of: dict[int, list[Any]] = {}
        self._project_agg = self._aggregate(self.project, [self.site])
        self._aggregate(self.site, [self.building])

    # ----------------------------------------------------------------- basics
    @staticmethod
    def guid() -> str:
        return ifcopenshell.guid.new()

    def _owner_history(self) -> Any:
        f = self.f
        person = f.createIfcPerson(None, "Author", None, None, None, None, None, None)
        org = f.createIfcOrganization(None, "Example Org", None, None, None)
        pao = f.createIfcPersonAndOrganization(person, org, None)
        app = f.createIfcApplication(org, "0.1", "modelcheck.author", "modelcheck.author")
        return f.createIfcOwnerHistory(pao, app, None, "ADDED", None, None, None, 0)

    def _aggregate(self, whole: Any, parts: list[Any]) -> Any:
        return self.f.create_entity("IfcRelAggregates", GlobalId=self.guid(), OwnerHistory=self._owner,
                                    RelatingObject=whole, RelatedObjects=parts)

    def _spatial(self, cls: str, name: str, parent: Any, elevation: float | None = None) -> Any:
        placement = self.f.createIfcLocalPlacement(
            parent.ObjectPlacement if parent is not None else None, self.world)
        kwargs: dict[str, Any] = dict(GlobalId=self.guid(), OwnerHistory=self._owner, Name=name,
                                      ObjectPlacement=placement, CompositionType="ELEMENT")
        if cls == "IfcBuildingStorey" and elevation is not None:
            kwargs["Elevation"] = elevation
        return self.f.create_entity(cls, **kwargs)

    def storey(self, name: str, elevation: float = 0.0) -> Any:
        if name not in self.storeys:
            st = self._spatial("IfcBuildingStorey", name, self.building, elevation)
            self._aggregate(self.building, [st])
            self.storeys[name] = st
        return self.storeys[name]

    # ------------------------------------------------------------------ units
    def _si(self, utype: str, name: str, prefix: str | None = None) -> Any:
        return self.f.createIfcSIUnit(None, utype, prefix, name)

    def _conv(self, utype: str, name: str, factor: float, of: Any, dims: Sequence[int]) -> Any:
        f = self.f
        measure = {"LENGTHUNIT": "IfcLengthMeasure", "AREAUNIT": "IfcAreaMeasure",
                   "FORCEUNIT": "IfcForceMeasure", "PRESSUREUNIT": "IfcPressureMeasure",
                   "PLANEANGLEUNIT": "IfcPlaneAngleMeasure", "MASSUNIT": "IfcMassMeasure",
                   "VOLUMEUNIT": "IfcVolumeMeasure"}.get(utype, "IfcReal")
        value = f.create_entity(measure, factor)
        mwu = f.createIfcMeasureWithUnit(value, of)
        de = f.createIfcDimensionalExponents(*dims)
        return f.createIfcConversionBasedUnit(de, utype, name, mwu)

    def _derived(self, utype: str, elements: Iterable[tuple[Any, int]]) -> Any:
        f = self.f
        els = [f.createIfcDerivedUnitElement(u, e) for u, e in elements]
        return f.createIfcDerivedUnit(els, utype, None)

    def _assign_units(self, force_unit: bool) -> Any:
        """Unit assignment of the chosen system; every unit a member value needs is stated."""
        f = self.f
        units: list[Any] = []
        radian = self._si("PLANEANGLEUNIT", "RADIAN")
        kelvin = self._si("THERMODYNAMICTEMPERATUREUNIT", "KELVIN")
        if self.units in ("mm", "m"):
            prefix = "MILLI" if self.units == "mm" else None
            length = self._si("LENGTHUNIT", "METRE", prefix)
            area = self._si("AREAUNIT", "SQUARE_METRE", prefix)
            volume = self._si("VOLUMEUNIT", "CUBIC_METRE", prefix)
            newton = self._si("FORCEUNIT", "NEWTON", None if self.units == "mm" else "KILO")
            # stresses: N/mm² written as MEGA PASCAL (mm file) or kN/m² as KILO PASCAL (m file)
            pressure = self._si("PRESSUREUNIT", "PASCAL", "MEGA" if self.units == "mm" else "KILO")
            modulus = self._derived("MODULUSOFELASTICITYUNIT", [
                (self._si("FORCEUNIT", "NEWTON", None if self.units == "mm" else "KILO"), 1),
                (self._si("LENGTHUNIT", "METRE", prefix), -2)])
            expansion = self._derived("THERMALEXPANSIONCOEFFICIENTUNIT", [(kelvin, -1)])
            units += [length, area, volume, pressure, modulus, expansion, radian, kelvin]
            if force_unit:
                units.append(newton)
        else:
            metre = f.createIfcSIUnit(None, "LENGTHUNIT", None, "METRE")
            sqm = f.createIfcSIUnit(None, "AREAUNIT", None, "SQUARE_METRE")
            cum = f.createIfcSIUnit(None, "VOLUMEUNIT", None, "CUBIC_METRE")
            newton = f.createIfcSIUnit(None, "FORCEUNIT", None, "NEWTON")
            pascal = f.createIfcSIUnit(None, "PRESSUREUNIT", None, "PASCAL")
            inch = self._conv("LENGTHUNIT", "INCH", 0.0254, metre, (1, 0, 0, 0, 0, 0, 0))
            foot = self._conv("LENGTHUNIT", "FOOT", 0.3048, metre, (1, 0, 0, 0, 0, 0, 0))
            length = inch if self.units == "inch-kip" else foot
            sqin = self._conv("AREAUNIT", "SQUARE INCH", 0.00064516, sqm, (2, 0, 0, 0, 0, 0, 0))
            sqft = self._conv("AREAUNIT", "SQUARE FOOT", 0.09290304, sqm, (2, 0, 0, 0, 0, 0, 0))
            area = sqin if self.units == "inch-kip" else sqft
            cuin = self._conv("VOLUMEUNIT", "CUBIC INCH", 1.6387064e-05, cum, (3, 0, 0, 0, 0, 0, 0))
            cuft = self._conv("VOLUMEUNIT", "CUBIC FOOT", 0.028316846592, cum, (3, 0, 0, 0, 0, 0, 0))
            volume = cuin if self.units == "inch-kip" else cuft
            lbf = self._conv("FORCEUNIT", "POUND-FORCE", 4.4482216152605, newton, (1, 1, -2, 0, 0, 0, 0))
            kip = self._conv("FORCEUNIT", "KIP", 1000.0, lbf, (1, 1, -2, 0, 0, 0, 0))
            ksi = self._conv("PRESSUREUNIT", "KSI", 6894757.293168361, pascal, (-1, 1, -2, 0, 0, 0, 0))
            modulus = self._derived("MODULUSOFELASTICITYUNIT", [(kip, 1), (inch, -2)])
            fahrenheit_step = self._conv("THERMODYNAMICTEMPERATUREUNIT", "FAHRENHEIT DEGREE STEP",
                                         5.0 / 9.0, kelvin, (0, 0, 0, 0, 1, 0, 0))
            expansion = self._derived("THERMALEXPANSIONCOEFFICIENTUNIT", [(fahrenheit_step, -1)])
            degree = self._conv("PLANEANGLEUNIT", "DEGREE", math.pi / 180.0, radian, (0, 0, 0, 0, 0, 0, 0))
            units += [length, area, volume, ksi, modulus, expansion, degree]
            if force_unit:
                units.append(kip)
        return f.createIfcUnitAssignment(units)

    # -------------------------------------------------------------- properties
    def _value(self, measure: str, value: Any) -> Any:
        return self.f.create_entity(measure, value)

    def property_set(self, name: str, props: dict[str, tuple[str, Any]]) -> Any:
        """A property set; ``props`` maps name -> (IFC measure type, value)."""
        f = self.f
        plist = [f.createIfcPropertySingleValue(k, None, self._value(m, v), None) for k, (m, v) in props.items()]
        return f.create_entity("IfcPropertySet", GlobalId=self.guid(), OwnerHistory=self._owner,
                               Name=name, HasProperties=plist)

    def attach_pset(self, obj: Any, pset: Any) -> None:
        if obj.is_a("IfcTypeObject"):
            obj.HasPropertySets = list(obj.HasPropertySets or []) + [pset]
        else:
            self.f.create_entity("IfcRelDefinesByProperties", GlobalId=self.guid(), OwnerHistory=self._owner,
                                 RelatedObjects=[obj], RelatingPropertyDefinition=pset)

    #: quantity class of each base-quantity name ``quantities`` writes
    QUANTITY_CLASSES = {"Length": "IfcQuantityLength", "Height": "IfcQuantityLength", "Width": "IfcQuantityLength",
                        "Depth": "IfcQuantityLength", "CrossSectionArea": "IfcQuantityArea",
                        "OuterSurfaceArea": "IfcQuantityArea", "NetVolume": "IfcQuantityVolume",
                        "GrossVolume": "IfcQuantityVolume", "GrossWeight": "IfcQuantityWeight",
                        "NetWeight": "IfcQuantityWeight"}

    def quantities(self, obj: Any, name: str, length: float | None = None,
                   area: float | None = None, *, more: dict[str, float] | None = None) -> Any:
        """An IfcElementQuantity called ``name`` on ``obj``: Length, CrossSectionArea and any of
        ``QUANTITY_CLASSES`` in ``more``, each in the model's units (no unit of its own)."""
        f = self.f
        qs = []
        if length is not None:
            qs.append(f.createIfcQuantityLength("Length", None, None, length))
        if area is not None:
            qs.append(f.createIfcQuantityArea("CrossSectionArea", None, None, area))
        for qname, value in (more or {}).items():
            qs.append(f.create_entity(self.QUANTITY_CLASSES[qname], Name=qname, **{
                "IfcQuantityLength": {"LengthValue": value}, "IfcQuantityArea": {"AreaValue": value},
                "IfcQuantityVolume": {"VolumeValue": value},
                "IfcQuantityWeight": {"WeightValue": value}}[self.QUANTITY_CLASSES[qname]]))
        eq = f.create_entity("IfcElementQuantity", GlobalId=self.guid(), OwnerHistory=self._owner,
                             Name=name, Quantities=qs)
        f.create_entity("IfcRelDefinesByProperties", GlobalId=self.guid(), OwnerHistory=self._owner,
                        RelatedObjects=[obj], RelatingPropertyDefinition=eq)
        return eq

    # --------------------------------------------------------------- materials
    def material(self, name: str, *, category: str | None = None, E: float | None = None,
                 Fy: float | None = None, Fu: float | None = None, alpha: float | None = None) -> Any:
        """An IfcMaterial with mechanical properties in the model's units (None = not written)."""
        f = self.f
        if self.schema == "IFC2X3":
            mat = f.createIfcMaterial(name)
            if E is not None or Fy is not None or Fu is not None or alpha is not None:
                # IFC2X3 types these attributes as defined types: raw numbers, no wrapping
                em, te, ys, us = E, alpha, Fy, Fu
                if Fy is not None or Fu is not None:
                    f.create_entity("IfcMechanicalSteelMaterialProperties", Material=mat, YoungModulus=em,
                                    ThermalExpansionCoefficient=te, YieldStress=ys, UltimateStress=us)
                else:
                    f.create_entity("IfcMechanicalMaterialProperties", Material=mat, YoungModulus=em,
                                    ThermalExpansionCoefficient=te)
            return mat
        mat = f.createIfcMaterial(name, None, category)
        mech = {}
        if E is not None:
            mech["YoungModulus"] = ("IfcModulusOfElasticityMeasure", E)
        if alpha is not None:
            mech["ThermalExpansionCoefficient"] = ("IfcThermalExpansionCoefficientMeasure", alpha)
        if mech:
            self._material_pset(mat, "Pset_MaterialMechanical", mech)
        steel = {}
        if Fy is not None:
            steel["YieldStress"] = ("IfcPressureMeasure", Fy)
        if Fu is not None:
            steel["UltimateStress"] = ("IfcPressureMeasure", Fu)
        if steel:
            self._material_pset(mat, "Pset_MaterialSteel", steel)
        return mat

    def _material_pset(self, mat: Any, name: str, props: dict[str, tuple[str, Any]]) -> Any:
        f = self.f
        plist = [f.createIfcPropertySingleValue(k, None, self._value(m, v), None) for k, (m, v) in props.items()]
        return f.createIfcMaterialProperties(name, None, plist, mat)

    def profile_set(self, material: Any, profile: Any, name: str | None = None) -> Any:
        f = self.f
        mp = f.createIfcMaterialProfile(name or profile.ProfileName, None, material, profile, None, None)
        return f.createIfcMaterialProfileSet(name or profile.ProfileName, None, [mp], None)

    def associate_material(self, objs: list[Any], material_select: Any) -> Any:
        return self.f.create_entity("IfcRelAssociatesMaterial", GlobalId=self.guid(), OwnerHistory=self._owner,
                                    RelatedObjects=objs, RelatingMaterial=material_select)

    # ----------------------------------------------------------------- geometry
    def _placement(self, start: Sequence[float], direction: Sequence[float], storey: Any) -> Any:
        f = self.f
        d = _unit(direction)
        ref = (1.0, 0.0, 0.0) if abs(d[0]) < 0.9 else (0.0, 1.0, 0.0)
        ax = f.createIfcAxis2Placement3D(
            f.createIfcCartesianPoint(tuple(float(c) for c in start)),
            f.createIfcDirection(d), f.createIfcDirection(ref))
        return f.createIfcLocalPlacement(storey.ObjectPlacement if storey is not None else None, ax)

    def extrusion(self, profile: Any, length: float) -> Any:
        f = self.f
        # Position is optional from IFC4 on but required in IFC2X3: always write it
        return f.createIfcExtrudedAreaSolid(profile, self.world, f.createIfcDirection((0.0, 0.0, 1.0)), length)

    def swept_disk(self, radius: float, length: float, inner: float | None = None) -> Any:
        f = self.f
        line = f.createIfcPolyline([f.createIfcCartesianPoint((0.0, 0.0, 0.0)),
                                    f.createIfcCartesianPoint((0.0, 0.0, float(length)))])
        return f.createIfcSweptDiskSolid(line, radius, inner, None, None)

    def axis_rep(self, length: float) -> Any:
        f = self.f
        line = f.createIfcPolyline([f.createIfcCartesianPoint((0.0, 0.0, 0.0)),
                                    f.createIfcCartesianPoint((0.0, 0.0, float(length)))])
        return f.createIfcShapeRepresentation(self.axis_ctx, "Axis", "Curve3D", [line])

    def body_rep(self, item: Any) -> Any:
        kind = "SweptSolid" if item.is_a("IfcExtrudedAreaSolid") else (
            "MappedRepresentation" if item.is_a("IfcMappedItem") else "AdvancedSweptSolid")
        return self.f.createIfcShapeRepresentation(self.body_ctx, "Body", kind, [item])

    # ------------------------------------------------------------------ members
    def member_type(self, cls: str = "IfcMemberType", *, name: str, predefined_type: str = "MEMBER",
                    profile: Any = None, material: Any = None, body_length: float | None = None) -> Any:
        """A type object; with profile+material its IfcMaterialProfileSet (IFC4+) or material (IFC2X3).

        ``body_length`` adds a representation map (an extrusion) that occurrences can map.
        """
        f = self.f
        maps = None
        if body_length is not None and profile is not None:
            rmap = f.createIfcRepresentationMap(f.createIfcAxis2Placement3D(self.origin, None, None),
                                                self.body_rep(self.extrusion(profile, body_length)))
            maps = [rmap]
        kwargs: dict[str, Any] = dict(GlobalId=self.guid(), OwnerHistory=self._owner, Name=name,
                                      PredefinedType=predefined_type, RepresentationMaps=maps)
        if (self.schema == "IFC2X3" and cls == "IfcMemberType") or predefined_type == "USERDEFINED":
            kwargs["ElementType"] = name
        typ = f.create_entity(cls, **kwargs)
        if material is not None:
            if profile is not None and self.schema != "IFC2X3":
                self.associate_material([typ], self.profile_set(material, profile))
            else:
                self.associate_material([typ], material)
        return typ

    def member(self, cls: str = "IfcMember", *, name: str | None = None, tag: str | None = None,
               predefined_type: str | None = None, object_type: str | None = None,
               profile: Any = None, material: Any = None, length: float | None = None,
               start: Sequence[float] = (0.0, 0.0, 0.0), direction: Sequence[float] = (0.0, 0.0, 1.0),
               storey: str | None = "Level 1", body: str | None = "extrusion", axis: bool = True,
               material_via: str = "profile_set", member_type: Any = None,
               disk: tuple[float, float | None] | None = None,
               psets: dict[str, dict[str, tuple[str, Any]]] | None = None,
               qto: dict[str, float] | None = None) -> Any:
        """One element with placement, body (extrusion / swept disk / mapped / none), axis,
        material association and optional property and quantity sets.

        ``material_via``: "profile_set" (IfcMaterialProfileSetUsage, IFC4+), "direct" (IfcMaterial),
        "none" (inherit from ``member_type``). ``disk=(radius, inner)`` for body="swept_disk".
        """
        f = self.f
        st = self.storey(storey) if storey else None
        reps = []
        if body == "extrusion" and profile is not None and length is not None:
            reps.append(self.body_rep(self.extrusion(profile, length)))
        elif body == "swept_disk" and disk is not None and length is not None:
            reps.append(self.body_rep(self.swept_disk(disk[0], length, disk[1])))
        elif body == "mapped" and member_type is not None and member_type.RepresentationMaps:
            op = f.createIfcCartesianTransformationOperator3D(None, None, self.origin, None, None)
            reps.append(self.body_rep(f.createIfcMappedItem(member_type.RepresentationMaps[0], op)))
        if axis and length is not None:
            reps.insert(0, self.axis_rep(length))
        shape = f.createIfcProductDefinitionShape(None, None, reps) if reps else None
        kwargs: dict[str, Any] = dict(GlobalId=self.guid(), OwnerHistory=self._owner, Name=name,
                                      ObjectType=object_type, Tag=tag, Representation=shape,
                                      ObjectPlacement=self._placement(start, direction, st))
        if predefined_type is not None and self.schema != "IFC2X3":
            kwargs["PredefinedType"] = predefined_type
        el = f.create_entity(cls, **kwargs)
        if st is not None:
            self._contained.setdefault(st.id(), []).append(el)
        if material is not None:
            if material_via == "profile_set" and profile is not None and self.schema != "IFC2X3":
                pset = self.profile_set(material, profile)
                usage = f.createIfcMaterialProfileSetUsage(pset, 5, None) if self.schema != "IFC4X3" \
                    else f.createIfcMaterialProfileSetUsage(pset, 5, None)
                self._material_assoc.setdefault(usage.id(), [usage]).append(el)
            else:
                self._material_assoc.setdefault(material.id(), [material]).append(el)
        if member_type is not None:
            self._type_of.setdefault(member_type.id(), [member_type]).append(el)
        for pname, props in (psets or {}).items():
            self.attach_pset(el, self.property_set(pname, props))
        if qto:
            qname = {"IfcColumn": "Qto_ColumnBaseQuantities", "IfcBeam": "Qto_BeamBaseQuantities"}.get(
                cls, "Qto_MemberBaseQuantities")
            self.quantities(el, qname, qto.get("Length"), qto.get("CrossSectionArea"))
        return el

    # -------------------------------------------------------------------- output
    def finish(self) -> ifcopenshell.file:
        """Write the grouped relationships (containment, materials, types); idempotent."""
        f = self.f
        for sid, els in self._contained.items():
            f.create_entity("IfcRelContainedInSpatialStructure", GlobalId=self.guid(), OwnerHistory=self._owner,
                            RelatedElements=els, RelatingStructure=f.by_id(sid))
        for _mid, (mat, *els) in self._material_assoc.items():
            self.associate_material(els, mat)
        for _tid, (typ, *els) in self._type_of.items():
            f.create_entity("IfcRelDefinesByType", GlobalId=self.guid(), OwnerHistory=self._owner,
                            RelatedObjects=els, RelatingType=typ)
        self._contained, self._material_assoc, self._type_of = {}, {}, {}
        return f

    def write(self, path: str) -> None:
        self.finish().write(str(path))


def _unit(v: Sequence[float]) -> tuple[float, float, float]:
    n = math.sqrt(sum(c * c for c in v))
    return (v[0] / n, v[1] / n, v[2] / n)
