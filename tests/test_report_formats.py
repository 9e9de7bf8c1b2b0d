"""CSV, JUnit, BCF and HTML reports, each read back by an independent parser.

The runs are built by hand (tests/report_runs.py): member B fails axial stress in LC2 with
demand 150 MPa against 120 MPa (ratio 1.25 = demand / capacity, the definition of the ratio),
member C lacks its area and radius of gyration (unchecked), the broken model cannot be read.
"""

from __future__ import annotations

import datetime as dt
import math
import uuid
import xml.etree.ElementTree as ET
import zipfile
from dataclasses import replace
from html.parser import HTMLParser
from pathlib import Path

import junitparser
import numpy as np
import pandas as pd

from modelcheck.core.model import REPORT_MEMBER_COLUMNS
from modelcheck.report.bcf import write_bcf
from modelcheck.report.csv_report import write_csv
from modelcheck.report.html import ratio_histogram, write_html
from modelcheck.report.junit import write_junit
from tests.report_runs import GID_A, GID_B, GID_C, GID_D, NASTY, make_run

NOW = dt.datetime(2026, 3, 4, 5, 6, 7, tzinfo=dt.UTC)


# ------------------------------------------------------------------------------------ CSV
def test_csv_reads_back_with_pandas_one_row_per_result(tmp_path):
    run = make_run()
    p = tmp_path / "r.csv"
    write_csv(run, p)
    df = pd.read_csv(p, keep_default_na=False, na_values=[""])
    assert len(df) == len(run.results)
    assert list(df["global_id"]) == list(run.results["global_id"])  # same order as the results table
    for col in ("model", "global_id", "storey", "section", "material", "check", "load_case", "status",
                "demand", "capacity", "unit", "ratio", "missing"):
        assert col in df.columns
    fail = df[df["status"] == "fail"]
    assert list(fail["global_id"]) == [GID_B]
    row = fail.iloc[0]
    assert (row["load_case"], row["unit"], row["storey"], row["section"], row["material"]) == \
        ("LC2", "MPa", "Level 2", "RD20", "S235")
    # ratio = demand / capacity (definition of the demand/capacity ratio): 150 / 120
    assert math.isclose(row["ratio"], row["demand"] / row["capacity"], rel_tol=1e-6)
    assert math.isclose(row["ratio"], 1.25, rel_tol=1e-6)
    un = df[df["global_id"] == GID_C]
    assert set(un["status"]) == {"unchecked"} and un["ratio"].isna().all()
    assert "area (profile" in un.iloc[0]["missing"]
    # text with quotes, ampersands and angle brackets survives the round trip
    assert df.loc[df["global_id"] == GID_D, "name"].iloc[0] == NASTY


def test_csv_is_byte_identical_for_the_same_run(tmp_path):
    a, b = tmp_path / "a.csv", tmp_path / "b.csv"
    write_csv(make_run(), a)
    write_csv(make_run(), b)
    assert a.read_bytes() == b.read_bytes()


def test_csv_of_a_run_without_results_has_the_header_only(tmp_path):
    run = make_run()
    run = replace(run, results=run.results.iloc[0:0])
    p = tmp_path / "r.csv"
    write_csv(run, p)
    df = pd.read_csv(p)
    assert len(df) == 0 and "ratio" in df.columns


# ---------------------------------------------------------------------------------- JUnit
def _junit(tmp_path: Path, run=None, **kw) -> ET.Element:
    p = tmp_path / "r.xml"
    write_junit(run or make_run(), p, **kw)
    return ET.parse(p).getroot()


