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
    ("local", -500.0),        # N = -Fx(start) = -500 kN: compression (see COLUMN_*); 20 kN across is 4 %
    ("as-flagged", None),     # read literally: 500 kN across the column and 20 kN along it: bending
    ("global", None),         # the flag already says global
])
def test_the_user_says_which_frame_to_trust(export: tuple[Path, dict[str, Any]], frame: str,
                                            expected_kn: float | None) -> None:
    path, ids = export
    n, src, msgs = _forces(path, frame)
    if expected_kn is None:   # the frame the user trusts puts most of the force across the member
        assert math.isnan(n[ids["column"]])
        assert src[ids["column"]].startswith("P: the analysis gives a force across the member (100% of the force")
    else:
        assert n[ids["column"]] == pytest.approx(expected_kn * KN, rel=1e-12)
    assert not any("flag is doubtful" in m for m in msgs)


def test_the_brace_read_in_global_axes_on_request(export: tuple[Path, dict[str, Any]]) -> None:
    path, ids = export
    n, src, _msgs = _forces(path, "global")
    # the brace's local end forces (-80, 0, 0) / (80, 0, 0) read in global axes lie across the
    # member (its axis is global Z): no axial force, all of it across, as a member in bending
    assert math.isnan(n[ids["brace"]])
    assert src[ids["brace"]].startswith("P: the analysis gives a force across the member (100% of the force")
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


def test_frame_members_with_end_shear_are_not_verified_by_an_axial_force(tmp_path: Path) -> None:
    """A portal frame as an analysis export writes it: two columns 3.048 m (120 in) high and a beam
    4.877 m (192 in) long, fixed at the feet, 100 lbf/in over the left half of the beam; member end
    forces (lbf) flagged GLOBAL_COORDS whose values are in member axes. Each member takes shear at
    its ends as well as an axial force (the feet's vertical reactions 2278.5 + 7321.5 = 9600 lbf =
    100 lbf/in × 96 in, statics; the values are those of buildingSMART's structural curve member
    sample, from memory). Whichever frame they are read in, a large part of each end force runs
    across the member: it bends, and an axial check cannot verify it."""
    mb = ModelBuilder(schema="IFC4", units="m")
    steel = mb.material("S355", category="steel")
    an = AnalysisWriter(mb)
    lc = an.result_group("LC1", an.load_group("LC1"))
    lbf = 4.4482216152605 / 1000.0   # kN (the writer's force unit), 1 lbf = 4.4482216152605 N (pint)
    h, span = 3.048, 4.8768
    w10 = rectangle(mb, 0.147, 0.0387)   # 5689 mm², about a W10X30 (8.84 in², AISC Manual, from memory): any would do
    left = an.curve_member((0, 0, 0), (0, 0, h), profile=w10, material=steel)
    right = an.curve_member((span, 0, 0), (span, 0, h), profile=w10, material=steel)
    beam = an.curve_member((0, 0, h), (span, 0, h), profile=w10, material=steel)
    for cm, start, end in (
            (left, (2278.53, 0.0, -1422.66), (-2278.53, 0.0, 1422.66)),
            (right, (7321.47, 0.0, 1422.73), (-7321.47, 0.0, -1422.73)),
            (beam, (1422.69, 0.0, 2278.52), (-1422.69, 0.0, 7321.48))):
        an.curve_reaction(cm, an.end_forces(tuple(v * lbf for v in start), tuple(v * lbf for v in end), 1.0), lc,
                          global_or_local="GLOBAL_COORDS")
    path = tmp_path / "frame.ifc"
    an.write(str(path))
    n, src, msgs = _forces(path, None)
    ids = (left.GlobalId, right.GlobalId, beam.GlobalId)
    assert all(math.isnan(n[g]) for g in ids)     # never the literal reading's +1.42 kip "tension"
    assert all(src[g].startswith("P: the analysis gives a force across the member (") for g in ids)
    (bending,) = [m for m in msgs if "it carries bending" in m]   # one line for the model, listing them
    assert all(g in bending for g in ids) and "(3 members: " in bending
    assert not any("end forces disagree" in m for m in msgs)       # a force not used needs no word on its ends
    # in member axes too (the frame the values are in) the columns bend: 1422.66 / 2683.1 = 53 % across
    n_local, src_local, _ = _forces(path, "local")
    assert math.isnan(n_local[left.GlobalId]) and "(53% of the force" in src_local[left.GlobalId]
    res = check_model(str(path), "steel-ec3", ForceOptions()).results
    assert set(res["status"]) == {"unchecked"}
    assert all(any("it carries bending" in m for m in miss) for miss in res["missing"])
    # read as flagged before, the left column passed as a tie; without the bending test it would
    # pass in compression under --analysis-frame local: the section, material and length are there
    assert set(res["global_id"]) == set(ids)


def test_end_forces_flagged_global_that_lie_along_the_member_in_its_axes_are_doubtful(tmp_path: Path) -> None:
    """A pin-ended brace along (3, 0, 4) / 5 (a 3-4-5 triangle, common practice) in 80 kN of tension,
    no load between its ends: end forces (-80, 0, 0) and (80, 0, 0) in member axes, flagged
    GLOBAL_COORDS. Both readings balance (nothing loads the brace between its ends); read as flagged,
    80 % of each end force runs across the brace (sin of the angle between global X and the brace:
    4/5), read in member axes none does: the flag is doubtful."""
    mb = ModelBuilder(schema="IFC4", units="m")
    steel = mb.material("S355", category="steel")
    an = AnalysisWriter(mb)
    lc = an.result_group("LC1", an.load_group("LC1"))
    brace = mb.member("IfcMember", name="B1", profile=rectangle(mb, 0.05, 0.05), material=steel, length=5.0,
                      direction=(3, 0, 4))
    cm = an.curve_member((0, 0, 0), (3.0, 0, 4.0), physical=brace)
    an.curve_reaction(cm, an.end_forces((-80.0, 0.0, 0.0), (80.0, 0.0, 0.0), 5.0), lc, global_or_local="GLOBAL_COORDS")
    path = tmp_path / "brace.ifc"
    an.write(str(path))
    n, src, msgs = _forces(path, None)
    assert math.isnan(n[brace.GlobalId])   # literally: N = 80 × 3/5 = 48 kN, which nothing supports
    assert src[brace.GlobalId].startswith("P: doubtful analysis end forces")
    assert "cross the member (80% of the force)" in src[brace.GlobalId] and "N = 80 kN" in src[brace.GlobalId]
    assert any("flag is doubtful" in m and brace.GlobalId in m for m in msgs)
    n_local, src_local, _msgs = _forces(path, "local")
    assert n_local[brace.GlobalId] == pytest.approx(80.0 * KN, rel=1e-12)   # N = +Fx(end)
    # the source names the flag and the reading the user chose, not the reading the flag gives
    assert src_local[brace.GlobalId].endswith("(end forces, N = -Fx start = +Fx end, flagged GLOBAL_COORDS), "
                                              "read in member axes (--analysis-frame local)")
