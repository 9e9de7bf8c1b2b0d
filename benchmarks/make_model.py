"""Generate a synthetic IFC4 model of N axial members and a load table for the benchmark.

    python benchmarks/make_model.py 100000 benchmarks/_work/m100k.ifc
    python benchmarks/make_model.py 10000 benchmarks/_work/b10k.ifc --building 150000

Mixed profile classes (round, tube, flat, rectangular tube, I, L, U, T), materials through
profile sets on type objects (a shared IfcMaterialProfileSetUsage per type), half the members
with a force in the model property set MC_MemberForces.AxialForce, and a load table
``<model>-forces.csv`` with one row per member (load case "LC1", header units in kN).
Forces are drawn as a share of each section's tension yield force (A·235 MPa): uniform in
5–103 % in tension, 2–25 % in compression — a screened model in which a few per cent of the
members fail, as in practice, rather than one in five.
Each member has its own placement, Axis polyline and extruded body, as exported models do.

With ``--building K`` the members are a small share of a whole building: K more elements that
are not members (walls, slabs, windows, doors, coverings, furniture and spaces) over twenty
storeys, each with its own placement and extruded body, a property set of its own (as exporters
write one per element) and, spaces apart, a material (walls and slabs through a layer-set usage,
the others directly). Every member then has a common property set of its own as well.
"""

from __future__ import annotations

import argparse
import random
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from modelcheck.testing.author import ModelBuilder  # noqa: E402


def profiles(f):  # a realistic mix of stock shapes (mm)
    return [
        f.createIfcCircleProfileDef("AREA", "RD16", None, 8.0),
        f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0),
        f.createIfcCircleHollowProfileDef("AREA", "CHS60.3x4", None, 30.15, 4.0),
        f.createIfcRectangleProfileDef("AREA", "FL80x10", None, 80.0, 10.0),
        f.createIfcRectangleHollowProfileDef("AREA", "SHS80x5", None, 80.0, 80.0, 5.0, 5.0, 7.5),
        f.createIfcIShapeProfileDef("AREA", "IPE160", None, 82.0, 160.0, 5.0, 7.4, 9.0),
        f.createIfcIShapeProfileDef("AREA", "HEA140", None, 140.0, 133.0, 5.5, 8.5, 12.0),
        f.createIfcLShapeProfileDef("AREA", "L70x7", None, 70.0, 70.0, 7.0, 9.0, 4.5),
        f.createIfcUShapeProfileDef("AREA", "UPE100", None, 100.0, 55.0, 4.5, 7.5, 10.0),
        f.createIfcTShapeProfileDef("AREA", "T80", None, 80.0, 80.0, 9.0, 9.0, 9.0),
    ]


#: the elements of a building that are not members: (class, predefined type, share, property set,
#: width × depth × height of the body in mm, material)
BUILDING_ELEMENTS = (
    ("IfcWall", "STANDARD", 0.30, "Pset_WallCommon", (4000.0, 200.0, 3000.0), "Concrete C30/37"),
    ("IfcSlab", "FLOOR", 0.10, "Pset_SlabCommon", (6000.0, 6000.0, 250.0), "Concrete C30/37"),
    ("IfcWindow", "WINDOW", 0.20, "Pset_WindowCommon", (1200.0, 100.0, 1500.0), "Glass"),
    ("IfcDoor", "DOOR", 0.10, "Pset_DoorCommon", (900.0, 60.0, 2100.0), "Oak"),
    ("IfcCovering", "CEILING", 0.10, "Pset_CoveringCommon", (3000.0, 3000.0, 15.0), "Gypsum board"),
    ("IfcFurnishingElement", None, 0.10, "Pset_FurnitureTypeCommon", (1600.0, 800.0, 750.0), "Oak"),
    ("IfcSpace", "INTERNAL", 0.10, "Pset_SpaceCommon", (5000.0, 4000.0, 2800.0), None),
)
STOREYS = 20


