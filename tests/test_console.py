"""The console report of `modelcheck check`: it fits 80–200 columns without breaking a word, reads
names as text (never as markup), always says what each model verified, and shows results in the
model's own system of units.

The models are built in code. Numbers checked against pint: f = P/A for a round bar (common
practice), A = π d²/4 (geometry).
"""

from __future__ import annotations

import csv
import io
import json
import math
import re
from pathlib import Path

import pandas as pd
import pytest
from rich.cells import cell_len
from rich.console import Console

from modelcheck.common.units import Q_
from modelcheck.core.model import ForceOptions
from modelcheck.report.console import DEFAULT_WIDTH, console_width, governing, render_check
from modelcheck.rules.ruleset import load_ruleset
from modelcheck.rules.select import Selector
from modelcheck.run.runner import run_check
from modelcheck.testing.author import ModelBuilder
from tests.helpers import KN, REPO, axial_force, round_bar
from tests.helpers import run_modelcheck as run


def flat(text: str) -> str:
    """The text with every run of white space one space (lines wrapped at any width read as one)."""
    return " ".join(text.split())


# ------------------------------------------------------------------------------ models
def mixed_model(path: Path) -> Path:
    """Rods, an I section, an angle-free mix of long names, a name full of markup, members that
    lack data and one the steel rule sets leave out (concrete)."""
    mb = ModelBuilder(schema="IFC4", units="mm")
    s355 = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    unknown = mb.material("Product 7", category=None)                   # no strengths anywhere
    concrete = mb.material("C30/37", category="concrete", E=33000.0)
    rod = lambda d, name: mb.f.createIfcCircleProfileDef("AREA", name, None, d / 2)  # noqa: E731
    ub = mb.f.createIfcIShapeProfileDef("AREA", "UB 203x133x25", None, 133.2, 203.2, 5.7, 7.8, None)
    for i, kn in enumerate((60.0, 140.0, 95.0, 20.0)):
        mb.member("IfcMember", name=f"Hanger rod over platform bay {i + 1}", tag=f"HR-{i + 1:02d}",
                  profile=rod(16.0, "RD16 (M16 hanger rod)"), material=s355, length=3400.0, psets=axial_force(kn * KN))
    mb.member("IfcMember", name="Roof tie [bold]north[/] side", profile=ub, material=s355, length=6000.0,
              psets=axial_force(1400.0 * KN))
    mb.member("IfcMember", name="Strut without strengths", tag="ST-09", profile=rod(30.0, "RD30"), material=unknown,
              length=2500.0, psets=axial_force(10.0 * KN))
    mb.member("IfcMember", name="Rod with no force", tag="TR-04", profile=rod(20.0, "RD20"), material=s355,
              length=2000.0)
    mb.member("IfcColumn", name="Concrete post", tag="CP-1", profile=rod(300.0, "D300"), material=concrete,
              length=3000.0, psets=axial_force(200.0 * KN))
    p = path / "mixed.ifc"
    mb.write(str(p))
    return p


@pytest.fixture(scope="module")
def mixed_run(tmp_path_factory):
    p = mixed_model(tmp_path_factory.mktemp("mixed"))
    return run_check([str(p)], load_ruleset("steel-asd-us"), ForceOptions(property=("MC_MemberForces", "AxialForce")))


def rendered(run_, width: int, details: bool | None = None) -> str:
    buf = io.StringIO()
    render_check(run_, Console(file=buf, width=width, emoji=False, highlight=False), details=details)
    return buf.getvalue()


