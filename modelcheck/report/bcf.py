"""The BCF 2.1 report of `modelcheck check`: findings as topics for coordination tools.

BCF (BIM Collaboration Format) is the buildingSMART open standard for issues about a model.
The zip holds::

    bcf.version                 VersionId 2.1
    project.bcfp                project id (from the rule set and model names) and name
    <topic guid>/markup.bcf     header (model file), topic, one viewpoint reference
    <topic guid>/viewpoint.bcfv the member selected (by IfcGuid) and coloured, all else visible

One topic per failing member, on its governing check (the failing check with the highest ratio,
on its governing load case). The title states check, ratio and member; the description states
check, load case, demand, capacity, ratio, the member's identity, storey, section and material,
the member's other failing checks, the model and the rule set, and the caution. Topic type
"Error", status "Open", one label per failing check of the member (the governing one first).

With ``include_unchecked=True`` every member without a failing check but with an unchecked check
also gets a topic (type "Warning", label "unchecked") listing what it lacks; by default they are
left out because a model without data would otherwise flood the coordination tool (they are in
every other report).

Deterministic: topic GUIDs are uuid5 of model file name + GlobalId + check, viewpoint GUIDs
uuid5 of the topic GUID, every date (also the zip entries' dates) is the one ``now`` argument,
topics and zip entries come in a fixed order (worst ratio first). No camera is written: the
results carry no coordinates, so a viewer is left to zoom to the selected component.
"""

from __future__ import annotations

import datetime as _dt
import os
import re
import uuid
import xml.etree.ElementTree as ET
import zipfile
from pathlib import Path
from typing import TYPE_CHECKING, Any

from modelcheck.common.table import records
from modelcheck.report.console import governing
from modelcheck.report.csv_report import member_info
from modelcheck.report.formats import WriteOptions
from modelcheck.report.members import CAUTION
from modelcheck.report.text import number, xml_clean, xml_text

if TYPE_CHECKING:
    from modelcheck.core.model import CheckRun

#: namespace of every UUID this module derives (a fixed random UUID of our own)
BCF_NAMESPACE = uuid.UUID("5e0f3c1a-8b27-4d6e-9a41-2f7c6b90d3e8")
_IFC_GUID = re.compile(r"^[0-9A-Za-z_$]{22}$")
FAIL_COLOUR = "FF0000"
UNCHECKED_COLOUR = "FFA500"


def topic_guid(model: str, global_id: str, check: str) -> str:
    """Stable topic GUID: the same member and check in a model of the same file name."""
    return str(uuid.uuid5(BCF_NAMESPACE, f"{os.path.basename(model)}\n{global_id}\n{check}"))


def _str(v: Any) -> str | None:
    return v if isinstance(v, str) and v else None


def _xml(root: ET.Element) -> bytes:
    xml_clean(root)   # every text and attribute: no character XML 1.0 forbids
    ET.indent(root, space="  ")
    return ET.tostring(root, encoding="utf-8", xml_declaration=True) + b"\n"


def _sub(parent: ET.Element, tag: str, text: str | None = None, **attrs: str) -> ET.Element:
    el = ET.SubElement(parent, tag, attrs)
    if text is not None:
        el.text = xml_text(text)
    return el


def _member_label(rec: dict[str, Any], info: dict[str, Any] | None) -> str:
    parts = [str(rec["ifc_class"])]
    if _str(rec.get("name")):
        parts.append(f"'{rec['name']}'")
    if _str(rec.get("tag")):
        parts.append(f"(tag {rec['tag']})")
    text = " ".join(parts)
    if info:
        extra = [f"{label} {info[k]}" for k, label in (("storey", "storey"), ("section", "section"),
                                                       ("material", "material")) if _str(info.get(k))]
        if extra:
            text += ", " + ", ".join(extra)
    return text


