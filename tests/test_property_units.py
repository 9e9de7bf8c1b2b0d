"""Property tests of IFC unit entities against pint: SI prefixes (on the metre before the power
for areas and volumes), derived units, conversion-based chains, and values that go into a model
file in its own units and come back out in SI.

The reference is pint's own unit definitions throughout (``# pint`` beside each comparison):
pint knows 'centimeter ** 2', 'inch', 'kip' and 'ksi' independently of modelcheck.common.units.
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any

import ifcopenshell
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from modelcheck.common.units import Q_, UnitContext, si_unit_quantity, unit_quantity
from modelcheck.ifc.index import build_index, property_si
from modelcheck.testing.author import ModelBuilder

FAST = settings(max_examples=50, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
SCHEMAS = ("IFC2X3", "IFC4", "IFC4X3")

#: IfcSIPrefix -> the prefix as pint spells it (pint's own table of decimal prefixes)
PREFIXES = {
    "EXA": "exa", "PETA": "peta", "TERA": "tera", "GIGA": "giga", "MEGA": "mega", "KILO": "kilo",
    "HECTO": "hecto", "DECA": "deca", "DECI": "deci", "CENTI": "centi", "MILLI": "milli", "MICRO": "micro",
    "NANO": "nano", "PICO": "pico", "FEMTO": "femto", "ATTO": "atto",
}
#: IfcSIUnitName -> (unit type, pint unit, power the prefix is raised to)
NAMES = {
    "METRE": ("LENGTHUNIT", "meter", 1),
    "SQUARE_METRE": ("AREAUNIT", "meter", 2),        # IFC: the prefix attaches to the metre, then squared
    "CUBIC_METRE": ("VOLUMEUNIT", "meter", 3),
    "NEWTON": ("FORCEUNIT", "newton", 1),
    "PASCAL": ("PRESSUREUNIT", "pascal", 1),
    "GRAM": ("MASSUNIT", "gram", 1),
    "SECOND": ("TIMEUNIT", "second", 1),
    "JOULE": ("ENERGYUNIT", "joule", 1),
    "KELVIN": ("THERMODYNAMICTEMPERATUREUNIT", "kelvin", 1),
}

prefixes = st.sampled_from([None, *PREFIXES])
values = st.floats(min_value=1e-3, max_value=1e6, allow_nan=False, allow_infinity=False)
factors = st.floats(min_value=1e-4, max_value=1e4, allow_nan=False, allow_infinity=False)


def pint_si(prefix: str | None, name: str) -> Any:
    """The pint quantity of one IfcSIUnit, built from pint's names alone."""
    _, unit, power = NAMES[name]
    text = f"({PREFIXES[prefix] if prefix else ''}{unit}) ** {power}"
    return Q_(1.0, text).to_base_units()


def close(a: Any, b: Any, rel: float = 1e-12) -> bool:
    return a.dimensionality == b.dimensionality and math.isclose(a.magnitude, b.magnitude, rel_tol=rel)


# --- SI units ---------------------------------------------------------------------------------------
@FAST
@given(prefixes, st.sampled_from(list(NAMES)), values)
def test_si_units_with_any_prefix_equal_pint(prefix, name, v):
    f = ifcopenshell.file(schema="IFC4")
    unit = f.createIfcSIUnit(None, NAMES[name][0], prefix, name)
    assert close(v * unit_quantity(unit), v * pint_si(prefix, name))                # pint
    assert close(si_unit_quantity(prefix, name), pint_si(prefix, name))             # pint


@FAST
@given(prefixes, st.sampled_from(["SQUARE_METRE", "CUBIC_METRE"]))
def test_a_prefix_on_an_area_or_volume_is_raised_with_the_metre(prefix, name):
    power = NAMES[name][2]
    q = si_unit_quantity(prefix, name)
    scale = Q_(1.0, f"{PREFIXES[prefix]}meter").to("m").magnitude if prefix else 1.0   # pint
    assert math.isclose(q.m_as(f"m**{power}"), scale**power, rel_tol=1e-12)
    if prefix is not None:  # the prefix applied once to the whole area or volume would be another number
        assert not math.isclose(q.m_as(f"m**{power}"), scale, rel_tol=1e-6)


# --- derived units ------------------------------------------------------------------------------------
element = st.tuples(prefixes, st.sampled_from(["METRE", "NEWTON", "PASCAL", "SECOND", "GRAM", "KELVIN"]),
                    st.sampled_from([-3, -2, -1, 1, 2, 3]))


