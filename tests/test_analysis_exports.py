"""Doubtful analysis data as real analysis exports write it: end forces whose coordinate flag the
values contradict, reactions on supports, analysis members standing for footings and slabs.
Models built with ModelBuilder and AnalysisWriter."""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import pytest

from modelcheck.cli import main
from modelcheck.core.check import check_model
from modelcheck.core.model import ForceOptions
from modelcheck.ifc.index import build_index
from modelcheck.ifc.reader import read_members
from modelcheck.loads.analysis import forces_from_analysis
from modelcheck.testing.author import ModelBuilder
from modelcheck.testing.author_analysis import AnalysisWriter
from tests.helpers import KN, rectangle

# A column 3 m high carrying 500 kN of compression and a wind load of 4 kN/m across it (12 kN in
# all). Its end forces in member axes (forces on the member at its ends, the convention the reader
# uses): Fx(start) = +500, Fx(end) = -500 (N = -Fx(start) = -500 kN, compression); across the
# member the two ends take the 12 kN between them: Fz(start) = +20, Fz(end) = -8 (20 - 8 = 12:
# equilibrium of the member, common practice). Read in global axes (the column's axis is global Z,
# its local z global X), the axial component of each end is the third number: 20 and -8, which do
# not balance along the member, while the first numbers (500, -500) do.
COLUMN_START = (500.0, 0.0, 20.0)
COLUMN_END = (-500.0, 0.0, -8.0)


def _column() -> tuple[ModelBuilder, Any, AnalysisWriter, Any, Any, Any]:
    """A metre model with S355 steel, load case LC1's result group, and column C1 (200 × 200,
    3 m) with its analysis member from (0, 0, 0) to (0, 0, 3): (builder, steel, analysis writer,
    result group, column, analysis member)."""
    mb = ModelBuilder(schema="IFC4", units="m")
    steel = mb.material("S355", category="steel")
    an = AnalysisWriter(mb)
    lc = an.result_group("LC1", an.load_group("LC1"))
    column = mb.member("IfcColumn", name="C1", profile=rectangle(mb, 0.2, 0.2), material=steel, length=3.0)
    return mb, steel, an, lc, column, an.curve_member((0, 0, 0), (0, 0, 3.0), physical=column)


@pytest.fixture
def export(tmp_path: Path) -> tuple[Path, dict[str, Any]]:
    """The column with its end forces flagged GLOBAL_COORDS (as the export wrote them), a brace
    whose local end forces are right, a support with its reaction, and an analysis member standing
    for a footing."""
    mb, steel, an, lc, column, cm = _column()
    an.curve_reaction(cm, an.end_forces(COLUMN_START, COLUMN_END, 3.0), lc, global_or_local="GLOBAL_COORDS")
    brace = mb.member("IfcMember", name="B1", profile=rectangle(mb, 0.1, 0.1), material=steel, length=3.0,
                      start=(5.0, 0.0, 0.0))
    bm = an.curve_member((5, 0, 0), (5, 0, 3.0), physical=brace)
    # 80 kN tension, no span load: balanced in both readings (not doubted)
    an.curve_reaction(bm, an.end_forces((-80.0, 0.0, 0.0), (80.0, 0.0, 0.0), 3.0), lc)
    f = mb.f
    support = f.create_entity("IfcStructuralPointConnection", GlobalId=mb.guid(), Name="S1",
                              ObjectPlacement=an.placement)
    an.point_reaction(support, an.single_force(fz=500.0), lc, global_or_local="GLOBAL_COORDS")
    footing = f.create_entity("IfcFooting", GlobalId=mb.guid(), Name="F1", PredefinedType="PAD_FOOTING")
    fm = an.curve_member((9, 0, -1.0), (9, 0, 0.0), physical=footing)
    an.curve_reaction(fm, an.end_forces((100.0, 0.0, 0.0), (-100.0, 0.0, 0.0), 1.0), lc)
    path = tmp_path / "export.ifc"
    an.write(str(path))
    return path, {"column": column.GlobalId, "brace": brace.GlobalId, "support": support.GlobalId,
                  "footing_member": fm.GlobalId, "footing": footing.GlobalId}


def _forces(path: Path, frame: str | None) -> tuple[dict[str, float], dict[str, str], list[str]]:
    idx = build_index(str(path))
    members = read_members(idx).frame
    forces, msgs = forces_from_analysis(idx, members, frame=frame)
    return (dict(zip(forces["global_id"], forces["axial_force"], strict=True)),
            dict(zip(forces["global_id"], forces["source"], strict=True)), msgs)


def test_a_flag_the_values_contradict_makes_the_forces_doubtful(export: tuple[Path, dict[str, Any]]) -> None:
    path, ids = export
    n, src, msgs = _forces(path, None)
    assert math.isnan(n[ids["column"]])
    assert src[ids["column"]].startswith("P: doubtful analysis end forces")
    assert "500 kN" in src[ids["column"]]   # the reading that balances: N = -500 kN (see COLUMN_*)
    doubt = [m for m in msgs if "flag is doubtful" in m]
    assert len(doubt) == 1 and ids["column"] in doubt[0] and str(path) in doubt[0]
    assert ids["brace"] not in doubt[0]
    assert n[ids["brace"]] == pytest.approx(80.0 * KN, rel=1e-12)   # N = +Fx(end) = 80 kN, untouched


