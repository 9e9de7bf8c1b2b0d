"""Every format of one `check` run tells the same story.

One run writes console, JSON, CSV, JUnit, BCF and HTML (and the annotated IFC); each is read back
with a parser of its own kind (json, csv, xml.etree, zipfile + xml.etree, html.parser,
ifcopenshell) and reduced to the same facts:

* per model, the members that pass, fail and are unchecked (a member counts once, by its worst
  status over all its checks and load cases: fail > unchecked > pass);
* the failing (member, check, load case) results; formats that show a member × check on its
  governing load case give the failing (member, check) set;
* the exit code: a JUnit ``<failure>`` exists exactly when the exit code counts the result (plain,
  ``--strict``, ``--fail-on new`` with a baseline, and both).

Models: the bundled samples with their load tables, and a model built here whose members pass,
fail, lack their force (unchecked), lack their length (a passing stress check but unchecked
slenderness and elongation: unchecked as a member) or fail one check while another cannot run.
"""

from __future__ import annotations

import csv
import gc
import json
import math
import re
import xml.etree.ElementTree as ET
import zipfile
from collections import Counter
from dataclasses import dataclass, field
from html.parser import HTMLParser
from pathlib import Path

import ifcopenshell
import ifcopenshell.util.element as ue
import pytest

from modelcheck.testing.author import ModelBuilder
from tests.corpus import run_inprocess
from tests.helpers import REPO

ALL = "console,json,csv,junit,bcf,html"
RANK = {"fail": 0, "unchecked": 1, "pass": 2}   # a member's status is its worst result's


@dataclass(frozen=True)
class Proc:
    returncode: int
    stdout: str
    stderr: str


@pytest.fixture
def check(capsys, monkeypatch):
    """``modelcheck check ARGS --jobs 1`` in this process (from the repository, a wide console:
    the summary lines are read back whole); no traceback, no internal error."""
    monkeypatch.chdir(REPO)
    monkeypatch.setenv("COLUMNS", "400")

    def _run(*args: str) -> Proc:
        out = run_inprocess(capsys, ["check", *args, "--jobs", "1"])
        gc.enable()   # the command turns the cyclic collector off for its own run
        return Proc(out.code, out.stdout, out.stderr)

    return _run


# ------------------------------------------------------------------------------ the stories
@dataclass
class Story:
    """What one format says about a run."""

    status: dict[str, dict[str, str]] = field(default_factory=dict)   # model -> GlobalId -> status
    failing: set[tuple[str, ...]] = field(default_factory=set)          # (model, gid, check[, case])

    def counts(self) -> dict[str, Counter[str]]:
        return {m: Counter(s.values()) for m, s in self.status.items()}

    def note(self, model: str, gid: str, status: str) -> None:
        now = self.status.setdefault(model, {}).get(gid)
        if now is None or RANK[status] < RANK[now]:
            self.status[model][gid] = status


def from_json(path: Path) -> tuple[Story, dict]:
    doc = json.loads(path.read_text(encoding="utf-8"))
    story = Story()
    for r in doc["results"]:
        story.note(r["model"], r["global_id"], r["status"])
        if r["status"] == "fail":
            story.failing.add((r["model"], r["global_id"], r["check"], r["load_case"] or ""))
    return story, doc


def from_csv(path: Path) -> tuple[Story, Counter[str]]:
    story, rows = Story(), Counter()
    with path.open(newline="", encoding="utf-8") as fh:
        for r in csv.DictReader(fh):
            rows[r["status"]] += 1
            story.note(r["model"], r["global_id"], r["status"])
            if r["status"] == "fail":
                story.failing.add((r["model"], r["global_id"], r["check"], r["load_case"]))
    return story, rows


@dataclass
class JUnitFacts:
    story: Story                         # statuses from the element kinds: failure, skipped, none
    failures: set[tuple[str, str, str]]  # (model, gid, check) of every <failure>
    failure_count: int                   # the root's failures attribute
    names: list[str]
    nothing_checked: set[str]            # models with the failing "members checked" testcase