def add_building(mb: ModelBuilder, others: int, rnd: random.Random) -> None:
    """``others`` elements that are not members, spread over ``STOREYS`` storeys (see the module's
    docstring)."""
    f = mb.f
    zdir, xdir = f.createIfcDirection((0.0, 0.0, 1.0)), f.createIfcDirection((1.0, 0.0, 0.0))
    storeys = [mb.storey(f"Level {i + 2}", elevation=3000.0 * (i + 1)) for i in range(STOREYS)]
    materials: dict[str, object] = {}
    layered: dict[str, object] = {}
    contained: list[list[object]] = [[] for _ in storeys]
    spaces: list[list[object]] = [[] for _ in storeys]
    by_material: dict[int, tuple[object, list[object]]] = {}
    pset_rels: list[tuple[object, object]] = []
    done = 0
    for cls, predefined, share, pset_name, (w, d, h), mat_name in BUILDING_ELEMENTS:
        count = others - done if cls == BUILDING_ELEMENTS[-1][0] else int(round(others * share))
        done += count
        if mat_name is not None and mat_name not in materials:
            materials[mat_name] = mb.material(mat_name)
        select = None
        if mat_name is not None:
            select = materials[mat_name]
            if cls in ("IfcWall", "IfcSlab"):
                if cls not in layered:
                    layer = f.createIfcMaterialLayer(select, d if cls == "IfcWall" else h, None)
                    layered[cls] = f.createIfcMaterialLayerSet([layer], f"{cls[3:]} {mat_name}", None)
                select = f.createIfcMaterialLayerSetUsage(layered[cls], "AXIS2" if cls == "IfcWall" else "AXIS3",
                                                          "POSITIVE", 0.0, None)
        shared = f.createIfcRectangleProfileDef("AREA", None, None, w, d)
        for k in range(count):
            s = k % STOREYS
            pt = f.createIfcCartesianPoint((float(k % 700) * 7000.0, float(k // 700) * 7000.0, 0.0))
            place = f.createIfcLocalPlacement(storeys[s].ObjectPlacement,
                                              f.createIfcAxis2Placement3D(pt, zdir, xdir))
            profile = shared
            if cls in ("IfcWall", "IfcSlab"):  # walls and slabs each have an outline of their own
                profile = f.createIfcRectangleProfileDef("AREA", None, None, w * rnd.uniform(0.5, 1.5), d)
            body = f.createIfcShapeRepresentation(mb.body_ctx, "Body", "SweptSolid", [
                f.createIfcExtrudedAreaSolid(profile, None, zdir, h)])
            attrs = {"GlobalId": mb.guid(), "Name": f"{cls[3:]} {k}", "ObjectPlacement": place,
                     "Representation": f.createIfcProductDefinitionShape(None, None, [body])}
            if predefined is not None:
                attrs["PredefinedType"] = predefined
            el = f.create_entity(cls, **attrs)
            (spaces if cls == "IfcSpace" else contained)[s].append(el)
            if select is not None:
                by_material.setdefault(select.id(), (select, []))[1].append(el)
            props = [f.createIfcPropertySingleValue("Reference", None, f.createIfcIdentifier(f"{cls[3:]}-{k % 40}"),
                                                    None),
                     f.createIfcPropertySingleValue("IsExternal", None, f.createIfcBoolean(k % 4 == 0), None)]
            pset_rels.append((el, f.create_entity("IfcPropertySet", GlobalId=mb.guid(), Name=pset_name,
                                                  HasProperties=props)))
    for storey, elements, rooms in zip(storeys, contained, spaces, strict=True):
        f.create_entity("IfcRelContainedInSpatialStructure", GlobalId=mb.guid(), RelatedElements=elements,
                        RelatingStructure=storey)
        if rooms:
            f.create_entity("IfcRelAggregates", GlobalId=mb.guid(), RelatingObject=storey, RelatedObjects=rooms)
    for select, elements in by_material.values():
        mb.associate_material(elements, select)
    for el, ps in pset_rels:
        f.create_entity("IfcRelDefinesByProperties", GlobalId=mb.guid(), RelatedObjects=[el],
                        RelatingPropertyDefinition=ps)


def build(n: int, out: Path, seed: int = 7, *, others: int = 0) -> None:
    """A model of ``n`` members (and, with ``others`` > 0, that many building elements besides)
    written to ``out``, and its load table beside it."""
    rnd = random.Random(seed)
    mb = ModelBuilder(schema="IFC4", units="mm", name=f"Benchmark {n}")
    f = mb.f
    mats = [mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=470.0),
            mb.material("S235", category="steel", E=210000.0, Fy=235.0, Fu=360.0),
            mb.material("ASTM A36"), mb.material("A572 Gr 50")]
    types = []
    for i, prof in enumerate(profiles(f)):
        for j, mat in enumerate(mats):
            pset = mb.profile_set(mat, prof, f"{prof.ProfileName} {mat.Name}")
            typ = f.create_entity("IfcMemberType", GlobalId=mb.guid(), Name=f"T{i}-{j} {prof.ProfileName}",
                                  PredefinedType="MEMBER")
            mb.associate_material([typ], pset)
            types.append((typ, pset, prof, []))
    from modelcheck.ifc.profiles import section_of

    sections = {prof.id(): section_of(prof) for prof in {t[2] for t in types}}
    areas = {k: s.area * 1e-6 for k, s in sections.items()}   # mm² -> m²
    radii = {k: s.r_min for k, s in sections.items()}         # mm
    storey = mb.storey("Level 1")
    zdir, xdir = f.createIfcDirection((0.0, 0.0, 1.0)), f.createIfcDirection((1.0, 0.0, 0.0))
    origin = mb.origin
    members = []
    prop_rels = []
    rows = []
    for k in range(n):
        typ, pset, prof, occ = types[k % len(types)]
        rod = prof.is_a("IfcCircleProfileDef")
        # rods hang services (tension only); other sections brace and strut at lengths their
        # radius of gyration allows (L/r well under 200), as a designed model would have them
        r_min = radii[prof.id()]
        length = float(min(rnd.choice((1200.0, 1800.0, 2400.0, 3000.0, 3600.0)), 150.0 * r_min))
        if rod:
            length = float(rnd.choice((600.0, 900.0, 1200.0)))
        pt = f.createIfcCartesianPoint((float(k % 1000) * 500.0, float(k // 1000) * 500.0, 0.0))
        place = f.createIfcLocalPlacement(storey.ObjectPlacement, f.createIfcAxis2Placement3D(pt, zdir, xdir))
        body = f.createIfcShapeRepresentation(mb.body_ctx, "Body", "SweptSolid", [
            f.createIfcExtrudedAreaSolid(prof, None, zdir, length)])
        axis = f.createIfcShapeRepresentation(mb.axis_ctx, "Axis", "Curve3D", [f.createIfcPolyline(
            [origin, f.createIfcCartesianPoint((0.0, 0.0, length))])])
        shape = f.createIfcProductDefinitionShape(None, None, [axis, body])
        cls = "IfcColumn" if (k % 10 == 0 and not rod) else "IfcMember"
        el = f.create_entity(cls, GlobalId=mb.guid(), Name=f"Hanger rod {k}" if rod else f"M{k}",
                             ObjectPlacement=place,
                             Representation=shape, Tag=f"M-{k:06d}",
                             PredefinedType="COLUMN" if cls == "IfcColumn" else "BRACE")
        occ.append(el)
        members.append(el)
        yield_kn = areas[prof.id()] * 235e6 / 1000.0  # A [m²] · 235 MPa, in kN
        share = rnd.uniform(0.05, 1.03) if (rod or rnd.random() < 0.7) else -rnd.uniform(0.02, 0.25)
        force = share * yield_kn / 1.67
        if k % 2 == 0:
            prop = f.createIfcPropertySingleValue("AxialForce", None, f.createIfcForceMeasure(force * 1000.0), None)
            ps = f.create_entity("IfcPropertySet", GlobalId=mb.guid(), Name="MC_MemberForces", HasProperties=[prop])
            prop_rels.append((el, ps))
        if others:
            prop = f.createIfcPropertySingleValue("LoadBearing", None, f.createIfcBoolean(True), None)
            name = "Pset_ColumnCommon" if cls == "IfcColumn" else "Pset_MemberCommon"
            prop_rels.append((el, f.create_entity("IfcPropertySet", GlobalId=mb.guid(), Name=name,
                                                  HasProperties=[prop])))
        rows.append(f"{el.GlobalId},LC1,{force:.3f}")
    f.create_entity("IfcRelContainedInSpatialStructure", GlobalId=mb.guid(), RelatedElements=members,
                    RelatingStructure=storey)
    for typ, pset, _prof, occ in types:
        if occ:
            usage = f.createIfcMaterialProfileSetUsage(pset, 5, None)
            mb.associate_material(occ, usage)
            f.create_entity("IfcRelDefinesByType", GlobalId=mb.guid(), RelatedObjects=occ, RelatingType=typ)
    for el, ps in prop_rels:
        f.create_entity("IfcRelDefinesByProperties", GlobalId=mb.guid(), RelatedObjects=[el],
                        RelatingPropertyDefinition=ps)
    if others:
        add_building(mb, others, rnd)
    out.parent.mkdir(parents=True, exist_ok=True)
    mb.finish().write(str(out))
    table = out.with_name(out.stem + "-forces.csv")
    table.write_text("global_id,load_case,axial_force [kN]\n" + "\n".join(rows) + "\n", encoding="utf-8")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("members", type=int)
    ap.add_argument("output", type=Path)
    ap.add_argument("--seed", type=int, default=7)
    ap.add_argument("--building", type=int, default=0, metavar="K",
                    help="K building elements that are not members besides the members")
    a = ap.parse_args()
    build(a.members, a.output, a.seed, others=a.building)


if __name__ == "__main__":
    main()