def test_junit_structure_and_counts(tmp_path):
    root = _junit(tmp_path)
    assert root.tag == "testsuites"
    suites = root.findall("testsuite")
    assert [s.get("name") for s in suites] == ["models/tower_A.ifc", "models/broken.ifc"]
    for s in suites:  # every count attribute agrees with the elements it counts
        cases = s.findall("testcase")
        assert int(s.get("tests")) == len(cases)
        assert int(s.get("failures")) == sum(len(c.findall("failure")) for c in cases)
        assert int(s.get("errors")) == sum(len(c.findall("error")) for c in cases)
        assert int(s.get("skipped")) == sum(len(c.findall("skipped")) for c in cases)
    good, broken = suites
    # one testcase per member × check: A 2, B 2, C 2, D 1 (as built in report_runs)
    assert int(good.get("tests")) == 7
    assert (good.get("failures"), good.get("skipped"), good.get("errors")) == ("1", "2", "0")
    assert int(root.get("tests")) == 8 and root.get("errors") == "1"
    failure = good.find("testcase/failure")
    case = good.find("testcase[failure]")
    # the test name carries the tag, else the name, beside the GlobalId (B has no tag)
    assert case.get("name") == f"{GID_B} (Hanger H2) axial_stress"
    assert case.get("classname") == "tower_A_ifc.IfcMember"
    msg = failure.get("message")
    for part in ("axial_stress", "1.25", "150 MPa", "120 MPa", "LC2", GID_B):
        assert part in msg
    assert "storey: Level 2" in failure.text and "load case: LC2" in failure.text
    skipped = [c for c in good.findall("testcase") if c.find("skipped") is not None]
    assert {c.get("name").split()[0] for c in skipped} == {GID_C}
    assert "area (profile" in skipped[0].find("skipped").get("message")
    err = broken.find("testcase/error")
    assert err is not None and "not an IFC-SPF file" in err.get("message")


def test_junit_strict_makes_unchecked_failures(tmp_path):
    good = _junit(tmp_path, strict=True).find("testsuite")
    assert (good.get("failures"), good.get("skipped")) == ("3", "0")
    types = sorted(f.get("type") for f in good.iter("failure"))
    assert types == ["axial_stress", "unchecked", "unchecked"]


def test_junit_reads_with_junitparser(tmp_path):
    p = tmp_path / "r.xml"
    write_junit(make_run(d_demand=200.0), p)
    xml = junitparser.JUnitXml.fromfile(str(p))
    suites = {s.name: s for s in xml}
    good = suites["models/tower_A.ifc"]
    assert (good.tests, good.failures, good.skipped, good.errors) == (7, 2, 2, 0)
    results = {c.name: [type(r).__name__ for r in c.result] for c in good}
    assert results[f"{GID_B} (Hanger H2) axial_stress"] == ["Failure"]
    assert results[f"{GID_C} (Hanger H3) slenderness"] == ["Skipped"]
    assert results[f"{GID_A} (H1) axial_stress"] == []      # the tag rather than the name
    # the member name with XML special characters comes back intact in the name and failure text
    d_case = next(c for c in good if c.name == f"{GID_D} ({NASTY}) axial_stress")
    assert f"name: {NASTY}" in d_case.result[0].text
    assert suites["models/broken.ifc"].errors == 1


def _cases(root: ET.Element) -> dict[str, tuple[str, dict[str, str], ET.Element]]:
    """GlobalId + check -> (result element tag or "pass", testcase properties, testcase)."""
    out = {}
    for c in root.iter("testcase"):
        props = {p.get("name"): p.get("value") for p in c.iterfind("properties/property")}
        kind = next((el.tag for el in c if el.tag in ("failure", "skipped", "error")), "pass")
        name = c.get("name")   # GLOBALID (TAG) CHECK
        out[f"{name.split(' ', 1)[0]} {name.rsplit(' ', 1)[-1]}"] = (kind, props, c)
    return out


