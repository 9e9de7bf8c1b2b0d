"""The one pint registry of the project, and IFC unit entities turned into pint quantities.

Every value read from a model goes through :class:`UnitContext`: the file's own
IfcUnitAssignment decides what a number means. Nothing is assumed: a measure whose unit the
file does not assign raises :class:`MissingUnit`, and the caller reports the value as missing.

Rules followed (IFC 4.3, IfcSIUnit / IfcConversionBasedUnit / IfcDerivedUnit):

* an SI prefix attaches to the metre before the power: CENTI SQUARE_METRE is (0.01 m)² = 1e-4 m²,
  DECI CUBIC_METRE is (0.1 m)³, one litre;
* a conversion-based unit is the factor written in the file times the unit that factor names,
  whatever the unit's name ('pound-force', 'lbf' and 'kip' all occur in the wild);
* a derived unit is the product of its elements raised to their exponents.
"""

from __future__ import annotations

import math
import re
import sys
from dataclasses import dataclass, field
from fractions import Fraction
from typing import TYPE_CHECKING, Any


def _import_pint() -> Any:
    """pint, imported without its optional dask support when dask is not loaded yet: pint looks
    for dask at import and loads it if installed (a tenth of a second at every start), and no
    quantity here is a dask array (dask serves only ``--scheduler``, which imports it itself)."""
    if "pint" in sys.modules or "dask" in sys.modules:
        import pint

        return pint
    sys.modules["dask"] = None   # type: ignore[assignment]  # an import of dask now fails at once
    try:
        import pint
    finally:
        del sys.modules["dask"]
    return pint


if TYPE_CHECKING:
    import pint
else:
    pint = _import_pint()


def _registry() -> pint.UnitRegistry:
    """The registry, from pint's parsed-definitions cache when the user cache folder is usable
    (building it from the definitions file costs about a third of a second at every start)."""
    try:
        return pint.UnitRegistry(autoconvert_offset_to_baseunit=True, cache_folder=":auto:")
    except (OSError, ValueError, RuntimeError):  # read-only home, odd platform: build it afresh
        return pint.UnitRegistry(autoconvert_offset_to_baseunit=True)


ureg = _registry()
ureg.formatter.default_format = "~"
Q_ = ureg.Quantity

_PREFIX = {
    "EXA": 1e18, "PETA": 1e15, "TERA": 1e12, "GIGA": 1e9, "MEGA": 1e6, "KILO": 1e3,
    "HECTO": 1e2, "DECA": 1e1, "DECI": 1e-1, "CENTI": 1e-2, "MILLI": 1e-3, "MICRO": 1e-6,
    "NANO": 1e-9, "PICO": 1e-12, "FEMTO": 1e-15, "ATTO": 1e-18,
}

# IfcSIUnitName -> (pint unit, power of the metre the prefix applies to; 0 = prefix applies plainly)
_SI_NAME: dict[str, tuple[str, int]] = {
    "METRE": ("m", 1),
    "SQUARE_METRE": ("m**2", 2),
    "CUBIC_METRE": ("m**3", 3),
    "GRAM": ("g", 0),
    "SECOND": ("s", 0),
    "NEWTON": ("N", 0),
    "PASCAL": ("Pa", 0),
    "JOULE": ("J", 0),
    "WATT": ("W", 0),
    "HERTZ": ("Hz", 0),
    "KELVIN": ("K", 0),
    # a temperature *difference* is what appears in expansion coefficients; 1 degC step = 1 K
    "DEGREE_CELSIUS": ("K", 0),
    "RADIAN": ("rad", 0),
    "STERADIAN": ("sr", 0),
    "AMPERE": ("A", 0),
    "MOLE": ("mol", 0),
    "CANDELA": ("cd", 0),
    "LUMEN": ("lm", 0),
    "LUX": ("lx", 0),
    "VOLT": ("V", 0),
    "OHM": ("ohm", 0),
    "COULOMB": ("C", 0),
    "FARAD": ("F", 0),
    "HENRY": ("H", 0),
    "SIEMENS": ("S", 0),
    "TESLA": ("T", 0),
    "WEBER": ("Wb", 0),
    "BECQUEREL": ("Bq", 0),
    "GRAY": ("Gy", 0),
    "SIEVERT": ("Sv", 0),
}

