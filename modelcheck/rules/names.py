"""The names a rule expression can use for a member, and where each value comes from.

Numbers are in SI base units in the member table; expressions see them as pint quantities.
Text names are for conditions (``shape == "I"``, ``matches(name, "*rod*")``).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType


@dataclass(frozen=True)
class MemberQuantity:
    """A number of each member (or of each member × load case, for P)."""

    name: str
    about: str          # what it is
    unit: str           # SI unit of the member-table column
    column: str | None  # member-table column (None: computed by the engine)
    missing: str        # what the missing-list says when the member has none
    dummy: float        # a plausible value, used to check dimensions when a rule file loads


_Q = MemberQuantity
MEMBER_QUANTITIES: Mapping[str, MemberQuantity] = MappingProxyType({q.name: q for q in (
    _Q("P", "axial force of the load case, tension positive", "N", None,
       "P: no axial force from load tables, model properties or IFC analysis results", 10e3),
    _Q("A", "gross cross-section area", "m**2", "area",
       "A: no cross-section area in the profile, quantity sets or properties", 1e-3),
    _Q("L", "member length", "m", "length",
       "L: no length from the member's axis, extrusion, quantity sets or properties", 3.0),
    _Q("E", "modulus of elasticity", "Pa", "E",
       "E: no modulus of elasticity in the material properties or the material library", 200e9),
    _Q("Fy", "yield strength (0.2 % proof strength)", "Pa", "Fy",
       "Fy: no yield strength in the material properties or the material library", 250e6),
    _Q("Fu", "tensile (ultimate) strength", "Pa", "Fu",
       "Fu: no tensile strength in the material properties or the material library", 400e6),
    _Q("r", "least radius of gyration of the section", "m", "r_min",
       "r: no radius of gyration from the profile or properties", 0.02),
    _Q("alpha", "linear thermal expansion coefficient", "1/K", "alpha",
       "alpha: no thermal expansion coefficient in the material properties or the material library",
       12e-6),
    _Q("d", "outside diameter (round sections)", "m", "d",
       "d: no diameter (only round profiles have one)", 0.02),
    _Q("h", "overall depth of the section", "m", "h", "h: no section depth in the profile", 0.2),
    _Q("b", "overall width of the section", "m", "b", "b: no section width in the profile", 0.1),
    _Q("tf", "flange thickness", "m", "tf", "tf: no flange thickness in the profile", 0.01),
    _Q("tw", "web thickness", "m", "tw", "tw: no web thickness in the profile", 0.006),
    _Q("t", "wall or plate thickness", "m", "t", "t: no wall thickness in the profile", 0.005),
    _Q("As", "tensile-stress area of the standard coarse thread of diameter d "
            "(ASME B1.1 UNC or ISO 261 coarse, round bars only)", "m**2", None,
       "As: no standard thread size for this member", 2.5e-4),
    _Q("An", "net area (at holes or threads), the true net area, before any shear lag; read from the "
            "model property MC_NetSection.NetArea (occurrence or type), missing otherwise", "m**2", "net_area",
       "An: no net area (model property MC_NetSection.NetArea)", 0.9e-3),
    _Q("U", "shear lag factor of the net section, Ae = U An; read from the model property "
            "MC_NetSection.ShearLagFactor (occurrence or type), missing otherwise", "", "shear_lag",
       "U: no shear lag factor (model property MC_NetSection.ShearLagFactor)", 0.9),
)})

#: text names for conditions: name -> (member-table column, description)
TEXT_NAMES: Mapping[str, str] = MappingProxyType({
    "shape": "shape family: round-bar, round-tube, square-bar, flat-bar, rect-tube, I, L, T, U, C, "
             "Z, ellipse, arbitrary, composite (empty when unknown)",
    "ifc_class": "IFC class, e.g. IfcMember",
    "predefined_type": "PredefinedType, e.g. TIEBAR, BRACE, STRUT",
    "object_type": "ObjectType (user-defined type text)",
    "name": "element Name",
    "tag": "element Tag",
    "storey": "building storey name",
    "type_name": "name of the element's type object",
    "material": "material name as in the model",
    "material_category": "material category (steel, stainless, aluminium ...)",
    "material_grade": "material grade matched in the material library, e.g. ASTM A36",
    "section_name": "profile name",
    "profile_type": "IFC profile class",
    "model": "model file",
    "global_id": "GlobalId",
    "thread": "standard thread matching the diameter d of a round bar, e.g. 3/8-16 UNC or M10",
    "load_case": "load case name (empty for checks that need no force)",
})

#: names only a check's message can use
MESSAGE_NAMES: Mapping[str, str] = MappingProxyType({
    "demand": "the check's demand", "capacity": "the check's capacity", "ratio": "demand / capacity",
})

RESERVED: frozenset[str] = frozenset(MEMBER_QUANTITIES) | frozenset(TEXT_NAMES) | frozenset(MESSAGE_NAMES)