def test_junit_under_fail_on_new_fails_only_what_the_exit_code_counts(tmp_path):
    """Baseline: B fails axial stress in LC2. Now: B still fails there, and newly in LC1 (a lower
    ratio, not the governing case); D fails newly. A <failure> exists exactly for each result the
    exit code counts (compare.new_problems)."""
    from modelcheck.report.check_json import check_document
    from modelcheck.report.compare import compare, new_problems

    base_run = make_run(broken=None)
    now_run = make_run(d_demand=200.0, broken=None)
    res = now_run.results.copy()
    lc1 = (res["global_id"] == GID_B) & (res["load_case"] == "LC1")
    # ratio = demand / capacity (definition): 126/120 = 1.05 fails, below LC2's 1.25
    res.loc[lc1, ["demand", "ratio", "status"]] = [126.0, 126.0 / 120.0, "fail"]
    now_run = replace(now_run, results=res)
    cmp = compare(check_document(now_run), check_document(base_run))
    assert new_problems(cmp) == 2
    root = _junit(tmp_path, now_run, only_new=cmp)
    cases = _cases(root)
    failures = {k for k, (kind, _, _) in cases.items() if kind == "failure"}
    assert failures == {f"{GID_B} axial_stress", f"{GID_D} axial_stress"}
    kind, props, case = cases[f"{GID_B} axial_stress"]
    assert props["load_case"] == "LC1" and props["baseline"] == "new"   # the new row, not the governing one
    assert "LC1" in case.find("failure").get("message")
    # without the new LC1 row, B's failure is known: skipped, with the reason
    cmp_old = compare(check_document(make_run(d_demand=200.0, broken=None)), check_document(base_run))
    cases = _cases(_junit(tmp_path, make_run(d_demand=200.0, broken=None), only_new=cmp_old))
    kind, props, case = cases[f"{GID_B} axial_stress"]
    assert kind == "skipped" and props["baseline"] == "not new" and props["status"] == "fail"
    assert "as in the baseline" in case.find("skipped").get("message")
    assert int(root.get("failures")) == 2
    # unchecked: skipped unless --strict and new; C was unchecked in the baseline too
    for strict in (False, True):
        cases = _cases(_junit(tmp_path, now_run, only_new=cmp, strict=strict))
        assert cases[f"{GID_C} slenderness"][0] == "skipped"
        assert sum(k == "failure" for k, _, _ in cases.values()) == new_problems(cmp, strict=strict)


def test_junit_under_strict_fails_a_newly_unchecked_member(tmp_path):
    from modelcheck.report.check_json import check_document
    from modelcheck.report.compare import compare, new_problems

    base_run = make_run(broken=None)
    now_run = make_run(broken=None)
    res = now_run.results.copy()
    a = (res["global_id"] == GID_A) & (res["check"] == "slenderness")
    res.loc[a, ["demand", "capacity", "ratio", "status"]] = [math.nan, math.nan, math.nan, "unchecked"]
    res.loc[a, "missing"] = pd.Series([["r_min (profile)"]] * int(a.sum()), index=res.index[a])
    now_run = replace(now_run, results=res)
    cmp = compare(check_document(now_run), check_document(base_run))
    for strict in (False, True):
        cases = _cases(_junit(tmp_path, now_run, only_new=cmp, strict=strict))
        failures = {k for k, (kind, _, _) in cases.items() if kind == "failure"}
        assert len(failures) == new_problems(cmp, strict=strict)
        assert failures == ({f"{GID_A} slenderness"} if strict else set())
        assert cases[f"{GID_B} axial_stress"][0] == "skipped"   # failing in the baseline too


def test_junit_is_byte_identical_for_the_same_run(tmp_path):
    a, b = tmp_path / "a.xml", tmp_path / "b.xml"
    write_junit(make_run(), a)
    write_junit(make_run(), b)
    assert a.read_bytes() == b.read_bytes()


# ------------------------------------------------------------------------------------ BCF
def _strict_bcf_handler():
    """bcf-client's XML handler, made to fail on any element or attribute the BCF 2.1 model lacks."""
    from bcf.xml_parser import XmlParserSerializer
    from xsdata.formats.dataclass.parsers import XmlParser
    from xsdata.formats.dataclass.parsers.config import ParserConfig

    h = XmlParserSerializer()
    h.parser = XmlParser(config=ParserConfig(fail_on_unknown_properties=True, fail_on_unknown_attributes=True,
                                             fail_on_converter_warnings=True), context=h.context)
    return h


def test_bcf_reads_back_with_the_bcf_library(tmp_path):
    from bcf.v2.bcfxml import BcfXml

    p = tmp_path / "r.bcf"
    assert write_bcf(make_run(), p, now=NOW) == 1
    with BcfXml.load(p, xml_handler=_strict_bcf_handler()) as bcf:
        assert bcf.version.version_id == "2.1"
        topics = bcf.topics
        assert len(topics) == 1  # one topic per failing member
        (guid, handler), = topics.items()
        topic = handler.topic
        assert uuid.UUID(guid).version == 5 and topic.guid == guid
        for part in ("axial_stress", "1.25", "Hanger H2"):
            assert part in topic.title
        for part in ("LC2", "demand 150 MPa", "capacity 120 MPa", "ratio 1.25", GID_B, "storey Level 2"):
            assert part in topic.description
        assert topic.creation_date.to_datetime() == NOW
        assert topic.labels == ["axial_stress"]
        assert handler.header.file[0].filename == "tower_A.ifc"
        (vp,) = handler.viewpoints.values()
        selected = [c.ifc_guid for c in vp.visualization_info.components.selection.component]
        assert selected == [GID_B]


