"""Regenerate the Nettlebrook Depot sample models and their load tables.

    python sample_models/build.py            # writes into sample_models/
    python sample_models/build.py OUTDIR     # writes elsewhere (the tests do this)

The scenario (invented): Nettlebrook Depot, a small light-industrial workshop hall with a hung
mezzanine, wall bracing and roof tie rods (``nettlebrook-hall``, IFC4, millimetres); a loading-dock
canopy and equipment platform detailed by the steel fabricator in US units (``nettlebrook-canopy``,
IFC2X3, inches and kips); and a pipe bridge from the hall to the tank yard (``nettlebrook-pipebridge``,
IFC4X3, metres and kilonewtons). README.md beside this file lists which members deliberately
fail, lack data or are inconsistent, and which members get their axial forces by which route (load
table, the model property ``MC_MemberForces.AxialForce``, or the IFC structural-analysis results
that the hall and the pipe bridge carry in their structural domain).

Every GlobalId comes from a seeded sequence and the header time stamp is fixed, so re-running the
script with the same ifcopenshell gives byte-identical files.

Forces are chosen from the section and material values below so that, by EN 1993-1-1
(6.2.3 tension N = A·fy/γM0, 6.3.1 flexural buckling, γM0 = γM1 = 1.0) and AISC 360-16 ASD
(D2 tension Fy·Ag/1.67, E3 compression /1.67, J3.2 threaded rods 0.75·Fu·Ab/2.00), most members
pass comfortably and the ``FAIL`` members exceed their capacity by 20-45 %.
"""

from __future__ import annotations

import argparse
import csv
import hashlib
import math
import sys
import uuid
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import ifcopenshell.guid

from modelcheck.testing.author import ModelBuilder
from modelcheck.testing.author_analysis import AnalysisWriter

HERE = Path(__file__).resolve().parent
TIMESTAMP = "2025-01-01T00:00:00"   # fixed so that a rebuild is byte-identical
SCENARIO = "Nettlebrook Depot"

HALL = "nettlebrook-hall"
CANOPY = "nettlebrook-canopy"
BRIDGE = "nettlebrook-pipebridge"
MODELS = (HALL, CANOPY, BRIDGE)


class SeededBuilder(ModelBuilder):
    """ModelBuilder whose GlobalIds come from a seeded sequence (same seed -> same ids)."""

    def __init__(self, seed: str, **kwargs: Any) -> None:
        self._seed = seed
        self._count = 0
        super().__init__(**kwargs)

    def guid(self) -> str:  # type: ignore[override]
        self._count += 1
        return seeded_guid(self._seed, self._count)

    def extrusion(self, profile: Any, length: float) -> Any:
        solid = super().extrusion(profile, length)
        if self.schema == "IFC2X3" and solid.Position is None:
            solid.Position = self.world   # IFC2X3: IfcSweptAreaSolid.Position is not optional
        return solid

    def save(self, path: Path) -> None:
        f = self.finish()
        f.header.file_name.name = path.name
        f.header.file_name.time_stamp = TIMESTAMP
        f.write(str(path))


def seeded_guid(seed: str, n: int) -> str:
    digest = hashlib.sha256(f"{seed}:{n}".encode()).digest()[:16]
    return ifcopenshell.guid.compress(uuid.UUID(bytes=digest).hex)


def write_forces(path: Path, key: str, unit: str, rows: Sequence[tuple[str, str, float]]) -> None:
    """A load table: key column (``tag`` or ``global_id``), ``load_case``, ``axial_force [unit]``."""
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow([key, "load_case", f"axial_force [{unit}]"])
        for k, case, force in rows:
            w.writerow([k, case, f"{force:g}"])


def _pos2d(mb: ModelBuilder, x: float = 0.0, y: float = 0.0) -> Any:
    return mb.f.createIfcAxis2Placement2D(mb.f.createIfcCartesianPoint((float(x), float(y))), None)


def _polyline2d(mb: ModelBuilder, pts: Sequence[tuple[float, float]]) -> Any:
    """A closed 2D polyline (first point repeated at the end)."""
    f = mb.f
    cps = [f.createIfcCartesianPoint((float(x), float(y))) for x, y in pts]
    return f.createIfcPolyline(cps + [cps[0]])


# ====================================================================== model 1: the hall (IFC4, mm)