def from_junit(path: Path) -> JUnitFacts:
    root = ET.parse(path).getroot()
    story, failures, names, nothing = Story(), set(), [], set()
    for suite in root.iter("testsuite"):
        model = suite.get("name")
        for case in suite.iter("testcase"):
            kinds = {el.tag for el in case}
            if "error" in kinds:     # an unreadable model's "read model" case
                continue
            if case.get("name") == "members checked":   # a model of which nothing could be checked
                assert case.find("failure").get("type") == "nothing-checked"
                nothing.add(model)
                continue
            name = case.get("name")   # GLOBALID (TAG) CHECK
            names.append(name)
            gid, check = name.split(" ", 1)[0], name.rsplit(" ", 1)[-1]
            status = "fail" if "failure" in kinds else "unchecked" if "skipped" in kinds else "pass"
            story.note(model, gid, status)
            if "failure" in kinds:
                failures.add((model, gid, check))
    return JUnitFacts(story, failures, int(root.get("failures")), names, nothing)


def from_bcf(path: Path) -> Story:
    """Failing members only (BCF holds a topic per failing member, labelled with its failing checks)."""
    story = Story()
    with zipfile.ZipFile(path) as zf:
        for name in zf.namelist():
            if not name.endswith("/markup.bcf"):
                continue
            markup = ET.fromstring(zf.read(name))
            view = ET.fromstring(zf.read(name.replace("markup.bcf", "viewpoint.bcfv")))
            model = markup.findtext("Header/File/Reference")
            gid = view.find("Components/Selection/Component").get("IfcGuid")
            assert markup.find("Topic").get("TopicType") == "Error"
            story.note(model, gid, "fail")
            for label in markup.iterfind("Topic/Labels"):
                story.failing.add((model, gid, label.text))
    return story


class _Tables(HTMLParser):
    """Every table as rows of cells, each cell the list of its text pieces; the chart's bars."""

    def __init__(self) -> None:
        super().__init__()
        self.tables: list[list[list[list[str]]]] = []
        self.bars: list[int] = []
        self.svg: dict[str, str | None] = {}
        self._in: list[str] = []

    def handle_starttag(self, tag, attrs):
        self._in.append(tag)
        if tag == "table":
            self.tables.append([])
        elif tag == "tr":
            self.tables[-1].append([])
        elif tag in ("td", "th"):
            self.tables[-1][-1].append([])
        elif tag == "svg":
            self.svg = dict(attrs)

    def handle_startendtag(self, tag, attrs):
        pass

    def handle_endtag(self, tag):
        while self._in and self._in.pop() != tag:
            pass

    def handle_data(self, data):
        if "title" in self._in and "svg" in self._in:   # "<bar label>: <count>"
            self.bars.append(int(data.rsplit(": ", 1)[1]))
        elif ("td" in self._in or "th" in self._in) and data.strip():
            self.tables[-1][-1][-1].append(data)


@dataclass
class HTMLFacts:
    counts: dict[str, Counter[str]]
    checked: dict[str, int]
    failing: set[tuple[str, str, str, str]]    # (model, gid, check, governing load case)
    chart_total: int
    chart_members: int


def from_html(path: Path) -> HTMLFacts:
    p = _Tables()
    p.feed(path.read_text(encoding="utf-8"))
    p.close()

    def table(first: list[str]) -> list[dict[str, list[str]]]:
        for t in p.tables:
            head = ["".join(c) for c in t[0]]
            if head[: len(first)] == first:
                return [dict(zip(head, row, strict=True)) for row in t[1:]]
        return []

    counts, checked = {}, {}
    for r in table(["Model", "Schema", "Members", "Checked"]):
        model = "".join(r["Model"])
        counts[model] = Counter({s: int("".join(r[s.capitalize()])) for s in ("pass", "fail", "unchecked")})
        checked[model] = int("".join(r["Checked"]))
    failing = {("".join(r["Model"]), "".join(r["GlobalId"]), r["Check / clause"][0], "".join(r["Load case"]))
               for r in table(["GlobalId", "Class", "Name / tag", "Storey"])}
    return HTMLFacts(counts, checked, failing, sum(p.bars), int(p.svg.get("data-members") or 0))