# ------------------------------------------------------------------------------ item: fits the terminal
@pytest.mark.parametrize("width", [80, 100, 120, 200])
def test_the_console_fits_the_width_and_breaks_no_word(mixed_run, width):
    text = rendered(mixed_run, width)
    assert max(cell_len(line) for line in text.splitlines()) <= width
    g = governing(mixed_run.results)
    fails = g[g["status"] == "fail"]
    unchecked = g[g["status"] == "unchecked"]
    assert len(fails) and len(unchecked)
    # every word of what each listed member's line says, whole in the output
    words: set[str] = set()
    # each failing member on its governing check: the highest ratio of its failing checks
    fails = fails.sort_values("ratio", ascending=False, kind="stable").drop_duplicates(["model", "global_id"])
    for rec in fails.to_dict("records"):
        words |= set(str(rec["tag"] or rec["name"]).split()) | {rec["check"], str(rec["load_case"])}
        words |= set(str(rec["suggestion"]["designation"]).split()) if isinstance(rec["suggestion"], dict) else set()
    for rec in unchecked.to_dict("records"):
        words |= set(str(rec["tag"] or rec["name"]).split())
        words |= {w for m in rec["missing"] for w in m.split()}
    broken = sorted(w for w in words if w not in text)
    assert not broken, f"words broken at {width} columns: {broken}"
    if width >= 160:   # the details: GlobalId, section and material of each failing member
        for gid in fails["global_id"]:
            assert gid in text
        assert "UB 203x133x25" in text.replace("\n", " ") or "203x133x25" in text


@pytest.mark.parametrize("width", [80, 120])
def test_details_on_request_fit_a_narrow_console(mixed_run, width):
    text = rendered(mixed_run, width, details=True)
    assert max(cell_len(line) for line in text.splitlines()) <= width
    g = governing(mixed_run.results)
    for gid in g.loc[g["status"] == "fail", "global_id"]:
        assert gid in text            # a GlobalId (22 characters) is never folded


def test_compact_layout_below_the_details_width_wide_layout_from_it(mixed_run):
    narrow, wide = rendered(mixed_run, 120), rendered(mixed_run, 200)
    g = governing(mixed_run.results)
    gid = g.loc[g["status"] == "fail", "global_id"].iloc[0]
    assert gid not in narrow and "Material" not in narrow
    assert gid in wide and "Material" in wide and "Demand" in wide


def test_width_terminal_else_columns_else_100(monkeypatch):
    class NotATerminal(io.StringIO):
        def isatty(self) -> bool:
            return False

    monkeypatch.delenv("COLUMNS", raising=False)
    assert console_width(NotATerminal()) == DEFAULT_WIDTH == 100
    monkeypatch.setenv("COLUMNS", "132")
    assert console_width(NotATerminal()) == 132


def test_long_warnings_wrap_at_word_boundaries(mixed_run):
    text = rendered(mixed_run, 80)
    # the member without strengths: its missing-input text wraps, each word whole (checked above);
    # here the model line: every word of the summary whole at 80 columns
    first = mixed_run.models[0]
    for word in f"{first.path} members found checked excluded".split():
        assert word in text


# ------------------------------------------------------------------------------ item: markup
def test_names_holding_markup_are_shown_as_written(mixed_run):
    text = rendered(mixed_run, 200)
    assert "[bold]north[/]" in text


def test_members_headers_keep_their_units_and_areas_are_plain(tmp_path):
    p = mixed_model(tmp_path)
    r = run("members", str(p), env={"COLUMNS": "200"})
    assert r.returncode == 0, r.stderr
    assert "A [mm²]" in r.stdout and "L [m]" in r.stdout and "Fy [MPa]" in r.stdout
    assert "[bold]north[/]" in r.stdout
    # π/4 · 300² = 70686 mm² (geometry, pint for the arithmetic) in plain decimals, not 7.069e+04
    area = Q_(math.pi / 4 * 300.0**2, "mm**2").m_as("mm**2")
    assert f"{round(area, -1):.0f}" in r.stdout and "e+0" not in r.stdout


# ------------------------------------------------------------------------------ item: never silent
def test_a_run_writing_only_files_still_prints_a_line_per_model(tmp_path):
    p = mixed_model(tmp_path)
    out = tmp_path / "r.json"
    r = run("check", str(p), "--format", "json", "--output", str(out), "--jobs", "1")
    assert r.returncode == 1
    assert "mixed.ifc" in r.stdout and "8 members found" in flat(r.stdout)
    # a report on standard output: the line goes to standard error, the JSON stays clean
    r = run("check", str(p), "--format", "json", "--jobs", "1")
    json.loads(r.stdout)
    assert "members found" in flat(r.stderr) and "members found" not in r.stdout.split('"results"')[0].split('"models"')[0]