def test_bcf_files_follow_the_2_1_schema_order(tmp_path):
    """Each XML file equals what the BCF library writes after reading it: element order, names
    and values are those of its BCF 2.1 data model (generated from the standard's XSDs)."""
    import bcf.v2.model as mdl

    p = tmp_path / "r.bcf"
    write_bcf(make_run(d_demand=200.0), p, now=NOW, include_unchecked=True)
    h = _strict_bcf_handler()
    classes = {"markup.bcf": mdl.Markup, "viewpoint.bcfv": mdl.VisualizationInfo, "bcf.version": mdl.Version,
               "project.bcfp": mdl.ProjectExtension}
    with zipfile.ZipFile(p) as zf:
        names = zf.namelist()
        assert sum(n.endswith("markup.bcf") for n in names) == 3  # B, D fail; C unchecked
        for name in names:
            ours = zf.read(name).decode("utf-8")
            theirs = h.serialize(h.parse(ours.encode("utf-8"), classes[name.rsplit("/", 1)[-1]]))
            assert ET.canonicalize(ours, strip_text=True) == ET.canonicalize(theirs, strip_text=True), name


def test_bcf_unchecked_topics_only_when_asked(tmp_path):
    from bcf.v2.bcfxml import BcfXml

    p = tmp_path / "r.bcf"
    assert write_bcf(make_run(), p, now=NOW, include_unchecked=True) == 2
    with BcfXml.load(p, xml_handler=_strict_bcf_handler()) as bcf:
        types = sorted(t.topic.topic_type for t in bcf.topics.values())
        assert types == ["Error", "Warning"]
        warn = next(t.topic for t in bcf.topics.values() if t.topic.topic_type == "Warning")
        assert GID_C in warn.description and "area (profile" in warn.description


def test_bcf_is_deterministic_and_guids_follow_the_member(tmp_path):
    a, b, c = tmp_path / "a.bcf", tmp_path / "b.bcf", tmp_path / "c.bcf"
    write_bcf(make_run(), a, now=NOW)
    write_bcf(make_run(), b, now=NOW)
    assert a.read_bytes() == b.read_bytes()
    # a moved folder keeps the topic GUIDs (they hang on the file name, GlobalId and check)
    write_bcf(make_run(model="elsewhere/tower_A.ifc"), c, now=NOW)
    folders = [{n.split("/")[0] for n in zipfile.ZipFile(x).namelist() if "/" in n} for x in (a, c)]
    assert folders[0] == folders[1] and len(folders[0]) == 1


def test_bcf_escapes_model_text(tmp_path):
    p = tmp_path / "r.bcf"
    write_bcf(make_run(d_demand=200.0), p, now=NOW)
    with zipfile.ZipFile(p) as zf:
        descs = [ET.fromstring(zf.read(n)).findtext("Topic/Description") for n in zf.namelist()
                 if n.endswith("markup.bcf")]
    assert any(NASTY in d for d in descs)


# ----------------------------------------------------------------------------------- HTML
class _Collect(HTMLParser):
    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict[str, str | None]]] = []
        self.text: list[str] = []
        self.stack: list[str] = []
        self.cells: list[list[str]] = []  # text of <td>s per table row

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        if tag == "tr":
            self.cells.append([])
        if tag == "td":
            self.cells[-1].append("")
        self.stack.append(tag)

    def handle_endtag(self, tag):
        if tag in self.stack:
            while self.stack and self.stack.pop() != tag:
                pass

    def handle_data(self, data):
        self.text.append(data)
        if "td" in self.stack and self.cells and self.cells[-1]:
            self.cells[-1][-1] += data


def _html(tmp_path: Path, run=None) -> tuple[str, _Collect]:
    p = tmp_path / "r.html"
    write_html(run or make_run(d_demand=200.0), p, now=NOW)
    text = p.read_text(encoding="utf-8")
    parser = _Collect()
    parser.feed(text)
    parser.close()
    return text, parser