@FAST
@given(st.lists(element, min_size=1, max_size=4))
def test_a_derived_unit_is_the_product_of_its_elements_powers(elements):
    f = ifcopenshell.file(schema="IFC4")
    els = [f.createIfcDerivedUnitElement(f.createIfcSIUnit(None, NAMES[n][0], p, n), e) for p, n, e in elements]
    derived = f.createIfcDerivedUnit(els, "USERDEFINED", "test")
    want = Q_(1.0, "")
    for p, n, e in elements:
        want = want * pint_si(p, n) ** e                                             # pint
    assert close(unit_quantity(derived), want.to_base_units(), rel=1e-10)


# --- conversion-based chains --------------------------------------------------------------------------
MISLEADING = ("kip", "KIP", "lbf", "pound-force", "inch", "FOOT", "ksi", "metre", "x")


def _chain(f: Any, prefix: str | None, base: str, links: list[tuple[float, str]]) -> Any:
    """IfcConversionBasedUnits each defined on the one before, the first on an IfcSIUnit."""
    utype = NAMES[base][0]
    measure = {"LENGTHUNIT": "IfcLengthMeasure", "AREAUNIT": "IfcAreaMeasure", "VOLUMEUNIT": "IfcVolumeMeasure",
               "FORCEUNIT": "IfcForceMeasure", "PRESSUREUNIT": "IfcPressureMeasure", "MASSUNIT": "IfcMassMeasure",
               }.get(utype, "IfcReal")
    unit = f.createIfcSIUnit(None, utype, prefix, base)
    dims = f.createIfcDimensionalExponents(0, 0, 0, 0, 0, 0, 0)
    for factor, name in links:
        mwu = f.createIfcMeasureWithUnit(f.create_entity(measure, factor), unit)
        unit = f.createIfcConversionBasedUnit(dims, utype, name, mwu)
    return unit


@FAST
@given(prefixes, st.sampled_from(["METRE", "SQUARE_METRE", "CUBIC_METRE", "NEWTON", "PASCAL", "GRAM"]),
       st.lists(st.tuples(factors, st.sampled_from(MISLEADING)), min_size=1, max_size=5))
def test_a_conversion_chain_is_the_files_factors_whatever_the_names(prefix, base, links):
    f = ifcopenshell.file(schema="IFC4")
    got = unit_quantity(_chain(f, prefix, base, links))
    want = pint_si(prefix, base)
    for factor, _ in links:
        want = factor * want                                                         # pint
    assert close(got, want, rel=1e-10)
    renamed = unit_quantity(_chain(f, prefix, base, [(k, "unit") for k, _ in links]))
    assert close(got, renamed, rel=0.0)  # the name never changes the size


#: conversion-based units spelled out as the files of US practice write them, and pint's name for each;
#: the factors are NIST SP 811's (from memory), and each is also checked against pint below
US_UNITS = {
    "inch": ("METRE", None, [(0.0254, "INCH")]),                                    # NIST SP 811 (from memory)
    "foot": ("METRE", None, [(0.0254, "INCH"), (12.0, "FOOT")]),
    "inch ** 2": ("SQUARE_METRE", "MILLI", [(645.16, "SQUARE INCH")]),             # on mm², not m²
    "foot ** 3": ("CUBIC_METRE", None, [(0.028316846592, "CUBIC FOOT")]),
    "lbf": ("NEWTON", None, [(4.4482216152605, "POUND-FORCE")]),
    "kip": ("NEWTON", None, [(4.4482216152605, "lbf"), (1000.0, "kip")]),
    "psi": ("PASCAL", None, [(6894.757293168361, "PSI")]),
    "ksi": ("PASCAL", "KILO", [(6894.757293168361, "KSI")]),                        # on kPa
}


@FAST
@given(st.sampled_from(list(US_UNITS)), values)
def test_us_units_written_as_conversions_equal_pints_definitions(pint_unit, v):
    base, prefix, links = US_UNITS[pint_unit]
    f = ifcopenshell.file(schema="IFC4")
    got = v * unit_quantity(_chain(f, prefix, base, links))
    assert close(got, Q_(v, pint_unit).to_base_units())                              # pint


# --- round trip: SI -> the file's own units -> a written model -> read back in SI ------------------------
#: (pint unit, how to state it in the file) per quantity
LENGTHS = {"m": ("si", None, "METRE"), "mm": ("si", "MILLI", "METRE"), "cm": ("si", "CENTI", "METRE"),
           "km": ("si", "KILO", "METRE"), "inch": ("us", "inch"), "foot": ("us", "foot")}