def _topics(run: CheckRun, include_unchecked: bool) -> list[dict[str, Any]]:
    """One dict per topic: governing record, the member's other records, kind."""
    if not len(run.results):
        return []
    gov = governing(run.results)
    info_df = member_info(run.members)
    info = {(m, g): {"storey": s, "section": sec, "material": mat} for m, g, s, sec, mat in
            zip(info_df["model"], info_df["global_id"], info_df["storey"], info_df["section"],
                info_df["material"], strict=True)}
    by_member: dict[tuple[str, str], list[dict[str, Any]]] = {}
    for rec in records(gov):
        by_member.setdefault((rec["model"], rec["global_id"]), []).append(rec)
    topics: list[dict[str, Any]] = []
    for key, recs in by_member.items():
        fails = sorted((r for r in recs if r["status"] == "fail"), key=lambda r: -float(r["ratio"]))
        if fails:
            topics.append({"kind": "fail", "rec": fails[0], "others": fails[1:], "info": info.get(key),
                           "sort": (0, -float(fails[0]["ratio"]))})
        elif include_unchecked and any(r["status"] == "unchecked" for r in recs):
            un = [r for r in recs if r["status"] == "unchecked"]
            topics.append({"kind": "unchecked", "rec": un[0], "others": un[1:], "info": info.get(key),
                           "sort": (1, 0.0)})
    # worst first; ties keep the results order (stable sort)
    topics.sort(key=lambda t: t["sort"])
    return topics


def _case(rec: dict[str, Any]) -> str:
    return rec["load_case"] if isinstance(rec["load_case"], str) and rec["load_case"] else "—"


def _title_and_description(t: dict[str, Any], run: CheckRun) -> tuple[str, str]:
    rec, info = t["rec"], t["info"]
    who = rec["name"] if _str(rec.get("name")) else (rec["tag"] if _str(rec.get("tag")) else rec["global_id"])
    unit = f" {rec['unit']}" if _str(rec.get("unit")) else ""
    rs = run.ruleset
    if t["kind"] == "fail":
        title = f"{rec['check']} ratio {float(rec['ratio']):.2f} — {rec['ifc_class']} {who}"
        lines = [f"{rec['check']} fails in load case {_case(rec)}: demand {number(rec['demand'])}{unit}, "
                 f"capacity {number(rec['capacity'])}{unit}, ratio {number(rec['ratio'])}."]
        if _str(rec.get("message")):
            lines.append(str(rec["message"]))
        if t["others"]:
            lines.append("Other failing checks: " + "; ".join(
                f"{o['check']} ratio {number(o['ratio'])} (load case {_case(o)})" for o in t["others"]) + ".")
    else:
        missing = sorted({m for r in [rec, *t["others"]] for m in (r["missing"] or [])})
        checks = ", ".join(r["check"] for r in [rec, *t["others"]])
        title = f"unchecked — {rec['ifc_class']} {who}"
        lines = [f"Not checked ({checks}): missing " + ("; ".join(missing) or "(no reason given)") + "."]
    lines.append(f"Member: {_member_label(rec, info)}; GlobalId {rec['global_id']}.")
    lines.append(f"Model: {rec['model']}. Rule set: {rs.name}"
                 + (f" ({rs.basis})" if _str(getattr(rs, "basis", None)) else "") + ".")
    lines.append(CAUTION)
    return title[:128], "\n".join(lines)


def _markup(t: dict[str, Any], run: CheckRun, guid: str, vp_guid: str, index: int, date: str) -> bytes:
    rec = t["rec"]
    title, description = _title_and_description(t, run)
    root = ET.Element("Markup")
    header = _sub(root, "Header")
    f = _sub(header, "File", isExternal="true")  # BCF 2.1 spells it with a small i
    _sub(f, "Filename", os.path.basename(rec["model"]))
    _sub(f, "Date", date)
    _sub(f, "Reference", str(rec["model"]))
    fail = t["kind"] == "fail"
    topic = _sub(root, "Topic", Guid=guid, TopicType="Error" if fail else "Warning", TopicStatus="Open")
    _sub(topic, "Title", title)
    _sub(topic, "Index", str(index))
    if fail:   # one label per failing check of the member, the governing one first
        for check in dict.fromkeys([str(rec["check"])] + [str(o["check"]) for o in t["others"]]):
            _sub(topic, "Labels", check)
    else:
        _sub(topic, "Labels", "unchecked")
    _sub(topic, "CreationDate", date)
    _sub(topic, "CreationAuthor", "modelcheck")
    _sub(topic, "Description", description)
    vp = _sub(root, "Viewpoints", Guid=vp_guid)
    _sub(vp, "Viewpoint", "viewpoint.bcfv")
    return _xml(root)