_SUMMARY = re.compile(r"(\d+) pass, (\d+) fail, (\d+) unchecked")


def from_console(text: str, models: list[str]) -> dict[str, Counter[str]]:
    out = {}
    for m in models:
        line = next(ln for ln in text.splitlines() if m in ln and _SUMMARY.search(ln))
        n_pass, n_fail, n_un = (int(x) for x in _SUMMARY.search(line).groups())
        out[m] = Counter({"pass": n_pass, "fail": n_fail, "unchecked": n_un})
    return out


def from_annotated(folder: Path, models: list[str]) -> dict[str, dict[str, dict]]:
    """model -> GlobalId -> its MC_CheckResult properties (the copies are named by the model's file name)."""
    out = {}
    for m in models:
        f = ifcopenshell.open(str(folder / Path(m).name))
        out[m] = {el.GlobalId: ue.get_psets(el)["MC_CheckResult"] for el in f.by_type("IfcProduct")
                  if "MC_CheckResult" in ue.get_psets(el)}
    return out


def governing_failures(failing_rows: set[tuple[str, ...]], doc: dict) -> set[tuple[str, str, str, str]]:
    """(model, gid, check, load case of the highest failing ratio) from the JSON rows."""
    best: dict[tuple[str, str, str], tuple[float, str]] = {}
    for r in doc["results"]:
        if r["status"] != "fail":
            continue
        k = (r["model"], r["global_id"], r["check"])
        if k not in best or r["ratio"] > best[k][0]:
            best[k] = (r["ratio"], r["load_case"] or "")
    assert {k[:3] for k in failing_rows} == set(best)
    return {(*k, case) for k, (_, case) in best.items()}


# ------------------------------------------------------------------------------ one run, all formats
def assert_one_story(out: Path, proc: Proc, *, strict: bool = False,
                     annotated: Path | None = None) -> tuple[Story, dict]:
    """Read every format in ``out`` back and check that they agree; returns the JSON story and doc."""
    js, doc = from_json(out / "modelcheck-report.json")
    models = [m["path"] for m in doc["models"] if not m["error"]]
    counts = {m: js.counts().get(m, Counter()) for m in models}

    cs, csv_rows = from_csv(out / "modelcheck-report.csv")
    assert cs.status == js.status and cs.failing == js.failing
    # JSON's summary counts results (member × check × load case), as the CSV has rows
    assert {k: doc["summary"][k] for k in ("pass", "fail", "unchecked")} == \
        {k: csv_rows[k] for k in ("pass", "fail", "unchecked")}

    ju = from_junit(out / "modelcheck-report.xml")
    assert ju.failure_count == len(ju.failures) + len(ju.nothing_checked)
    # members found and none checked (no member passes or fails): the run verified nothing
    nothing = {m["path"] for m in doc["models"] if not m["error"] and m["members"] > 0
               and not {"pass", "fail"} & set(js.status.get(m["path"], {}).values())}
    assert ju.nothing_checked == nothing
    for name in ju.names:   # the tag or name stands beside the GlobalId (where the member has one)
        assert re.fullmatch(r"\S{22}( \(.+\))? \S+", name), name
    # a <failure> exists exactly for what the exit code counts
    cases = _cases(doc)
    if "comparison" in doc:     # --fail-on new: the new problems only
        counted = new_problem_cases(doc, strict)
    elif strict:                # every member × check that does not pass
        counted = {k for k, st in cases.items() if st != "pass"}
    else:
        counted = {k for k, st in cases.items() if st == "fail"}
        assert ju.story.status == js.status
    assert ju.failures == counted
    assert proc.returncode == (1 if counted or nothing else 0), proc.stderr

    bcf = from_bcf(out / "modelcheck-report.bcfzip")
    assert bcf.status == {m: {g: s for g, s in st.items() if s == "fail"} for m, st in js.status.items()
                          if "fail" in st.values()}
    assert bcf.failing == {k[:3] for k in js.failing}

    html = from_html(out / "modelcheck-report.html")
    assert html.counts == counts
    assert html.checked == {m: c["pass"] + c["fail"] for m, c in counts.items()}
    # the chart draws the checked members, no more: its bars add up to the summary's checked count
    assert html.chart_total == html.chart_members == sum(html.checked.values())
    assert html.failing == governing_failures(js.failing, doc)

    # (the summary line goes to standard error when standard output carries a file report)
    assert from_console(proc.stdout + "\n" + proc.stderr, models) == counts

    if annotated is not None:
        ann = from_annotated(annotated, models)
        for m in models:
            assert {g: p["Status"] for g, p in ann[m].items()} == js.status[m]
            for gid, props in ann[m].items():
                # a viewer colouring by WorstRatio never sees an unverified member
                assert ("WorstRatio" in props) == (props["Status"] != "unchecked")
                if props["Status"] == "fail":
                    assert props["WorstRatio"] > 1.0
                    assert (m, gid, props["GoverningCheck"]) in {k[:3] for k in js.failing}
    return js, doc