def test_nothing_checked_is_the_headline_and_exit_1(tmp_path):
    mb = ModelBuilder(schema="IFC4", units="mm")
    bare = mb.material("Product 7")
    for i in range(3):
        mb.member("IfcMember", name=f"Bare {i}", profile=mb.f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0),
                  material=bare, length=1000.0, psets=axial_force(5.0 * KN))
    p = tmp_path / "bare.ifc"
    mb.write(str(p))
    r = run("check", str(p), "--jobs", "1", env={"COLUMNS": "300"})
    assert r.returncode == 1, r.stdout + r.stderr
    line = next(x for x in r.stdout.splitlines() if "bare.ifc" in x)
    assert "nothing could be checked" in line and "3 members found, 0 checked" in line
    assert "3 unchecked" in line
    # the same with only a file written, and whatever the format; the JUnit file fails as the exit code does
    r = run("check", str(p), "--format", "junit", "--output", str(tmp_path / "r.xml"), "--jobs", "1")
    assert r.returncode == 1 and "nothing could be checked" in flat(r.stdout)
    import xml.etree.ElementTree as ET

    failures = ET.parse(tmp_path / "r.xml").getroot().findall(".//failure")
    assert len(failures) == 1 and "nothing could be checked" in failures[0].get("message", "")
    # the JSON report alone (its rows made without a results table) tells the same
    r = run("check", str(p), "--format", "json", "--output", str(tmp_path / "r.json"), "--jobs", "1")
    assert r.returncode == 1 and "nothing could be checked" in flat(r.stdout)


def test_every_member_excluded_is_nothing_checked_with_the_reason(tmp_path):
    mb = ModelBuilder(schema="IFC4", units="mm")
    concrete = mb.material("C30/37", category="concrete", E=33000.0)
    for i in range(5):
        mb.member("IfcColumn", name=f"Post {i}", profile=mb.f.createIfcCircleProfileDef("AREA", "D300", None, 150.0),
                  material=concrete, length=3000.0, psets=axial_force(200.0 * KN))
    p = tmp_path / "posts.ifc"
    mb.write(str(p))
    r = run("check", str(p), "--jobs", "1", env={"COLUMNS": "300"})
    assert r.returncode == 1
    line = next(x for x in r.stdout.splitlines() if "posts.ifc" in x)
    assert "nothing could be checked" in line
    assert "5 excluded by the rule set's selection: material category concrete" in line


def test_exit_code_1_for_nothing_checked_is_documented():
    r = run("check", "--help")
    assert "none" in r.stdout and "could be checked" in r.stdout
    readme = (REPO / "README.md").read_text(encoding="utf-8")
    assert "nothing could be checked" in readme


def test_excluded_members_are_counted_with_the_selectors_reason():
    members = pd.DataFrame({"ifc_class": ["IfcMember"] * 4, "shape": ["round-bar", "flat-bar", None, "flat-bar"],
                            "material_category": ["concrete", None, None, "steel"]})
    sel = Selector((("shape", ("round-bar", "flat-bar")),),
                   exclude=Selector((("material_category", ("concrete*",)),)))
    out = sel.left_out(members[~sel.mask(members)])
    assert out == [("material category concrete", 1), ("shape unknown", 1)]
    assert Selector((("any_name", ("*rod*",)),)).left_out(pd.DataFrame({"name": ["Brace"]})) == [
        ("no name matching *rod*", 1)]


def test_the_no_force_warning_is_not_repeated_beside_the_unchecked_list(mixed_run):
    text = rendered(mixed_run, 200)
    assert "no axial force from any route" not in text
    assert "P: no axial force" in text and "TR-04" in text
    model = mixed_run.models[0]
    assert any("no axial force from any route" in w for w in model.force_messages)   # still in the JSON


