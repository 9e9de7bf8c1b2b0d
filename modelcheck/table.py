"""Column contracts of the three tables that flow through the pipeline.

Numbers are floats in SI base units (m, m², N, Pa, 1/K); a value the model does not hold is
NaN, and its ``*_source`` column is None. Every numeric column that comes from the model has a
sibling ``<name>_source`` column saying where it came from.
"""

from __future__ import annotations

import pandas as pd

#: identity columns of the member table (strings or None)
IDENTITY_COLUMNS: tuple[str, ...] = (
    "model", "global_id", "ifc_class", "predefined_type", "object_type", "name", "tag",
    "storey", "type_name",
)

#: numeric columns with a provenance sibling ``<col>_source``
QUANTITY_COLUMNS: dict[str, str] = {
    # column: SI unit
    "area": "m**2",       # gross cross-section area
    "r_min": "m",         # least (principal) radius of gyration
    "length": "m",        # member length (axis, extrusion depth, directrix, or quantity set)
    "E": "Pa",            # modulus of elasticity
    "Fy": "Pa",           # yield strength (0.2 % proof strength for non-ferrous)
    "Fu": "Pa",           # ultimate tensile strength
    "alpha": "1/K",       # linear thermal expansion coefficient
    "net_area": "m**2",   # net area at holes or threads (property MC_NetSection.NetArea), rarely modelled
    "shear_lag": "",      # shear lag factor U, Ae = U An (property MC_NetSection.ShearLagFactor), a ratio
}

#: other section / material columns
SECTION_COLUMNS: tuple[str, ...] = (
    "section_name",   # profile name (IfcProfileDef.ProfileName) or None
    "profile_type",   # IFC profile class, e.g. IfcIShapeProfileDef
    "shape",          # shape family: round-bar, round-tube, square-bar, flat-bar, rect-tube,
                      #   I, L, T, U, C, Z, ellipse, arbitrary, composite; None if unknown
    "d",              # outside diameter of round shapes [m] (NaN otherwise)
    "h", "b",         # overall depth / width [m]
    "tf", "tw", "t",  # flange / web / wall thickness [m]
)
MATERIAL_COLUMNS: tuple[str, ...] = (
    "material",           # material name as in the model
    "material_category",  # IfcMaterial.Category or library category (steel, stainless, aluminium)
    "material_grade",     # library grade matched, e.g. "ASTM A36", or None
)

#: warnings: a list[str] per member (object column)
WARNINGS = "warnings"


#: the element's entity id (#n) in its model file: lets later stages skip a GlobalId look-up
ENTITY_ID = "entity_id"


def member_columns() -> list[str]:
    cols = list(IDENTITY_COLUMNS) + list(SECTION_COLUMNS) + list(MATERIAL_COLUMNS)
    for q in QUANTITY_COLUMNS:
        cols += [q, f"{q}_source"]
    return cols + [WARNINGS, ENTITY_ID]


#: the forces table: one row per member × load case, tension positive, newtons
FORCE_COLUMNS: tuple[str, ...] = ("model", "global_id", "load_case", "axial_force", "source")

#: the results table: one row per member × check × load case; ``missing`` holds the inputs an
#: unchecked row lacks (a list of texts; an empty tuple where it lacks none)
RESULT_COLUMNS: tuple[str, ...] = (
    "model", "global_id", "ifc_class", "name", "tag", "check", "load_case", "status",
    "demand", "capacity", "unit", "ratio", "missing", "message", "demand_source", "capacity_source",
)


def empty_forces() -> pd.DataFrame:
    return pd.DataFrame({
        "model": pd.Series(dtype=object), "global_id": pd.Series(dtype=object),
        "load_case": pd.Series(dtype=object), "axial_force": pd.Series(dtype=float),
        "source": pd.Series(dtype=object),
    })


#: result statuses, worst first: a member's status is the worst of its results
STATUS_RANK: dict[str, int] = {"fail": 0, "unchecked": 1, "pass": 2}


def frame_of(columns: dict[str, pd.Series]) -> pd.DataFrame:
    """A DataFrame of equally long Series (index 0..n-1), each kept as its own block.

    ``pd.DataFrame(dict)`` consolidates the columns of one dtype into a 2-D block: a copy of
    every object column, which for a large results table costs more than making the columns."""
    if not columns:
        return pd.DataFrame()
    return pd.concat(list(columns.values()), axis=1, keys=list(columns))
