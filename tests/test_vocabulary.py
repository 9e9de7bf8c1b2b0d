"""The member vocabulary is complete, and every list the stages use is read from it."""

from __future__ import annotations

import ast
import math
from pathlib import Path

import numpy as np
import pytest

from modelcheck.common import table, vocabulary
from modelcheck.common.units import Q_, ureg
from modelcheck.common.vocabulary import SHAPES, Shape, quantities, quantity_object, texts
from modelcheck.ifc.index import build_index, find_property, property_with
from modelcheck.ifc.reader import read_members
from modelcheck.testing.author import ModelBuilder

from .tables import member_table

PACKAGE = Path(vocabulary.__file__).resolve().parents[1]


# ---------------------------------------------------------------------------------------------
# complete


def _model_columns() -> list[str]:
    """The member table's columns that hold a member's values (not provenance or bookkeeping)."""
    bookkeeping = {table.WARNINGS, table.REJECTED, table.ENTITY_ID}
    return [c for c in table.member_columns() if not c.endswith("_source") and c not in bookkeeping]


def test_every_member_column_has_one_row():
    rows = vocabulary.by_column()
    assert sorted(_model_columns()) == sorted(rows)
    columns = [v.column for v in vocabulary.VOCABULARY if v.column is not None]
    assert len(columns) == len(set(columns))
    names = [v.name for v in vocabulary.VOCABULARY if v.name is not None]
    assert len(names) == len(set(names))


def test_the_reader_gives_exactly_the_vocabulary_columns(tmp_model):
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    mb.member("IfcMember", name="rod", profile=mb.f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0),
              material=steel, length=2000.0)
    mb.member("IfcMember", name="brace", material=steel, length=2000.0,
              profile=mb.f.createIfcIShapeProfileDef("AREA", "I200", None, 100.0, 200.0, 5.6, 8.5, None))
    members = read_members(build_index(str(tmp_model(mb)))).frame
    assert list(members.columns) == table.member_columns()
    for q in quantities():
        if q.column is not None:
            assert members[q.column].dtype == np.float64, q.column
    for t in texts():
        if t.column is not None:
            assert members[t.column].dtype == object, t.column
    # the shapes of a round bar and an I-section are shape families
    assert dict(zip(members["name"], members["shape"], strict=True)) == {"rod": Shape.ROUND_BAR,
                                                                         "brace": Shape.I_SECTION}


def test_every_rule_name_resolves_to_a_value():
    """Each name a rule can use gives a value for a member: a number in its SI unit or a text."""
    from modelcheck.rules.engine import MemberData, _base_lookup
    from modelcheck.rules.expr import Text
    from modelcheck.rules.names import MEMBER_QUANTITIES, TEXT_NAMES

    members = member_table({"shape": Shape.ROUND_BAR, "d": 0.02, "area": 3.14e-4})
    base = _base_lookup(MemberData(members), np.array([0]), np.array([1e3]), np.array(["LC1"], dtype=object))
    for name, q in MEMBER_QUANTITIES.items():
        value = base(name)
        assert value.units == ureg.Unit(q.unit), name
    for name in TEXT_NAMES:
        assert isinstance(base(name), Text), name
    # the thread of a 20 mm round bar is M20 (ISO 261 coarse; As = 245 mm², ISO 898-1 table, from memory)
    assert base("thread").values[0] == "M20"
    assert math.isclose(base("As").m_as("mm**2")[0], 245, rel_tol=0.01)


def test_rule_names_list_the_quantities_once_in_the_missing_order():
    from modelcheck.rules.names import MEMBER_QUANTITIES, RESERVED, TEXT_NAMES

    named = [q.name for q in quantities() if q.name is not None]
    assert sorted(vocabulary.RULE_QUANTITY_ORDER) == sorted(named)
    assert list(MEMBER_QUANTITIES) == list(vocabulary.RULE_QUANTITY_ORDER)
    assert set(TEXT_NAMES) == {t.name for t in texts()}
    assert RESERVED >= set(named) | set(TEXT_NAMES)


# ---------------------------------------------------------------------------------------------
# derived lists equal the table