# ------------------------------------------------------------------------------ item: units follow the model
def formats_of(tmp_path: Path, model: Path, *extra: str) -> dict[str, str]:
    out = tmp_path / ("out" + "-".join(extra))
    r = run("check", str(model), "--format", "json,csv,junit,bcf,html", "--output", str(out), "--jobs", "1", *extra)
    assert r.returncode == 1, r.stderr
    import zipfile

    texts = {ext: (out / f"modelcheck-report.{ext}").read_text(encoding="utf-8") for ext in ("json", "csv", "xml",
                                                                                           "html")}
    with zipfile.ZipFile(out / "modelcheck-report.bcfzip") as z:
        texts["bcf"] = "".join(z.read(n).decode("utf-8") for n in z.namelist() if n.endswith(".bcf"))
    return texts


def test_a_metric_model_is_reported_in_si_by_every_format(tmp_path):
    p = mixed_model(tmp_path)
    texts = formats_of(tmp_path, p)
    doc = json.loads(texts["json"])
    row = next(r for r in doc["results"] if r["tag"] == "HR-02" and r["check"] == "tension-yield")
    # f = P/A = 140 kN / (π · 8² mm²) (common practice), in MPa by pint
    f = (Q_(140.0, "kN") / (math.pi * Q_(8.0, "mm") ** 2)).m_as("MPa")
    assert row["demand"]["unit"] == "MPa" and row["demand"]["value"] == pytest.approx(f, rel=1e-5)
    assert {r["demand"]["unit"] for r in doc["results"] if r["demand"] and r["check"].startswith("tension")} == {"MPa"}
    assert doc["models"][0]["units"] == "SI"
    rows = list(csv.DictReader(io.StringIO(texts["csv"])))
    assert {r["unit"] for r in rows if r["check"] == "tension-yield" and r["status"] != "unchecked"} == {"MPa"}
    for ext in ("xml", "bcf", "html"):
        # a unit after a number (a random GlobalId may hold the letters "ksi")
        assert re.search(r"\d MPa", texts[ext]) and not re.search(r"\d ksi", texts[ext]), ext


def test_units_us_on_request_for_every_format(tmp_path):
    p = mixed_model(tmp_path)
    texts = formats_of(tmp_path, p, "--units", "US")
    doc = json.loads(texts["json"])
    row = next(r for r in doc["results"] if r["tag"] == "HR-02" and r["check"] == "tension-yield")
    f = (Q_(140.0, "kN") / (math.pi * Q_(8.0, "mm") ** 2)).m_as("ksi")   # pint
    assert row["demand"]["unit"] == "ksi" and row["demand"]["value"] == pytest.approx(f, rel=1e-5)
    for ext in ("xml", "bcf", "html"):
        assert re.search(r"\d ksi", texts[ext]) and not re.search(r"\d MPa", texts[ext]), ext


def test_an_inch_model_is_reported_in_us_units(tmp_path):
    mb = ModelBuilder(schema="IFC4", units="inch-kip")
    a36 = mb.material("ASTM A36", category="steel")
    rod = mb.f.createIfcCircleProfileDef("AREA", "ROD 3/4", None, 0.375)
    mb.member("IfcMember", name="Hanger rod", tag="H1", profile=rod, material=a36, length=120.0,
              psets=axial_force(15.0))   # 15 kip
    p = tmp_path / "inch.ifc"
    mb.write(str(p))
    r = run("check", str(p), "--rules", "steel-ec3", "--format", "json", "--jobs", "1")
    doc = json.loads(r.stdout)
    units = {x["demand"]["unit"] for x in doc["results"] if x["demand"] and x["check"].startswith("tension")}
    assert units == {"ksi"}     # a rule set written in SI, shown in the model's US units