#: IFC measure type (as ifcopenshell names it) -> unit type of IfcUnitAssignment
MEASURE_UNIT_TYPE: dict[str, str] = {
    "IfcLengthMeasure": "LENGTHUNIT",
    "IfcPositiveLengthMeasure": "LENGTHUNIT",
    "IfcNonNegativeLengthMeasure": "LENGTHUNIT",
    "IfcAreaMeasure": "AREAUNIT",
    "IfcVolumeMeasure": "VOLUMEUNIT",
    "IfcForceMeasure": "FORCEUNIT",
    "IfcPressureMeasure": "PRESSUREUNIT",
    "IfcModulusOfElasticityMeasure": "MODULUSOFELASTICITYUNIT",
    "IfcThermalExpansionCoefficientMeasure": "THERMALEXPANSIONCOEFFICIENTUNIT",
    "IfcMassDensityMeasure": "MASSDENSITYUNIT",
    "IfcMassMeasure": "MASSUNIT",
    "IfcPlaneAngleMeasure": "PLANEANGLEUNIT",
    "IfcPositivePlaneAngleMeasure": "PLANEANGLEUNIT",
    "IfcMomentOfInertiaMeasure": "MOMENTOFINERTIAUNIT",
    "IfcSectionModulusMeasure": "SECTIONMODULUSUNIT",
    "IfcLinearForceMeasure": "LINEARFORCEUNIT",
    "IfcThermodynamicTemperatureMeasure": "THERMODYNAMICTEMPERATUREUNIT",
    "IfcTimeMeasure": "TIMEUNIT",
}

#: measures that carry no unit at all (ratios, counts, labels)
UNITLESS_MEASURES = frozenset({
    "IfcRatioMeasure", "IfcPositiveRatioMeasure", "IfcNormalisedRatioMeasure", "IfcReal",
    "IfcInteger", "IfcCountMeasure", "IfcNumericMeasure", "IfcPositiveInteger",
})


class MissingUnit(LookupError):
    """The file assigns no unit to a measure type that a value needs."""

    def __init__(self, unit_type: str) -> None:
        self.unit_type = unit_type
        super().__init__(f"the model's IfcUnitAssignment has no {unit_type}")


class UnusableOwnUnit(MissingUnit):
    """A value carries a unit of its own (a property's or a quantity's ``Unit``, an
    IfcMeasureWithUnit) that cannot be used: the value is missing, and the reason names that
    unit, not the model's unit assignment."""

    def __init__(self, reason: str) -> None:
        self.unit_type = "its own unit"
        self.reason = reason
        LookupError.__init__(self, f"its own unit is not usable ({reason})")


class UnitDefinitionError(ValueError):
    """A unit entity in the file that cannot be turned into a quantity."""


class UnusableUnit(MissingUnit):
    """The file assigns a unit to a measure type, but not one that can be used: two units that
    disagree, a unit of another dimension (a SECOND as the LENGTHUNIT), a factor that is not a
    positive finite number. Everything that needs it is treated as missing, with the reason."""

    def __init__(self, unit_type: str, reason: str) -> None:
        self.unit_type = unit_type
        self.reason = reason
        LookupError.__init__(self, f"the model's {unit_type} is not usable: {reason}")


#: the dimension each unit type of IfcUnitAssignment must have (as a pint unit)
UNIT_TYPE_DIMENSION: dict[str, str] = {
    "LENGTHUNIT": "m", "AREAUNIT": "m**2", "VOLUMEUNIT": "m**3", "FORCEUNIT": "N", "PRESSUREUNIT": "Pa",
    "MODULUSOFELASTICITYUNIT": "Pa", "THERMALEXPANSIONCOEFFICIENTUNIT": "1/K", "MASSDENSITYUNIT": "kg/m**3",
    "MASSUNIT": "kg", "PLANEANGLEUNIT": "rad", "MOMENTOFINERTIAUNIT": "m**4", "SECTIONMODULUSUNIT": "m**3",
    "LINEARFORCEUNIT": "N/m", "THERMODYNAMICTEMPERATUREUNIT": "K", "TIMEUNIT": "s",
}


