"""The HTML report of `modelcheck check`: one self-contained file a coordinator can email.

No network access is needed to view it: the style sheet is inline, the chart is an inline SVG
drawn here, there is no script, no image file, no font and no link to anything. Every text that
comes from a model, a rule set or a path is HTML-escaped.

Sections: rule set and time; a summary per model (members found, checked, pass / fail /
unchecked, or why the model could not be read); the distribution of each checked member's worst
ratio (bars of width 0.1 closed on the right, ratios above 1.5 in the last bar, bars above 1.0 in
red; an unchecked member is not drawn, so the bars add up to the summary's checked count); the
changes since a baseline when a comparison is given (new failures, newly unchecked, still failing,
resolved, each with the member's name and tag); the failing members (governing load case, worst
first, with clause, message, passing replacement and the member's own warnings); the members with a
check that could not run, with what they lack; warnings; the caution.

A member's status is its worst over its results (fail > unchecked > pass); it is counted "checked"
when it passes or fails, never passing when one of its checks could not run.
"""

from __future__ import annotations

import datetime as _dt
import math
from html import escape
from pathlib import Path
from typing import TYPE_CHECKING, Any, cast

import numpy as np
import pandas as pd

from modelcheck.common.table import records
from modelcheck.report.console import governing, member_status
from modelcheck.report.csv_report import member_info
from modelcheck.report.formats import WriteOptions
from modelcheck.report.members import CAUTION

if TYPE_CHECKING:
    from modelcheck.core.model import CheckRun

#: rows shown per table; the rest are counted (CSV and JSON carry them all)
MAX_ROWS = 2000

_CSS = """
body { font-family: system-ui, -apple-system, "Segoe UI", Roboto, sans-serif; margin: 2em; color: #222; }
h1 { font-size: 1.6em; margin-bottom: 0.2em; }
h2 { font-size: 1.2em; margin-top: 1.6em; border-bottom: 1px solid #ccc; }
table { border-collapse: collapse; font-size: 0.9em; margin: 0.5em 0; }
th, td { border: 1px solid #ccc; padding: 0.25em 0.5em; text-align: left; vertical-align: top; }
th { background: #f0f0f0; }
td.num { text-align: right; font-variant-numeric: tabular-nums; }
.fail { color: #b00020; font-weight: bold; }
.pass { color: #1b6e20; }
.unchecked { color: #a05a00; }
.error { color: #b00020; }
.muted { color: #666; }
.caution { margin-top: 2em; font-style: italic; color: #444; }
code { font-size: 0.95em; }
"""


def _e(v: Any) -> str:
    """Escaped text of a value; an em dash for none."""
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return "—"
    return escape(str(v), quote=True)


def _n(v: Any, fmt: str = "{:.4g}") -> str:
    if v is None or not isinstance(v, int | float) or not math.isfinite(v):
        return "—"
    return fmt.format(v)


def _table(headers: list[str], rows: list[list[str]], numeric: set[int] | None = None,
           total: int | None = None) -> str:
    """A table of the first MAX_ROWS rows; ``total``: how many there are when the caller built only
    those (building thousands of rows nobody sees is most of a large report's time)."""
    numeric = numeric or set()
    total = len(rows) if total is None else total
    head = "".join(f"<th>{escape(h)}</th>" for h in headers)
    body = []
    for r in rows[:MAX_ROWS]:
        cells = "".join(f'<td class="num">{c}</td>' if i in numeric else f"<td>{c}</td>" for i, c in enumerate(r))
        body.append(f"<tr>{cells}</tr>")
    more = ""
    if total > MAX_ROWS:
        more = f'<p class="muted">… and {total - MAX_ROWS} more rows (the CSV and JSON reports list all).</p>'
    return f"<table><thead><tr>{head}</tr></thead><tbody>{''.join(body)}</tbody></table>{more}"


def _summary(run: CheckRun) -> str:
    rows = []
    status = member_status(run.results) if len(run.results) else pd.Series(dtype=object)
    for m in run.models:
        if m.error:
            rows.append([_e(m.path), "—", "—", "—", "—", "—", "—", f'<span class="error">cannot be read: {_e(m.error)}</span>'])
            continue
        st = status[status.index.get_level_values(0) == m.path] if len(status) else status
        n_fail, n_un, n_pass = (int((st == s).sum()) for s in ("fail", "unchecked", "pass"))
        verdict = ('<span class="fail">fail</span>' if n_fail else
                   '<span class="unchecked">incomplete</span>' if n_un else '<span class="pass">pass</span>')
        rows.append([_e(m.path), _e(m.schema), str(int(m.member_count)), str(n_fail + n_pass), str(n_pass),
                     str(n_fail), str(n_un), verdict])
    return _table(["Model", "Schema", "Members", "Checked", "Pass", "Fail", "Unchecked", "Result"], rows,
                  numeric={2, 3, 4, 5, 6})


