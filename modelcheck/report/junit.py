"""The JUnit XML report of `modelcheck check`, so CI systems list failing members natively.

Layout::

    <testsuites name="modelcheck" tests=… failures=… errors=… skipped=… time="0">
      <testsuite name="MODEL PATH" tests=… failures=… errors=… skipped=… time="0">
        <properties> ruleset, basis, schema, members [, fail_on=new] </properties>
        <testcase classname="MODEL_STEM.IfcMember" name="GLOBALID (TAG) CHECK" time="0"/>  pass
        <testcase …>                                                                     fail
          <properties> global_id, check, load_case, status [, baseline] </properties>
          <failure message="…" type="CHECK">details</failure>
        </testcase>
        <testcase …><properties/><skipped message="unchecked: missing …"/></testcase>  unchecked
      </testsuite>
      <testsuite name="BROKEN PATH" tests="1" errors="1">                               unreadable model
        <testcase classname="MODEL_STEM" name="read model"><error message="…"/></testcase>
      </testsuite>
    </testsuites>

One testcase per member × check, on its governing load case (the failing one with the highest
ratio, else the unchecked one, else the highest ratio). Its name is the GlobalId, the member's tag
(else its name) in brackets when it has one, and the check. ``classname`` is the model file's name
with dots made underscores, a dot, and the IFC class, so CI tools that group by "package.class"
group by model and class. The failure text states check, demand, capacity, ratio, load case,
GlobalId, name, tag, storey, section and material.

A ``<failure>`` exists exactly when the exit code counts the result: with ``strict=True`` an
unchecked member × check is a failure (type "unchecked") instead of skipped, as ``--strict`` makes
it fail the run; with ``only_new`` (``--fail-on new``) only the results new since the baseline are
failures (the property ``baseline`` says "new"), and a failure the baseline already had is
``<skipped>`` with the reason (``baseline`` "not new"); a model whose members were found but none
could be checked (``coverage.verified_nothing``) ends its suite with one failing testcase "members
checked" (type "nothing-checked"), as the exit code fails such a run.

Deterministic: no timestamp, no host name, times are 0; suites in the order of the models,
testcases in the order of the results table.
"""

from __future__ import annotations

import os
import xml.etree.ElementTree as ET
from pathlib import Path
from typing import TYPE_CHECKING, Any

import pandas as pd

from modelcheck.common.table import records
from modelcheck.report.console import governing, summary_line
from modelcheck.report.csv_report import member_info
from modelcheck.report.formats import WriteOptions
from modelcheck.report.text import number, xml_clean, xml_text

if TYPE_CHECKING:
    from modelcheck.core.model import CheckRun


def _stem(model: str) -> str:
    return os.path.basename(model).replace(".", "_") or "model"


def _details(rec: dict[str, Any], info: dict[str, Any] | None) -> str:
    lines = [
        f"check: {rec['check']}",
        f"status: {rec['status']}",
        f"demand: {number(rec['demand'])} {rec['unit'] or ''}".rstrip(),
        f"capacity: {number(rec['capacity'])} {rec['unit'] or ''}".rstrip(),
        f"ratio: {number(rec['ratio'])}",
        f"load case: {rec['load_case'] if isinstance(rec['load_case'], str) else '—'}",
        f"GlobalId: {rec['global_id']}",
        f"class: {rec['ifc_class']}",
    ]
    for key, label in (("name", "name"), ("tag", "tag")):
        if isinstance(rec.get(key), str) and rec[key]:
            lines.append(f"{label}: {rec[key]}")
    if info is not None:
        for key in ("storey", "section", "material"):
            if isinstance(info.get(key), str) and info[key]:
                lines.append(f"{key}: {info[key]}")
    if rec.get("missing"):
        lines.append("missing: " + "; ".join(rec["missing"]))
    if rec.get("message"):
        lines.append(f"message: {rec['message']}")
    return xml_text("\n".join(lines))