def _viewpoint(t: dict[str, Any], vp_guid: str) -> bytes:
    gid = str(t["rec"]["global_id"])
    root = ET.Element("VisualizationInfo", {"Guid": vp_guid})
    comps = _sub(root, "Components")
    if _IFC_GUID.match(gid):  # a malformed GlobalId stays in the description only
        sel = _sub(comps, "Selection")
        c = _sub(sel, "Component", IfcGuid=gid)
        _sub(c, "OriginatingSystem", "modelcheck")
    _sub(comps, "Visibility", DefaultVisibility="true")
    if _IFC_GUID.match(gid):
        colour = _sub(_sub(comps, "Coloring"), "Color",
                      Color=FAIL_COLOUR if t["kind"] == "fail" else UNCHECKED_COLOUR)
        _sub(colour, "Component", IfcGuid=gid)
    return _xml(root)


def _version() -> bytes:
    root = ET.Element("Version", {"VersionId": "2.1"})
    _sub(root, "DetailedVersion", "2.1")
    return _xml(root)


def _project(run: CheckRun) -> bytes:
    names = "\n".join(sorted(os.path.basename(m.path) for m in run.models))
    pid = str(uuid.uuid5(BCF_NAMESPACE, f"project\n{run.ruleset.name}\n{names}"))
    root = ET.Element("ProjectExtension")
    p = _sub(root, "Project", ProjectId=pid)
    _sub(p, "Name", f"modelcheck — {run.ruleset.name}")
    _sub(root, "ExtensionSchema", "")
    return _xml(root)


def write_bcf(run: CheckRun, path: str | Path, *, now: _dt.datetime | None = None,
              include_unchecked: bool = False) -> int:
    """Write the BCF 2.1 zip of a check run; return the number of topics written."""
    stamp = (now or _dt.datetime.now(_dt.UTC)).replace(microsecond=0)
    if stamp.tzinfo is None:
        stamp = stamp.replace(tzinfo=_dt.UTC)
    utc = stamp.astimezone(_dt.UTC)
    date = utc.strftime("%Y-%m-%dT%H:%M:%SZ")
    zdate = utc.timetuple()[:6]
    if zdate[0] < 1980:
        zdate = (1980, 1, 1, 0, 0, 0)
    topics = _topics(run, include_unchecked)

    def add(zf: zipfile.ZipFile, name: str, data: bytes) -> None:
        info = zipfile.ZipInfo(name, date_time=zdate)
        info.compress_type = zipfile.ZIP_DEFLATED
        info.external_attr = 0o644 << 16
        zf.writestr(info, data)

    used: set[str] = set()
    with zipfile.ZipFile(path, "w") as zf:
        add(zf, "bcf.version", _version())
        add(zf, "project.bcfp", _project(run))
        for i, t in enumerate(topics, start=1):
            rec = t["rec"]
            check = rec["check"] if t["kind"] == "fail" else "unchecked"
            guid = topic_guid(rec["model"], rec["global_id"], check)
            if guid in used:  # two models of one file name holding the same member
                guid = str(uuid.uuid5(BCF_NAMESPACE, f"{rec['model']}\n{rec['global_id']}\n{check}"))
            used.add(guid)
            vp_guid = str(uuid.uuid5(BCF_NAMESPACE, f"{guid}\nviewpoint"))
            add(zf, f"{guid}/markup.bcf", _markup(t, run, guid, vp_guid, i, date))
            add(zf, f"{guid}/viewpoint.bcfv", _viewpoint(t, vp_guid))
    return len(topics)


def write(run: CheckRun, target: str | Path, options: WriteOptions) -> None:
    """``write_bcf`` with the ``WriteOptions`` of ``modelcheck.report.formats``."""
    write_bcf(run, target, now=options.now)
