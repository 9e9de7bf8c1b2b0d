"""The console report of `modelcheck check`: small rich renderables composed into one screen.

Per model a summary line (its headline says so when nothing could be checked), its
warnings and the count of its members' own warnings with the first few; then the failing members, worst first, one line each on its governing check; then
the unchecked members grouped by what they lack; then the caution.

Two layouts of the same rows. The compact one fits 80–120 columns: member (tag, else name,
else GlobalId), check, ratio, load case, replacement. The wide one adds GlobalId, class and
type, storey, section, material, demand and capacity; it is used from :data:`DETAILS_WIDTH`
columns on, or at any width when asked for (``--details``). Every file report carries the
details whatever the console shows.

Every text from a model, a rule set or a load table goes in as a ``Text`` (never parsed as
markup), and every column is at least as wide as its longest word, so no word is broken
inside a cell (rich wraps at spaces).
"""

from __future__ import annotations

import os
import sys
from typing import TYPE_CHECKING, Any, cast

import pandas as pd
from rich.console import Console, Group
from rich.table import Table
from rich.text import Text

from modelcheck.common.table import STATUS_RANK, records
from modelcheck.report.fitting import _fit, _limits, fitted_table
from modelcheck.report.formats import WriteOptions
from modelcheck.report.text import CAUTION, DETAILS_WIDTH, number, shown

if TYPE_CHECKING:
    from modelcheck.core.model import CheckRun, Coverage, ModelData


#: console width when standard output is no terminal and COLUMNS is not set
DEFAULT_WIDTH = 100

#: failing members shown on the console, worst first (every one is in the CSV, JSON and HTML reports)
MAX_FAILING_ROWS = 200

#: members named per group of the unchecked list (the rest counted)
MAX_NAMED = 8

#: characters of one warning, or one missing input, on the console (it quotes names and values)
MAX_WARNING = 1000

#: warnings shown per model (the rest counted; every one is in the JSON report)
MAX_WARNINGS = 20


def console_width(stream: Any) -> int:
    """The terminal's width, else ``COLUMNS`` when set, else :data:`DEFAULT_WIDTH`."""
    try:
        if stream.isatty():
            return os.get_terminal_size(stream.fileno()).columns
    except (AttributeError, OSError, ValueError):
        pass
    columns = os.environ.get("COLUMNS", "").strip()
    if columns.isdigit() and int(columns) > 0:
        return int(columns)
    return DEFAULT_WIDTH


def make_console(stderr: bool = False, file: Any = None) -> Console:
    """A rich console as wide as :func:`console_width` says for the stream it writes to."""
    stream = file if file is not None else (sys.stderr if stderr else sys.stdout)
    return Console(file=file, stderr=stderr, width=console_width(stream), emoji=False, highlight=False)


# ------------------------------------------------------------------------------ rows
def governing(results: pd.DataFrame) -> pd.DataFrame:
    """One row per member × check: the load case with the highest ratio (failures first)."""
    if not len(results):
        return results
    r = results.assign(_rank=results["status"].map(STATUS_RANK),
                       _ratio=results["ratio"].astype(float).fillna(-1.0))
    r = r.sort_values(["_rank", "_ratio"], ascending=[True, False], kind="stable")
    g = r.drop_duplicates(["model", "global_id", "check"], keep="first")
    return g.drop(columns=["_rank", "_ratio"])


def member_status(results: pd.DataFrame) -> pd.Series:
    """Worst status per (model, global_id): fail > unchecked > pass."""
    order = results["status"].map(STATUS_RANK)
    worst = order.groupby([results["model"], results["global_id"]]).min()
    return worst.map({0: "fail", 1: "unchecked", 2: "pass"})


def _text(v: Any) -> str | None:
    """A text value as the console shows it (control characters escaped, a long text cut:
    ``report.text.shown``), or None for a missing one (None, NaN, empty)."""
    if v is None or (isinstance(v, float) and v != v):
        return None
    s = shown(str(v).strip())
    return s or None


def member_label(name: Any, tag: Any, global_id: Any) -> str:
    """How the console names a member: its tag, else its name, else its GlobalId."""
    return _text(tag) or _text(name) or shown(global_id)