def ratio_histogram(ratios: np.ndarray, width: float = 0.1, top: float = 1.5) -> tuple[list[str], list[int]]:
    """Bin labels and counts of ratios in bars of ``width`` from 0; the last bar holds ratios above ``top``."""
    r = ratios[np.isfinite(ratios)]
    n_bins = int(round(top / width))
    # bars are closed on the right, (0.9, 1.0]: a ratio of exactly 1.0 passes and stays green
    idx = np.clip(np.ceil(r / width - 1e-9).astype(int) - 1, 0, n_bins)
    counts = np.bincount(idx, minlength=n_bins + 1)[: n_bins + 1]
    labels = [f"{i * width:.1f}–{(i + 1) * width:.1f}" for i in range(n_bins)] + [f">{top:.1f}"]
    return labels, [int(c) for c in counts]


def checked_worst_ratios(results: pd.DataFrame) -> np.ndarray:
    """The worst ratio of each checked member (status pass or fail), in the order of the results.

    An unchecked member is left out: the ratios of the checks that ran do not cover it, and a bar
    would show it as passing. A failing member counts even where another of its checks could not
    run (it is shown as failing). So the number of ratios is the summary's "checked" count.
    """
    if not len(results):
        return np.empty(0)
    ratio = pd.to_numeric(results["ratio"], errors="coerce")
    worst = ratio.groupby([results["model"], results["global_id"]], sort=False).max()
    status = member_status(results).reindex(worst.index)
    return worst[status.to_numpy() != "unchecked"].to_numpy(dtype=float)


def _chart(run: CheckRun) -> str:
    res = run.results
    if not len(res):
        return '<p class="muted">No results.</p>'
    ratios = checked_worst_ratios(res)
    labels, counts = ratio_histogram(ratios)
    n = int(np.isfinite(ratios).sum())
    if n == 0:
        return '<p class="muted">No member was checked (every member is unchecked): nothing to draw.</p>'
    w, h, left, bottom, top_pad = 720, 260, 40, 50, 20
    bar_w = (w - left - 10) / len(counts)
    peak = max(counts) or 1
    parts = [f'<svg role="img" aria-label="Distribution of the worst ratio per checked member" width="{w}" '
             f'height="{h}" viewBox="0 0 {w} {h}" data-members="{n}">',
             f'<line x1="{left}" y1="{h - bottom}" x2="{w - 10}" y2="{h - bottom}" stroke="#444"/>']
    for i, (lab, c) in enumerate(zip(labels, counts, strict=True)):
        bh = (h - bottom - top_pad) * c / peak
        x = left + i * bar_w
        colour = "#c62828" if i >= 10 else "#2e7d32"  # bars above a ratio of 1.0
        parts.append(f'<rect x="{x + 2:.1f}" y="{h - bottom - bh:.1f}" width="{bar_w - 4:.1f}" height="{bh:.1f}" '
                     f'fill="{colour}"><title>{escape(lab)}: {c}</title></rect>')
        if c:
            parts.append(f'<text x="{x + bar_w / 2:.1f}" y="{h - bottom - bh - 4:.1f}" font-size="11" '
                         f'text-anchor="middle">{c}</text>')
        parts.append(f'<text x="{x + bar_w / 2:.1f}" y="{h - bottom + 14:.1f}" font-size="9" text-anchor="end" '
                     f'transform="rotate(-40 {x + bar_w / 2:.1f} {h - bottom + 14:.1f})">{escape(lab)}</text>')
    x1 = left + 10 * bar_w
    parts.append(f'<line x1="{x1:.1f}" y1="{top_pad - 5}" x2="{x1:.1f}" y2="{h - bottom}" stroke="#b00020" '
                 f'stroke-dasharray="4 3"/>')
    parts.append(f'<text x="{x1 + 4:.1f}" y="{top_pad + 5}" font-size="11" fill="#b00020">ratio 1.0</text>')
    parts.append(f'<text x="{left}" y="{h - 4}" font-size="11">worst demand/capacity ratio per checked member '
                 f'({n} members checked; unchecked members are not drawn)</text>')
    parts.append("</svg>")
    return "".join(parts)


def _label(name: Any, tag: Any) -> str | None:
    """"name / tag" of a member, or None when it has neither."""
    return " / ".join(str(x) for x in (name, tag) if isinstance(x, str) and x) or None


def _lines(items: list[str]) -> str:
    """Escaped items one per line, or an em dash for none."""
    return "<br>".join(_e(x) for x in items) or "—"