FORCES = {"N": ("si", None, "NEWTON"), "kN": ("si", "KILO", "NEWTON"), "MN": ("si", "MEGA", "NEWTON"),
          "lbf": ("us", "lbf"), "kip": ("us", "kip")}
PRESSURES = {"Pa": ("si", None, "PASCAL"), "kPa": ("si", "KILO", "PASCAL"), "MPa": ("si", "MEGA", "PASCAL"),
             "GPa": ("si", "GIGA", "PASCAL"), "psi": ("us", "psi"), "ksi": ("us", "ksi")}
#: a modulus of elasticity is a derived unit in IFC: a force unit over a length unit squared
MODULI = {"N/mm**2": (FORCES["N"], LENGTHS["mm"]), "kN/m**2": (FORCES["kN"], LENGTHS["m"]),
          "kip/inch**2": (FORCES["kip"], LENGTHS["inch"]), "lbf/foot**2": (FORCES["lbf"], LENGTHS["foot"])}
AREAS = {"m**2": ("si", None, "SQUARE_METRE"), "mm**2": ("si", "MILLI", "SQUARE_METRE"),
         "cm**2": ("si", "CENTI", "SQUARE_METRE"), "inch**2": ("us", "inch ** 2")}


def _state(f: Any, how: tuple[Any, ...]) -> Any:
    if how[0] == "si":
        return f.createIfcSIUnit(None, NAMES[how[2]][0], how[1], how[2])
    if how[0] == "us":
        base, prefix, links = US_UNITS[how[1]]
        return _chain(f, prefix, base, links)
    raise AssertionError(how)


def _modulus(f: Any, pint_unit: str) -> Any:
    force, length = MODULI[pint_unit]
    els = [f.createIfcDerivedUnitElement(_state(f, force), 1), f.createIfcDerivedUnitElement(_state(f, length), -2)]
    return f.createIfcDerivedUnit(els, "MODULUSOFELASTICITYUNIT", None)


si_values = st.floats(min_value=1e-3, max_value=1e9, allow_nan=False, allow_infinity=False)


@FAST
@given(st.sampled_from(SCHEMAS), st.sampled_from(list(LENGTHS)), st.sampled_from(list(FORCES)),
       st.sampled_from(list(PRESSURES)), st.sampled_from(list(AREAS)), st.sampled_from(list(MODULI)),
       st.sampled_from(list(FORCES)), st.tuples(*[si_values] * 6))
def test_values_round_trip_through_a_written_model(tmp_path, schema, lu, fu, pu, au, eu, own, si):
    """SI values written in the file's units (converted by pint) are read back as the same SI values;
    the last carries a unit of its own on the property, which wins over the project's."""
    mb = ModelBuilder(schema=schema, units="mm", with_units=False)
    f = mb.f
    units = [_state(f, LENGTHS[lu]), _state(f, FORCES[fu]), _state(f, PRESSURES[pu]), _state(f, AREAS[au]),
             _modulus(f, eu)]
    mb.project.UnitsInContext = f.createIfcUnitAssignment(units)
    plan = (("L", "IfcLengthMeasure", "m", lu), ("P", "IfcForceMeasure", "N", fu),
            ("F", "IfcPressureMeasure", "Pa", pu), ("A", "IfcAreaMeasure", "m**2", au),
            ("E", "IfcModulusOfElasticityMeasure", "Pa", eu), ("Q", "IfcForceMeasure", "N", own))
    props = []
    for (name, measure, si_unit, file_unit), s in zip(plan, si, strict=True):
        raw = Q_(s, si_unit).to(file_unit).magnitude                                 # pint
        unit = _state(f, FORCES[own]) if name == "Q" else None
        props.append(f.createIfcPropertySingleValue(name, None, f.create_entity(measure, raw), unit))
    mb.attach_pset(mb.project, mb.property_set("MC_Units", {}))
    f.by_type("IfcPropertySet")[0].HasProperties = props
    path = Path(tmp_path) / f"units-{schema}.ifc"
    mb.write(str(path))
    idx = build_index(path)
    got = {p.Name: property_si(idx, p) for p in idx.file.by_type("IfcPropertySingleValue")}
    for (name, _, _, _), s in zip(plan, si, strict=True):
        assert math.isclose(got[name].value, s, rel_tol=1e-12), (name, got[name], s)  # pint, both ways
    ctx = UnitContext.from_model(idx.file)
    assert math.isclose(ctx.factor("LENGTHUNIT"), Q_(1.0, lu).to("m").magnitude, rel_tol=1e-12)  # pint
    assert ctx.problems == ()
