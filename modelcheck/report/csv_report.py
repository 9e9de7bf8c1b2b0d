"""The CSV report of `modelcheck check`: one row per result (member × check × load case).

Columns, in this order::

    model, global_id, ifc_class, name, tag, storey, section, material,
    check, load_case, status, demand, capacity, unit, ratio, missing, message,
    demand_source, capacity_source [, other result columns: clause, title, …]
    [, suggestion, suggestion_ratio], warnings

``demand`` and ``capacity`` are in the display unit named in ``unit`` on the same row (a stress,
a length or a plain number, depending on the check). ``missing`` joins the missing inputs with
" | ", and ``warnings`` the member's own warnings (values not used, sources that disagree) the
same way, on each of its rows. Numbers carry six significant digits, as in the JSON report. Rows keep the order of the
results table (the JSON report's order), so the same inputs give the same bytes: the CSV has no
timestamp at all. A text cell beginning with ``= + - @``, a tab or a carriage return is written
with a leading apostrophe (``report.text.csv_cell``: a spreadsheet must not run a model's text as a
formula); numbers are written as numbers.

Example::

    write_csv(run, "report.csv")
    pandas.read_csv("report.csv")
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import TYPE_CHECKING

import pandas as pd

from modelcheck.report.formats import WriteOptions

if TYPE_CHECKING:
    from modelcheck.core.model import CheckRun

#: result columns copied as they are, in output order (storey/section/material are inserted)
_IDENTITY = ("model", "global_id", "ifc_class", "name", "tag")
_MEMBER = ("storey", "section", "material")
_RESULT = ("check", "load_case", "status", "demand", "capacity", "unit", "ratio", "missing", "message",
           "demand_source", "capacity_source")


def member_info(members: pd.DataFrame) -> pd.DataFrame:
    """(model, global_id) -> storey, section, material of the member table (one row per member)."""
    cols = ["model", "global_id", "storey", "section", "material"]
    if members is None or not len(members):
        return pd.DataFrame({c: pd.Series(dtype=object) for c in cols})
    section = members["section_name"].astype(object).where(members["section_name"].notna(),
                                                            members["profile_type"].astype(object))
    info = pd.DataFrame({"model": members["model"].astype(object), "global_id": members["global_id"].astype(object),
                         "storey": members["storey"].astype(object), "section": section,
                         "material": members["material"].astype(object)})
    return info.drop_duplicates(["model", "global_id"], keep="first")


def results_frame(run: CheckRun) -> pd.DataFrame:
    """The flat table written to CSV (also what other reporters can reuse)."""
    res = run.results
    # columns some rule engines add (clause, title, …) follow in the results' own order
    extra = [c for c in res.columns if c not in _IDENTITY and c not in _RESULT and c not in _MEMBER
             and c != "suggestion" and not c.startswith("_")]
    out_cols = list(_IDENTITY) + list(_MEMBER) + list(_RESULT) + extra
    if not len(res):
        return pd.DataFrame({c: pd.Series(dtype=object) for c in out_cols + ["warnings"]})
    df = res.loc[:, [c for c in (*_IDENTITY, *_RESULT, *extra) if c in res.columns]].copy()
    for c in ("model", "global_id"):
        df[c] = df[c].astype(object)
    df = df.merge(member_info(run.members), on=["model", "global_id"], how="left", sort=False,
                  validate="many_to_one")
    df["missing"] = res["missing"].map(lambda m: " | ".join(m) if isinstance(m, list | tuple) else "").to_numpy()
    df["ratio"] = pd.to_numeric(df["ratio"], errors="coerce")
    if "suggestion" in res.columns:
        sugg = res["suggestion"].to_list()
        df["suggestion"] = [s.get("designation") if isinstance(s, dict) else None for s in sugg]
        df["suggestion_ratio"] = [s.get("ratio") if isinstance(s, dict) else math.nan for s in sugg]
        out_cols += ["suggestion", "suggestion_ratio"]
    df["warnings"] = _member_warning_texts(run, df)
    out_cols.append("warnings")
    return df.loc[:, out_cols]   # None and NaN alike are written as empty cells


def _member_warning_texts(run: CheckRun, df: pd.DataFrame) -> list[str]:
    """The warnings of each row's member, joined with " | " (empty where it has none)."""
    joined = {(m.path, gid): " | ".join(ws) for m in run.models for gid, ws in m.member_warnings.items()}
    if not joined:
        return [""] * len(df)
    return [joined.get(key, "") for key in zip(df["model"].tolist(), df["global_id"].tolist(), strict=True)]


def write_csv(run: CheckRun, path: str | Path) -> None:
    """Write the results of a check run as CSV (UTF-8, comma-separated, header row)."""
    from modelcheck.report.text import csv_frame

    df = csv_frame(results_frame(run))   # a text cell a spreadsheet would run as a formula is neutralised
    text = df.to_csv(index=False, float_format="%.6g", lineterminator="\n")
    Path(path).write_text(text, encoding="utf-8", newline="")


def write(run: CheckRun, target: str | Path, options: WriteOptions) -> None:
    """``write_csv`` with the ``WriteOptions`` of ``modelcheck.report.formats`` (none used)."""
    write_csv(run, target)
