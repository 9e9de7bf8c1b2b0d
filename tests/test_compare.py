"""Revision comparison over JSON check reports (``--baseline``)."""

from __future__ import annotations

import json
import math
from dataclasses import replace

import pytest
from rich.console import Console

from modelcheck.common.errors import UsageError
from modelcheck.report.check_json import check_document
from modelcheck.report.compare import compare, comparison_renderable, load_baseline, new_problems
from tests.report_runs import GID_A, GID_B, GID_D, make_run


def doc(run) -> dict:
    """The JSON report as a later run reads it back from disk."""
    return json.loads(json.dumps(check_document(run)))


def drop_member(run, gid):
    return replace(run, results=run.results[run.results["global_id"] != gid].reset_index(drop=True),
                   members=run.members[run.members["global_id"] != gid].reset_index(drop=True))


def keys(items):
    return [(e["global_id"], e["check"], e["load_case"]) for e in items]


def test_unchanged_model_has_nothing_new():
    cmp = compare(doc(make_run()), doc(make_run()))
    assert cmp["counts"] == {"new_failures": 0, "resolved": 0, "still_failing": 1, "new_unchecked": 0,
                             "members_added": 0, "members_removed": 0}
    assert keys(cmp["still_failing"]) == [(GID_B, "axial_stress", "LC2")]
    assert new_problems(cmp) == 0 and new_problems(cmp, strict=True) == 0


def test_one_member_made_to_fail_is_exactly_the_new_failure():
    base = doc(make_run())
    cur = doc(make_run(d_demand=200.0))  # D: 200 / 120 > 1
    cmp = compare(cur, base)
    assert keys(cmp["new_failures"]) == [(GID_D, "axial_stress", "LC1")]
    new = cmp["new_failures"][0]
    assert new["model"] == "tower_A.ifc" and new["baseline_status"] == "pass"
    # ratio = demand / capacity (definition): 200 / 120, six significant digits in the JSON report
    assert math.isclose(new["ratio"], 200.0 / 120.0, rel_tol=1e-5)
    assert keys(cmp["still_failing"]) == [(GID_B, "axial_stress", "LC2")]
    assert cmp["counts"]["resolved"] == 0 and new_problems(cmp) == 1


def test_removed_member_shows_as_removed_not_resolved():
    cmp = compare(doc(drop_member(make_run(), GID_B)), doc(make_run()))
    assert [(m["global_id"], m["status"]) for m in cmp["members_removed"]] == [(GID_B, "fail")]
    assert cmp["resolved"] == [] and cmp["new_failures"] == [] and cmp["members_added"] == []


def test_added_member_and_fixed_member():
    cmp = compare(doc(make_run(b_demand=100.0)), doc(drop_member(make_run(), GID_A)))
    assert [m["global_id"] for m in cmp["members_added"]] == [GID_A]
    assert keys(cmp["resolved"]) == [(GID_B, "axial_stress", "LC2")]
    res = cmp["resolved"][0]
    # 150 / 120 before, 100 / 120 now (ratio = demand / capacity)
    assert math.isclose(res["baseline_ratio"], 1.25, rel_tol=1e-6)
    assert math.isclose(res["ratio"], 100.0 / 120.0, rel_tol=1e-5) and res["status"] == "pass"


def test_moved_folder_still_compares_by_file_name():
    cmp = compare(doc(make_run(model="elsewhere/deeper/tower_A.ifc")), doc(make_run()))
    assert cmp["counts"]["new_failures"] == 0 and cmp["counts"]["members_removed"] == 0
    assert cmp["models_added"] == [] and cmp["models_removed"] == []


def test_new_model_counts_its_failures_as_new_and_a_missing_model_removes_nothing():
    cur = doc(make_run(model="models/tower_B.ifc", broken=None))
    cmp = compare(cur, doc(make_run()))
    assert cmp["models_added"] == ["tower_B.ifc"]
    assert sorted(cmp["models_removed"]) == ["broken.ifc", "tower_A.ifc"]
    assert keys(cmp["new_failures"]) == [(GID_B, "axial_stress", "LC2")]
    assert cmp["members_removed"] == []
    assert len(cmp["members_added"]) == 4


def test_unreadable_model_now_is_not_read_as_all_members_removed():
    base = doc(make_run(broken=None))
    run = make_run(broken=None)
    run.models[0].error = "models/tower_A.ifc: cannot be parsed as IFC"
    run = replace(run, results=run.results.iloc[0:0], members=run.members.iloc[0:0])
    cmp = compare(doc(run), base)
    assert cmp["models_unreadable"] == ["tower_A.ifc"]
    assert cmp["members_removed"] == [] and cmp["resolved"] == []


def test_newly_unchecked_counts_only_under_strict():
    base = doc(make_run())
    run = make_run()
    i = run.results.index[(run.results["global_id"] == GID_A) & (run.results["load_case"] == "LC1")][0]
    run.results.loc[i, ["status", "ratio", "demand"]] = ["unchecked", math.nan, math.nan]
    run.results.at[i, "missing"] = ["P"]
    cmp = compare(doc(run), base)
    assert keys(cmp["new_unchecked"]) == [(GID_A, "axial_stress", "LC1")]
    assert new_problems(cmp) == 0 and new_problems(cmp, strict=True) == 1


def test_comparison_is_deterministic_and_json_ready():
    a = compare(doc(make_run(d_demand=200.0)), doc(make_run()))
    b = compare(doc(make_run(d_demand=200.0)), doc(make_run()))
    assert json.dumps(a, sort_keys=False) == json.dumps(b, sort_keys=False)


def test_comparison_renders_on_the_console():
    cmp = compare(doc(make_run(d_demand=200.0)), doc(make_run()))
    con = Console(record=True, width=160)
    con.print(comparison_renderable(cmp))
    out = con.export_text()
    assert "1 new failure(s)" in out and GID_D in out and "New failures (1)" in out


# --------------------------------------------------------------------------- load_baseline
def test_load_baseline_reads_a_report(tmp_path):
    p = tmp_path / "base.json"
    p.write_text(json.dumps(check_document(make_run())), encoding="utf-8")
    d = load_baseline(p)
    assert compare(d, d)["counts"]["new_failures"] == 0


@pytest.mark.parametrize("content, words", [
    (None, "no such file"),
    ('{"results": [\n  1,,\n]}', "line 2"),
    ('{"members": []}', "not a JSON report of 'modelcheck check'"),
    ('[1, 2]', "not a JSON report of 'modelcheck check'"),
    ('{"ruleset": "steel-asd-us", "models": [], "results": []}', "not a JSON report of 'modelcheck check'"),
    ('{"ruleset": {}, "models": [], "results": [{"model": "a.ifc"}]}', "results[0]"),
    ('{"ruleset": {}, "models": [], "results": [{"model": "a", "global_id": "g", "check": "c", '
     '"status": "maybe"}]}', "unknown status"),
])
def test_load_baseline_errors_name_the_file(tmp_path, content, words):
    p = tmp_path / "prev.json"
    if content is not None:
        p.write_text(content, encoding="utf-8")
    with pytest.raises(UsageError) as exc:
        load_baseline(p)
    assert str(p) in str(exc.value) and words in str(exc.value)


def test_a_missing_baseline_says_how_to_make_the_first(tmp_path):
    # the first run of a CI job whose configuration names a baseline not made yet: one line that
    # names the file and the command writing it
    p = tmp_path / "baseline" / "modelcheck-report.json"
    with pytest.raises(UsageError) as exc:
        load_baseline(p)
    text = str(exc.value)
    assert "\n" not in text and str(p) in text and f"--format json --output {p}" in text
