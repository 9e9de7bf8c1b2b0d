"""The JSON report of `modelcheck check` (contract in the README, schema in modelcheck/schemas).

Deterministic: the same inputs give the same bytes apart from the ``generated`` timestamp;
results are in a stable order (model, GlobalId, check order of the rule set, load case).
"""

from __future__ import annotations

import datetime as _dt
import math
from typing import Any

import pandas as pd

from modelcheck.report.members import CAUTION


def _none(v: Any) -> Any:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return None
    return v


def _q(value: Any, unit: Any, source: Any) -> dict[str, Any] | None:
    if value is None or not isinstance(value, int | float) or not math.isfinite(value):
        return None
    return {"value": float(f"{value:.6g}"), "unit": str(unit or ""), "source": str(source or "")}


def result_dicts(results: pd.DataFrame) -> list[dict[str, Any]]:
    """Result rows as dicts of the JSON contract."""
    out = []
    has_sugg = "suggestion" in results.columns
    for rec in results.to_dict("records"):
        ratio = _none(rec["ratio"])
        item = {
            "model": rec["model"], "global_id": rec["global_id"], "ifc_class": rec["ifc_class"],
            "name": _none(rec["name"]), "tag": _none(rec["tag"]), "check": rec["check"],
            "load_case": _none(rec["load_case"]), "status": rec["status"],
            "demand": _q(rec["demand"], rec["unit"], rec.get("demand_source")),
            "capacity": _q(rec["capacity"], rec["unit"], rec.get("capacity_source")),
            "ratio": None if ratio is None else float(f"{ratio:.6g}"),
            "missing": list(rec["missing"] or []), "message": str(rec["message"] or ""),
        }
        if has_sugg:
            item["suggestion"] = rec["suggestion"] if isinstance(rec["suggestion"], dict) else None
        out.append(item)
    return out


def summary_counts(run: Any) -> dict[str, int]:
    """Counts by status over results, and the number of models that could not be read."""
    st = run.results["status"].value_counts() if len(run.results) else {}
    return {"pass": int(st.get("pass", 0)), "fail": int(st.get("fail", 0)),
            "unchecked": int(st.get("unchecked", 0)), "errors": sum(1 for m in run.models if m.error)}


def check_document(run: Any, *, comparison: dict[str, Any] | None = None,
                   now: _dt.datetime | None = None) -> dict[str, Any]:
    rs = run.ruleset
    doc: dict[str, Any] = {
        "generated": (now or _dt.datetime.now(_dt.UTC)).replace(microsecond=0).isoformat(),
        "ruleset": {"name": rs.name, "path": str(rs.path), "basis": getattr(rs, "basis", "") or "",
                    "units": getattr(rs, "units", "") or ""},
        "models": [{"path": m.path, "schema": m.schema, "error": m.error, "members": int(m.member_count),
                    "warnings": list(m.warnings) + list(m.force_messages) + list(m.validation)}
                   for m in run.models],
        "results": result_dicts(run.results),
        "unmatched_force_rows": run.unmatched_rows,
    }
    if comparison is not None:
        doc["comparison"] = comparison
    doc["summary"] = summary_counts(run)
    doc["caution"] = CAUTION
    return doc
