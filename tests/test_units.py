"""IFC unit entities -> pint quantities, checked against pint's own unit definitions."""

from __future__ import annotations

import math

import ifcopenshell
import pytest

from modelcheck.common.units import Q_, MissingUnit, UnitContext, si_unit_quantity, unit_quantity
from modelcheck.testing.author import ModelBuilder


def _si(f, utype, name, prefix=None):
    return f.createIfcSIUnit(None, utype, prefix, name)


@pytest.mark.parametrize(
    ("prefix", "name", "pint_unit"),
    [
        ("MILLI", "METRE", "mm"),                 # pint
        ("CENTI", "SQUARE_METRE", "cm**2"),       # IFC: prefix on the metre before the power; pint
        ("MILLI", "SQUARE_METRE", "mm**2"),       # pint
        ("DECI", "CUBIC_METRE", "L"),             # a litre is 1 dm³ (pint)
        ("KILO", "NEWTON", "kN"),                 # pint
        ("MEGA", "PASCAL", "MPa"),                # pint
        ("KILO", "GRAM", "kg"),                   # pint
        (None, "DEGREE_CELSIUS", "K"),            # a Celsius step is one kelvin (pint: delta_degC)
    ],
)
def test_si_units_against_pint(prefix, name, pint_unit):
    got = si_unit_quantity(prefix, name)
    want = Q_(1.0, pint_unit).to_base_units()
    assert got.dimensionality == want.dimensionality
    assert math.isclose(got.magnitude, want.magnitude, rel_tol=1e-12)


def test_conversion_based_units_use_the_files_factor():
    f = ifcopenshell.file(schema="IFC4")
    newton = _si(f, "FORCEUNIT", "NEWTON")
    # the factor written in the file is what counts, whatever the unit is called
    lbf = f.createIfcConversionBasedUnit(f.createIfcDimensionalExponents(1, 1, -2, 0, 0, 0, 0), "FORCEUNIT",
                                         "lbf", f.createIfcMeasureWithUnit(f.createIfcForceMeasure(4.4482216152605), newton))
    kip = f.createIfcConversionBasedUnit(f.createIfcDimensionalExponents(1, 1, -2, 0, 0, 0, 0), "FORCEUNIT",
                                         "kip", f.createIfcMeasureWithUnit(f.createIfcForceMeasure(1000.0), lbf))
    # NIST SP 811: 1 lbf = 4.4482216152605 N exactly; pint agrees
    assert math.isclose(unit_quantity(kip).magnitude, Q_(1, "kip").to("N").magnitude, rel_tol=1e-12)
    odd = f.createIfcConversionBasedUnit(f.createIfcDimensionalExponents(1, 0, 0, 0, 0, 0, 0), "LENGTHUNIT",
                                         "inch", f.createIfcMeasureWithUnit(f.createIfcLengthMeasure(0.0254),
                                                                            _si(f, "LENGTHUNIT", "METRE")))
    assert math.isclose(unit_quantity(odd).magnitude, Q_(1, "inch").to("m").magnitude, rel_tol=1e-12)  # pint


def test_square_inch_factor_is_exact():
    # ifcopenshell.util.unit has rounded some factors; ours must equal pint's in² to 1e-12
    mb = ModelBuilder(schema="IFC4", units="inch-kip")
    ctx = UnitContext.from_model(mb.f)
    assert math.isclose(ctx.factor("AREAUNIT"), Q_(1, "in**2").to("m**2").magnitude, rel_tol=1e-12)  # pint
    assert math.isclose(ctx.factor("PRESSUREUNIT"), Q_(1, "ksi").to("Pa").magnitude, rel_tol=1e-9)  # pint
    # derived unit kip/in² for the modulus of elasticity = ksi (pint)
    assert math.isclose(ctx.factor("MODULUSOFELASTICITYUNIT"), Q_(1, "ksi").to("Pa").magnitude, rel_tol=1e-9)
    # 1/°F step = 1.8 /K (pint: delta_degF)
    assert math.isclose(ctx.factor("THERMALEXPANSIONCOEFFICIENTUNIT"),
                        Q_(1, "1/delta_degF").to("1/K").magnitude, rel_tol=1e-9)


def test_derived_unit_newton_per_square_millimetre():
    mb = ModelBuilder(schema="IFC4", units="mm")
    ctx = UnitContext.from_model(mb.f)
    # N/mm² = MPa (pint)
    assert math.isclose(ctx.factor("MODULUSOFELASTICITYUNIT"), Q_(1, "N/mm**2").to("Pa").magnitude, rel_tol=1e-12)


def test_missing_force_unit_is_never_assumed():
    mb = ModelBuilder(schema="IFC4", units="mm", force_unit=False)
    ctx = UnitContext.from_model(mb.f)
    assert not ctx.has("FORCEUNIT")
    with pytest.raises(MissingUnit, match="FORCEUNIT"):
        ctx.measure_factor("IfcForceMeasure")