def test_html_is_self_contained(tmp_path):
    text, parsed = _html(tmp_path)
    tags = {t for t, _ in parsed.tags}
    assert not tags & {"script", "link", "img", "iframe", "object", "embed", "audio", "video", "source"}
    for _, attrs in parsed.tags:
        assert not {"src", "href", "srcset", "data"} & set(attrs)
        assert not any(k.startswith("on") for k in attrs)  # no event handlers
    assert "://" not in text and "url(" not in text and "@import" not in text
    assert "svg" in tags and "style" in tags


def test_html_has_summary_failing_and_unchecked_tables(tmp_path):
    from modelcheck.report.members import CAUTION

    text, parsed = _html(tmp_path)
    assert sum(1 for t, _ in parsed.tags if t == "table") == 3
    rows = [r for r in parsed.cells if r]
    by_gid = {r[0]: r for r in rows}
    assert by_gid[GID_B][9] == "1.25" and by_gid[GID_B][10] == "LC2"   # ratio 150/120 (definition)
    assert by_gid[GID_D][2] == NASTY                                   # escaped, shown as written
    assert "area (profile" in by_gid[GID_C][4]
    summary = next(r for r in rows if r[0] == "models/broken.ifc")
    assert "cannot be read" in summary[-1]
    assert CAUTION in "".join(parsed.text)
    # the model's "<b>" is text, not a tag: the only bold tag is the rule-set name
    assert sum(1 for t, _ in parsed.tags if t == "b") == 1


def test_html_chart_counts_members_per_ratio_bar(tmp_path):
    _, parsed = _html(tmp_path)
    rects = [a for t, a in parsed.tags if t == "rect"]
    assert len(rects) == 16  # 0.0–1.5 in steps of 0.1, and one bar above 1.5


def test_ratio_histogram_matches_numpy():
    rng = np.random.default_rng(7)
    r = rng.uniform(0.0, 2.0, 500)
    labels, counts = ratio_histogram(r)
    # numpy.histogram as the reference, on edges 0, 0.1, …, 1.5, ∞ (no sample sits on an edge)
    ref, _ = np.histogram(r, bins=[*np.round(np.arange(0, 1.51, 0.1), 10), np.inf])
    assert counts == list(ref) and len(labels) == 16
    # a ratio of exactly 1.0 passes (ratio ≤ 1, common practice): it belongs to the 0.9–1.0 bar
    assert ratio_histogram(np.array([1.0]))[1][9] == 1


def test_the_console_shows_the_worst_failures_and_says_how_many_more(monkeypatch):
    """A model with thousands of failures: the console lists the worst, worst first, names the
    total and where every one is (common practice: a screen report stays readable)."""
    import io

    from rich.console import Console

    from modelcheck.report import console as con
    from tests.report_runs import member_row, result_row, results_frame

    monkeypatch.setattr(con, "MAX_FAILING_ROWS", 5)
    gids = [f"G{i:04d}" for i in range(12)]
    rows = [result_row("m.ifc", g, "axial_stress", "LC1", 121.0 + i, 120.0, name=f"H{i}") for i, g in enumerate(gids)]
    members = pd.DataFrame([member_row("m.ifc", g, name=f"H{i}") for i, g in enumerate(gids)]
                           + [member_row("m.ifc", gids[0], name="H0")],   # a GlobalId given twice
                           columns=list(REPORT_MEMBER_COLUMNS))
    buf = io.StringIO()
    Console(file=buf, width=250).print(con.failing_table(results_frame(rows), members, details=True, width=250))
    text = buf.getvalue()
    assert "Failing members: 12" in text and "the worst 5 shown" in text
    shown = [g for g in gids if g in text]
    assert shown == gids[-5:]      # the five highest ratios