def _cases(doc: dict) -> dict[tuple[str, str, str], str]:
    """(model, gid, check) -> worst status over its load cases, from the JSON results."""
    out: dict[tuple[str, str, str], str] = {}
    for r in doc["results"]:
        k = (r["model"], r["global_id"], r["check"])
        if k not in out or RANK[r["status"]] < RANK[out[k]]:
            out[k] = r["status"]
    return out


def new_problem_cases(doc: dict, strict: bool) -> set[tuple[str, str, str]]:
    """(model path, gid, check) of every result the comparison counts as new (its model names are
    file names here: no two models share one)."""
    by_name = {Path(m["path"]).name: m["path"] for m in doc["models"]}
    cmp = doc["comparison"]
    lists = cmp["new_failures"] + (cmp["new_unchecked"] if strict else [])
    return {(by_name[e["model"]], e["global_id"], e["check"]) for e in lists}


# ------------------------------------------------------------------------------ the models
def samples_run(check, tmp: Path, *extra: str) -> tuple[Path, Proc]:
    tmp.mkdir(parents=True, exist_ok=True)
    out = tmp / "out"
    proc = check("sample_models", "--rules", "steel-asd-us", "--loads", "sample_models/*-forces.csv",
               "--format", ALL, "--output", str(out), *extra)
    return out, proc


def test_the_sample_models_tell_one_story_in_every_format(check, tmp_path):
    annotated = tmp_path / "annotated"
    out, proc = samples_run(check, tmp_path, "--annotate", str(annotated))
    assert proc.returncode == 1, proc.stderr       # the samples fail on purpose
    js, doc = assert_one_story(out, proc, annotated=annotated)
    assert len(js.status) == 3 and all(Counter(s.values())["fail"] for s in js.status.values())


def test_the_samples_against_themselves_as_baseline_fail_nothing(check, tmp_path):
    """--fail-on new with the run's own report as baseline: exit 0, and the JUnit file has no
    <failure> although members fail (they are known: skipped with the reason)."""
    base_out, base = samples_run(check, tmp_path / "base")
    assert base.returncode == 1
    for strict in ((), ("--strict",)):
        out, proc = samples_run(check, tmp_path / f"new{len(strict)}", "--baseline",
                                str(base_out / "modelcheck-report.json"), "--fail-on", "new", *strict)
        assert proc.returncode == 0, proc.stdout + proc.stderr
        _, doc = assert_one_story(out, proc, strict=bool(strict))
        ju = from_junit(out / "modelcheck-report.xml")
        assert ju.failures == set() and ju.failure_count == 0
        root = ET.parse(out / "modelcheck-report.xml").getroot()
        known = [c for c in root.iter("testcase")
                 if "as in the baseline" in (c.find("skipped").get("message") if c.find("skipped") is not None else "")]
        # each failing member × check (and, with --strict, each unchecked one) is there, skipped as known
        judged = {k for k, st in _cases(doc).items() if st == "fail" or (strict and st == "unchecked")}
        assert len(known) == len(judged) > 0