def build_hall(out: Path) -> list[Path]:
    """Workshop hall: hangers of the mezzanine, roof tie rods, wall bracing, eaves struts, posts.

    Units: mm, N, N/mm² (MPa). Forces: hangers in the model (MC_MemberForces.AxialForce, N);
    the rest in ``nettlebrook-hall-forces.csv`` keyed by tag, kN; braces BR-01..05 and struts
    ST-01..03 also in the model's structural-analysis results (``_hall_analysis``).
    """
    mb = SeededBuilder(HALL, schema="IFC4", units="mm", name=f"{SCENARIO} - workshop hall")
    f = mb.f
    mb.storey("Ground floor", 0.0)
    mb.storey("Mezzanine", 3600.0)
    mb.storey("Roof", 7200.0)

    # ---- materials (model values in N/mm²; None = not written, looked up in the library)
    rod46 = mb.material("ISO 898-1 property class 4.6", category="steel",
                        E=210000.0, Fy=240.0, Fu=400.0, alpha=12e-6)   # ISO 898-1: ReL 240, Rm 400
    s355h = mb.material("S355J2H", category="steel")                    # library: EN 10025 S355
    s355 = mb.material("S355JR", category="steel")                      # library: EN 10025 S355
    s235 = mb.material("S235JR", category="steel")                      # library: EN 10025 S235
    # IMPLAUSIBLE: modulus typed in GPa into an N/mm² field (210 instead of 210000)
    s275_bad = mb.material("S275JR", category="steel", E=210.0, Fy=275.0, Fu=430.0)
    stainless = mb.material("EN 10088 1.4401", category="stainless")    # library: 1.4401
    unknown = mb.material("Steel (see specification)", category="steel")  # no values, no library match

    # ---- profiles (shared by the members that use them)
    rd16 = f.createIfcCircleProfileDef("AREA", "RD16 (M16 hanger rod)", None, 8.0)
    rd12 = f.createIfcCircleProfileDef("AREA", "RD12 (M12 hanger rod)", None, 6.0)
    rd20 = f.createIfcCircleProfileDef("AREA", "RD20 (M20 tie rod)", None, 10.0)
    # EN 10056-1 L 70x70x7: r1 = 9, r2 = 4.5 (from memory)
    l70 = f.createIfcLShapeProfileDef("AREA", "L70x70x7", None, 70.0, 70.0, 7.0, 9.0, 4.5, None)
    chs89 = f.createIfcCircleHollowProfileDef("AREA", "CHS 88.9x4.0", None, 44.45, 4.0)
    # EN 10219-2 cold formed: outer corner radius 2t, inner t (t <= 6 mm) (from memory)
    shs80 = f.createIfcRectangleHollowProfileDef("AREA", "SHS 80x80x4", None, 80.0, 80.0, 4.0, 4.0, 8.0)
    rhs100 = f.createIfcRectangleHollowProfileDef("AREA", "RHS 100x50x4", None, 100.0, 50.0, 4.0, 4.0, 8.0)
    # EN 10365: HEA 140 b 140, h 133, tw 5.5, tf 8.5, r 12; IPE 200 b 100, h 200, tw 5.6, tf 8.5, r 12
    hea140 = f.createIfcIShapeProfileDef("AREA", "HEA140", None, 140.0, 133.0, 5.5, 8.5, 12.0, None, None)
    ipe200 = f.createIfcIShapeProfileDef("AREA", "IPE200", None, 100.0, 200.0, 5.6, 8.5, 12.0, None, None)
    # a profile carrying its own Pset_ProfileMechanical (EN 10365: IPE 200, A = 28.5 cm²)
    f.createIfcProfileProperties("Pset_ProfileMechanical", None, [
        f.createIfcPropertySingleValue("CrossSectionArea", None, f.createIfcAreaMeasure(2848.0), None)],
        ipe200)

    # ---- types
    t_hr16 = mb.member_type("IfcMemberType", name="HANGER ROD M16", predefined_type="USERDEFINED",
                            profile=rd16, material=rod46)
    t_hr16.ElementType = "HANGER ROD"
    # type with a body (representation map) and a direct material, no profile set: its
    # occurrence gets its section only from the mapped body
    t_hr12 = mb.member_type("IfcMemberType", name="HANGER ROD M12 (mapped)", predefined_type="USERDEFINED",
                            profile=rd12, material=None, body_length=2400.0)
    t_hr12.ElementType = "HANGER ROD"
    mb.associate_material([t_hr12], rod46)
    mb.attach_pset(t_hr12, mb.property_set("MC_MemberForces", {
        "AxialForce": ("IfcForceMeasure", 9800.0), "LoadCase": ("IfcLabel", "1.35G+1.5Q")}))
    t_br = mb.member_type("IfcMemberType", name="BRACE L70x70x7", predefined_type="BRACE",
                          profile=l70, material=s235)
    t_po = mb.member_type("IfcColumnType", name="POST HEA140", predefined_type="COLUMN",
                          profile=hea140, material=s355)

    def forces(n: float) -> dict[str, dict[str, tuple[str, Any]]]:
        return {"MC_MemberForces": {"AxialForce": ("IfcForceMeasure", n), "LoadCase": ("IfcLabel", "1.35G+1.5Q")}}

    # ---- hangers of the mezzanine: roof beam (7200) down to the mezzanine edge beam (3600 + 200)
    hanger_force = {  # N, tension; HR-03 FAIL (58 kN on an M16 4.6 rod: gross A·fy = 48.3 kN)
        "HR-01": 21500.0, "HR-02": 24800.0, "HR-03": 58000.0, "HR-04": 19600.0,
        "HR-05": 22400.0, "HR-06": 26100.0, "HR-07": 17900.0,
    }
    for i, (tag, n) in enumerate(hanger_force.items()):
        own = i < 4   # HR-01..04 own profile set usage; HR-05..07 section and material from the type
        mb.member("IfcMember", name=f"Hanger rod {tag}", tag=tag, predefined_type="USERDEFINED",
                  object_type="HANGER ROD M16", profile=rd16, material=rod46 if own else None,
                  material_via="profile_set" if own else "none", length=3400.0,
                  start=(3000.0 * (i + 1), 6000.0, 3800.0), direction=(0.0, 0.0, 1.0), storey="Mezzanine",
                  member_type=t_hr16, psets=forces(n))
    # HR-08: body only through IfcMappedItem of its type; no axis, no own material; force from the type
    mb.member("IfcMember", name="Hanger rod HR-08", tag="HR-08", predefined_type="USERDEFINED",
              object_type="HANGER ROD M12", body="mapped", axis=False, material=None, material_via="none",
              member_type=t_hr12, start=(24000.0, 6000.0, 4800.0), storey="Mezzanine")
    # HR-09: a complete hanger with NO FORCE anywhere (neither property nor load table)
    mb.member("IfcMember", name="Hanger rod HR-09", tag="HR-09", predefined_type="USERDEFINED",
              object_type="HANGER ROD M16", profile=rd16, material=rod46, length=3400.0,
              start=(27000.0, 6000.0, 3800.0), storey="Mezzanine", member_type=t_hr16)

    # ---- roof tie rods (stainless M20), eaves to eaves
    for i in range(4):
        tag = f"TR-0{i + 1}"
        mb.member("IfcMember", name=f"Tie rod {tag}", tag=tag, predefined_type="USERDEFINED",
                  object_type="TIE ROD M20", profile=rd20, material=stainless, length=11600.0,
                  start=(200.0, 6000.0 * (i + 1), 7000.0), direction=(1.0, 0.0, 0.0), storey="Roof")
    # TR-05: NO LENGTH (no body, no axis, no quantity); section and material from its profile set
    mb.member("IfcMember", name="Tie rod TR-05", tag="TR-05", predefined_type="USERDEFINED",
              object_type="TIE ROD M20", profile=rd20, material=stainless, length=None, body=None,
              axis=False, start=(200.0, 30000.0, 7000.0), storey="Roof")

    # ---- wall bracing: 3000 x 2400 bays, diagonal 3842 mm
    diag = math.hypot(3000.0, 2400.0)
    physical: dict[str, Any] = {}   # tag -> element, for the analysis members of the braces and struts
    for i in range(6):
        tag = f"BR-0{i + 1}"
        kw: dict[str, Any] = dict(name=f"Wall brace {tag}", tag=tag, predefined_type="BRACE",
                                  profile=l70, length=diag, direction=(3000.0, 0.0, 2400.0),
                                  start=(3000.0 * i, 0.0, 0.0), storey="Ground floor")
        if i < 3:      # own profile set usage (and typed)
            physical[tag] = mb.member("IfcMember", material=s235, member_type=t_br, **kw)
        elif i < 5:    # section and material inherited from the type
            physical[tag] = mb.member("IfcMember", material=None, material_via="none", member_type=t_br, **kw)
        else:          # BR-06: NO MATERIAL at all (no association, no type)
            mb.member("IfcMember", material=None, **kw)

    # ---- eaves struts (compression), 4000 mm
    for i, (tag, prof, mat) in enumerate([("ST-01", chs89, s355h), ("ST-02", chs89, s355h),
                                          ("ST-03", shs80, s355h)]):
        physical[tag] = mb.member("IfcMember", name=f"Eaves strut {tag}", tag=tag, predefined_type="STRUT",
                                  profile=prof, material=mat, length=4000.0, start=(0.0, 4000.0 * i, 7200.0),
                                  direction=(0.0, 1.0, 0.0), storey="Roof")
    # ST-04: IMPLAUSIBLE modulus (S275JR with E = 210 N/mm²)
    mb.member("IfcMember", name="Mezzanine strut ST-04", tag="ST-04", predefined_type="STRUT", profile=rhs100,
              material=s275_bad, length=3000.0, start=(0.0, 0.0, 3600.0), direction=(1.0, 0.0, 0.0),
              storey="Mezzanine")
    # ST-05: NO SECTION (no profile, no body, no quantity); material direct, length from its axis
    mb.member("IfcMember", name="Eaves strut ST-05", tag="ST-05", predefined_type="STRUT", profile=None,
              material=s355h, material_via="direct", length=4000.0, body=None,
              start=(0.0, 16000.0, 7200.0), direction=(0.0, 1.0, 0.0), storey="Roof")
    # ST-06: material named but without values and matching no library grade
    mb.member("IfcMember", name="Eaves strut ST-06", tag="ST-06", predefined_type="STRUT", profile=shs80,
              material=unknown, length=4000.0, start=(0.0, 20000.0, 7200.0), direction=(0.0, 1.0, 0.0),
              storey="Roof")

    # ---- short posts under the mezzanine, 3600 mm
    mb.member("IfcColumn", name="Post PO-01", tag="PO-01", predefined_type="COLUMN", profile=hea140,
              material=s355, length=3600.0, start=(6000.0, 3000.0, 0.0), storey="Ground floor",
              member_type=t_po, qto={"CrossSectionArea": 3142.0, "Length": 3600.0})   # EN 10365: 31.4 cm²
    mb.member("IfcColumn", name="Post PO-02", tag="PO-02", predefined_type="COLUMN", profile=hea140,
              material=None, material_via="none", length=3600.0, start=(12000.0, 3000.0, 0.0),
              storey="Ground floor", member_type=t_po)
    # PO-03: INCONSISTENT quantity: CrossSectionArea 2140 mm² against the HEA 140 profile's 3142 mm²
    mb.member("IfcColumn", name="Post PO-03", tag="PO-03", predefined_type="COLUMN", profile=hea140,
              material=s355, length=3600.0, start=(18000.0, 3000.0, 0.0), storey="Ground floor",
              member_type=t_po, qto={"CrossSectionArea": 2140.0})
    mb.member("IfcColumn", name="Post PO-04", tag="PO-04", predefined_type="COLUMN", profile=ipe200,
              material=s355, length=3600.0, start=(24000.0, 3000.0, 0.0), storey="Ground floor")

    _hall_analysis(mb, physical, {"BR": (l70, s235), "ST-01": (chs89, s355h), "ST-02": (chs89, s355h),
                                  "ST-03": (shs80, s355h)})
    ifc = out / f"{HALL}.ifc"
    mb.save(ifc)
    rows: list[tuple[str, str, float]] = []
    for tag, dl, ds in [("TR-01", 18.2, 24.6), ("TR-02", 31.0, 80.0),   # TR-02 FAIL in 1.35G+1.5S
                        ("TR-03", 17.5, 23.0), ("TR-04", 19.9, 27.1), ("TR-05", 15.0, 21.0)]:
        rows += [(tag, "1.35G+1.5Q", dl), (tag, "1.35G+1.5S", ds)]
    for tag, w in [("BR-01", 64.0), ("BR-02", 71.5), ("BR-03", 288.0),   # BR-03 FAIL (A·fy = 221 kN)
                   ("BR-04", 58.3), ("BR-05", 66.1), ("BR-06", 60.0)]:
        rows.append((tag, "G+1.5W", w))
    for tag, dl, ds in [("ST-01", -21.0, -42.0), ("ST-02", -96.0, -140.0),   # ST-02 FAIL (Nb ≈ 108 kN)
                        ("ST-03", -18.0, -35.0), ("ST-04", -12.0, -25.0), ("ST-05", -10.0, -20.0),
                        ("ST-06", -15.0, -30.0)]:
        rows += [(tag, "1.35G+1.5Q", dl), (tag, "1.35G+1.5S", ds)]
    for tag, dl in [("PO-01", -185.0), ("PO-02", -160.0), ("PO-03", -170.0), ("PO-04", -95.0)]:
        rows.append((tag, "1.35G+1.5Q", dl))
    rows.append(("BR-07", "G+1.5W", 55.0))   # UNMATCHED: no member has tag BR-07
    csv_path = out / f"{HALL}-forces.csv"
    write_forces(csv_path, "tag", "kN", rows)
    return [ifc, csv_path]