def _member_warnings(members: pd.DataFrame | None) -> dict[tuple[str, str], list[str]]:
    """(model, GlobalId) -> the member's own warnings (plausibility, disagreeing sources)."""
    if members is None or not len(members) or "warnings" not in members.columns:
        return {}
    out: dict[tuple[str, str], list[str]] = {}
    for m, g, ws in zip(members["model"], members["global_id"], members["warnings"], strict=True):
        if isinstance(ws, list | tuple) and ws:
            out.setdefault((m, g), []).extend(str(w) for w in ws)
    return out


def _suggestion(s: Any) -> str:
    if not isinstance(s, dict) or not s.get("designation"):
        return "—"
    ratio = s.get("ratio")
    return _e(s["designation"]) + (f" (ratio {_n(ratio, '{:.2f}')})" if isinstance(ratio, int | float) else "")


def _failing(run: CheckRun) -> str:
    g = governing(run.results) if len(run.results) else run.results
    fails = g[g["status"] == "fail"] if len(g) else g
    if not len(fails):
        return '<p class="pass">No failing members.</p>'
    fails = fails.assign(_r=pd.to_numeric(fails["ratio"], errors="coerce")).sort_values(
        "_r", ascending=False, kind="stable")
    total = len(fails)
    fails = fails.iloc[:MAX_ROWS]
    info = {(m, gid): (s, sec, mat) for m, gid, s, sec, mat in member_info(run.members).itertuples(index=False)}
    warns = _member_warnings(run.members)
    rows = []
    for rec in records(fails):
        key = (rec["model"], rec["global_id"])
        s, sec, mat = info.get(key, (None, None, None))
        unit = f" {_e(rec['unit'])}" if isinstance(rec["unit"], str) and rec["unit"] else ""
        clause = rec.get("clause")
        check = _e(rec["check"]) + (f'<br><span class="muted">{_e(clause)}</span>'
                                    if isinstance(clause, str) and clause else "")
        message = rec.get("message")
        rows.append([f"<code>{_e(rec['global_id'])}</code>", _e(rec["ifc_class"]),
                     _e(_label(rec["name"], rec["tag"])), _e(s), _e(sec), _e(mat), check,
                     _n(rec["demand"]) + unit, _n(rec["capacity"]) + unit,
                     f'<span class="fail">{_n(rec["ratio"], "{:.2f}")}</span>', _e(rec["load_case"]),
                     _e(message if isinstance(message, str) and message else None),
                     _suggestion(rec.get("suggestion")), _lines(warns.get(key, [])), _e(rec["model"])])
    return _table(["GlobalId", "Class", "Name / tag", "Storey", "Section", "Material", "Check / clause", "Demand",
                   "Capacity", "Ratio", "Load case", "Message", "Passing replacement", "Member warnings", "Model"],
                  rows, numeric={7, 8, 9}, total=total)


def _unchecked(run: CheckRun) -> str:
    g = governing(run.results) if len(run.results) else run.results
    un = g[g["status"] == "unchecked"] if len(g) else g
    if not len(un):
        return '<p class="pass">Every check of every member could run.</p>'
    status = member_status(run.results)
    warns = _member_warnings(run.members)
    keys = un[["model", "global_id"]].drop_duplicates()
    total = len(keys)
    un = un.merge(keys.iloc[:MAX_ROWS], on=["model", "global_id"], how="inner", sort=False)
    rows = []
    for (model, gid), grp in un.groupby(["model", "global_id"], sort=False):
        missing = sorted({m for lst in grp["missing"] for m in (lst or [])})
        first = grp.iloc[0]
        st = status.get((model, gid), "unchecked")
        rows.append([f"<code>{_e(gid)}</code>", _e(first["ifc_class"]), _e(_label(first["name"], first["tag"])),
                     _e(", ".join(grp["check"])), _lines(missing), _e(model), f'<span class="{st}">{st}</span>',
                     _lines(warns.get(cast(tuple[str, str], (model, gid)), []))])
    note = ('<p class="muted">Every member with a check that could not run. Such a member is counted as '
            "unchecked, or as failing when another of its checks fails; it is never counted or drawn as "
            "passing.</p>")
    return note + _table(["GlobalId", "Class", "Name / tag", "Checks not run", "Missing input", "Model",
                          "Member status", "Member warnings"], rows, total=total)