def test_a_replacement_comes_from_the_catalogue_of_the_model_system(tmp_path):
    p = mixed_model(tmp_path)

    def suggestions(*extra: str) -> dict[str, str]:
        r = run("check", str(p), "--format", "json", "--jobs", "1", *extra)
        doc = json.loads(r.stdout)
        return {x["name"]: x["suggestion"]["designation"] for x in doc["results"]
                if x["status"] == "fail" and x["suggestion"]}

    own, us = suggestions(), suggestions("--units", "US")
    tie = "Roof tie [bold]north[/] side"
    # a European UB section: an EN catalogue section (IPE/HEA, shapes-en.csv) by default, a W shape on request
    assert own[tie].startswith(("IPE", "HE")) and us[tie].startswith("W")
    # a metric hanger rod: a metric thread (ISO 261) whatever the display (it matches M16)
    rod = next(k for k in own if k.startswith("Hanger rod"))
    assert own[rod].startswith("M")


def test_ruleset_in_another_system_shows_that_systems_units():
    asd = load_ruleset("steel-asd-us")
    assert asd.in_system("US") is asd                               # its own system: as written
    si = asd.in_system("SI")
    assert si.check("tension-yield").unit == "MPa" and si.check("elongation").unit == "mm"
    assert si.check("slenderness-tension").unit == ""               # a number stays a number
    ec3 = load_ruleset("steel-ec3").in_system("US")
    assert ec3.check("tension-plastic").unit == "kip" or ec3.check("tension-plastic").unit == "ksi"


@pytest.mark.parametrize("width", [100, 120])
def test_the_baseline_comparison_fits_the_console(width):
    from modelcheck.report.check_json import check_document
    from modelcheck.report.compare import compare, comparison_renderable
    from tests.report_runs import GID_D, make_run

    cmp = compare(check_document(make_run(d_demand=200.0)), check_document(make_run()))
    buf = io.StringIO()
    Console(file=buf, width=width).print(comparison_renderable(cmp, width=width))
    text = buf.getvalue()
    assert max(cell_len(line) for line in text.splitlines()) <= width
    assert GID_D in text and "axial_stress" in text and "New failures (1)" in text


# ------------------------------------------------------------------------------ members: fits the terminal
@pytest.fixture(scope="module")
def mixed_path(tmp_path_factory):
    return mixed_model(tmp_path_factory.mktemp("members"))


def _member_words(path: Path) -> tuple[set[str], list[str]]:
    """Every word of each member's label, section and material (what the compact table names),
    and the GlobalIds, read from the members JSON (another format of the same inventory)."""
    r = run("members", str(path), "--format", "json")
    assert r.returncode == 0, r.stderr
    words: set[str] = set()
    gids = []
    for m in json.loads(r.stdout)["models"][0]["members"]:
        words |= set(str(m["tag"] or m["name"]).split())
        words |= set(str(m["section"]["name"]).split()) if m["section"]["name"] else set()
        words |= set(str(m["material"]["name"]).split()) if m["material"] else set()
        gids.append(m["global_id"])
    return words, gids


@pytest.mark.parametrize("width", [80, 100, 120, 200])
@pytest.mark.parametrize("capacity", [False, True])
def test_members_fits_the_width_and_breaks_no_word(mixed_path, width, capacity):
    r = run("members", str(mixed_path), *(["--capacity"] if capacity else []), env={"COLUMNS": str(width)})
    assert r.returncode == 0, r.stderr
    assert max(cell_len(line) for line in r.stdout.splitlines()) <= width
    words, gids = _member_words(mixed_path)
    broken = sorted(w for w in words if w not in r.stdout)
    assert not broken, f"words broken at {width} columns: {broken}"
    for header in ("A [mm²]", "L [m]", "Fy [MPa]"):   # units kept; the compact header on one line from 100 on
        assert (header if 100 <= width < 160 else header.split()[-1]) in r.stdout
    if width >= 160:   # the details: every GlobalId whole
        assert all(g in r.stdout for g in gids)
        assert ("E [MPa]" in r.stdout or "E" in r.stdout.split()) and "Sources" in r.stdout
        assert all(w in r.stdout.split() for w in "Hanger rod over platform bay 1".split())   # the name
    else:
        assert not any(g in r.stdout.split("\n", 2)[1] for g in gids)