def check_dimension(unit_type: str, q: pint.Quantity) -> None:
    """Raise UnitDefinitionError when ``q`` (a unit's size) is not of ``unit_type``'s dimension
    or not a positive finite size."""
    want = UNIT_TYPE_DIMENSION.get(unit_type)
    if want is not None and q.dimensionality != ureg.Unit(want).dimensionality:
        raise UnitDefinitionError(f"it is {q.units:~} ({q.dimensionality}), not of the dimension of "
                                  f"{unit_type} ({ureg.Unit(want).dimensionality})")
    m = float(q.to_base_units().magnitude)
    if not (math.isfinite(m) and m > 0):
        raise UnitDefinitionError(f"its size {m!r} is not a positive finite number")


def si_unit_quantity(prefix: str | None, name: str) -> pint.Quantity:
    """One IfcSIUnit as a pint quantity in SI base units.

    >>> si_unit_quantity("CENTI", "SQUARE_METRE")
    <Quantity(0.0001, 'meter ** 2')>
    """
    try:
        unit, power = _SI_NAME[name]
    except KeyError as exc:
        raise UnitDefinitionError(f"unknown IfcSIUnitName {name!r}") from exc
    factor = 1.0
    if prefix:
        try:
            p = _PREFIX[prefix]
        except KeyError as exc:
            raise UnitDefinitionError(f"unknown IfcSIPrefix {prefix!r}") from exc
        factor = p ** (power or 1)
    return Q_(factor, unit).to_base_units() if name != "GRAM" else Q_(factor * 1e-3, "kg")   # type: ignore[return-value]  # pint types a registry's quantities as its plain class


#: conversion-based and derived units defined through one another, at most (a real model nests
#: two or three: a kip of pound-forces of newtons)
MAX_UNIT_NESTING = 16


def unit_quantity(unit: Any, _within: tuple[int, ...] = ()) -> pint.Quantity:
    """Any IfcNamedUnit / IfcDerivedUnit entity as a pint quantity (its size in SI base units).

    A unit defined through itself (directly or through others) and a chain of definitions
    deeper than ``MAX_UNIT_NESTING`` are each an UnitDefinitionError saying which it is."""
    if unit.id() in _within:
        raise UnitDefinitionError(f"unit #{unit.id()} refers to itself")
    if len(_within) >= MAX_UNIT_NESTING:
        raise UnitDefinitionError(f"unit #{_within[0]} is defined through more than {MAX_UNIT_NESTING} "
                                  "other units in a row")
    _within = (*_within, unit.id())
    cls = unit.is_a()
    if cls == "IfcSIUnit":
        return si_unit_quantity(unit.Prefix, unit.Name)
    if cls in ("IfcConversionBasedUnit", "IfcConversionBasedUnitWithOffset"):
        mwu = unit.ConversionFactor
        if mwu is None:
            raise UnitDefinitionError(f"conversion-based unit #{unit.id()} {unit.Name!r} has no factor")
        value = mwu.ValueComponent
        magnitude = float(value.wrappedValue if hasattr(value, "wrappedValue") else value)
        if not math.isfinite(magnitude) or magnitude <= 0:
            raise UnitDefinitionError(
                f"conversion-based unit #{unit.id()} {unit.Name!r} has factor {magnitude!r}, "
                "not a positive finite number"
            )
        return magnitude * unit_quantity(mwu.UnitComponent, _within)
    if cls == "IfcDerivedUnit":
        result = Q_(1.0, "")
        for el in unit.Elements or ():
            result = result * unit_quantity(el.Unit, _within) ** int(el.Exponent)
        return result.to_base_units()   # type: ignore[return-value]  # pint types a registry's quantities as its plain class
    if cls == "IfcContextDependentUnit":
        raise UnitDefinitionError(
            f"context-dependent unit #{unit.id()} {unit.Name!r} has no defined size"
        )
    raise UnitDefinitionError(f"#{unit.id()} {cls} is not a unit modelcheck understands")


def unit_label(unit: Any) -> str:
    """A short human label of a unit entity, for provenance strings ('mm', 'kip', 'N/mm2')."""
    cls = unit.is_a()
    if cls == "IfcSIUnit":
        short = {"MILLI": "m", "CENTI": "c", "KILO": "k", "MEGA": "M", "GIGA": "G", "DECI": "d"}
        base = {"METRE": "m", "SQUARE_METRE": "m2", "CUBIC_METRE": "m3", "NEWTON": "N",
                "PASCAL": "Pa", "GRAM": "g", "KELVIN": "K", "DEGREE_CELSIUS": "degC"}
        return short.get(unit.Prefix or "", (unit.Prefix or "").lower()) + base.get(unit.Name, unit.Name.lower())
    if cls.startswith("IfcConversionBasedUnit"):
        return str(unit.Name)
    if cls == "IfcDerivedUnit":
        return "·".join(
            f"{unit_label(e.Unit)}^{e.Exponent}" if e.Exponent != 1 else unit_label(e.Unit)
            for e in unit.Elements or ()
        )
    return cls