#: load combinations of the hall's analysis model (EN 1990 6.10; wind accompanying with ψ0 = 0.6,
#: EN 1990 Table A1.1, from memory); the last one only the analysis has, not the load table
HALL_ANALYSIS_CASES = ("1.35G+1.5Q", "1.35G+1.5S", "G+1.5W", "1.35G+1.5Q+0.9W")
#: axial force N (kN, tension positive) of each analysed member in HALL_ANALYSIS_CASES. The load
#: table is exported from a later run: where it has a row for the same member and case (braces in
#: G+1.5W, struts in 1.35G+1.5Q and 1.35G+1.5S) its value wins, and these few-per-cent-older
#: values are reported as overridden. Braces are tension-only (L/i = 281: never in compression).
#: The deliberate failures (BR-03, ST-02) are in the table's cases only: in the cases the analysis
#: supplies, every strength ratio stays below 0.7 (EN 1993-1-1 and AISC 360-16 ASD alike).
HALL_ANALYSIS = {
    "BR-01": (4.2, 5.0, 62.5, 42.6),
    "BR-02": (4.6, 5.4, 70.0, 47.5),     # GLOBAL_COORDS forces on the inclined brace
    "BR-03": (5.8, 6.9, 281.0, 84.0),    # FAIL stays the table's 288 kN in G+1.5W (281 here, overridden)
    "BR-04": (3.9, 4.6, 57.0, 39.2),
    "BR-05": (4.4, 5.2, 64.8, 44.3),
    "ST-01": (-20.4, -41.2, 16.0, -11.5),   # member end forces (IfcStructuralLoadConfiguration)
    "ST-02": (-94.0, -137.0, 34.0, -30.0),  # FAIL stays the table's -140 kN in 1.35G+1.5S (-137 here)
    "ST-03": (-17.6, -34.3, 14.0, -9.8),
}
HALL_GLOBAL_MEMBER = "BR-02"
HALL_END_FORCE_MEMBER = "ST-01"


