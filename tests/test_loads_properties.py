"""Forces from a model property: occurrence, type, units of the file and of the property."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pandas as pd
import pytest

from modelcheck.common.table import FORCE_COLUMNS
from modelcheck.common.units import Q_
from modelcheck.ifc.index import build_index
from modelcheck.loads.properties import forces_from_property, parse_property_name
from modelcheck.testing.author import ModelBuilder
from tests.helpers import LBF_NIST, axial_force, round_bar
from tests.tables import members_of

PSET, PROP = "MC_MemberForces", "AxialForce"


def property_forces(mb: ModelBuilder, folder: Path, *elements: Any,
                    **options: Any) -> tuple[pd.DataFrame, list[str]]:
    """Write the model to ``folder/m.ifc`` and read the forces of ``elements`` from
    MC_MemberForces.AxialForce."""
    mb.write(str(folder / "m.ifc"))
    idx = build_index(folder / "m.ifc")
    return forces_from_property(idx, members_of(idx.path, *elements), PSET, PROP, **options)


def by_gid(df: pd.DataFrame) -> dict[str, float]:
    return dict(zip(df["global_id"], df["axial_force"], strict=True))


@pytest.mark.parametrize("schema", ["IFC2X3", "IFC4", "IFC4X3"])
def test_occurrence_property_in_newtons(tmp_path: Path, schema: str) -> None:
    mb = ModelBuilder(schema=schema, units="mm")
    a = mb.member("IfcMember", tag="H1", profile=round_bar(mb, 16.0, "RD"), length=2000.0, psets=axial_force(-1500.0))
    b = mb.member("IfcMember", tag="H2", profile=round_bar(mb, 16.0, "RD"), length=2000.0)  # no property
    forces, msgs = property_forces(mb, tmp_path, a, b)
    assert list(forces.columns) == list(FORCE_COLUMNS)
    assert by_gid(forces) == {a.GlobalId: pytest.approx(-1500.0)}  # file's FORCEUNIT is the newton
    assert forces["source"].tolist() == [f"{PSET}.{PROP} (occurrence)"]
    assert forces["load_case"].tolist() == ["default"]
    assert msgs == []


def test_kilonewton_file_and_load_case(tmp_path: Path) -> None:
    mb = ModelBuilder(schema="IFC4", units="m")
    a = mb.member("IfcMember", tag="H1", profile=round_bar(mb, 0.016, "RD"), length=2.0, psets=axial_force(12.5))
    forces, _ = property_forces(mb, tmp_path, a, load_case="SLS")
    assert forces["axial_force"].iloc[0] == pytest.approx(12500.0)  # KILO NEWTON: SI prefix kilo = 10³
    assert forces["load_case"].iloc[0] == "SLS"


def test_kip_file_against_nist_and_pint(tmp_path: Path) -> None:
    mb = ModelBuilder(schema="IFC4", units="inch-kip")
    a = mb.member("IfcMember", tag="H1", profile=round_bar(mb, 0.75, "RD"), length=96.0, psets=axial_force(3.2))
    forces, _ = property_forces(mb, tmp_path, a)
    assert forces["axial_force"].iloc[0] == pytest.approx(3.2 * 1000 * LBF_NIST, rel=1e-12)  # NIST SP 811
    assert forces["axial_force"].iloc[0] == pytest.approx(Q_(3.2, "kip").to("N").magnitude, rel=1e-12)  # pint


def test_inherited_from_type_and_occurrence_overrides(tmp_path: Path) -> None:
    mb = ModelBuilder(schema="IFC4", units="mm")
    typ = mb.member_type(name="HR-M16 hanger")
    mb.attach_pset(typ, mb.property_set(PSET, {PROP: ("IfcForceMeasure", 800.0)}))
    a = mb.member("IfcMember", tag="H1", profile=round_bar(mb, 16.0, "RD"), length=2000.0, member_type=typ)
    b = mb.member("IfcMember", tag="H2", profile=round_bar(mb, 16.0, "RD"), length=2000.0, member_type=typ,
                  psets=axial_force(950.0))
    forces, msgs = property_forces(mb, tmp_path, a, b)
    got = forces.set_index("global_id")
    assert got.loc[a.GlobalId, "axial_force"] == pytest.approx(800.0)   # type value, newtons as written
    assert got.loc[a.GlobalId, "source"] == f"{PSET}.{PROP} (type HR-M16 hanger)"
    assert got.loc[b.GlobalId, "axial_force"] == pytest.approx(950.0)   # occurrence wins over type
    assert got.loc[b.GlobalId, "source"] == f"{PSET}.{PROP} (occurrence)"
    assert msgs == []


def _own_unit_pset(mb: ModelBuilder, value: float, unit: Any, measure: str = "IfcForceMeasure") -> Any:
    f = mb.f
    prop = f.createIfcPropertySingleValue(PROP, None, f.create_entity(measure, value), unit)
    return f.create_entity("IfcPropertySet", GlobalId=mb.guid(), Name=PSET, HasProperties=[prop])


def test_property_unit_overrides_project_unit(tmp_path: Path) -> None:
    mb = ModelBuilder(schema="IFC4", units="mm")  # project FORCEUNIT: newton
    f = mb.f
    kn = f.createIfcSIUnit(None, "FORCEUNIT", "KILO", "NEWTON")
    newton = f.createIfcSIUnit(None, "FORCEUNIT", None, "NEWTON")
    lbf = f.createIfcConversionBasedUnit(f.createIfcDimensionalExponents(1, 1, -2, 0, 0, 0, 0), "FORCEUNIT",
                                         "pound-force", f.createIfcMeasureWithUnit(
                                             f.create_entity("IfcForceMeasure", LBF_NIST), newton))
    a = mb.member("IfcMember", tag="H1", profile=round_bar(mb, 16.0, "RD"), length=2000.0)
    b = mb.member("IfcMember", tag="H2", profile=round_bar(mb, 16.0, "RD"), length=2000.0)
    c = mb.member("IfcMember", tag="H3", profile=round_bar(mb, 16.0, "RD"), length=2000.0)
    mb.attach_pset(a, _own_unit_pset(mb, 2.0, kn))
    mb.attach_pset(b, _own_unit_pset(mb, 100.0, lbf))
    mb.attach_pset(c, _own_unit_pset(mb, 1.5, kn, measure="IfcReal"))  # a plain number made a force by its unit
    forces, msgs = property_forces(mb, tmp_path, a, b, c)
    assert by_gid(forces) == {
        a.GlobalId: pytest.approx(2000.0),                      # SI prefix kilo
        b.GlobalId: pytest.approx(100 * LBF_NIST, rel=1e-12),   # NIST SP 811 factor written in the file
        c.GlobalId: pytest.approx(1500.0),                      # SI prefix kilo
    }
    assert msgs == []


def test_no_forceunit_gives_no_force_and_a_message(tmp_path: Path) -> None:
    mb = ModelBuilder(schema="IFC4", units="mm", force_unit=False)
    a = mb.member("IfcMember", tag="H1", profile=round_bar(mb, 16.0, "RD"), length=2000.0, psets=axial_force(1500.0))
    b = mb.member("IfcMember", tag="H2", profile=round_bar(mb, 16.0, "RD"), length=2000.0)
    mb.attach_pset(b, _own_unit_pset(mb, 3.0, mb.f.createIfcSIUnit(None, "FORCEUNIT", "KILO", "NEWTON")))
    mb.write(str(tmp_path / "m.ifc"))
    idx = build_index(tmp_path / "m.ifc")
    forces, msgs = forces_from_property(idx, members_of(idx.path, a, b), PSET, PROP)
    assert by_gid(forces) == {b.GlobalId: pytest.approx(3000.0)}  # its own unit still works (SI kilo)
    assert len(msgs) == 1 and "FORCEUNIT" in msgs[0] and a.GlobalId in msgs[0]
    assert msgs[0].startswith(idx.path)


@pytest.mark.parametrize("measure, value, fragment", [
    ("IfcLengthMeasure", 12.0, "IfcLengthMeasure, not a force"),
    ("IfcReal", 12.0, "plain IfcReal with no unit"),
    ("IfcLabel", "heavy", "not a force"),
    ("IfcLabel", "12", "no unit"),
    ("IfcLabel", "12 kN/m", "not a force"),
])
def test_unusable_values_give_messages(tmp_path: Path, measure: str, value: Any, fragment: str) -> None:
    mb = ModelBuilder(schema="IFC4", units="mm")
    a = mb.member("IfcMember", tag="H1", profile=round_bar(mb, 16.0, "RD"), length=2000.0, psets=axial_force(value, measure))
    forces, msgs = property_forces(mb, tmp_path, a)
    assert forces.empty
    assert len(msgs) == 1 and fragment in msgs[0] and a.GlobalId in msgs[0]


def test_text_value_with_unit(tmp_path: Path) -> None:
    mb = ModelBuilder(schema="IFC4", units="mm")
    a = mb.member("IfcMember", tag="H1", profile=round_bar(mb, 16.0, "RD"), length=2000.0,
                  psets=axial_force("2.5 kip", "IfcLabel"))
    forces, msgs = property_forces(mb, tmp_path, a)
    assert forces["axial_force"].iloc[0] == pytest.approx(2500 * LBF_NIST, rel=1e-12)  # NIST SP 811
    assert msgs == []


def test_members_of_other_models_are_ignored(tmp_path: Path) -> None:
    mb = ModelBuilder(schema="IFC4", units="mm")
    a = mb.member("IfcMember", tag="H1", profile=round_bar(mb, 16.0, "RD"), length=2000.0, psets=axial_force(10.0))
    mb.write(str(tmp_path / "m.ifc"))
    idx = build_index(tmp_path / "m.ifc")
    members = pd.concat([members_of(idx.path, a), members_of("other.ifc", a)])
    forces, _ = forces_from_property(idx, members, PSET, PROP)
    assert forces["model"].tolist() == [idx.path]


def test_parse_property_name() -> None:
    assert parse_property_name("MC_MemberForces.AxialForce") == ("MC_MemberForces", "AxialForce")
    assert parse_property_name("My.Set.Force") == ("My.Set", "Force")
    for bad in ("AxialForce", ".AxialForce", "MC_MemberForces."):
        with pytest.raises(ValueError):
            parse_property_name(bad)