def built_model(folder: Path, loads: str) -> tuple[Path, Path, dict[str, str]]:
    """Five rods RD20 (A = π·10² = 314.16 mm²) of S355, 1 m long unless said, tagged:
    P1 passes, F1 fails tension in LC1 only, U1 has no force, U2 has no length (its tension check
    passes, slenderness and elongation cannot run), M1 fails tension and has no length."""
    mb = ModelBuilder(schema="IFC4", units="mm")
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", None, 10.0)
    gids = {}
    for tag, length in (("P1", 1000.0), ("F1", 1000.0), ("U1", 1000.0), ("U2", None), ("M1", None)):
        el = mb.member("IfcMember", name=f"Hanger {tag}", tag=tag, profile=rod, material=steel, length=length,
                       body="extrusion" if length else None)
        gids[tag] = el.GlobalId
    folder.mkdir(parents=True, exist_ok=True)
    model = folder / "rods.ifc"
    mb.write(str(model))
    table = folder / "loads.csv"
    table.write_text("tag,load_case,axial_force [kN]\n" + loads, encoding="utf-8")
    return model, table, gids


LOADS = "P1,LC1,10\nP1,LC2,20\nF1,LC1,200\nF1,LC2,10\nU2,LC1,10\nU2,LC2,12\nM1,LC1,200\nM1,LC2,5\n"


def built_run(check, tmp: Path, name: str, model: Path, table: Path, *extra: str) -> tuple[Path, Proc]:
    out = tmp / name
    proc = check(str(model), "--rules", "steel-ec3", "--loads", str(table), "--format", ALL, "--output", str(out),
               *extra)
    return out, proc


def test_a_model_with_pass_fail_and_unchecked_members_tells_one_story(check, tmp_path):
    model, table, gids = built_model(tmp_path / "m", LOADS)
    annotated = tmp_path / "rods.checked.ifc"
    out, proc = built_run(check, tmp_path, "plain", model, table, "--annotate", str(annotated))
    assert proc.returncode == 1, proc.stderr
    js, doc = assert_one_story(out, proc)
    f = ifcopenshell.open(str(annotated))
    ann = {el.GlobalId: ue.get_psets(el)["MC_CheckResult"] for el in f.by_type("IfcMember")}
    m = str(model)
    assert js.status[m] == {gids["P1"]: "pass", gids["F1"]: "fail", gids["U1"]: "unchecked",
                            gids["U2"]: "unchecked", gids["M1"]: "fail"}
    # 200 kN on π·10² mm² of S355: 200e3 / (314.16 · 355) = 1.793 (EN 1993-1-1 6.2.3(2)(a), with the
    # recommended γM0 = 1.0 (from memory))
    ratio = 200e3 / (math.pi * 10.0**2 * 355.0)
    fails = {(g, c, lc) for _, g, c, lc in js.failing}
    assert fails == {(gids["F1"], "tension-plastic", "LC1"), (gids["M1"], "tension-plastic", "LC1")}
    assert math.isclose(ann[gids["F1"]]["WorstRatio"], ratio, rel_tol=1e-4)
    # U2's tension check passes (0.11), but its slenderness and elongation cannot run: no ratio, no bar
    assert ann[gids["U2"]]["Status"] == "unchecked" and "WorstRatio" not in ann[gids["U2"]]
    assert "L:" in ann[gids["U2"]]["Missing"]
    html = from_html(out / "modelcheck-report.html")
    assert html.chart_total == 3        # P1, F1 and M1: the checked members
    names = from_junit(out / "modelcheck-report.xml").names
    assert f"{gids['F1']} (F1) tension-plastic" in names

    strict_out, strict_proc = built_run(check, tmp_path, "strict", model, table, "--strict")
    assert strict_proc.returncode == 1
    assert_one_story(strict_out, strict_proc, strict=True)
    assert from_junit(strict_out / "modelcheck-report.xml").failure_count == \
        sum(1 for s in _cases(doc).values() if s != "pass")


