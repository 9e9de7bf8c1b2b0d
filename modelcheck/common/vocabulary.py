"""The member vocabulary: every value a member has, named once.

One row per member-table column (identity texts, section texts and dimensions, material texts,
quantities with their provenance) and per name the engine computes for a check (``P``, ``As``,
``thread``, ``load_case``). A row says everything the stages need to know of its value:

* the **member table** (``modelcheck.common.table``): the column, its SI unit, whether it has a
  ``<column>_source`` sibling and whether its value comes from the member's section;
* the **rule language** (``modelcheck.rules.names``): the name a rule uses (``A`` for ``area``,
  ``r`` for ``r_min``), what it is, the text a check's ``missing`` list gives when a member has
  none, and a plausible value used to check a rule's dimensions when a rule file loads;
* the **reporters** (``modelcheck.report.quantities``, ``report.members``): the display unit per
  system (SI, US; the JSON ``Q`` object's ``unit``) and the label of a table header.

The shape families of the ``shape`` column, the stock kinds of ``size --shape`` and the
``[display]`` keys of a rule set are here too. This module imports nothing heavier than
``dataclasses``: building the command line reads it.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType
from typing import Any, Final, Literal

# ---------------------------------------------------------------------------------------------
# shape families (the member table's ``shape`` column)


class Shape:
    """The shape families a section is sorted into (the values of the ``shape`` column)."""

    ROUND_BAR: Final = "round-bar"
    ROUND_TUBE: Final = "round-tube"
    SQUARE_BAR: Final = "square-bar"
    FLAT_BAR: Final = "flat-bar"
    RECT_TUBE: Final = "rect-tube"
    I_SECTION: Final = "I"
    ANGLE: Final = "L"
    TEE: Final = "T"
    CHANNEL_U: Final = "U"
    CHANNEL_C: Final = "C"
    ZED: Final = "Z"
    ELLIPSE: Final = "ellipse"
    ARBITRARY: Final = "arbitrary"   # an outline of its own (arbitrary profile, polygon, curve)
    COMPOSITE: Final = "composite"   # several profiles together


#: every shape family, in the order documentation lists them
SHAPES: tuple[str, ...] = (
    Shape.ROUND_BAR, Shape.ROUND_TUBE, Shape.SQUARE_BAR, Shape.FLAT_BAR, Shape.RECT_TUBE, Shape.I_SECTION,
    Shape.ANGLE, Shape.TEE, Shape.CHANNEL_U, Shape.CHANNEL_C, Shape.ZED, Shape.ELLIPSE, Shape.ARBITRARY,
    Shape.COMPOSITE,
)

#: the shape families of the catalog shape tables (rulesets/shapes-*.csv)
CATALOG_SHAPES: tuple[str, ...] = (Shape.I_SECTION, Shape.RECT_TUBE, Shape.ROUND_TUBE, Shape.ANGLE)


@dataclass(frozen=True)
class StockKind:
    """A kind of candidate size (``size --shape``): its family as the reports name it, the
    shape family its sizes have (None: each catalog row names its own) and whether every check
    only gets better with the next size (a larger bar or thread has more area and a larger
    radius of gyration), so that its sizes can be searched by bisection."""

    name: str
    family: str
    shape: str | None
    monotone: bool = False


#: the kinds of candidate size, in the order the command line lists them
STOCK_KINDS: tuple[StockKind, ...] = (
    StockKind("round", "round bar", Shape.ROUND_BAR, monotone=True),
    StockKind("square", "square bar", Shape.SQUARE_BAR, monotone=True),
    StockKind("flat", "flat bar", Shape.FLAT_BAR),
    StockKind("threaded", "threaded rod", Shape.ROUND_BAR, monotone=True),
    StockKind("catalog", "catalog section", None),
)
STOCK_KIND_NAMES: tuple[str, ...] = tuple(k.name for k in STOCK_KINDS)
STOCK_FAMILY: Mapping[str, str] = MappingProxyType({k.name: k.family for k in STOCK_KINDS})


# ---------------------------------------------------------------------------------------------
# display units


@dataclass(frozen=True)
class Display:
    """An SI unit and the unit a report shows it in, per system (pint-parsable strings)."""

    si: str
    SI: str
    US: str

    def unit(self, system: str) -> str:
        return self.SI if system == "SI" else self.US if system == "US" else _no_system(system)


def _no_system(system: str) -> str:
    raise KeyError(system)


AREA: Final = Display("m**2", "mm**2", "in**2")
SMALL_LENGTH: Final = Display("m", "mm", "in")        # section dimensions, elongations
LENGTH: Final = Display("m", "m", "ft")               # member lengths
STRESS: Final = Display("Pa", "MPa", "ksi")
FORCE: Final = Display("N", "kN", "kip")
EXPANSION: Final = Display("1/K", "1/K", "1/delta_degF")
RATIO: Final = Display("", "", "")

#: display kinds a report converts to that are no member-table column
EXTRA_DISPLAY: Mapping[str, Display] = MappingProxyType({
    "force": FORCE, "stress": STRESS, "small_length": SMALL_LENGTH,
})


# ---------------------------------------------------------------------------------------------
# the member table and the rule language

Group = Literal["identity", "section", "material", "quantity", "computed"]


@dataclass(frozen=True)
class Text:
    """A text value of a member: a member-table column (``str`` or None), usable in conditions."""

    column: str | None       # member-table column (None: made by the engine per check)
    name: str                # the rule-language name
    about: str
    group: Group


@dataclass(frozen=True)
class Quantity:
    """A number of a member (or of a member × load case, for P)."""

    column: str | None       # member-table column (None: computed by the engine)
    name: str | None         # the rule-language name (None: not a rule name)
    unit: str                # SI unit of the column ('' for a ratio)
    about: str
    group: Group
    display: Display         # display unit per system (the JSON Q object's unit)
    label: str               # a report's table header ('r min')
    missing: str             # what a check's missing list says when the member has none
    dummy: float             # a plausible value, to check a rule's dimensions when a rule file loads
    provenance: bool = True  # the column has a ``<column>_source`` sibling
    of_section: bool = False  # the value comes from the member's section (a doubted section loses it)


def _dim(column: str, about: str, missing: str, dummy: float) -> Quantity:
    return Quantity(column, column, "m", about, "section", SMALL_LENGTH, column, f"{column}: {missing}", dummy,
                    provenance=False, of_section=True)


_SHAPE_LIST = ", ".join(SHAPES)

#: every member value, in the member table's column order (the computed names last)
VOCABULARY: tuple[Text | Quantity, ...] = (
    Text("model", "model", "model file", "identity"),
    Text("global_id", "global_id", "GlobalId", "identity"),
    Text("ifc_class", "ifc_class", "IFC class, e.g. IfcMember", "identity"),
    Text("predefined_type", "predefined_type", "PredefinedType, e.g. TIEBAR, BRACE, STRUT", "identity"),
    Text("object_type", "object_type", "ObjectType (user-defined type text)", "identity"),
    Text("name", "name", "element Name", "identity"),
    Text("tag", "tag", "element Tag", "identity"),
    Text("storey", "storey", "building storey name", "identity"),
    Text("type_name", "type_name", "name of the element's type object", "identity"),
    Text("section_name", "section_name", "profile name", "section"),
    Text("profile_type", "profile_type", "IFC profile class", "section"),
    Text("shape", "shape", f"shape family: {_SHAPE_LIST} (empty when unknown)", "section"),
    _dim("d", "outside diameter (round sections)", "no diameter (only round profiles have one)", 0.02),
    _dim("h", "overall depth of the section", "no section depth in the profile", 0.2),
    _dim("b", "overall width of the section", "no section width in the profile", 0.1),
    _dim("tf", "flange thickness", "no flange thickness in the profile", 0.01),
    _dim("tw", "web thickness", "no web thickness in the profile", 0.006),
    _dim("t", "wall or plate thickness", "no wall thickness in the profile", 0.005),
    _dim("r_root", "root radius between web and flange of an I, channel or tee section",
         "no root radius in the profile", 0.01),
    Text("material", "material", "material name as in the model", "material"),
    Text("material_category", "material_category", "material category (steel, stainless, aluminium ...)",
         "material"),
    Text("material_grade", "material_grade", "material grade matched in the material library, e.g. ASTM A36",
         "material"),
    Quantity("area", "A", "m**2", "gross cross-section area", "quantity", AREA, "A",
             "A: no cross-section area in the profile, quantity sets or properties", 1e-3, of_section=True),
    Quantity("r_min", "r", "m", "least radius of gyration of the section", "quantity", SMALL_LENGTH, "r min",
             "r: no radius of gyration from the profile or properties", 0.02, of_section=True),
    Quantity("length", "L", "m", "member length", "quantity", LENGTH, "L",
             "L: no length from the member's axis, extrusion, quantity sets or properties", 3.0),
    Quantity("E", "E", "Pa", "modulus of elasticity", "quantity", STRESS, "E",
             "E: no modulus of elasticity in the material properties or the material library", 200e9),
    Quantity("Fy", "Fy", "Pa", "yield strength (0.2 % proof strength)", "quantity", STRESS, "Fy",
             "Fy: no yield strength in the material properties or the material library", 250e6),
    Quantity("Fu", "Fu", "Pa", "tensile (ultimate) strength", "quantity", STRESS, "Fu",
             "Fu: no tensile strength in the material properties or the material library", 400e6),
    Quantity("alpha", "alpha", "1/K", "linear thermal expansion coefficient", "quantity", EXPANSION, "alpha",
             "alpha: no thermal expansion coefficient in the material properties or the material library",
             12e-6),
    Quantity("net_area", "An", "m**2",
             "net area (at holes or threads), the true net area, before any shear lag; read from the model "
             "property MC_NetSection.NetArea (occurrence or type), missing otherwise", "quantity", AREA, "An",
             "An: no net area (model property MC_NetSection.NetArea)", 0.9e-3),
    Quantity("shear_lag", "U", "",
             "shear lag factor of the net section, Ae = U An; read from the model property "
             "MC_NetSection.ShearLagFactor (occurrence or type), missing otherwise", "quantity", RATIO, "U",
             "U: no shear lag factor (model property MC_NetSection.ShearLagFactor)", 0.9),
    Quantity(None, "P", "N", "axial force of the load case, tension positive", "computed", FORCE, "P",
             "P: no axial force from load tables, model properties or IFC analysis results", 10e3,
             provenance=False),
    Quantity(None, "As", "m**2", "tensile-stress area of the standard coarse thread of diameter d "
             "(ASME B1.1 UNC or ISO 261 coarse, round bars only)", "computed", AREA, "As",
             "As: no standard thread size for this member", 2.5e-4, provenance=False),
    Quantity(None, "t_named", "m", "nominal wall thickness the name of a hollow section states (HSS6X6X3/8: "
             "3/8 in; SHS 150x150x6: 6 mm), where the name's first number is the section's diameter, depth "
             "or width and its wall is 0.90 to 1.02 times the named one", "computed", SMALL_LENGTH, "t named",
             "t_named: the section name states no wall thickness of this section", 0.005, provenance=False),
    Quantity(None, "r_named", "m", "root radius of the shipped shape-table section (W12X40, IPE 240) that the "
             "name of an I, channel or tee section designates, where its depth, width and thicknesses match the "
             "table's", "computed", SMALL_LENGTH, "r named",
             "r_named: the section name designates no shape-table section of these dimensions", 0.01,
             provenance=False),
    Text(None, "thread", "standard thread matching the diameter d of a round bar, e.g. 3/8-16 UNC or M10",
         "computed"),
    Text(None, "load_case", "load case name (empty for checks that need no force)", "computed"),
)

#: the order of a check's missing inputs: the rule-language names of the quantities, as the
#: ``missing`` list of an unchecked result names them
RULE_QUANTITY_ORDER: tuple[str, ...] = (
    "P", "A", "L", "E", "Fy", "Fu", "r", "alpha", "d", "h", "b", "tf", "tw", "t", "r_root", "r_named", "t_named", "As", "An", "U",
)


def quantities() -> tuple[Quantity, ...]:
    return tuple(v for v in VOCABULARY if isinstance(v, Quantity))


def texts() -> tuple[Text, ...]:
    return tuple(v for v in VOCABULARY if isinstance(v, Text))


def columns_of(group: Group) -> tuple[str, ...]:
    """The member-table columns of ``group``, in table order."""
    return tuple(v.column for v in VOCABULARY if v.group == group and v.column is not None)


def by_column() -> Mapping[str, Text | Quantity]:
    return MappingProxyType({v.column: v for v in VOCABULARY if v.column is not None})


def rule_quantities() -> tuple[Quantity, ...]:
    """The quantities a rule can name, in ``RULE_QUANTITY_ORDER``."""
    named = {q.name: q for q in quantities() if q.name is not None}
    return tuple(named[n] for n in RULE_QUANTITY_ORDER)


def display_kinds() -> Mapping[str, Display]:
    """Every key a report converts by: each quantity column, and the extra kinds (force, stress,
    small_length)."""
    kinds: dict[str, Display] = {q.column: q.display for q in quantities() if q.column is not None}
    kinds.update(EXTRA_DISPLAY)
    return MappingProxyType(kinds)


# ---------------------------------------------------------------------------------------------
# a rule set's [display] keys: the units of the checks' demand and capacity


@dataclass(frozen=True)
class DisplayKey:
    """A ``[display]`` key of a rule set: an SI unit of its dimension and the default per system."""

    key: str
    display: Display


RULESET_DISPLAY: tuple[DisplayKey, ...] = (
    DisplayKey("force", FORCE),
    DisplayKey("stress", STRESS),
    DisplayKey("length", SMALL_LENGTH),
    DisplayKey("area", AREA),
    DisplayKey("volume", Display("m**3", "mm**3", "in**3")),
    DisplayKey("second_moment", Display("m**4", "mm**4", "in**4")),
    DisplayKey("force_per_length", Display("N/m", "kN/m", "kip/ft")),
    DisplayKey("moment", Display("N*m", "kN*m", "kip*ft")),
    DisplayKey("expansion", EXPANSION),
    DisplayKey("temperature_change", Display("K", "K", "delta_degF")),
    DisplayKey("number", RATIO),
)


# ---------------------------------------------------------------------------------------------
# the JSON quantity object


def round_sig(x: float, digits: int = 6) -> float:
    """Round to ``digits`` significant figures: stable JSON across platforms, no false precision."""
    if x == 0 or not math.isfinite(x):
        return float(x)
    return float(f"{x:.{digits}g}")


def quantity_object(value: Any, unit: Any, source: Any) -> dict[str, Any] | None:
    """The JSON quantity object ``Q = {"value", "unit", "source"}`` of a value already in
    ``unit`` (six significant figures), or None where there is no finite number: the one builder
    of ``Q`` for every JSON document (the check report's row encoder writes the same bytes for
    whole columns at once, tested)."""
    if value is None or isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        return None  # a missing or infinite value is null in the contract
    return {"value": round_sig(value), "unit": str(unit or ""), "source": str(source or "")}