@dataclass(frozen=True)
class UnitContext:
    """The units a model assigns, each as its size in SI base units.

    ``factor('LENGTHUNIT')`` is the number of metres in one of the file's length units;
    ``measure_factor('IfcForceMeasure')`` times a raw value turns a raw value into newtons.
    """

    sizes: dict[str, pint.Quantity] = field(default_factory=dict)
    labels: dict[str, str] = field(default_factory=dict)
    problems: tuple[str, ...] = ()
    broken: dict[str, str] = field(default_factory=dict)   # unit type -> why it cannot be used

    @classmethod
    def from_model(cls, model: Any) -> UnitContext:
        """The model's unit assignment. A unit type assigned twice with different sizes, a unit
        of the wrong dimension or a factor that is not a positive finite number makes that unit
        type unusable (``broken``, with the reason): never the last one, never a guess."""
        sizes: dict[str, pint.Quantity] = {}
        labels: dict[str, str] = {}
        problems: list[str] = []
        broken: dict[str, str] = {}
        first: dict[str, Any] = {}
        assignments = model.by_type("IfcUnitAssignment")
        projects = model.by_type("IfcProject")
        chosen = None
        if projects and getattr(projects[0], "UnitsInContext", None) is not None:
            chosen = projects[0].UnitsInContext
        elif assignments:
            chosen = assignments[0]
        for unit in (chosen.Units if chosen is not None else ()) or ():
            if unit.is_a("IfcMonetaryUnit"):
                continue
            utype = unit.UnitType if not unit.is_a("IfcDerivedUnit") else unit.UnitType
            if utype == "USERDEFINED" and unit.is_a("IfcDerivedUnit"):
                utype = f"USERDEFINED:{unit.UserDefinedType}"
            try:
                q = unit_quantity(unit)
                check_dimension(utype, q)
            except (UnitDefinitionError, pint.PintError) as exc:
                reason = f"#{unit.id()} {unit_label(unit)}: {exc}"
                broken.setdefault(utype, reason)
                problems.append(f"{utype} {reason}")
                continue
            if utype in first:
                other = first[utype]
                if not math.isclose(float(q.to_base_units().magnitude),
                                    float(sizes.get(utype, q).to_base_units().magnitude), rel_tol=1e-9):
                    reason = (f"assigned twice, as #{other.id()} ({unit_label(other)}) and #{unit.id()} "
                              f"({unit_label(unit)}), of different sizes")
                    broken[utype] = reason
                    problems.append(f"{utype} {reason}")
                continue
            first[utype] = unit
            sizes[utype] = q
            labels[utype] = unit_label(unit)
        for utype in broken:
            sizes.pop(utype, None)
        return cls(sizes=sizes, labels=labels, problems=tuple(problems), broken=broken)

    def has(self, unit_type: str) -> bool:
        return unit_type in self.sizes

    def size(self, unit_type: str) -> pint.Quantity:
        try:
            return self.sizes[unit_type]
        except KeyError:
            if unit_type in self.broken:
                raise UnusableUnit(unit_type, self.broken[unit_type]) from None
            raise MissingUnit(unit_type) from None

    def factor(self, unit_type: str) -> float:
        """SI base units per one file unit of ``unit_type``."""
        return float(self.size(unit_type).magnitude)

    def label(self, unit_type: str) -> str:
        return self.labels.get(unit_type, unit_type)

    def measure_factor(self, measure: str) -> float:
        """SI factor for an IFC measure type name; 1.0 for unitless measures."""
        if measure in UNITLESS_MEASURES:
            return 1.0
        try:
            unit_type = MEASURE_UNIT_TYPE[measure]
        except KeyError:
            raise MissingUnit(f"unit for {measure}") from None
        return self.factor(unit_type)


#: a number as the project's text inputs write it: '12', '-0.25', '1.5e3', '3/8' or '1 1/2'
NUMBER_PATTERN = r"[-+]?(?:\d+\s+\d+/\d+|\d+/\d+|(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)"