@pytest.mark.parametrize(("frame", "expected_kn"), [
    ("local", -500.0),        # N = -Fx(start) = -500 kN: compression (see COLUMN_*)
    ("as-flagged", -20.0),    # read literally: -20 kN at the start, -8 kN at the end; the larger magnitude
    ("global", -20.0),        # the flag already says global
])
def test_the_user_says_which_frame_to_trust(export: tuple[Path, dict[str, Any]], frame: str,
                                            expected_kn: float) -> None:
    path, ids = export
    n, _src, msgs = _forces(path, frame)
    assert n[ids["column"]] == pytest.approx(expected_kn * KN, rel=1e-12)
    assert not any("flag is doubtful" in m for m in msgs)


def test_the_brace_read_in_global_axes_on_request(export: tuple[Path, dict[str, Any]]) -> None:
    path, ids = export
    n, src, _msgs = _forces(path, "global")
    # the brace's local end forces (-80, 0, 0) / (80, 0, 0) read in global axes: their component on
    # the member's axis (global Z) is 0
    assert n[ids["brace"]] == pytest.approx(0.0, abs=1e-9)
    assert "--analysis-frame global" in src[ids["brace"]]


def test_doubtful_forces_leave_the_member_unchecked_with_the_reason(export: tuple[Path, dict[str, Any]]) -> None:
    path, ids = export
    checked = check_model(str(path), "steel-ec3", ForceOptions())
    res = checked.results
    col = res[res["global_id"] == ids["column"]]
    assert len(col) and set(col["status"]) == {"unchecked"}
    assert all(any(m.startswith("P: doubtful analysis end forces") for m in miss) for miss in col["missing"])
    # the user's word: in member axes, 500 kN of compression on a 200 x 200 mm section (σ = 12.5 MPa)
    checked = check_model(str(path), "steel-ec3", ForceOptions(analysis_frame="local"))
    res = checked.results
    comp = res[(res["global_id"] == ids["column"]) & (res["check"] == "compression")]
    assert list(comp["status"]) == ["pass"]
    # σ = N/A = 500 kN / 0.04 m² = 12.5 MPa (hand value), shown in the rule set's MPa
    assert comp["unit"].iloc[0] == "MPa" and comp["demand"].iloc[0] == pytest.approx(12.5, rel=1e-9)


def test_supports_and_footings_are_not_member_forces(export: tuple[Path, dict[str, Any]]) -> None:
    path, ids = export
    n, _src, msgs = _forces(path, None)
    assert ids["support"] not in n
    assert not any(ids["support"] in m for m in msgs)     # no warning per support ...
    assert any("on supports" in m and m.split(": ", 1)[1].startswith("1 structural result") for m in msgs)
    idx = build_index(str(path))
    warnings = read_members(idx).model_warnings
    line = next(w for w in warnings if ids["footing_member"] in w)   # ... and the footing's member is listed
    assert "IfcFooting" in line and "not checked" in line


def test_the_option_on_the_command_line_and_in_the_configuration(export: tuple[Path, dict[str, Any]],
                                                                 tmp_path: Path, monkeypatch: Any) -> None:
    path, ids = export
    out = tmp_path / "r.json"
    code = main(["check", str(path), "--rules", "steel-ec3", "--format", "json", "--output", str(out),
                 "--analysis-frame", "local", "--no-config"])
    assert code in (0, 1)
    rows = [r for r in json.loads(out.read_text())["results"] if r["global_id"] == ids["column"]]
    assert {r["status"] for r in rows} >= {"pass"}
    monkeypatch.chdir(tmp_path)
    (tmp_path / "modelcheck.toml").write_text('analysis_frame = "sideways"\n', encoding="utf-8")
    assert main(["check", str(path), "--format", "json", "--output", str(tmp_path / "s.json")]) == 2
    (tmp_path / "modelcheck.toml").write_text('analysis_frame = "local"\n', encoding="utf-8")
    out2 = tmp_path / "c.json"
    main(["check", str(path), "--rules", "steel-ec3", "--format", "json", "--output", str(out2)])
    rows2 = [r for r in json.loads(out2.read_text())["results"] if r["global_id"] == ids["column"]]
    assert rows2 == rows
    members_out = tmp_path / "m.json"
    main(["members", str(path), "--format", "json", "--output", str(members_out)])
    col = next(m for m in json.loads(members_out.read_text())["models"][0]["members"]
               if m["global_id"] == ids["column"])
    assert col["axial_force"] == {"LC1": None}    # doubtful: no value, never NaN


def test_a_right_flag_unbalanced_by_self_weight_is_left_alone(tmp_path: Path) -> None:
    """A column's end forces rightly flagged LOCAL_COORDS: 500 kN at the top, 490 kN at the foot
    (10 kN of self-weight along it, so Fx(start) + Fx(end) = 10 kN, beyond the 1 % tolerance), and
    end shears of 20 kN from its end moments. Read in global axes, the shears (20, -20) balance, but
    they are far smaller than the axial force: the flag is not doubted (common practice: an axial
    member's load runs along its axis)."""
    _mb, _steel, an, lc, column, cm = _column()
    an.curve_reaction(cm, an.end_forces((490.0, 0.0, 20.0), (-500.0, 0.0, -20.0), 3.0), lc)
    path = tmp_path / "selfweight.ifc"
    an.write(str(path))
    n, _src, msgs = _forces(path, None)
    assert n[column.GlobalId] == pytest.approx(-500.0 * KN, rel=1e-12)   # the larger magnitude, +Fx(end)
    assert not any("flag is doubtful" in m for m in msgs)