def test_the_html_tables_show_the_first_rows_and_count_the_rest(tmp_path, monkeypatch):
    """Failing rows worst first and unchecked members, each cut at MAX_ROWS with the number left."""
    from modelcheck.report import html
    from tests.report_runs import member_row, result_row, results_frame

    monkeypatch.setattr(html, "MAX_ROWS", 3)
    gids = [f"G{i:04d}" for i in range(7)]
    rows = [result_row("m.ifc", g, "axial_stress", "LC1", 121.0 + i, 120.0, name=f"H{i}") for i, g in enumerate(gids)]
    rows += [result_row("m.ifc", f"U{i:04d}", "axial_stress", "LC1", None, None, name=f"U{i}",
                        missing=["area (profile)"]) for i in range(5)]
    members = pd.DataFrame([member_row("m.ifc", g) for g in gids], columns=list(REPORT_MEMBER_COLUMNS))
    run = make_run()
    run = replace(run, results=results_frame(rows), members=members)
    out = tmp_path / "r.html"
    write_html(run, out, now=NOW)
    text = out.read_text(encoding="utf-8")
    assert [g for g in gids if f"<code>{g}</code>" in text] == gids[-3:]   # the three highest ratios
    assert "… and 4 more rows" in text
    assert sum(f"<code>U{i:04d}</code>" in text for i in range(5)) == 3 and "… and 2 more rows" in text


def test_html_chart_draws_only_checked_members_and_counts_as_the_summary(tmp_path):
    """A member whose second check could not run is unchecked: its passing first ratio is not drawn
    (a partly checked member is never shown as passing, common practice); the bars add up to the
    summary's "Checked" count."""
    from tests.report_runs import result_row, results_frame

    run = make_run(broken=None)
    extra = [result_row("models/tower_A.ifc", "0eeeeeeeeeeeeeeeeeeeeE", "axial_stress", "LC1", 12.0, 120.0),
             result_row("models/tower_A.ifc", "0eeeeeeeeeeeeeeeeeeeeE", "slenderness", None, None, None, unit="",
                        missing=["r_min (profile)"])]
    run = replace(run, results=results_frame(run.results.to_dict("records") + extra))
    _, parsed = _html(tmp_path, run)
    bars = [int(t.rsplit(": ", 1)[1]) for t in parsed.text if "–" in t and ": " in t and t.rsplit(": ", 1)[1].isdigit()]
    summary = next(r for r in parsed.cells if r and r[0] == "models/tower_A.ifc")
    # A, B, D are checked; C and E are not (E's 12/120 = 0.1 would sit in the lowest bar)
    assert summary[3] == "3" and summary[6] == "2"
    assert sum(bars) == 3
    svg = next(a for t, a in parsed.tags if t == "svg")
    assert svg["data-members"] == "3"


def test_html_failing_table_lists_clause_message_replacement_and_member_warnings(tmp_path):
    run = make_run(broken=None)
    res = run.results.copy()
    b = (res["global_id"] == GID_B) & (res["load_case"] == "LC2")
    res["clause"] = "D2(a)"
    res["suggestion"] = [{"designation": "RD24", "ratio": 0.87} if x else None for x in b]
    run = replace(run, results=res)
    members = run.members.copy()
    members["warnings"] = [[], ["inconsistent area: profile 314 mm², quantity 300 mm²", "second <warning>"],
                           [], []]
    run = replace(run, members=members)
    _, parsed = _html(tmp_path, run)
    row = next(r for r in parsed.cells if r and r[0] == GID_B)
    assert row[6] == "axial_stressD2(a)" and row[9] == "1.25" and row[10] == "LC2"
    assert row[11] == "tension" and row[12] == "RD24 (ratio 0.87)"
    # each warning listed, not folded into a count; markup in a warning is text
    assert row[13] == "inconsistent area: profile 314 mm², quantity 300 mm²second <warning>"


def test_html_baseline_tables_show_name_and_tag(tmp_path):
    from modelcheck.report.check_json import check_document
    from modelcheck.report.compare import compare

    base = check_document(make_run(b_demand=60.0, broken=None))            # B passed then
    now_run = make_run(d_demand=200.0, broken=None)                          # B and D fail now
    cmp = compare(check_document(now_run), base)
    p = tmp_path / "r.html"
    write_html(now_run, p, now=NOW, comparison=cmp)
    parser = _Collect()
    parser.feed(p.read_text(encoding="utf-8"))
    new = {r[1]: r for r in parser.cells if r and r[0] == "tower_A.ifc"}
    assert set(new) == {GID_B, GID_D}
    assert new[GID_B][2] == "Hanger H2" and new[GID_D][2] == NASTY
    assert new[GID_B][3:5] == ["axial_stress", "LC2"]