# ------------------------------------------------------------------------------ summary
def summary_line(model: ModelData, results: pd.DataFrame | None = None) -> Text:
    """One line per model: what was found and checked; the headline says when nothing was."""
    path = Text(shown(model.path, None), style="bold")
    if model.error:
        return Text.assemble(path, ": ", ("cannot be read", "bold red"), " — ", shown(model.error, None))
    cov = getattr(model, "coverage", None)
    if cov is None:
        cov = _coverage_from(model, results)
    units = getattr(model, "units", None)
    head = Text.assemble(path, f" ({shown(model.schema)}" + (f", {units} units" if units else "") + "): ")
    counts = Text.assemble(f"{cov.found} member{'' if cov.found == 1 else 's'} found, {cov.checked} checked — ",
                           (f"{cov.passed} pass", "green"), ", ",
                           (f"{cov.failed} fail", "bold red" if cov.failed else "green"), ", ",
                           (f"{cov.unchecked} unchecked", "yellow" if cov.unchecked else "green"))
    if cov.verified_nothing:
        head.append("nothing could be checked", style="bold red")
        head.append(" — ")
    head.append_text(counts)
    if cov.excluded:
        several = len(cov.excluded) > 1
        head.append(f"; {cov.excluded_count} excluded by the rule set's selection: "
                    + "; ".join(f"{shown(reason)} ({n})" if several else shown(reason) for reason, n in cov.excluded))
    if cov.uncovered:
        head.append(f"; {cov.uncovered} with no check of the rule set that applies")
    return head


def _coverage_from(model: ModelData, results: pd.DataFrame | None) -> Coverage:
    """A Coverage from the results table, for a model checked without one."""
    from modelcheck.core.model import Coverage

    if results is None or not len(results) or "global_id" not in results.columns:
        return Coverage(found=int(model.member_count))
    st = member_status(results[results["model"] == model.path])
    return Coverage(int(model.member_count), int((st == "pass").sum()), int((st == "fail").sum()),
                    int((st == "unchecked").sum()))


def _warning_grid(items: list[tuple[str, str]], style: str = "yellow") -> Table:
    """Label + text lines with a hanging indent: long texts wrap at word boundaries under the text."""
    grid = Table.grid(padding=(0, 1))
    grid.add_column(no_wrap=True, style=style)
    grid.add_column(ratio=1, overflow="fold")
    for label, text in items:
        grid.add_row(Text(label), Text(shown(text, MAX_WARNING)))
    return grid


#: member warnings shown on the console per model (every one is in the JSON, CSV and HTML reports)
MAX_MEMBER_WARNINGS = 3


def member_warning_block(model: ModelData, members: pd.DataFrame | None) -> list[Any]:
    """'N member warnings on K members, first:' and the first few, each with the member's tag
    (else name, else GlobalId): the members' own warnings (values not used, sources that disagree)."""
    warns = getattr(model, "member_warnings", None) or {}
    if not warns:
        return []
    pairs = [(gid, w) for gid, ws in warns.items() for w in ws]
    n, k = len(pairs), len(warns)
    shown = pairs[:MAX_MEMBER_WARNINGS]
    names: dict[str, str] = {}
    if members is not None and len(members) and {"model", "global_id", "name", "tag"} <= set(members.columns):
        gids = {gid for gid, _ in shown}
        rows = members[(members["model"] == model.path) & members["global_id"].isin(gids)]
        for gid, name, tag in zip(rows["global_id"], rows["name"], rows["tag"], strict=True):
            names.setdefault(str(gid), member_label(name, tag, gid))
    head = (f"  {n} member warning{'s' if n != 1 else ''} on {k} member{'s' if k != 1 else ''}"
            + (f", the first {MAX_MEMBER_WARNINGS} (every one in --format json, csv or html):"
               if n > MAX_MEMBER_WARNINGS else ":"))
    return [Text(head, style="yellow"), _warning_grid([(f"    {names.get(gid, gid)}:", w) for gid, w in shown])]


def model_warnings(model: ModelData, details: bool = False) -> list[str]:
    """The warnings the console lists for a model. Left out: the force join's list of members with
    no force (they are in the unchecked list, with the reason) and, but for the wide layout, the
    lists of members the rule set's selection leaves out (the summary line counts them, with
    the reason; the lines name their GlobalIds)."""
    skip = {getattr(model, "no_force_message", None)}
    if not details:
        skip |= set(getattr(model, "exclusion_messages", None) or [])
    return [w for w in (list(model.warnings) + list(model.force_messages) + list(model.validation))
            if w not in skip]