def test_table_contracts_are_the_vocabulary():
    assert table.QUANTITY_COLUMNS == {q.column: q.unit for q in quantities() if q.provenance and q.column}
    assert table.IDENTITY_COLUMNS == tuple(t.column for t in texts() if t.group == "identity")
    assert table.SECTION_COLUMNS == ("section_name", "profile_type", "shape", "d", "h", "b", "tf", "tw", "t",
                                    "r_root")
    assert table.MATERIAL_COLUMNS == ("material", "material_category", "material_grade")
    assert table.SECTION_VALUE_COLUMNS == {"area", "r_min", "d", "h", "b", "tf", "tw", "t", "r_root"}
    from modelcheck.design.stock import GEOMETRY_COLUMNS

    assert set(GEOMETRY_COLUMNS) == table.SECTION_VALUE_COLUMNS


def test_display_units_are_the_vocabulary():
    from modelcheck.report.quantities import DISPLAY, SI_OF

    for q in quantities():
        assert q.unit == q.display.si, q.name   # the column's unit is the one its display converts from
        if q.column is not None:
            for system in ("SI", "US"):
                assert DISPLAY[system][q.column] == q.display.unit(system)
            assert SI_OF[q.column] == q.unit
    for kind, display in vocabulary.EXTRA_DISPLAY.items():
        assert DISPLAY["US"][kind] == display.US and DISPLAY["SI"][kind] == display.SI


def test_every_display_unit_has_its_dimension():
    """pint: each display unit converts from its SI unit (a wrong dimension raises)."""
    displays = [q.display for q in quantities()] + list(vocabulary.EXTRA_DISPLAY.values()) + [
        k.display for k in vocabulary.RULESET_DISPLAY]
    for d in displays:
        for system in ("SI", "US"):
            assert Q_(1.0, d.si).to(d.unit(system)).magnitude > 0
    # pint (NIST SP 811): 1 ksi = 6.894757 MPa, 1 kip = 4.448222 kN
    assert math.isclose(Q_(1, vocabulary.STRESS.US).m_as(vocabulary.STRESS.SI), 6.894757, rel_tol=1e-6)
    assert math.isclose(Q_(1, vocabulary.FORCE.US).m_as(vocabulary.FORCE.SI), 4.448222, rel_tol=1e-6)


def test_rule_set_display_keys_are_the_vocabulary():
    from modelcheck.rules.values import DEFAULT_DISPLAY, DISPLAY_DIMENSIONS

    assert list(DISPLAY_DIMENSIONS) == [k.key for k in vocabulary.RULESET_DISPLAY]
    assert list(DEFAULT_DISPLAY) == ["US", "SI"]
    for k in vocabulary.RULESET_DISPLAY:
        assert DEFAULT_DISPLAY["US"][k.key] == k.display.US
        assert DEFAULT_DISPLAY["SI"][k.key] == k.display.SI


def test_shape_families_are_one_list():
    from modelcheck.design.shape_tables import TABLE_SHAPES, read_table
    from modelcheck.rules.parse.tables import SHAPES as RULESET_SHAPES

    assert len(set(SHAPES)) == len(SHAPES)
    assert RULESET_SHAPES == frozenset(SHAPES)
    assert {v for k, v in vars(Shape).items() if k.isupper()} == set(SHAPES)
    assert set(vocabulary.CATALOG_SHAPES) <= set(TABLE_SHAPES) <= set(SHAPES)
    for name in ("shapes-aisc.csv", "shapes-en.csv"):
        used = {row.values["shape"] for row in read_table(name).rows}
        assert used == set(vocabulary.CATALOG_SHAPES), name
    for k in vocabulary.STOCK_KINDS:
        assert k.shape is None or k.shape in SHAPES


def test_stock_kinds_are_one_list():
    from modelcheck.cli.size import SHAPE_CHOICES
    from modelcheck.design import stock
    from modelcheck.design.sizing import SHAPES as SIZING_SHAPES
    from modelcheck.design.stock import StockSeries

    assert SHAPE_CHOICES == SIZING_SHAPES == vocabulary.STOCK_KIND_NAMES
    series = StockSeries(system="SI", origin="test", about="test", round=(0.02,), square=(0.02,),
                         flat_width=(0.05,), flat_thickness=(0.01,), threads="ISO coarse",
                         shapes="shapes-en.csv")
    made = {"round": stock.round_bars(series), "square": stock.square_bars(series),
            "flat": stock.flat_bars(series), "threaded": stock.threaded_rods(series)}
    for k in vocabulary.STOCK_KINDS:
        if k.name in made:
            assert set(made[k.name]["family"]) == {k.family}, k.name
            assert set(made[k.name]["shape"]) == {k.shape}, k.name