def test_strict_alone_decides_a_model_with_unchecked_members_and_no_failure(check, tmp_path):
    loads = "P1,LC1,10\nP1,LC2,20\nU2,LC1,10\nU2,LC2,12\n"   # F1 and M1 without force: unchecked
    model, table, _ = built_model(tmp_path / "m", loads)
    out, proc = built_run(check, tmp_path, "plain", model, table)
    _, doc = assert_one_story(out, proc)
    assert doc["summary"]["fail"] == 0 and doc["summary"]["unchecked"] > 0
    assert proc.returncode == 0
    assert from_junit(out / "modelcheck-report.xml").failure_count == 0
    out, proc = built_run(check, tmp_path, "strict", model, table, "--strict")
    _, doc = assert_one_story(out, proc, strict=True)
    assert proc.returncode == 1
    assert from_junit(out / "modelcheck-report.xml").failure_count > 0


def test_a_model_of_which_nothing_could_be_checked_fails_in_every_format(check, tmp_path):
    """No member has a force (the table's one row names no member): every one is unchecked, the run
    verified nothing and fails (exit 1); the JUnit file fails it too, and no format counts or draws
    a member as checked."""
    model, table, _ = built_model(tmp_path / "m", "X9,LC1,10\n")
    out, proc = built_run(check, tmp_path, "plain", model, table)
    js, doc = assert_one_story(out, proc)
    assert proc.returncode == 1
    assert set(js.status[str(model)].values()) == {"unchecked"}
    assert from_junit(out / "modelcheck-report.xml").nothing_checked == {str(model)}
    assert from_html(out / "modelcheck-report.html").chart_total == 0


@pytest.mark.parametrize("strict", [False, True])
def test_under_fail_on_new_a_junit_failure_exists_exactly_when_the_exit_code_counts_it(check, tmp_path, strict):
    model, table, gids = built_model(tmp_path / "m", LOADS)
    base_out, base = built_run(check, tmp_path, "base", model, table)
    assert base.returncode == 1
    baseline = ["--baseline", str(base_out / "modelcheck-report.json"), "--fail-on", "new",
                *(["--strict"] if strict else [])]
    # the same revision: the failures are known, nothing is new
    out, proc = built_run(check, tmp_path, "same", model, table, *baseline)
    _, doc = assert_one_story(out, proc, strict=strict)
    assert proc.returncode == 0 and from_junit(out / "modelcheck-report.xml").failures == set()
    # a new revision: P1 now fails in LC2 (new), U2 lost its forces (newly unchecked), F1 still fails
    table.write_text("tag,load_case,axial_force [kN]\nP1,LC1,10\nP1,LC2,200\nF1,LC1,200\nF1,LC2,10\n"
                     "M1,LC1,200\nM1,LC2,5\n", encoding="utf-8")
    out, proc = built_run(check, tmp_path, "next", model, table, *baseline)
    _, doc = assert_one_story(out, proc, strict=strict)
    ju = from_junit(out / "modelcheck-report.xml")
    expected = new_problem_cases(doc, strict)
    assert ju.failures == expected and proc.returncode == (1 if expected else 0)
    m = str(model)
    assert (m, gids["P1"], "tension-plastic") in ju.failures
    assert (m, gids["F1"], "tension-plastic") not in ju.failures          # known from the baseline
    assert ((m, gids["U2"], "tension-plastic") in ju.failures) == strict  # newly unchecked