def parse_number(text: str) -> Fraction:
    """A text matching NUMBER_PATTERN, exactly: '1 1/2' -> 3/2, '0.25' -> 1/4, '-3/8' -> -3/8
    (stock steps add up exactly); a zero denominator raises ZeroDivisionError."""
    s = text.strip()
    sign = -1 if s.startswith("-") else 1
    s = s.lstrip("+-").strip()
    if " " in s:
        whole, frac = s.split(None, 1)
        return sign * (Fraction(whole) + Fraction(frac))
    return sign * Fraction(s)


# ---------------------------------------------------------------------------------------------
# units and numbers with a unit, as people write them: the one reader of such text


class QuantityTextError(ValueError):
    """Text that is not a number with a (fitting) unit; the message says why, in one line."""


#: whole unit texts that exporters write and pint (case-sensitive) does not know
UNIT_ALIASES: dict[str, str] = {"KN": "kN", "KIP": "kip", "KIPS": "kip", "LBF": "lbf", "MPA": "MPa",
                                "N/MM2": "N/mm**2", "KN/M": "kN/m", "KN/M2": "kN/m**2"}

#: a unit name with its power written straight after it: mm2, in4, kN/m2 (not 1/K, not 12e-6)
_POWER_RE = re.compile(r"(?<![\w.])([A-Za-zµμ]+)([2-4])(?![\w.])")


def normalise_unit(text: str) -> str:
    """A unit as the trade writes it, in pint's syntax; the one normaliser of the project.

    Rules, in order: white space at the ends goes; an exporter's upper-case name is read as
    its unit ('KN', 'KIP', 'KIPS', 'LBF', 'MPA'); a power written straight after a unit name
    is a power ('mm2' -> 'mm**2', 'N/mm2' -> 'N/mm**2', 'kip/in2' -> 'kip/in**2', 'mm4' ->
    'mm**4'; powers 2 to 4); a middle dot is a product ('kN·m' -> 'kN*m'); a text that starts
    with '/' is 'one per' ('/ K' -> '1/K'). Anything else is left to pint ('mm^2', 'mm²',
    'kN/m', 'ksi', '1/K').

    >>> normalise_unit("N/mm2")
    'N/mm**2'
    """
    t = text.strip()
    if t.startswith("[") and t.endswith("]"):
        t = t[1:-1].strip()
    alias = UNIT_ALIASES.get(t.upper().replace(" ", "")) if t.upper() == t else None
    if alias is not None:
        return alias
    t = t.replace("·", "*")
    t = _POWER_RE.sub(r"\1**\2", t)
    if t.startswith("/"):
        t = "1 " + t
    return t


def parse_unit(text: str) -> pint.Unit:
    """A unit text (any spelling :func:`normalise_unit` reads) as a pint unit; QuantityTextError
    (one line) for text that is no unit, or a unit whose size is not a finite positive number."""
    t = normalise_unit(str(text))
    if not t:
        raise QuantityTextError("no unit")
    try:
        unit = ureg.parse_units(t)
        size = float(Q_(1.0, unit).to_base_units().magnitude)
    except Exception as exc:  # pint raises many types for odd text (ZeroDivisionError for 'N/0' too)
        why = "divides by zero" if isinstance(exc, ZeroDivisionError) else "is not a unit modelcheck knows"
        raise QuantityTextError(f"{str(text).strip()!r} {why}") from None
    if not (math.isfinite(size) and size > 0):
        raise QuantityTextError(f"{str(text).strip()!r} has no usable size")
    return unit


#: dimension names the parser checks against -> a unit of that dimension
DIMENSIONS: dict[str, str] = {"force": "N", "length": "m", "area": "m**2", "stress": "Pa",
                              "second moment of area": "m**4", "force per length": "N/m",
                              "number": ""}

_EXAMPLES: dict[str, str] = {"force": '"12 kip" or "50 kN"', "length": '"3/4 in" or "20 mm"',
                             "area": '"0.44 in2" or "157 mm2"', "stress": '"36 ksi" or "355 N/mm2"'}

_QUANTITY_RE = re.compile(rf"\s*({NUMBER_PATTERN})\s*(?:\[(.*)\]|(.*?))\s*\Z")

#: the same reading for a whole column at once (pandas ``str.extract``): groups num and unit
VALUE_PATTERN = rf"^\s*(?P<num>{NUMBER_PATTERN})\s*(?P<unit>\S.*?)?\s*$"