# ------------------------------------------------------------------------------ tables
def failing_table(results: pd.DataFrame, members: pd.DataFrame, details: bool = False,
                  width: int = DEFAULT_WIDTH) -> Table | None:
    """The failing members, worst first: one line each, on its governing check and load case."""
    g = governing(results)
    fails = g[g["status"] == "fail"]
    if not len(fails):
        return None
    fails = fails.assign(_ratio=fails["ratio"].astype(float).fillna(float("inf")))
    fails = fails.sort_values("_ratio", ascending=False, kind="stable")
    more_checks = fails.groupby(["model", "global_id"], sort=False)["check"].transform("size") - 1
    first = ~fails.duplicated(["model", "global_id"], keep="first")
    worst = fails[first].assign(_more=more_checks[first])
    total, total_checks = len(worst), len(fails)
    worst = worst.iloc[:MAX_FAILING_ROWS]
    info = None
    if details:
        picked = worst[["model", "global_id"]]
        info = (members.merge(picked, on=["model", "global_id"], how="inner")
                .drop_duplicates(["model", "global_id"]).set_index(["model", "global_id"]))
    cols: dict[str, list[str]] = {k: [] for k in (
        "Member", "GlobalId", "Class / type", "Storey", "Section", "Material", "Check", "Demand", "Capacity",
        "Ratio", "Load case", "Replacement")}
    for rec in records(worst):
        cols["Member"].append(member_label(rec["name"], rec["tag"], rec["global_id"]))
        extra = int(rec["_more"])
        cols["Check"].append(shown(rec["check"]) + (f" (+{extra})" if extra else ""))
        ratio = rec["ratio"]
        cols["Ratio"].append(f"{ratio:.2f}" if ratio == ratio and ratio is not None else "—")
        cols["Load case"].append(_text(rec["load_case"]) or "—")
        s = rec.get("suggestion")
        if isinstance(s, dict):
            cols["Replacement"].append(f"{shown(s['designation'])} (ratio {s['ratio']:.2f})" if details
                                       else shown(s["designation"]))
        else:
            cols["Replacement"].append("—")
        if details:
            key = (rec["model"], rec["global_id"])
            m = info.loc[key] if info is not None and key in info.index else None
            cls = shown(rec["ifc_class"]).removeprefix("Ifc")
            typ = None if m is None else (_text(m["object_type"]) or _text(m["predefined_type"])
                                         or _text(m["type_name"]))
            cols["GlobalId"].append(shown(rec["global_id"]))
            cols["Class / type"].append(f"{cls} {typ}" if typ else cls)
            cols["Storey"].append((_text(m["storey"]) if m is not None else None) or "—")
            cols["Section"].append((_text(m["section_name"]) or _text(m["profile_type"]) if m is not None else None)
                                   or "—")
            cols["Material"].append((_text(m["material"]) if m is not None else None) or "—")
            unit = _unit_label(rec["unit"])
            cols["Demand"].append(f"{number(rec['demand'])} {unit}".strip())
            cols["Capacity"].append(f"{number(rec['capacity'])} {unit}".strip())
    order = (["Member", "GlobalId", "Class / type", "Storey", "Section", "Material", "Check", "Demand", "Capacity",
              "Ratio", "Load case", "Replacement"] if details
             else ["Member", "Check", "Ratio", "Load case", "Replacement"])
    right = {"Demand", "Capacity", "Ratio"}
    columns = [(c, "right" if c in right else "left", cols[c]) for c in order]
    rows = [[Text(cols[c][i], style="bold red" if c == "Ratio" else "") for c in order]
            for i in range(len(worst))]
    title = f"Failing members: {total} ({total_checks} failing checks), worst first"
    caption = "(+n): n more of the member's checks fail"
    if total > MAX_FAILING_ROWS:
        caption += f"; the worst {MAX_FAILING_ROWS} shown, every one in --format csv, json or html"
    if details and _fit(*_limits(columns), width) is None:
        return _stacked(title, cols, len(worst), caption)
    return fitted_table(title, columns, rows, width, caption)


def _stacked(title: str, cols: dict[str, list[str]], n: int, caption: str) -> Table:
    """The details of each failing member in two wrapped lines beside its name: the wide layout
    for a console too narrow for its columns."""
    t = Table.grid(padding=(0, 2, 0, 0))
    t.title, t.title_justify, t.caption, t.caption_justify = Text(title, style="bold"), "left", Text(caption), "left"
    t.add_column(no_wrap=True)
    t.add_column(ratio=1)
    for i in range(n):
        verdict = Text.assemble(f"{cols['Check'][i]} · ratio ", (cols["Ratio"][i], "bold red"),
                                f" · load case {cols['Load case'][i]} · replacement {cols['Replacement'][i]}")
        about = Text(f"GlobalId {cols['GlobalId'][i]} · {cols['Class / type'][i]} · storey {cols['Storey'][i]} · "
                     f"section {cols['Section'][i]} · material {cols['Material'][i]} · "
                     f"demand {cols['Demand'][i]}, capacity {cols['Capacity'][i]}", style="dim")
        t.add_row(Text(cols["Member"][i]), Text.assemble(verdict, "\n", about))
    return t


