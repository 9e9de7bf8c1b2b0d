"""The plug-in points: an output format (of the check, or of the member inventory) and a force
source are each one object and one line in a registry (``modelcheck.report.formats.FORMATS``,
``modelcheck.report.inventory.INVENTORY_FORMATS``, ``modelcheck.loads.sources.FORCE_SOURCES``).

Each test adds one entry to a registry (and touches nothing else) and follows it through the
command: a format added there is offered by ``--format``, gets its default file name and
receives the run (an inventory format: ``members --format`` offers it and it receives the
inventory); a source added there gives forces the join ranks by the source's precedence,
and its name is a key of ``used_by_route``. Were the registry bypassed anywhere on the way, the
entry would not be seen and the test would fail.

The models are built in code; the force arithmetic is plain SI: 1 kN = 1000 N (SI prefix kilo).
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import pandas as pd
import pytest

import modelcheck.loads.sources as sources
import modelcheck.report.formats as formats
import modelcheck.report.inventory as inventory
from modelcheck.common.table import FORCE_COLUMNS
from modelcheck.common.units import Q_
from modelcheck.loads.sources import ForceOptions, SourceForces
from modelcheck.report.formats import OutputFormat, WriteOptions
from modelcheck.report.inventory import Inventory, InventoryFormat, InventoryOptions
from modelcheck.testing.author import ModelBuilder
from tests.corpus import run_inprocess
from tests.helpers import KN, axial_force, round_bar

PROPERTY_KN = 5.0   # the force each member carries as its model property
SURVEY_KN = 2.0     # the force the test's own source gives each member


def model(path: Path, members: int = 3) -> Path:
    """Round bars of S355 in a millimetre model, each with an axial force property of 5 kN."""
    mb = ModelBuilder(schema="IFC4", units="mm")
    s355 = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    for i in range(members):
        mb.member("IfcMember", name=f"Tie {i + 1}", tag=f"T-{i + 1}", profile=round_bar(mb, 20.0), material=s355,
                  length=2000.0, start=(1000.0 * i, 0.0, 0.0), psets=axial_force(PROPERTY_KN * KN))  # N
    p = path / "ties.ifc"
    mb.write(str(p))
    return p


# ------------------------------------------------------------------------------ output formats
@dataclass
class Received:
    """What the test's format was handed (a test's own record, not shared)."""

    calls: list[tuple[Any, Any, WriteOptions]]

    def write(self, run: Any, target: Any, options: WriteOptions) -> None:
        self.calls.append((run, target, options))
        statuses = run.results["status"].tolist()
        text = f"{len(statuses)} results: {statuses.count('fail')} failing\n"
        if isinstance(target, str):
            Path(target).write_text(text, encoding="utf-8")
        else:
            target.write(text)


@pytest.fixture
def tally(monkeypatch: pytest.MonkeyPatch) -> Received:
    """A format 'tally' (a line counting the results) registered by one line."""
    got = Received([])
    monkeypatch.setattr(formats, "FORMATS", formats.FORMATS + (OutputFormat("tally", "tally.txt", got.write),))
    return got


def test_a_registered_format_is_offered_by_format(tally: Received, capsys: pytest.CaptureFixture[str]) -> None:
    from modelcheck.cli import build_parser

    check = next(a for a in build_parser()._subparsers._group_actions[0].choices.values()   # type: ignore[union-attr]
                 if a.prog.endswith("check"))
    assert "tally" in check.format_help()
    out = run_inprocess(capsys, ["check", "nothing.ifc", "--format", "nope", "--no-config"])
    assert out.code == 2
    assert "choose from console, json, csv, junit, bcf, html, tally" in out.stderr


def test_a_registered_format_gets_its_default_file_name_and_the_run(tally: Received, tmp_path: Path,
                                                                      capsys: pytest.CaptureFixture[str]) -> None:
    path = model(tmp_path)
    folder = tmp_path / "reports"
    out = run_inprocess(capsys, ["check", str(path), "--format", "json,tally", "--output", str(folder), "--no-config"],
                        [path])
    assert out.code == 0, out.stderr
    assert sorted(p.name for p in folder.iterdir()) == ["modelcheck-report.json", "modelcheck-report.tally.txt"]
    (run, target, options), = tally.calls
    # written beside the report under a name of its own, then put in its place whole
    assert Path(target).parent == folder and Path(target).name.endswith("modelcheck-report.tally.txt")
    assert not Path(target).exists()
    doc = json.loads((folder / "modelcheck-report.json").read_text(encoding="utf-8"))
    # the same run as the JSON report's: its models, every result (the table: the format needs it), its time
    assert [m.path for m in run.models] == [m["path"] for m in doc["models"]] == [str(path)]
    assert len(run.results) == len(doc["results"]) > 0
    assert {"global_id", "check", "status"} <= set(run.results.columns)
    assert options.now.isoformat() == doc["generated"]
    assert (folder / "modelcheck-report.tally.txt").read_text(encoding="utf-8") == f"{len(run.results)} results: 0 failing\n"


def test_a_registered_format_alone_goes_to_standard_output(tally: Received, tmp_path: Path,
                                                            capsys: pytest.CaptureFixture[str]) -> None:
    path = model(tmp_path)
    out = run_inprocess(capsys, ["check", str(path), "--format", "tally", "--no-config"], [path])
    assert out.code == 0, out.stderr
    (run, _, _), = tally.calls
    assert out.stdout == f"{len(run.results)} results: 0 failing\n"   # written through a file, copied


# ------------------------------------------------------------------------------ inventory formats
@dataclass
class Listed:
    """What the test's inventory format was handed (a test's own record, not shared)."""

    calls: list[tuple[Inventory, str | None, InventoryOptions]]

    def write(self, inv: Inventory, target: str | None, options: InventoryOptions) -> None:
        self.calls.append((inv, target, options))
        text = "".join(f"{m.data.path}: {0 if m.data.members is None else len(m.data.members)} members\n"
                       for m in inv.models)
        if target is None:
            import sys

            sys.stdout.write(text)
        else:
            Path(target).write_text(text, encoding="utf-8")


@pytest.fixture
def count(monkeypatch: pytest.MonkeyPatch) -> Listed:
    """An inventory format 'count' (a line per model counting its members) registered by one line."""
    got = Listed([])
    monkeypatch.setattr(inventory, "INVENTORY_FORMATS",
                        inventory.INVENTORY_FORMATS + (InventoryFormat("count", "txt", got.write),))
    return got


def test_a_registered_inventory_format_is_offered_by_members_format(count: Listed,
                                                                    capsys: pytest.CaptureFixture[str]) -> None:
    from modelcheck.cli import build_parser

    members = next(a for a in build_parser()._subparsers._group_actions[0].choices.values()   # type: ignore[union-attr]
                   if a.prog.endswith("members"))
    assert "{table,json,csv,count}" in members.format_help()
    out = run_inprocess(capsys, ["members", "nothing.ifc", "--format", "nope"])
    assert out.code == 2
    assert "'table', 'json', 'csv', 'count'" in out.stderr
    assert not count.calls


def test_a_registered_inventory_format_receives_the_inventory(count: Listed, tmp_path: Path,
                                                              capsys: pytest.CaptureFixture[str]) -> None:
    """The inventory handed to the format is the one the JSON format writes: the same members,
    display units and allowable forces."""
    path = model(tmp_path)
    out = run_inprocess(capsys, ["members", str(path), "--format", "count", "--capacity", "--units", "US",
                                 "--details"], [path])
    assert out.code == 0, out.stderr
    assert out.stdout == f"{path}: 3 members\n"
    (inv, target, options), = count.calls
    assert target is None and options.details is True
    (m,), = [inv.models]
    assert m.data.path == str(path) and m.units.system == "US"
    assert m.data.members is not None and m.capacity is not None
    doc = json.loads(run_inprocess(capsys, ["members", str(path), "--format", "json", "--capacity", "--units", "US"],
                                   [path]).stdout)
    members = doc["models"][0]["members"]
    assert m.data.members["global_id"].tolist() == m.capacity["global_id"].tolist() == [x["global_id"] for x in members]
    assert m.capacity["tension"].tolist() == [x["capacity"]["tension"] for x in members]
    assert m.capacity["tension"].iloc[0]["unit"] == "kip"   # US display units: forces in kip (common practice)
    assert list(inv.unmatched) == doc["unmatched_force_rows"] == []

    target_file = tmp_path / "count.txt"
    out = run_inprocess(capsys, ["members", str(path), "--format", "count", "--output", str(target_file)], [path])
    assert out.code == 0, out.stderr
    assert out.stdout == ""
    written = Path(count.calls[-1][1])   # beside the list under a name of its own, then put in its place
    assert written.parent == tmp_path and written.name.endswith("count.txt") and not written.exists()
    assert count.calls[-1][2].details is None
    assert target_file.read_text(encoding="utf-8") == f"{path}: 3 members\n"


# ------------------------------------------------------------------------------ force sources
@dataclass(frozen=True)
class Survey:
    """A made-up source: 2 kN of tension on every member of the model, load case 'default'
    (the property's), with one message."""

    name: str = "survey"
    precedence: int = 15
    whole_model: bool = False

    def read(self, idx: Any, members: pd.DataFrame, options: ForceOptions) -> SourceForces:
        gids = members.loc[members["model"] == idx.path, "global_id"].tolist()
        frame = pd.DataFrame({"model": [idx.path] * len(gids), "global_id": gids, "load_case": "default",
                              "axial_force": SURVEY_KN * 1000.0, "source": "site survey"})[list(FORCE_COLUMNS)]
        return SourceForces(self.name, frame, messages=(f"{idx.path}: survey read",))


def members_json(capsys: pytest.CaptureFixture[str], path: Path) -> dict[str, Any]:
    out = run_inprocess(capsys, ["members", str(path), "--format", "json"], [path])
    assert out.code == 0, out.stderr
    return json.loads(out.stdout)["models"][0]


def kn(q: dict[str, Any]) -> float:
    return Q_(q["value"], q["unit"]).to("kN").magnitude   # pint


def test_a_registered_source_outranks_the_sources_after_it(monkeypatch: pytest.MonkeyPatch, tmp_path: Path,
                                                           capsys: pytest.CaptureFixture[str]) -> None:
    path = model(tmp_path)
    monkeypatch.setattr(sources, "FORCE_SOURCES", sources.FORCE_SOURCES + (Survey(precedence=15),))
    m = members_json(capsys, path)
    assert list(m["forces"]["used_by_route"]) == ["table", "survey", "analysis", "property"]   # by precedence
    assert m["forces"]["used_by_route"] == {"table": 0, "survey": 3, "analysis": 0, "property": 0}
    for member in m["members"]:
        (case, force), = member["axial_force"].items()
        assert case == "default" and force["source"] == "site survey"
        assert kn(force) == pytest.approx(SURVEY_KN)
    assert {o["used"] for o in m["forces"]["overridden"]} == {"site survey"}
    assert len(m["forces"]["overridden"]) == 3      # each member's property force, displaced
    assert f"{path}: survey read" in m["forces"]["messages"]


def test_a_registered_source_gives_way_to_the_sources_before_it(monkeypatch: pytest.MonkeyPatch, tmp_path: Path,
                                                                capsys: pytest.CaptureFixture[str]) -> None:
    path = model(tmp_path)
    monkeypatch.setattr(sources, "FORCE_SOURCES", sources.FORCE_SOURCES + (Survey(precedence=40),))
    m = members_json(capsys, path)
    assert list(m["forces"]["used_by_route"]) == ["table", "analysis", "property", "survey"]
    assert m["forces"]["used_by_route"] == {"table": 0, "analysis": 0, "property": 3, "survey": 0}
    for member in m["members"]:
        (force,) = member["axial_force"].values()
        assert kn(force) == pytest.approx(PROPERTY_KN)
    assert {o["overridden"] for o in m["forces"]["overridden"]} == {"site survey"}


def test_a_registered_source_is_checked_against(monkeypatch: pytest.MonkeyPatch, tmp_path: Path,
                                                capsys: pytest.CaptureFixture[str]) -> None:
    """The check uses the source's force: the stress f = P/A of a 20 mm round bar under 2 kN
    (A = π d²/4, geometry; f = P/A, common practice)."""
    path = model(tmp_path, members=1)
    monkeypatch.setattr(sources, "FORCE_SOURCES", sources.FORCE_SOURCES + (Survey(),))
    out = run_inprocess(capsys, ["check", str(path), "--format", "json", "--no-config"], [path])
    assert out.code == 0, out.stderr
    doc = json.loads(out.stdout)
    stress = [r for r in doc["results"] if r["demand"] and Q_(1, r["demand"]["unit"]).check("[pressure]")]
    assert stress
    area = Q_(3.141592653589793 * 20.0 ** 2 / 4, "mm**2")
    for r in stress:
        assert Q_(r["demand"]["value"], r["demand"]["unit"]).to("MPa").magnitude == pytest.approx(
            (Q_(SURVEY_KN, "kN") / area).to("MPa").magnitude, rel=1e-5)


@pytest.mark.skipif(not __import__("modelcheck.run.split").run.split.can_split(), reason="sharing out needs fork")
@pytest.mark.parametrize("whole_model", [False, True])
def test_a_registered_source_in_a_model_shared_out(whole_model: bool, monkeypatch: pytest.MonkeyPatch,
                                                   tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    """Read in each part, or once over the whole model before it is shared out: the report is the
    one of a single process, the source's message listed once."""
    import modelcheck.run.split as parallel
    from benchmarks.make_model import build

    path = tmp_path / "m.ifc"
    build(240, path)
    monkeypatch.setattr(parallel, "MIN_MEMBERS_PER_PART", 50)
    parts: list[int] = []
    real = parallel._run_parts

    def counted(n: int) -> Any:
        parts.append(n)
        return real(n)

    monkeypatch.setattr(parallel, "_run_parts", counted)
    monkeypatch.setattr(sources, "FORCE_SOURCES", sources.FORCE_SOURCES + (Survey(whole_model=whole_model),))
    docs = []
    for jobs in ("1", "2"):
        out = run_inprocess(capsys, ["check", str(path), "--format", "json", "--no-config", "--jobs", jobs], [path])
        assert out.code in (0, 1), out.stderr
        doc = json.loads(out.stdout)
        doc.pop("generated")
        docs.append(doc)
    assert parts == [2]
    assert docs[0] == docs[1]
    warnings = docs[0]["models"][0]["warnings"]
    assert sum("survey read" in w for w in warnings) == 1
    assert not [r for r in docs[0]["results"] if any(m.startswith("P:") for m in r["missing"] or ())]  # all have P