# ---------------------------------------------------------------------------------------------
# one quantity object, one property look-up


def test_quantity_object():
    # six significant figures (the JSON contract in the README)
    assert quantity_object(1234.56789, "mm**2", "IfcCircleProfileDef #5") == {
        "value": 1234.57, "unit": "mm**2", "source": "IfcCircleProfileDef #5"}
    assert quantity_object(np.float64(0.1) + np.float64(0.2), "", None) == {"value": 0.3, "unit": "",
                                                                              "source": ""}
    for nothing in (None, math.nan, math.inf, -math.inf, "12", True):
        assert quantity_object(nothing, "kN", "x") is None


def test_every_json_quantity_object_is_made_by_the_one_builder():
    """No module but the vocabulary writes a ``{"value": …, "unit": …}`` dict of its own."""
    makers = []
    for path in PACKAGE.rglob("*.py"):
        if path.name == "vocabulary.py" or "testing" in path.parts:
            continue
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Dict):
                keys = {k.value for k in node.keys if isinstance(k, ast.Constant)}
                if {"value", "unit"} <= keys:
                    makers.append(f"{path.relative_to(PACKAGE)}:{node.lineno}")
    assert makers == []


def test_one_property_look_up_by_set_and_name(tmp_model):
    mb = ModelBuilder(schema="IFC4", units="mm")
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD", None, 10.0)
    el = mb.member("IfcMember", name="rod", profile=rod, length=1000.0, psets={
        "Other": {"AxialForce": ("IfcForceMeasure", 1.0)},
        "MC_MemberForces": {"AxialForce": ("IfcForceMeasure", 12.0), "LoadCase": ("IfcLabel", "LC2")}})
    idx = build_index(str(tmp_model(mb)))
    eid = idx.file.by_guid(el.GlobalId).id()
    sets = [ent for ent, _ in idx.named_sets(eid)]
    prop = find_property(sets, "MC_MemberForces", "AxialForce")
    assert prop is not None and prop.NominalValue.wrappedValue == 12.0
    assert find_property(sets, "MC_MemberForces", "NetArea") is None
    assert find_property(sets, "mc_memberforces", "AxialForce") is None   # names are case-sensitive
    found, beside = property_with(sets, "MC_MemberForces", "AxialForce", "LoadCase")
    assert found == prop and [p.NominalValue.wrappedValue for p in beside] == ["LC2"]
    named = idx.psets_named(eid, "MC_MemberForces")
    assert find_property(named, "ignored when named", "AxialForce", named=True) == prop


@pytest.mark.parametrize("text", ["1/2 GPa", "12e-6 / K", "200 GPa"])
def test_material_values_are_split_by_the_units_pattern(text):
    """The material library reads '<number> <unit>' with the same number grammar as parse_quantity."""
    import re

    from modelcheck.common.units import VALUE_PATTERN, parse_quantity
    from modelcheck.materials.library import _VALUE_RE

    m = _VALUE_RE.match(text)
    assert m is not None and m.re.pattern == re.compile(VALUE_PATTERN).pattern
    assert parse_quantity(text).number == parse_quantity(f"{m.group('num')} {m.group('unit')}").number


def test_the_rule_syntax_lists_every_shape_family_and_text_name():
    """The documented list of text values (rulesets/SYNTAX.md) is the vocabulary's."""
    import re

    from modelcheck.common.data import data_path

    text = data_path("SYNTAX.md").read_text(encoding="utf-8")
    section = text[text.index("### Text values"):]
    section = section[:section.index("\n\n", section.index("For conditions"))]
    shapes = re.search(r"`shape` \(([^)]*)\)", section)
    assert shapes is not None
    assert re.findall(r"`([^`]+)`", shapes.group(1)) == list(SHAPES)
    names = set(re.findall(r"`([^`]+)`", section.replace(shapes.group(0), "`shape`")))
    assert names == {t.name for t in texts()}