def _hall_analysis(mb: ModelBuilder, physical: dict[str, Any], sections: dict[str, tuple[Any, Any]]) -> None:
    """The hall's structural-analysis model: a curve member for each wall brace BR-01..05 and eaves
    strut ST-01..03, assigned to its physical member, with results of four load combinations.

    Units are the model's (mm, N). Each curve member's edge runs from the physical member's start
    to its end, so local x is the member axis in the same direction. Results:

    * LOCAL_COORDS single force (IfcStructuralCurveReaction CONST): ForceX = N;
    * BR-02, GLOBAL_COORDS: the internal force vector N·x̂ + V·ẑ' in the world axes (V = 150 N shear
      in the wall plane, ẑ' ⟂ x̂), which a reader projects on the brace axis to get N back;
    * ST-01, member end forces (IfcStructuralLoadConfiguration, CurveReaction DISCRETE): forces
      acting on the member at Locations 0 and L, Fx(start) = −N, Fx(end) = +N, plus the 165 N
      self-weight shear at each end (local z up).
    """
    an = AnalysisWriter(mb, "Workshop hall - bracing and eaves struts")
    groups: dict[str, Any] = {}
    for case in HALL_ANALYSIS_CASES:
        lg = an.load_group(case, predefined_type="LOAD_COMBINATION", action_type="NOTDEFINED",
                           action_source="NOTDEFINED")
        groups[case] = an.result_group(case, lg)
    for tag, values in HALL_ANALYSIS.items():
        el = physical[tag]
        start = tuple(float(c) for c in el.ObjectPlacement.RelativePlacement.Location.Coordinates)
        span = (3000.0, 0.0, 2400.0) if tag.startswith("BR") else (0.0, 4000.0, 0.0)
        end = tuple(a + d for a, d in zip(start, span, strict=True))
        profile, material = sections["BR" if tag.startswith("BR") else tag]
        cm = an.curve_member(start, end, name=f"{tag} (analysis)", physical=el, profile=profile,
                             material=material,
                             predefined_type="TENSION_MEMBER" if tag.startswith("BR") else "PIN_JOINED_MEMBER")
        length = math.hypot(*span)
        x = tuple(c / length for c in span)
        z = (-x[2], 0.0, x[0])        # in the brace's vertical plane, perpendicular to x
        for case, n_kn in zip(HALL_ANALYSIS_CASES, values, strict=True):
            n = n_kn * 1e3
            if tag == HALL_GLOBAL_MEMBER:
                v = 150.0
                load = an.single_force(*(n * xc + v * zc for xc, zc in zip(x, z, strict=True)))
                an.curve_reaction(cm, load, groups[case], global_or_local="GLOBAL_COORDS")
            elif tag == HALL_END_FORCE_MEMBER:
                an.curve_reaction(cm, an.end_forces((-n, 0.0, 165.0), (n, 0.0, 165.0), length), groups[case])
            else:
                an.curve_reaction(cm, an.single_force(fx=n), groups[case])
    an.finish()


# ============================================================ model 2: the canopy (IFC2X3, inch-kip)