def _comparison(cmp: dict[str, Any], run: CheckRun) -> str:
    c = cmp.get("counts", {})
    head = (f"<p>{int(c.get('new_failures', 0))} new failure(s), {int(c.get('resolved', 0))} resolved, "
            f"{int(c.get('still_failing', 0))} still failing, {int(c.get('new_unchecked', 0))} newly unchecked, "
            f"{int(c.get('members_added', 0))} member(s) added, {int(c.get('members_removed', 0))} removed.</p>")
    from modelcheck.report.compare import comparison_names

    # name and tag of each member of this run, by the name the comparison gives its model
    res = run.results
    labels: dict[tuple[Any, Any], str | None] = {}
    if len(res):
        names = comparison_names([m.path for m in run.models] + res["model"].unique().tolist())
        ident = res[["model", "global_id", "name", "tag"]].drop_duplicates(["model", "global_id"])
        for m, gid, name, tag in ident.itertuples(index=False):
            labels[(names.get(m, m), gid)] = _label(name, tag)
    for x in cmp.get("members_removed", []):   # gone from this run: the baseline knows them
        labels.setdefault((x.get("model"), x.get("global_id")), _label(x.get("name"), x.get("tag")))

    def ident_cells(x: dict[str, Any]) -> list[str]:
        return [_e(x.get("model")), f"<code>{_e(x.get('global_id'))}</code>",
                _e(labels.get((x.get("model"), x.get("global_id")))), _e(x.get("check")), _e(x.get("load_case"))]

    parts = [head]
    heads = ["Model", "GlobalId", "Name / tag", "Check", "Load case"]
    tables = (
        ("New failures", "new_failures", ["Ratio", "Baseline status"],
         lambda x: [_n(x.get("ratio"), "{:.2f}"), _e(x.get("baseline_status") or "absent")]),
        ("Newly unchecked", "new_unchecked", ["Missing input", "Baseline status"],
         lambda x: [_lines(list(x.get("missing") or [])), _e(x.get("baseline_status") or "absent")]),
        ("Still failing", "still_failing", ["Ratio", "Baseline ratio"],
         lambda x: [_n(x.get("ratio"), "{:.2f}"), _n(x.get("baseline_ratio"), "{:.2f}")]),
        ("Resolved", "resolved", ["Ratio", "Baseline ratio", "Status now"],
         lambda x: [_n(x.get("ratio"), "{:.2f}"), _n(x.get("baseline_ratio"), "{:.2f}"), _e(x.get("status"))]),
    )
    for title, key, extra, cells in tables:
        items = cmp.get(key, [])
        if items:
            rows = [ident_cells(x) + cells(x) for x in items[:MAX_ROWS]]
            numeric = {i + 5 for i, h in enumerate(extra) if "atio" in h}
            parts.append(f"<h3>{escape(title)} ({len(items)})</h3>" + _table(heads + extra, rows, numeric=numeric,
                                                                           total=len(items)))
    return "".join(parts)


def _warnings(run: CheckRun) -> str:
    items = []
    for m in run.models:
        for w in list(m.warnings) + list(m.force_messages) + list(m.validation):
            items.append(f"<li>{_e(m.path)}: {_e(w)}</li>")
    for r in run.unmatched_rows:
        items.append(f"<li>force row matches no member: {_e(r.get('source'))} ({_e(r.get('key'))})</li>")
    if not items:
        return ""
    shown = items[:MAX_ROWS]
    more = f"<li>… and {len(items) - MAX_ROWS} more</li>" if len(items) > MAX_ROWS else ""
    return f"<h2>Warnings</h2><details><summary>{len(items)} warning(s)</summary><ul>{''.join(shown)}{more}</ul></details>"


def render_html(run: CheckRun, *, now: _dt.datetime | None = None, comparison: dict[str, Any] | None = None) -> str:
    """The whole HTML document as text."""
    stamp = (now or _dt.datetime.now(_dt.UTC)).replace(microsecond=0).isoformat()
    rs = run.ruleset
    basis = getattr(rs, "basis", "") or ""
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>modelcheck report — {_e(rs.name)}</title>",
        f"<style>{_CSS}</style></head><body>",
        "<h1>modelcheck report</h1>",
        f'<p class="muted">Rule set <b>{_e(rs.name)}</b>{" — " + _e(basis) if basis else ""}; '
        f"generated {escape(stamp)}.</p>",
        "<h2>Summary</h2>", _summary(run),
        "<h2>Ratio distribution</h2>", _chart(run),
    ]
    if comparison is not None:
        parts += ["<h2>Changes since the baseline</h2>", _comparison(comparison, run)]
    parts += ["<h2>Failing members</h2>", _failing(run),
              "<h2>Unchecked members</h2>", _unchecked(run),
              _warnings(run),
              f'<p class="caution">{_e(CAUTION)}</p>',
              "</body></html>"]
    return "\n".join(p for p in parts if p) + "\n"


def write_html(run: CheckRun, path: str | Path, *, now: _dt.datetime | None = None,
               comparison: dict[str, Any] | None = None) -> None:
    """Write the self-contained HTML report of a check run."""
    Path(path).write_text(render_html(run, now=now, comparison=comparison), encoding="utf-8")


def write(run: CheckRun, target: str | Path, options: WriteOptions) -> None:
    """``write_html`` with the ``WriteOptions`` of ``modelcheck.report.formats``."""
    write_html(run, target, now=options.now, comparison=options.comparison)