def _message(rec: dict[str, Any]) -> str:
    case = rec["load_case"] if isinstance(rec["load_case"], str) else "—"
    unit = f" {rec['unit']}" if rec.get("unit") else ""
    text = (f"{rec['check']}: ratio {number(rec['ratio'])} (demand {number(rec['demand'])}{unit}, "
            f"capacity {number(rec['capacity'])}{unit}) in load case {case}; GlobalId {rec['global_id']}")
    if rec.get("message"):
        text += f"; {rec['message']}"
    return xml_text(text)


def _who(rec: dict[str, Any]) -> str | None:
    """The member's tag, else its name: what a person recognises beside the GlobalId."""
    for key in ("tag", "name"):
        v = rec.get(key)
        if isinstance(v, str) and v.strip():
            return " ".join(v.split())
    return None


def _case_name(rec: dict[str, Any]) -> str:
    who = _who(rec)
    return f"{rec['global_id']} ({who}) {rec['check']}" if who else f"{rec['global_id']} {rec['check']}"


def _counted_mask(run: CheckRun, comparison: dict[str, Any], strict: bool) -> pd.Series:
    """Which result rows the exit code counts under ``--fail-on new`` (``compare.new_problems``)."""
    from modelcheck.report.compare import comparison_names, counted_keys

    res = run.results
    keys = counted_keys(comparison, strict=strict)
    if not len(res) or not keys:
        return pd.Series(False, index=res.index)
    names = comparison_names([m.path for m in run.models] + res["model"].unique().tolist())
    case = res["load_case"].astype(object).where(res["load_case"].notna(), "")
    idx = pd.MultiIndex.from_arrays([res["model"].map(names), res["global_id"], res["check"], case])
    return pd.Series(idx.isin(list(keys)), index=res.index)