def build_canopy(out: Path) -> list[Path]:
    """Loading-dock canopy and equipment platform, fabricator's IFC2X3 export in inches and kips.

    Materials mostly by name only (matched in the material library); HSS and one plate stock with
    IfcMechanicalSteelMaterialProperties. Forces: ``nettlebrook-canopy-forces.csv`` (tag, kip).
    """
    mb = SeededBuilder(CANOPY, schema="IFC2X3", units="inch-kip", name=f"{SCENARIO} - dock canopy")
    f = mb.f
    mb.storey("Dock level", 0.0)
    mb.storey("Platform", 120.0)
    mb.storey("Canopy", 216.0)

    a36 = mb.material("ASTM A36")
    a572 = mb.material("A572 Gr 50")
    a992 = mb.material("A992")
    a307 = mb.material("ASTM A307 Gr A")
    f1554 = mb.material("F1554 Gr 36")
    # model values in ksi (E in kip/in², alpha per °F step); ASTM A500 Gr C, AISC Manual Table 2-4
    a500_rect = mb.material("ASTM A500 Gr C (rect. HSS)", E=29000.0, Fy=50.0, Fu=62.0, alpha=6.5e-6)
    a500_round = mb.material("ASTM A500 Gr C (round HSS)", E=29000.0, Fy=46.0, Fu=62.0, alpha=6.5e-6)
    # IMPLAUSIBLE: modulus written in psi (29,000,000) into a ksi file
    a36_bad = mb.material("ASTM A36 (mill cert 24-117)", E=29000000.0, Fy=36.0, Fu=58.0)
    fab_std = mb.material("FAB STD STEEL")   # name only, no values, matches no library grade

    def pos() -> Any:
        return _pos2d(mb)

    # AISC Shapes Database v15.0 (from memory): W8X31 d 8.00, bf 7.995, tw 0.285, tf 0.435, kdes 0.829;
    # W6X15 d 5.99, bf 5.99, tw 0.230, tf 0.260, kdes 0.510; fillet = kdes - tf
    w8x31 = f.createIfcIShapeProfileDef("AREA", "W8X31", pos(), 7.995, 8.00, 0.285, 0.435, 0.394)
    w6x15 = f.createIfcIShapeProfileDef("AREA", "W6X15", pos(), 5.99, 5.99, 0.230, 0.260, 0.25)
    l4 = f.createIfcLShapeProfileDef("AREA", "L4X4X3/8", pos(), 4.0, 4.0, 0.375, 0.375, None, None, None, None)
    # HSS: design wall 0.93 t (AISC 360-16 B4.2), corner radius 2 t_des (from memory)
    hss4 = f.createIfcRectangleHollowProfileDef("AREA", "HSS4X4X1/4", pos(), 4.0, 4.0, 0.233, 0.233, 0.466)
    pipe = f.createIfcCircleHollowProfileDef("AREA", "HSS4.500X0.237", pos(), 2.25, 0.220)
    rod34 = f.createIfcCircleProfileDef("AREA", "ROD 3/4", pos(), 0.375)
    rod78 = f.createIfcCircleProfileDef("AREA", "ROD 7/8", pos(), 0.4375)
    rod58 = f.createIfcCircleProfileDef("AREA", "ROD 5/8", pos(), 0.3125)

    t_hr = mb.member_type("IfcMemberType", name="HANGER ROD 3/4", profile=rod34, material=a36)
    t_hr_map = mb.member_type("IfcMemberType", name="HANGER ROD 3/4 (mapped)", profile=rod34,
                              material=a36, body_length=96.0)

    # ---- platform hangers, 96 in, canopy beam to platform
    for i in range(5):
        tag = f"HR-1{i + 1}"
        own = i < 3
        mb.member("IfcMember", name=f"Platform hanger {tag}", tag=tag, object_type="HANGER ROD 3/4 in",
                  profile=rod34, material=a36 if own else None, material_via="direct" if own else "none",
                  length=96.0, start=(60.0 * i, 0.0, 120.0), storey="Platform", member_type=t_hr)
    # HR-16: body only as a mapped item of its type; material from the type
    mb.member("IfcMember", name="Platform hanger HR-16", tag="HR-16", object_type="HANGER ROD 3/4 in",
              body="mapped", axis=False, material=None, material_via="none", member_type=t_hr_map,
              start=(300.0, 0.0, 120.0), storey="Platform")

    # ---- canopy tie rods and sag rods
    for i, tag in enumerate(("TR-11", "TR-12")):
        mb.member("IfcMember", name=f"Canopy tie rod {tag}", tag=tag, object_type="TIE ROD 7/8 in",
                  profile=rod78, material=a307, material_via="direct", length=180.0,
                  start=(0.0, 240.0 * i, 216.0), direction=(1.0, 0.0, -0.25), storey="Canopy")
    for i, tag in enumerate(("SR-11", "SR-12")):
        mb.member("IfcMember", name=f"Sag rod {tag}", tag=tag, object_type="SAG ROD 5/8 in",
                  profile=rod58, material=f1554, material_via="direct", length=60.0,
                  start=(120.0, 60.0 * i, 216.0), direction=(0.0, 1.0, 0.0), storey="Canopy")

    # ---- wall bracing of the dock, 144 x 120 in bays
    diag = math.hypot(144.0, 120.0)
    for i, (tag, mat) in enumerate([("BR-11", a36), ("BR-12", a36), ("BR-13", a36), ("BR-14", a36_bad)]):
        mb.member("IfcMember", name=f"Dock brace {tag}", tag=tag, object_type="BRACE", profile=l4,
                  material=mat, material_via="direct", length=diag, direction=(144.0, 0.0, 120.0),
                  start=(144.0 * i, 0.0, 0.0), storey="Dock level")

    # ---- platform posts, 120 in
    for i, (tag, prof, mat) in enumerate([("PO-11", w8x31, a992), ("PO-12", w8x31, a992),
                                          ("PO-13", w6x15, a572), ("PO-14", w6x15, fab_std)]):
        mb.member("IfcColumn", name=f"Platform post {tag}", tag=tag, object_type="COLUMN", profile=prof,
                  material=mat, material_via="direct", length=120.0, start=(120.0 * i, 96.0, 0.0),
                  storey="Dock level")

    # ---- struts, 144 in
    for i, (tag, prof, mat) in enumerate([("ST-11", hss4, a500_rect), ("ST-12", hss4, a500_rect),
                                          ("ST-13", pipe, a500_round)]):
        mb.member("IfcMember", name=f"Canopy strut {tag}", tag=tag, object_type="STRUT", profile=prof,
                  material=mat, material_via="direct", length=144.0, start=(0.0, 144.0 * i, 204.0),
                  direction=(0.0, 1.0, 0.0), storey="Canopy")
    # ST-14: no body; its section only as IFC2X3 IfcStructuralProfileProperties (AISC: 3.37 in²)
    st14 = mb.member("IfcMember", name="Canopy strut ST-14", tag="ST-14", object_type="STRUT", profile=None,
                     material=a500_rect, material_via="direct", length=144.0, body=None,
                     start=(0.0, 432.0, 204.0), direction=(0.0, 1.0, 0.0), storey="Canopy")
    spp = f.create_entity("IfcStructuralProfileProperties", ProfileName="HSS4X4X1/4", ProfileDefinition=hss4,
                          CrossSectionArea=3.37)
    f.create_entity("IfcRelAssociatesProfileProperties", GlobalId=mb.guid(), OwnerHistory=mb._owner,
                    RelatedObjects=[st14], RelatingProfileProperties=spp)

    ifc = out / f"{CANOPY}.ifc"
    mb.save(ifc)
    rows: list[tuple[str, str, float]] = []
    # hangers: A36 3/4 in rod, Ag 0.442 in², Fy·Ag/1.67 = 9.5 kips; HR-13 FAIL
    for tag, d_l, d_s, d_ls in [("HR-11", 3.8, 4.4, 5.1), ("HR-12", 4.1, 4.6, 5.5), ("HR-13", 7.9, 8.6, 12.4),
                                ("HR-14", 3.5, 4.0, 4.6), ("HR-15", 3.9, 4.5, 5.2), ("HR-16", 3.2, 3.6, 4.1)]:
        rows += [(tag, "D+L", d_l), (tag, "D+S", d_s), (tag, "D+0.75L+0.75S", d_ls)]
    for tag, d_l, d_s in [("TR-11", 5.2, 7.4), ("TR-12", 5.6, 7.9), ("SR-11", 1.2, 1.8)]:   # SR-12: NO FORCE
        rows += [(tag, "D+L", d_l), (tag, "D+S", d_s)]
    for tag, w in [("BR-11", 18.5), ("BR-12", 22.0), ("BR-13", 80.0), ("BR-14", 20.0)]:   # BR-13 FAIL
        rows.append((tag, "D+0.6W", w))
    for tag, d_l, d_ls in [("PO-11", -62.0, -71.0), ("PO-12", -58.0, -66.0), ("PO-13", -30.0, -35.0),
                           ("PO-14", -28.0, -33.0)]:
        rows += [(tag, "D+L", d_l), (tag, "D+0.75L+0.75S", d_ls)]
    for tag, d_s in [("ST-11", -22.0), ("ST-12", -68.0), ("ST-13", -18.0), ("ST-14", -15.0)]:   # ST-12 FAIL
        rows.append((tag, "D+S", d_s))
    rows.append(("PO-19", "D+L", -40.0))   # UNMATCHED: no member has tag PO-19
    csv_path = out / f"{CANOPY}-forces.csv"
    write_forces(csv_path, "tag", "kip", rows)
    return [ifc, csv_path]


