"""The JUnit XML report of `modelcheck check`, so CI systems list failing members natively.

Layout::

    <testsuites name="modelcheck" tests=… failures=… errors=… skipped=… time="0">
      <testsuite name="MODEL PATH" tests=… failures=… errors=… skipped=… time="0">
        <properties> ruleset, basis, schema, members </properties>
        <testcase classname="MODEL_STEM.IfcMember" name="GLOBALID CHECK" time="0"/>      pass
        <testcase …><failure message="…" type="CHECK">details</failure></testcase>      fail
        <testcase …><skipped message="missing: …"/></testcase>                         unchecked
      </testsuite>
      <testsuite name="BROKEN PATH" tests="1" errors="1">                               unreadable model
        <testcase classname="MODEL_STEM" name="read model"><error message="…"/></testcase>
      </testsuite>
    </testsuites>

One testcase per member × check, on its governing load case (the failing one with the highest
ratio, else the highest ratio). ``classname`` is the model file's name with dots made
underscores, a dot, and the IFC class, so CI tools that group by "package.class" group by model
and class. The failure text states check, demand, capacity, ratio, load case, GlobalId, name,
tag, storey, section and material. With ``strict=True`` an unchecked member is a failure
(type "unchecked") instead of skipped, as `--strict` makes it fail the run.

Deterministic: no timestamp, no host name, times are 0; suites in the order of the models,
testcases in the order of the results table.
"""

from __future__ import annotations

import os
import xml.etree.ElementTree as ET
from pathlib import Path
from typing import Any

from modelcheck.report.console import governing, summary_line
from modelcheck.report.csv_report import member_info
from modelcheck.report.text import number, xml_clean, xml_text


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


def junit_tree(run: Any, *, strict: bool = False) -> ET.Element:
    """The <testsuites> element of a check run."""
    # governing rows back in the order of the results table (members in model order)
    gov = governing(run.results).sort_index(kind="stable") if len(run.results) else run.results
    info_df = member_info(run.members)
    info = {(m, g): {"storey": s, "section": sec, "material": mat} for m, g, s, sec, mat in
            zip(info_df["model"], info_df["global_id"], info_df["storey"], info_df["section"],
                info_df["material"], strict=True)}
    by_model: dict[str, list[dict[str, Any]]] = {}
    for rec in (gov.to_dict("records") if len(gov) else []):
        by_model.setdefault(rec["model"], []).append(rec)
    rs = run.ruleset
    root = ET.Element("testsuites", {"name": "modelcheck"})
    totals = {"tests": 0, "failures": 0, "errors": 0, "skipped": 0}
    for model in run.models:
        suite = ET.SubElement(root, "testsuite", {"name": xml_text(model.path)})
        props = ET.SubElement(suite, "properties")
        for name, value in (("ruleset", rs.name), ("ruleset_basis", getattr(rs, "basis", "") or ""),
                            ("schema", model.schema or ""), ("members", str(int(model.member_count)))):
            ET.SubElement(props, "property", {"name": name, "value": xml_text(value)})
        counts = {"tests": 0, "failures": 0, "errors": 0, "skipped": 0}
        if model.error:
            case = ET.SubElement(suite, "testcase", {"classname": _stem(model.path), "name": "read model",
                                                     "time": "0"})
            err = ET.SubElement(case, "error", {"message": xml_text(model.error), "type": "ModelReadError"})
            err.text = xml_text(model.error)
            counts["tests"] = counts["errors"] = 1
        for rec in by_model.get(model.path, []):
            case = ET.SubElement(suite, "testcase", {
                "classname": f"{_stem(model.path)}.{rec['ifc_class']}",
                "name": f"{rec['global_id']} {rec['check']}", "time": "0"})
            counts["tests"] += 1
            status = rec["status"]
            if status == "fail":
                el = ET.SubElement(case, "failure", {"message": _message(rec), "type": xml_text(rec["check"])})
                el.text = _details(rec, info.get((rec["model"], rec["global_id"])))
                counts["failures"] += 1
            elif status == "unchecked":
                missing = "; ".join(rec["missing"] or []) or "(no reason given)"
                if strict:
                    el = ET.SubElement(case, "failure", {"message": xml_text(f"unchecked: missing {missing}"),
                                                         "type": "unchecked"})
                    el.text = _details(rec, info.get((rec["model"], rec["global_id"])))
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


def write_junit(run: Any, path: str | Path, *, strict: bool = False) -> None:
    """Write the JUnit XML report of a check run (UTF-8)."""
    root = xml_clean(junit_tree(run, strict=strict))   # no character XML 1.0 forbids, anywhere
    ET.indent(root, space="  ")
    data = ET.tostring(root, encoding="utf-8", xml_declaration=True)
    Path(path).write_bytes(data + b"\n")