def junit_tree(run: CheckRun, *, strict: bool = False, only_new: dict[str, Any] | None = None) -> ET.Element:
    """The <testsuites> element of a check run.

    ``only_new``: the comparison with a baseline when only new problems fail the run (``--fail-on
    new``). A testcase is then a ``<failure>`` only when one of its load cases is a new failure (or,
    with ``strict``, newly unchecked) and shows that row; a failure or unchecked result the baseline
    already had is ``<skipped>`` with the reason, so the file agrees with the exit code.
    """
    res = run.results
    # governing rows back in the order of the results table (members in model order)
    gov = governing(res).sort_index(kind="stable") if len(res) else res
    # with only_new: the governing row among each member × check's counted rows
    new_rows: dict[tuple[str, str, str], dict[str, Any]] | None = None
    if only_new is not None:
        new_rows = {}
        counted = _counted_mask(run, only_new, strict)
        if counted.any():
            for r in records(governing(res[counted])):
                new_rows[(r["model"], r["global_id"], r["check"])] = r
    info_df = member_info(run.members)
    info = {(m, g): {"storey": s, "section": sec, "material": mat} for m, g, s, sec, mat in
            zip(info_df["model"], info_df["global_id"], info_df["storey"], info_df["section"],
                info_df["material"], strict=True)}
    by_model: dict[str, list[dict[str, Any]]] = {}
    for rec in (records(gov) if len(gov) else []):
        by_model.setdefault(rec["model"], []).append(rec)
    rs = run.ruleset
    root = ET.Element("testsuites", {"name": "modelcheck"})
    totals = {"tests": 0, "failures": 0, "errors": 0, "skipped": 0}
    for model in run.models:
        suite = ET.SubElement(root, "testsuite", {"name": xml_text(model.path)})
        props = ET.SubElement(suite, "properties")
        suite_props = [("ruleset", rs.name), ("ruleset_basis", getattr(rs, "basis", "") or ""),
                       ("schema", model.schema or ""), ("members", str(int(model.member_count)))]
        if only_new is not None:
            suite_props.append(("fail_on", "new"))
        for name, value in suite_props:
            ET.SubElement(props, "property", {"name": name, "value": xml_text(value)})
        counts = {"tests": 0, "failures": 0, "errors": 0, "skipped": 0}
        if model.error:
            case = ET.SubElement(suite, "testcase", {"classname": _stem(model.path), "name": "read model",
                                                     "time": "0"})
            err = ET.SubElement(case, "error", {"message": xml_text(model.error), "type": "ModelReadError"})
            err.text = xml_text(model.error)
            counts["tests"] = counts["errors"] = 1
        for rec in by_model.get(model.path, []):
            new = None if new_rows is None else new_rows.get((rec["model"], rec["global_id"], rec["check"]))
            shown = new or rec
            case = ET.SubElement(suite, "testcase", {
                "classname": f"{_stem(model.path)}.{rec['ifc_class']}", "name": xml_text(_case_name(rec)),
                "time": "0"})
            status = shown["status"]
            # a result the exit code could count: is it new since the baseline?
            judged = new_rows is not None and (status == "fail" or (status == "unchecked" and strict))
            if status != "pass":   # (a passing case says all in its name: no properties, a smaller file)
                cprops = ET.SubElement(case, "properties")
                for name, value in (("global_id", shown["global_id"]), ("check", shown["check"]),
                                    ("load_case", shown["load_case"] if isinstance(shown["load_case"], str) else ""),
                                    ("status", status)) + ((("baseline", "not new" if new is None else "new"),)
                                                           if judged else ()):
                    ET.SubElement(cprops, "property", {"name": name, "value": xml_text(value)})
            counts["tests"] += 1
            missing = "; ".join(shown["missing"] or []) or "(no reason given)"
            if judged and new is None:
                what = (f"failing as in the baseline: ratio {number(shown['ratio'])} in load case "
                        f"{shown['load_case'] if isinstance(shown['load_case'], str) else '—'}"
                        if status == "fail" else f"unchecked as in the baseline: missing {missing}")
                ET.SubElement(case, "skipped", {"message": xml_text(f"{what} (--fail-on new counts new problems "
                                                                    "only)")})
                counts["skipped"] += 1
            elif status == "fail":
                el = ET.SubElement(case, "failure", {"message": _message(shown), "type": xml_text(shown["check"])})
                el.text = _details(shown, info.get((shown["model"], shown["global_id"])))
                counts["failures"] += 1
            elif status == "unchecked":
                if strict:
                    el = ET.SubElement(case, "failure", {"message": xml_text(f"unchecked: missing {missing}"),
                                                         "type": "unchecked"})
                    el.text = _details(shown, info.get((shown["model"], shown["global_id"])))
                    counts["failures"] += 1
                else:
                    ET.SubElement(case, "skipped", {"message": xml_text(f"unchecked: missing {missing}")})
                    counts["skipped"] += 1
        coverage = getattr(model, "coverage", None)
        if coverage is not None and coverage.verified_nothing:   # the exit code counts it: so does the file
            case = ET.SubElement(suite, "testcase", {"classname": _stem(model.path), "name": "members checked",
                                                     "time": "0"})
            text = xml_text(summary_line(model).plain)
            el = ET.SubElement(case, "failure", {"message": text, "type": "nothing-checked"})
            el.text = text
            counts["tests"] += 1
            counts["failures"] += 1
        for k, v in counts.items():
            suite.set(k, str(v))
            totals[k] += v
        suite.set("time", "0")
    for k, v in totals.items():
        root.set(k, str(v))
    root.set("time", "0")
    return root


def write_junit(run: CheckRun, path: str | Path, *, strict: bool = False, only_new: dict[str, Any] | None = None) -> None:
    """Write the JUnit XML report of a check run (UTF-8); ``only_new`` as in :func:`junit_tree`."""
    root = xml_clean(junit_tree(run, strict=strict, only_new=only_new))   # no character XML 1.0 forbids, anywhere
    ET.indent(root, space="  ")
    data = ET.tostring(root, encoding="utf-8", xml_declaration=True)
    Path(path).write_bytes(data + b"\n")


def write(run: CheckRun, target: str | Path, options: WriteOptions) -> None:
    """``write_junit`` with the ``WriteOptions`` of ``modelcheck.report.formats``: with --fail-on new
    only the problems new since the baseline fail."""
    write_junit(run, target, strict=options.strict, only_new=options.comparison if options.only_new else None)
