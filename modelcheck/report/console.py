"""The console report of `modelcheck check`: small rich renderables composed into one screen.

Per model a summary line; then the failing members, worst first, each on its governing load
case; then the unchecked members grouped by what they lack; then the caution.
"""

from __future__ import annotations

from typing import Any

import pandas as pd
from rich.console import Console, Group
from rich.table import Table
from rich.text import Text

from modelcheck.report.members import CAUTION
from modelcheck.report.text import number
from modelcheck.table import STATUS_RANK


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


def summary_line(model: Any, results: pd.DataFrame) -> Text:
    if model.error:
        return Text.assemble((f"{model.path}: ", "bold"), ("cannot be read — ", "bold red"), model.error)
    r = results[results["model"] == model.path]
    st = member_status(r) if len(r) else pd.Series(dtype=object)
    n_fail, n_unchecked, n_pass = (int((st == s).sum()) for s in ("fail", "unchecked", "pass"))
    checked = n_fail + n_pass
    return Text.assemble(
        (f"{model.path}", "bold"), f" ({model.schema}): {model.member_count} members found, {checked} checked — ",
        (f"{n_pass} pass", "green"), ", ", (f"{n_fail} fail", "bold red" if n_fail else "green"), ", ",
        (f"{n_unchecked} unchecked", "yellow" if n_unchecked else "green"))


#: failing rows shown on the console, worst first (every one is in the CSV, JSON and HTML reports)
MAX_FAILING_ROWS = 200


def failing_table(results: pd.DataFrame, members: pd.DataFrame, units: Any = None) -> Table | None:
    g = governing(results)
    fails = g[g["status"] == "fail"].sort_values("ratio", ascending=False, kind="stable")
    if not len(fails):
        return None
    total = len(fails)
    fails = fails.iloc[:MAX_FAILING_ROWS]
    shown = fails[["model", "global_id"]].drop_duplicates()
    info = (members.merge(shown, on=["model", "global_id"], how="inner")
            .drop_duplicates(["model", "global_id"]).set_index(["model", "global_id"]))
    more = (f"; the worst {MAX_FAILING_ROWS} shown, every one in --format csv or json"
            if total > MAX_FAILING_ROWS else "")
    t = Table(title=f"Failing members ({total} member × check{more})", title_justify="left",
              header_style="bold", expand=False)
    for col in ("GlobalId", "Class / type", "Name / tag", "Storey", "Section", "Material", "Check",
                "Demand", "Capacity", "Ratio", "Load case"):
        t.add_column(col, overflow="fold", justify="right" if col in ("Demand", "Capacity", "Ratio") else "left",
                     no_wrap=col in ("GlobalId", "Ratio"))
    has_sugg = "suggestion" in fails.columns
    if has_sugg:
        t.add_column("Passing replacement", overflow="fold")
    for rec in fails.to_dict("records"):
        m = info.loc[(rec["model"], rec["global_id"])] if (rec["model"], rec["global_id"]) in info.index else None
        cls = rec["ifc_class"].removeprefix("Ifc")
        typ = None if m is None else (m["object_type"] or m["predefined_type"] or m["type_name"])
        label = " / ".join(str(x) for x in (rec["name"], rec["tag"]) if x)
        ratio = rec["ratio"]
        row = [Text(str(x)) for x in (
            rec["global_id"], f"{cls} {typ}" if typ else cls, label or "—",
            (m["storey"] if m is not None else None) or "—",
            (m["section_name"] or m["profile_type"] or "—") if m is not None else "—",
            (m["material"] or "—") if m is not None else "—", rec["check"],
            f"{number(rec['demand'])} {rec['unit']}", f"{number(rec['capacity'])} {rec['unit']}")]
        row += [Text(f"{ratio:.2f}" if ratio == ratio else "—", style="bold red"), Text(str(rec["load_case"] or "—"))]
        if has_sugg:
            s = rec.get("suggestion")
            row.append(Text(f"{s['designation']} (ratio {s['ratio']:.2f})" if isinstance(s, dict) else "—"))
        t.add_row(*row)
    return t


def unchecked_table(results: pd.DataFrame) -> Table | None:
    g = governing(results)
    un = g[g["status"] == "unchecked"]
    if not len(un):
        return None
    # group members by what they lack (the set of missing inputs over their checks)
    lack = un.groupby(["model", "global_id"])["missing"].agg(
        lambda s: tuple(sorted({m for lst in s for m in (lst or [])})))
    groups = lack.groupby(lack).apply(lambda s: sorted(g for _, g in s.index))
    t = Table(title=f"Unchecked members ({len(lack)}), grouped by what they lack", title_justify="left",
              header_style="bold")
    t.add_column("Missing input (and where it was looked for)", overflow="fold")
    t.add_column("Members", justify="right")
    t.add_column("GlobalIds", overflow="fold", min_width=24)
    for missing, gids in groups.items():
        shown = ", ".join(gids[:8]) + (f" … (+{len(gids) - 8})" if len(gids) > 8 else "")
        t.add_row(Text("\n".join(missing) or "(no reason given)"), str(len(gids)), Text(shown))
    return t


def render_check(run: Any, console: Console, units: Any = None, comparison: Any = None) -> None:
    parts: list[Any] = [Text(f"Rule set: {run.ruleset.name} — {getattr(run.ruleset, 'basis', '')}", style="dim")]
    for m in run.models:
        parts.append(summary_line(m, run.results))
        for w in (m.warnings + m.force_messages + m.validation)[:20]:
            parts.append(Text(f"  warning: {w}", style="yellow"))
    from modelcheck.pipeline import unmatched_lines

    for line in unmatched_lines(run.unmatched_rows):
        parts.append(Text(f"warning: {line}", style="yellow"))
    if comparison is not None:
        parts.append(comparison)
    ft = failing_table(run.results, run.members, units)
    parts.append(ft if ft is not None else Text("No failing members.", style="green"))
    ut = unchecked_table(run.results)
    if ut is not None:
        parts.append(ut)
    parts.append(Text(CAUTION, style="italic dim"))
    console.print(Group(*parts))