@pytest.mark.parametrize("width", [80, 120])
def test_members_details_on_request_fit_a_narrow_console(mixed_path, width):
    r = run("members", str(mixed_path), "--details", env={"COLUMNS": str(width)})
    assert r.returncode == 0, r.stderr
    assert max(cell_len(line) for line in r.stdout.splitlines()) <= width
    _, gids = _member_words(mixed_path)
    assert all(g in r.stdout for g in gids)            # a GlobalId (22 characters) is never folded
    assert "IfcCircleProfileDef" in r.stdout            # where the section came from


def tie_bar(folder: Path, d: float, tag: str) -> Path:
    """A millimetre model of one S355 tie bar of diameter ``d``, 1000 mm long, named 'Bar <d>'."""
    mb = ModelBuilder(schema="IFC4", units="mm")
    s355 = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    mb.member("IfcMember", name="Tie bar", tag=tag, profile=round_bar(mb, d, f"Bar {d:g}"), material=s355,
              length=1000.0)
    p = folder / "bar.ifc"
    mb.write(str(p))
    return p


def test_members_capacity_table_shows_the_ratings_of_the_json(tmp_path):
    # a plain round bar (no thread): AISC 360-16 D2 (a) yielding Pn = Fy·Ag, Ω = 1.67, and (b) rupture
    # Pn = Fu·Ae, Ω = 2.00 with Ae = An = Ag for a bar with no holes (common practice)
    p = tie_bar(tmp_path, 20.0, "TB-1")
    area = math.pi / 4 * 20.0**2                                   # mm², geometry
    hand = min(355.0 * area / 1.67, 490.0 * area / 2.00) / 1000.0  # kN: yielding governs, 66.78 kN
    doc = json.loads(run("members", str(p), "--capacity", "--format", "json").stdout)
    rating = doc["models"][0]["members"][0]["capacity"]["tension"]
    assert rating["unit"] == "kN" and rating["value"] == pytest.approx(hand, rel=1e-3)
    r = run("members", str(p), "--capacity", env={"COLUMNS": "100"})
    assert r.returncode == 0, r.stderr
    assert "T [kN]" in r.stdout and "C [kN]" in r.stdout and "T, C: the allowable tension" in r.stdout
    row = next(line for line in r.stdout.splitlines() if line.startswith("TB-1"))
    assert f"{hand:.4g}" in row.split()          # 66.78, the same number as the JSON


def test_members_capacity_in_csv_agrees_with_json(tmp_path):
    # a rod too slender for any compression (KL/r = 1000/2.5 = 400 > 200, common practice): no
    # compression rating, with the reason, in the CSV as in the JSON; tension by AISC 360-16 D2 (a)
    p = tie_bar(tmp_path, 10.0, "TB-2")
    cap = json.loads(run("members", str(p), "--capacity", "--format", "json").stdout)["models"][0]["members"][0][
        "capacity"]
    r = run("members", str(p), "--capacity", "--format", "csv")
    assert r.returncode == 0, r.stderr
    row = next(csv.DictReader(io.StringIO(r.stdout)))
    hand = 355.0 * math.pi / 4 * 10.0**2 / 1.67 / 1000.0          # kN, 16.7 kN
    assert float(row["tension_allowable [kN]"]) == pytest.approx(hand, rel=1e-4)
    assert float(row["tension_allowable [kN]"]) == pytest.approx(cap["tension"]["value"], rel=1e-6)
    assert row["tension_check"] == cap["tension_check"] == "tension-yield"
    assert row["compression_allowable [kN]"] == "" and cap["compression"] is None
    assert row["compression_note"] == cap["compression_note"] and "400" in row["compression_note"]


def test_one_member_is_one_member(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    from modelcheck.cli import main

    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel")
    mb.member(name="rod", tag="R1", profile=round_bar(mb, 20.0), material=steel, length=2000.0,
              psets=axial_force(20.0 * KN))
    mb.write(str(tmp_path / "one.ifc"))
    assert main(["check", str(tmp_path / "one.ifc"), "--no-config", "--jobs", "1"]) == 0
    assert "(IFC4, SI units): 1 member found, 1 checked — 1 pass, 0 fail, 0 unchecked" in " ".join(
        capsys.readouterr().out.split())