def _unit_label(unit: Any) -> str:
    from modelcheck.common.units import ureg

    text = _text(unit)
    if text is None:
        return ""
    try:
        return f"{ureg.Unit(text):~P}"
    except (ValueError, AttributeError, TypeError, KeyError):
        return text


def unchecked_table(results: pd.DataFrame, details: bool = False, width: int = DEFAULT_WIDTH) -> Table | None:
    """The unchecked members grouped by what they lack (the missing inputs over their checks)."""
    g = governing(results)
    un = g[g["status"] == "unchecked"]
    if not len(un):
        return None
    lack = un.groupby(["model", "global_id"], sort=False)["missing"].agg(   # type: ignore[type-var]  # pandas-stubs: an aggregate may be any object
        lambda s: tuple(sorted({m for lst in s for m in (lst or [])})))
    labels = un.drop_duplicates(["model", "global_id"]).set_index(["model", "global_id"])
    groups: dict[tuple[str, ...], list[str]] = {}
    for index_key, missing in lack.items():
        key = cast(tuple[str, str], index_key)   # (model, GlobalId)
        rec = cast(pd.Series, labels.loc[key])   # the one row of that (model, GlobalId)
        name = member_label(rec["name"], rec["tag"], key[1])
        groups.setdefault(missing, []).append(f"{name} ({shown(key[1])})" if details and name != shown(key[1])
                                              else name)
    missing_col, count_col, who_col = [], [], []
    for missing, names in sorted(groups.items(), key=lambda kv: (-len(kv[1]), kv[0])):
        names = sorted(names)
        missing_col.append("\n".join(shown(m, MAX_WARNING) for m in missing) or "(no reason given)")
        count_col.append(str(len(names)))
        who_col.append(", ".join(names[:MAX_NAMED]) + (f" (+{len(names) - MAX_NAMED} more)"
                                                       if len(names) > MAX_NAMED else ""))
    columns = [("Missing input (and where it was looked for)", "left", missing_col),
               ("Members", "right", count_col), ("Which", "left", who_col)]
    rows = [[Text(missing_col[i]), Text(count_col[i]), Text(who_col[i])] for i in range(len(missing_col))]
    # a failing member can lack the input of another check: it is listed here and counted as failing
    return fitted_table(f"Members with a check that could not run: {len(lack)}, grouped by what they lack",
                        columns, rows, width, leading=1 if any(len(m) > 1 for m in groups) else 0)


# ------------------------------------------------------------------------------ screen
def render_check(run: CheckRun, console: Console, comparison: Any = None, details: bool | None = None) -> None:
    """The whole console report. ``details`` None: the wide layout from :data:`DETAILS_WIDTH` on."""
    wide = details if details is not None else console.width >= DETAILS_WIDTH
    basis = getattr(run.ruleset, "basis", "") or ""
    parts: list[Any] = [Text(f"Rule set: {shown(run.ruleset.name)}" + (f" — {shown(basis, MAX_WARNING)}" if basis else ""),
                             style="dim")]
    for m in run.models:
        parts.append(summary_line(m, run.results))
        warnings = [] if m.error else model_warnings(m, wide)
        items = [("  warning:", w) for w in warnings[:MAX_WARNINGS]]
        if len(warnings) > MAX_WARNINGS:
            items.append(("  warning:", f"… and {len(warnings) - MAX_WARNINGS} more (every one in --format json)"))
        if items:
            parts.append(_warning_grid(items))
        if not m.error:
            parts += member_warning_block(m, run.members)
    from modelcheck.core.forces import unmatched_lines

    lines = unmatched_lines(run.unmatched_rows)
    if lines:
        parts.append(_warning_grid([("warning:", line) for line in lines]))
    if comparison is not None:
        parts.append(comparison)
    ft = failing_table(run.results, run.members, wide, console.width) if "global_id" in run.results.columns else None
    parts.append(ft if ft is not None else Text("No failing members.", style="green"))
    ut = unchecked_table(run.results, wide, console.width) if "global_id" in run.results.columns else None
    if ut is not None:
        parts.append(ut)
    parts.append(Text(CAUTION, style="italic dim"))
    console.print(Group(*parts))


def write(run: CheckRun, target: Any, options: WriteOptions) -> None:
    """The console report of ``run`` to the text stream ``target``, as wide as it is (``make_console``)."""
    console = make_console(file=target)
    comparison = None
    if options.comparison is not None:
        from modelcheck.report.compare import comparison_renderable

        comparison = comparison_renderable(options.comparison, width=console.width)
    render_check(run, console, comparison=comparison, details=options.details)