@dataclass(frozen=True)
class QuantityText:
    """A number with a unit as read from text: the exact number, the unit (normalised) and both
    as a pint quantity."""

    number: Fraction             # exact: '1 1/2' is 3/2, '0.1' is 1/10
    unit: str                    # normalised unit text ('' for a plain number)
    quantity: pint.Quantity

    def si(self) -> float:
        """The value in SI base units."""
        return float(self.quantity.to_base_units().magnitude)


def split_quantity(text: str, *, what: str = "value", example: str = '"0.25 in" or "6 mm"') -> tuple[Fraction, str]:
    """'1 1/2 in' -> (3/2, 'in'), '25 [mm]' -> (25, 'mm'), '12' -> (12, ''): the number, exactly,
    and the unit text as written (not yet read); QuantityTextError for text of another form."""
    m = _QUANTITY_RE.match(text)
    if not m:
        raise QuantityTextError(f"{what} {text.strip()!r} is not a number with a unit, e.g. {example}")
    try:
        number = parse_number(m.group(1))
        if not math.isfinite(float(number)):
            raise OverflowError
    except ZeroDivisionError:
        raise QuantityTextError(f"{what} {text.strip()!r}: division by zero") from None
    except (ValueError, OverflowError):
        raise QuantityTextError(f"{what} {text.strip()!r}: {m.group(1)!r} is not a finite number") from None
    return number, (m.group(2) if m.group(2) is not None else m.group(3) or "").strip()


def parse_quantity(text: str, dimension: str | None = None, *, what: str = "value",
                   unit_required: bool = True) -> QuantityText:
    """'1 1/2 in', '3/8 in', '50 kN', '25 [mm]', '355 N/mm2' -> QuantityText; the one reader of
    "number with unit" text in the project (command line, rule files, stock and shape tables,
    load tables, model properties).

    The number is a decimal ('0.25', '1.5e3'), a fraction ('3/8') or a whole number and a
    fraction ('1 1/2'), read exactly; the unit follows, plain or in brackets, in any spelling
    :func:`normalise_unit` reads. ``dimension`` (a key of DIMENSIONS) is checked when given.
    Raises QuantityTextError naming ``what`` and the text.
    """
    raw = str(text)
    example = _EXAMPLES.get(dimension or "", '"0.25 in" or "6 mm"')
    number, unit_text = split_quantity(raw, what=what, example=example)
    magnitude = float(number)
    if not unit_text:
        if unit_required and dimension != "number":
            with_unit = f"with a {dimension} unit, " if dimension else ""
            raise QuantityTextError(f"{what} {raw.strip()!r} has no unit: write it {with_unit}e.g. {example}")
        unit = ureg.Unit("")
    else:
        try:
            unit = parse_unit(unit_text)
        except QuantityTextError as exc:
            raise QuantityTextError(f"{what} {raw.strip()!r}: {exc}") from None
    if dimension is not None:
        want = ureg.Unit(DIMENSIONS[dimension]).dimensionality
        if unit.dimensionality != want:
            hint = " (pound-force is 'lbf')" if dimension == "force" and \
                unit.dimensionality == ureg.pound.dimensionality else ""
            raise QuantityTextError(f"{what} {raw.strip()!r}: {unit_text!r} is not a {dimension}{hint}")
    quantity = Q_(magnitude, unit)
    if not math.isfinite(float(quantity.to_base_units().magnitude)):   # '1e308 kip': finite as written
        raise QuantityTextError(f"{what} {raw.strip()!r}: too large: it overflows when converted to SI units")
    return QuantityText(number=number, unit=normalise_unit(unit_text) if unit_text else "", quantity=quantity)


def unit_factor(text: str, dimension: str) -> float:
    """SI base units in one ``text`` unit of ``dimension`` ('kN', 'force' -> 1000.0)."""
    unit = parse_unit(text)
    if unit.dimensionality != ureg.Unit(DIMENSIONS[dimension]).dimensionality:
        hint = " (pound-force is 'lbf')" if dimension == "force" and \
            unit.dimensionality == ureg.pound.dimensionality else ""
        raise QuantityTextError(f"unit {text.strip()!r} is not a {dimension}, it is "
                                f"{unit.dimensionality}{hint}")
    return float(Q_(1.0, unit).to_base_units().magnitude)