BRIDGE_ANALYSIS_ONLY_NAME = "Deck plan tie rod AT-01 (analysis model only)"
BRIDGE_ANALYSIS_ONLY_EDGE = ((6.0, 0.0, 5.0), (12.0, 2.0, 5.0))   # m, world axes
#: N (kN, tension) of the analysis-only tie rod: RD 30 S355, A·fy = 251 kN (EN 1993-1-1 6.2.3)
BRIDGE_ANALYSIS_ONLY = {"1.35G+1.5Q": 22.0, "G+1.5W": 68.0}


# ======================================================== model 3: the pipe bridge (IFC4X3, m, kN)

def build_pipebridge(out: Path) -> list[Path]:
    """Pipe bridge: every parametric and arbitrary profile class, swept-disk suspenders.

    Units: m, kN, kN/m². Forces: ``nettlebrook-pipebridge-forces.csv`` keyed by GlobalId, kN; the
    analysis-only tie rod AT-01 (an IfcStructuralCurveMember assigned to no element) from its
    structural-analysis results.
    """
    mb = SeededBuilder(BRIDGE, schema="IFC4X3", units="m", name=f"{SCENARIO} - pipe bridge")
    f = mb.f
    mb.storey("Grade", 0.0)
    mb.storey("Pipe bridge deck", 5.0)

    s355h = mb.material("S355J2H", category="steel")            # library
    s355 = mb.material("EN 10025-2 S355J2", category="steel")   # library
    # model values in kN/m² (EN 1993-1-1 3.2.6, Table 3.1)
    s235 = mb.material("S235JR", category="steel", E=210.0e6, Fy=235.0e3, Fu=360.0e3, alpha=12e-6)
    ss316 = mb.material("AISI 316", category="stainless")         # library: ASTM A240 316
    ss304 = mb.material("1.4301", category="stainless")           # library: EN 10088 1.4301
    alu = mb.material("EN AW-6061 T6", category="aluminium")      # library

    # ---- parametric profiles (metres)
    chs114 = f.createIfcCircleHollowProfileDef("AREA", "CHS 114.3x5.0", None, 0.05715, 0.005)
    # EN 10024 / DIN 1025-1 IPN 200: b 90, h 200, tw 7.5, tf 11.3, r1 7.5, r2 4.5, slope 14 % (from memory)
    ipn200 = f.createIfcIShapeProfileDef("AREA", "IPN200", None, 0.090, 0.200, 0.0075, 0.0113, 0.0075,
                                         0.0045, math.atan(0.14))
    wi = f.createIfcAsymmetricIShapeProfileDef("AREA", "WI 250 (top 150x12, bottom 200x15, web 8)", None,
                                               0.200, 0.250, 0.008, 0.015, 0.006, 0.150, 0.012, 0.006,
                                               None, None, None, None)
    # EN 10219-2 cold formed RHS 120x80x5: outer radius 2t, inner t (from memory)
    rhs120 = f.createIfcRectangleHollowProfileDef("AREA", "RHS 120x80x5", None, 0.120, 0.080, 0.005,
                                                  0.005, 0.010)
    # EN 10055 T 80: h 80, b 80, t 9, r1 9, r2 4.5, r3 2 (from memory)
    t80 = f.createIfcTShapeProfileDef("AREA", "T80", None, 0.080, 0.080, 0.009, 0.009, 0.009, 0.0045,
                                      0.002, None, None)
    # DIN 1026-1 UPN 120: h 120, b 55, tw 7, tf 9, r1 9, r2 4.5, slope 8 % (from memory)
    upn120 = f.createIfcUShapeProfileDef("AREA", "UPN120", None, 0.120, 0.055, 0.007, 0.009, 0.009, 0.0045,
                                         math.atan(0.08))
    z140 = f.createIfcZShapeProfileDef("AREA", "Z 140x60x4", None, 0.140, 0.060, 0.004, 0.004, 0.004, None)
    c150 = f.createIfcCShapeProfileDef("AREA", "C 150x65x20x2.5", None, 0.150, 0.065, 0.0025, 0.020, 0.0025)
    ellipse = f.createIfcEllipseProfileDef("AREA", "EL 80x50 solid", None, 0.040, 0.025)
    rr60 = f.createIfcRoundedRectangleProfileDef("AREA", "FB 60x40 R8", None, 0.060, 0.040, 0.008)
    sq40 = f.createIfcRectangleProfileDef("AREA", "SQ 40 (square bar)", None, 0.040, 0.040)
    rd24 = 0.012        # swept-disk suspender radius
    rd30 = f.createIfcCircleProfileDef("AREA", "RD30", None, 0.015)
    chs42 = f.createIfcCircleHollowProfileDef("AREA", "CHS 42.4x4.0", None, 0.0212, 0.004)

    # ---- arbitrary closed profiles
    # polyline: cruciform of two 100x10 plates
    a, t = 0.050, 0.005
    cross = f.createIfcArbitraryClosedProfileDef("AREA", "CROSS 100x100x10", _polyline2d(mb, [
        (t, t), (a, t), (a, -t), (t, -t), (t, -a), (-t, -a), (-t, -t), (-a, -t), (-a, t), (-t, t),
        (-t, a), (t, a)]))
    # indexed poly curve with arc segments: obround (stadium) bar 80x30
    pts = f.createIfcCartesianPointList2D([(-0.025, -0.015), (0.025, -0.015), (0.040, 0.0), (0.025, 0.015),
                                           (-0.025, 0.015), (-0.040, 0.0)], None)
    obround_curve = f.createIfcIndexedPolyCurve(pts, [
        f.create_entity("IfcLineIndex", (1, 2)), f.create_entity("IfcArcIndex", (2, 3, 4)),
        f.create_entity("IfcLineIndex", (4, 5)), f.create_entity("IfcArcIndex", (5, 6, 1))], False)
    obround = f.createIfcArbitraryClosedProfileDef("AREA", "OBROUND 80x30", obround_curve)
    # composite curve: half-round bar, radius 40 (a trimmed circle and its diameter)
    r = 0.040
    circle = f.createIfcCircle(_pos2d(mb), r)
    p_right = f.createIfcCartesianPoint((r, 0.0))
    p_left = f.createIfcCartesianPoint((-r, 0.0))
    arc = f.createIfcTrimmedCurve(circle, [p_right, f.create_entity("IfcParameterValue", 0.0)],
                                  [p_left, f.create_entity("IfcParameterValue", math.pi)], True, "CARTESIAN")
    chord = f.createIfcPolyline([p_left, p_right])
    half_round = f.createIfcArbitraryClosedProfileDef("AREA", "HALF ROUND 80", f.createIfcCompositeCurve([
        f.createIfcCompositeCurveSegment("CONTINUOUS", True, arc),
        f.createIfcCompositeCurveSegment("CONTINUOUS", True, chord)], False))
    # profile with a void: welded box 160x160x10
    box = f.createIfcArbitraryProfileDefWithVoids(
        "AREA", "BOX 160x10 (welded)",
        _polyline2d(mb, [(-0.080, -0.080), (0.080, -0.080), (0.080, 0.080), (-0.080, 0.080)]),
        [_polyline2d(mb, [(-0.070, -0.070), (-0.070, 0.070), (0.070, 0.070), (0.070, -0.070)])])

    # ---- derived profiles
    rhs60 = f.createIfcRectangleHollowProfileDef("AREA", "RHS 60x40x4", None, 0.060, 0.040, 0.004, None, None)
    scaled = f.createIfcDerivedProfileDef(
        "AREA", "RHS 90x60x6 (RHS 60x40x4 scaled 1.5)", rhs60,
        f.createIfcCartesianTransformationOperator2D(None, None, f.createIfcCartesianPoint((0.0, 0.0)), 1.5),
        "scaled")
    # EN 10056-1 L 80x60x7: r1 8, r2 4 (from memory)
    l80x60 = f.createIfcLShapeProfileDef("AREA", "L80x60x7", None, 0.080, 0.060, 0.007, 0.008, 0.004, None)
    mirrored = f.createIfcMirroredProfileDef("AREA", "L80x60x7 (mirrored)", l80x60, None, "mirrored")
    # composite: two L 80x80x8 back to back with a 10 mm gap (one placed, one its mirror image)
    # EN 10056-1 L 80x80x8: r1 10, r2 5 (from memory); Position = centre of the bounding box
    l80_right = f.createIfcLShapeProfileDef("AREA", "L80x80x8", _pos2d(mb, 0.005 + 0.040, 0.0),
                                            0.080, 0.080, 0.008, 0.010, 0.005, None)
    l80_left = f.createIfcMirroredProfileDef("AREA", "L80x80x8", l80_right, None, "left")
    double_l = f.createIfcCompositeProfileDef("AREA", "2L80x80x8 (10 mm gap)", [l80_right, l80_left], "2L")

    t_ch = mb.member_type("IfcMemberType", name="CHORD CHS 114.3x5.0", predefined_type="CHORD",
                          profile=chs114, material=s355h)

    ids: dict[str, str] = {}

    def add(cls: str, tag: str, **kw: Any) -> None:
        kw.setdefault("storey", "Pipe bridge deck")
        el = mb.member(cls, tag=tag, **kw)
        ids[tag] = el.GlobalId

    # ---- truss chords, 6 m panels
    for i in range(4):
        own = i < 2
        add("IfcMember", f"CH-0{i + 1}", name=f"Chord CH-0{i + 1}", predefined_type="CHORD", profile=chs114,
            material=s355h if own else None, material_via="profile_set" if own else "none", member_type=t_ch,
            length=6.0, start=(6.0 * (i % 2), 2.0 * (i // 2), 5.0), direction=(1.0, 0.0, 0.0))
    # ---- posts
    add("IfcColumn", "PO-21", name="Stub post PO-21", predefined_type="COLUMN", profile=ipn200, material=s235,
        length=2.5, start=(0.0, 0.0, 2.5), storey="Grade")
    add("IfcColumn", "PO-22", name="Bridge post PO-22", predefined_type="COLUMN", profile=wi, material=s355,
        length=5.0, start=(6.0, 0.0, 0.0), storey="Grade")
    add("IfcColumn", "PO-23", name="Bridge post PO-23", predefined_type="COLUMN", profile=box, material=s355,
        length=5.0, start=(12.0, 0.0, 0.0), storey="Grade")
    # ---- truss diagonals, 3 x 2 m panels
    dg = math.hypot(3.0, 2.0)
    add("IfcMember", "DG-01", name="Diagonal DG-01", predefined_type="BRACE", profile=rhs120, material=s355h,
        length=dg, direction=(3.0, 0.0, 2.0), qto={"CrossSectionArea": 0.001836, "Length": dg})
    add("IfcMember", "DG-02", name="Diagonal DG-02", predefined_type="BRACE", profile=rhs120, material=s355h,
        length=dg, start=(3.0, 0.0, 5.0), direction=(3.0, 0.0, 2.0))
    add("IfcMember", "DG-03", name="Diagonal DG-03", predefined_type="BRACE", profile=t80, material=s235,
        length=dg, start=(6.0, 0.0, 5.0), direction=(3.0, 0.0, 2.0))
    add("IfcMember", "DG-04", name="Diagonal DG-04", predefined_type="BRACE", profile=upn120, material=s235,
        length=dg, start=(9.0, 0.0, 5.0), direction=(3.0, 0.0, 2.0))
    # ---- deck cross struts, 2 m
    for i, (tag, prof, mat) in enumerate([("ST-21", z140, s235), ("ST-22", c150, s355),
                                          ("ST-23", ellipse, s355), ("ST-24", cross, s355),
                                          ("ST-25", half_round, s355), ("ST-26", scaled, s355h),
                                          ("ST-27", mirrored, s235)]):
        add("IfcMember", tag, name=f"Deck strut {tag}", predefined_type="STRUT", profile=prof, material=mat,
            length=2.0, start=(1.5 * i, 0.0, 5.0), direction=(0.0, 1.0, 0.0))
    add("IfcMember", "BR-21", name="Deck plan brace BR-21", predefined_type="BRACE", profile=double_l,
        material=s355, length=math.hypot(3.0, 2.0), direction=(3.0, 2.0, 0.0))
    add("IfcMember", "KB-01", name="Knee brace KB-01", predefined_type="BRACE", profile=rr60, material=s355,
        length=1.2, start=(0.0, 0.0, 3.8), direction=(1.0, 0.0, 1.0))
    add("IfcMember", "KB-02", name="Knee brace KB-02", predefined_type="BRACE", profile=sq40, material=s355,
        length=1.2, start=(6.0, 0.0, 3.8), direction=(-1.0, 0.0, 1.0))
    # ---- pipe suspenders: swept-disk rods (no profile; section from the disk radius)
    for i in range(3):
        tag = f"SU-0{i + 1}"
        add("IfcMember", tag, name=f"Pipe suspender rod {tag}", predefined_type="SUSPENDER", body="swept_disk",
            disk=(rd24, None), material=ss316, material_via="direct", length=1.5,
            start=(1.0 + 2.0 * i, 1.0, 3.5))
    add("IfcMember", "SU-04", name="Pipe suspender tube SU-04", predefined_type="SUSPENDER", body="swept_disk",
        disk=(0.02415, 0.02015), material=ss316, material_via="direct", length=1.5, start=(7.0, 1.0, 3.5))
    add("IfcMember", "SU-05", name="Pipe suspender bar SU-05", predefined_type="SUSPENDER", profile=obround,
        material=s355, length=1.5, start=(9.0, 1.0, 3.5))
    # ---- deck tie rods (TIEBAR), 6 m
    add("IfcMember", "TB-01", name="Tie rod TB-01", predefined_type="TIEBAR", profile=rd30, material=ss304,
        length=6.0, start=(0.0, 1.0, 5.0), direction=(1.0, 0.0, 0.0))
    add("IfcMember", "TB-02", name="Tie rod TB-02", predefined_type="TIEBAR", profile=rd30, material=s355,
        length=6.0, start=(6.0, 1.0, 5.0), direction=(1.0, 0.0, 0.0))
    # ---- walkway post, aluminium
    add("IfcMember", "WP-01", name="Walkway post WP-01", predefined_type="POST", profile=chs42, material=alu,
        length=1.1, start=(0.0, -0.8, 5.0))

    # ---- analysis-only member: a deck plan tie rod the engineer has in the analysis model but not
    # (yet) in the physical model. Assigned to no element, it is a member in its own right: its
    # IfcMaterialProfileSet gives section (RD 30) and material (S355), its IfcEdge the length
    # (6.0 x 2.0 m in plan: 6.325 m). Results LOCAL_COORDS, N = ForceX in kN.
    an = AnalysisWriter(mb, "Pipe bridge - deck plan bracing")
    at = an.curve_member(BRIDGE_ANALYSIS_ONLY_EDGE[0], BRIDGE_ANALYSIS_ONLY_EDGE[1],
                         name=BRIDGE_ANALYSIS_ONLY_NAME, profile=rd30, material=s355,
                         predefined_type="TENSION_MEMBER")
    for case, n in BRIDGE_ANALYSIS_ONLY.items():
        lg = an.load_group(case, predefined_type="LOAD_COMBINATION", action_type="NOTDEFINED",
                           action_source="NOTDEFINED")
        an.curve_reaction(at, an.single_force(fx=n), an.result_group(case, lg))
    an.finish()

    ifc = out / f"{BRIDGE}.ifc"
    mb.save(ifc)
    rows: list[tuple[str, str, float]] = []
    table = {  # tag: (1.35G+1.5Q, G+1.5W) in kN; None = no row for that case
        "CH-01": (-48.0, -30.0), "CH-02": (55.0, 35.0), "CH-03": (-61.0, -41.0), "CH-04": (40.0, 26.0),
        "PO-21": (-60.0, -35.0), "PO-22": (-210.0, -140.0), "PO-23": (-300.0, -190.0),
        "DG-01": (150.0, 95.0), "DG-02": (850.0, 540.0),          # DG-02 FAIL (A·fy ≈ 650 kN)
        "DG-03": (95.0, 60.0), "DG-04": (120.0, 80.0),
        "ST-21": (-25.0, -15.0), "ST-22": (-12.0, -8.0), "ST-23": (-40.0, -25.0), "ST-24": (-100.0, -60.0),
        "ST-25": (-30.0, -18.0), "ST-26": (-90.0, -55.0), "ST-27": (-18.0, -11.0),
        "BR-21": (None, 140.0), "KB-01": (-30.0, -45.0), "KB-02": (-35.0, -50.0),
        "SU-01": (30.0, 18.0), "SU-02": (35.0, 21.0), "SU-03": (120.0, 70.0),   # SU-03 FAIL (A·fy ≈ 93 kN)
        "SU-04": (40.0, 24.0), "SU-05": (60.0, 36.0),
        "TB-01": (45.0, 28.0),                                    # TB-02: NO FORCE
        "WP-01": (-5.0, -3.0),
    }
    for tag, (q, w) in table.items():
        if q is not None:
            rows.append((ids[tag], "1.35G+1.5Q", q))
        rows.append((ids[tag], "G+1.5W", w))
    rows.append((seeded_guid("unmatched", 1), "1.35G+1.5Q", 75.0))   # UNMATCHED: a GlobalId of no member
    csv_path = out / f"{BRIDGE}-forces.csv"
    write_forces(csv_path, "global_id", "kN", rows)
    return [ifc, csv_path]


def build_all(out: Path) -> list[Path]:
    out.mkdir(parents=True, exist_ok=True)
    return build_hall(out) + build_canopy(out) + build_pipebridge(out)


def main(argv: Sequence[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=f"Regenerate the {SCENARIO} sample models and load tables.")
    ap.add_argument("outdir", nargs="?", default=str(HERE), help="output folder (default: sample_models/)")
    args = ap.parse_args(argv)
    for p in build_all(Path(args.outdir)):
        print(p)
    return 0


if __name__ == "__main__":
    sys.exit(main())
