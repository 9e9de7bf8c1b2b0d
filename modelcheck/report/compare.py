"""Compare a check report with an earlier one (a baseline): what got worse, what got better.

Both sides are JSON check documents (``check_json.check_document``). A result is keyed by model
file name (the basename, so a moved or renamed folder still compares) + GlobalId + check + load
case. Only models on both sides are compared member by member; a model on one side only is
listed in ``models_added`` / ``models_removed`` (a new model's members count as added and its
failures as new; a model gone from the current run removes nothing, it was just not checked),
and a model that could not be read now is listed in ``models_unreadable`` and compares as
unchanged.

The comparison (also the ``comparison`` object of the JSON report)::

    {"baseline": {"generated": …, "ruleset": …},
     "counts": {"new_failures": n, "resolved": n, "still_failing": n, "new_unchecked": n,
                "members_added": n, "members_removed": n},
     "new_failures":   [{model, global_id, check, load_case, ratio, baseline_status, message}],
     "resolved":       [{model, global_id, check, load_case, ratio, baseline_ratio, status}],
     "still_failing":  [{model, global_id, check, load_case, ratio, baseline_ratio}],
     "new_unchecked":  [{model, global_id, check, load_case, missing, baseline_status}],
     "members_added":  [{model, global_id, ifc_class, name, tag, status}],
     "members_removed":[{model, global_id, ifc_class, name, tag, status}],
     "models_added": […], "models_removed": […], "models_unreadable": […], "notes": […]}

``status`` of a member is its worst over all results (fail > unchecked > pass). A failure is
"new" when that key did not fail in the baseline (it passed, was unchecked, or did not exist);
"resolved" when it failed in the baseline and the member is still there without failing on it.
Lists are sorted by model, GlobalId, check and load case, so the comparison is deterministic.
"""

from __future__ import annotations

import json
import os
from collections.abc import Iterable
from pathlib import Path
from typing import Any

from modelcheck.common.errors import UsageError
from modelcheck.common.files import input_file
from modelcheck.common.table import STATUS_RANK

Key = tuple[str, str, str, str]      # model name, GlobalId, check, load case ("" when none)


def _model_names(doc: dict[str, Any]) -> dict[str, str]:
    """Model path -> comparison name: the basename, or the path when two models share a basename."""
    return comparison_names([m["path"] for m in doc.get("models", [])] + [r["model"] for r in doc.get("results", [])])


def comparison_names(paths: Iterable[str]) -> dict[str, str]:
    """Model path -> the name results are compared by: its basename, or the whole path when two of
    ``paths`` share a basename (pass every model path of the run and of its results)."""
    seen: dict[str, set[str]] = {}
    for p in paths:
        seen.setdefault(os.path.basename(p), set()).add(p)
    return {p: (b if len(ps) == 1 else p) for b, ps in seen.items() for p in ps}


def _index(doc: dict[str, Any]) -> tuple[dict[Key, dict[str, Any]], dict[tuple[str, str], dict[str, Any]]]:
    """Results by key and members by (model name, GlobalId) with their worst status."""
    names = _model_names(doc)
    results: dict[Key, dict[str, Any]] = {}
    members: dict[tuple[str, str], dict[str, Any]] = {}
    for r in doc.get("results", []):
        model = names[r["model"]]
        key = (model, r["global_id"], r["check"], r.get("load_case") or "")
        results[key] = r
        mk = (model, r["global_id"])
        m = members.get(mk)
        if m is None:
            members[mk] = {"model": model, "global_id": r["global_id"], "ifc_class": r.get("ifc_class"),
                           "name": r.get("name"), "tag": r.get("tag"), "status": r["status"]}
        elif STATUS_RANK.get(r["status"], 3) < STATUS_RANK.get(m["status"], 3):
            m["status"] = r["status"]
    return results, members


def _ratio(r: dict[str, Any] | None) -> float | None:
    return None if r is None else r.get("ratio")


def _entry(key: Key, **extra: Any) -> dict[str, Any]:
    return {"model": key[0], "global_id": key[1], "check": key[2], "load_case": key[3] or None, **extra}


def compare(current_doc: dict[str, Any], baseline_doc: dict[str, Any]) -> dict[str, Any]:
    """What changed between a baseline check report and the current one (see the module doc)."""
    cur, cur_members = _index(current_doc)
    base, base_members = _index(baseline_doc)
    cur_names, base_names = _model_names(current_doc), _model_names(baseline_doc)
    cur_models = {cur_names[m["path"]] for m in current_doc.get("models", [])}
    base_models = {base_names[m["path"]] for m in baseline_doc.get("models", [])}
    unreadable = {cur_names[m["path"]] for m in current_doc.get("models", []) if m.get("error")}
    compared = (cur_models & base_models) - unreadable

    new_failures, resolved, still, new_unchecked = [], [], [], []
    for key, r in cur.items():
        b = base.get(key)
        if key[0] in unreadable:
            continue
        b_status = None if b is None else b["status"]
        if r["status"] == "fail":
            if b_status == "fail":
                still.append(_entry(key, ratio=r.get("ratio"), baseline_ratio=_ratio(b)))
            else:
                new_failures.append(_entry(key, ratio=r.get("ratio"), baseline_status=b_status,
                                           message=r.get("message", "")))
        elif r["status"] == "unchecked" and b_status != "unchecked":
            new_unchecked.append(_entry(key, missing=list(r.get("missing") or []), baseline_status=b_status))
    for key, b in base.items():
        if b["status"] != "fail" or key[0] not in compared:
            continue
        now = cur.get(key)
        if now is None:
            # the member is gone (reported in members_removed) or this key no longer exists
            if (key[0], key[1]) in cur_members:
                resolved.append(_entry(key, ratio=None, baseline_ratio=_ratio(b), status=None))
            continue
        if now["status"] != "fail":
            resolved.append(_entry(key, ratio=now.get("ratio"), baseline_ratio=_ratio(b), status=now["status"]))

    added = [m for k, m in cur_members.items() if k not in base_members and k[0] not in unreadable]
    removed = [m for k, m in base_members.items() if k not in cur_members and k[0] in compared]

    def order(items: Iterable[dict[str, Any]]) -> list[dict[str, Any]]:
        return sorted(items, key=lambda e: (e["model"], e["global_id"], e.get("check") or "",
                                            e.get("load_case") or ""))

    out: dict[str, Any] = {
        "baseline": {"generated": baseline_doc.get("generated"),
                     "ruleset": (baseline_doc.get("ruleset") or {}).get("name")},
        "counts": {"new_failures": len(new_failures), "resolved": len(resolved), "still_failing": len(still),
                   "new_unchecked": len(new_unchecked), "members_added": len(added),
                   "members_removed": len(removed)},
        "new_failures": order(new_failures), "resolved": order(resolved), "still_failing": order(still),
        "new_unchecked": order(new_unchecked), "members_added": order(added), "members_removed": order(removed),
        "models_added": sorted(cur_models - base_models), "models_removed": sorted(base_models - cur_models),
        "models_unreadable": sorted(unreadable),
        "notes": [],
    }
    cur_rs = (current_doc.get("ruleset") or {}).get("name")
    if out["baseline"]["ruleset"] and cur_rs and out["baseline"]["ruleset"] != cur_rs:
        out["notes"].append(f"the baseline used rule set {out['baseline']['ruleset']!r}, this run {cur_rs!r}")
    for names in (cur_names, base_names):
        shared = sorted({p for p, n in names.items() if n == p and os.path.basename(p) != p})
        if shared:
            out["notes"].append("models sharing a file name are compared by full path: " + ", ".join(shared))
    return out


def new_problems(cmp: dict[str, Any], *, strict: bool = False) -> int:
    """Number of results that got worse: new failures (and, with ``strict``, new unchecked)."""
    c = cmp["counts"]
    return int(c["new_failures"]) + (int(c["new_unchecked"]) if strict else 0)


def counted_keys(cmp: dict[str, Any], *, strict: bool = False) -> set[Key]:
    """The results ``new_problems`` counts (the exit code under ``--fail-on new``), as keys of
    (comparison name, GlobalId, check, load case or "")."""
    lists = [cmp["new_failures"]] + ([cmp["new_unchecked"]] if strict else [])
    return {(e["model"], e["global_id"], e["check"], e.get("load_case") or "") for lst in lists for e in lst}


# ------------------------------------------------------------------------------- baseline
_RESULT_KEYS = ("model", "global_id", "check", "status")


#: bytes of a baseline report (a check of 100,000 members writes about 190 MB)
MAX_BASELINE_BYTES = 2 * 1024 * 1024 * 1024


def load_baseline(path: str | os.PathLike[str]) -> dict[str, Any]:
    """Read an earlier JSON check report; a clear UsageError naming the file when it is not one.

    Beyond the keys the comparison reads, the whole document must satisfy the check report's
    JSON Schema (``modelcheck/schemas/check.schema.json``): a list or an object where a text
    belongs, a nesting deeper than a report has, is named by its place in the document."""
    name = str(path)
    if not os.path.lexists(path):   # the first run of a CI job: say how a baseline is made
        raise UsageError(f"no such file; the baseline is the JSON report of an accepted revision: make the "
                         f"first with 'modelcheck check MODELS --format json --output {name}'", path=name)
    p = input_file(path, UsageError, "a JSON check report (baseline)")
    size = p.stat().st_size
    if size > MAX_BASELINE_BYTES:
        raise UsageError(f"baseline is {size / 2**20:,.0f} MiB, more than a check report may be "
                         f"({MAX_BASELINE_BYTES / 2**20:,.0f} MiB)", path=name)
    try:
        text = p.read_text(encoding="utf-8")
    except UnicodeDecodeError as exc:
        raise UsageError(f"baseline is not UTF-8 text ({exc.reason}); give a JSON report of 'modelcheck check'",
                         path=name) from None
    try:
        doc = json.loads(text, parse_constant=_not_json_constant, object_pairs_hook=_unique_keys)
    except json.JSONDecodeError as exc:
        raise UsageError(f"not valid JSON: {exc.msg} (column {exc.colno})", path=name,
                         where=f"line {exc.lineno}") from None
    except _NotStrictJson as exc:
        raise UsageError(f"not valid JSON: {exc}", path=name) from None
    except RecursionError:
        raise UsageError("not a JSON report of 'modelcheck check': nested far deeper than a report is",
                         path=name) from None
    del text
    if not isinstance(doc, dict) or not isinstance(doc.get("results"), list) or \
            not isinstance(doc.get("models"), list) or not isinstance(doc.get("ruleset"), dict):
        raise UsageError("not a JSON report of 'modelcheck check' (needs 'ruleset', 'models' and 'results'; "
                         "write one with --format json)", path=name)
    for i, m in enumerate(doc["models"]):
        if not isinstance(m, dict) or not isinstance(m.get("path"), str):
            raise UsageError("model entry without a 'path'", path=name, where=f"models[{i}]")
    for i, r in enumerate(doc["results"]):
        if not isinstance(r, dict) or any(not isinstance(r.get(k), str) for k in _RESULT_KEYS):
            raise UsageError(f"result entry without {', '.join(_RESULT_KEYS)}", path=name, where=f"results[{i}]")
        if r["status"] not in STATUS_RANK:
            raise UsageError(f"unknown status {r['status']!r}", path=name, where=f"results[{i}]")
    _validate_report(doc, name)
    return doc


class _NotStrictJson(ValueError):
    """What Python's JSON reader accepts but JSON (RFC 8259) does not, or leaves ambiguous."""


def _not_json_constant(token: str) -> Any:
    """``NaN``, ``Infinity`` and ``-Infinity`` are no JSON numbers (RFC 8259, section 6): a report
    never holds them (a missing number is null), and a NaN taken in would reach every output."""
    raise _NotStrictJson(f"{token} is not a JSON number (a missing number is null)")


def _unique_keys(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    """An object whose names are unique: a name given twice would be read as its last value (an
    earlier list of results silently replaced), so it is refused."""
    obj = dict(pairs)
    if len(obj) != len(pairs):
        from collections import Counter

        from modelcheck.report.text import shown

        twice = next(k for k, n in Counter(k for k, _ in pairs).items() if n > 1)
        raise _NotStrictJson(f"the name {shown(twice, 80)!r} is given twice in one object")
    return obj


def _shape(value: Any) -> Any:
    """What the schema can tell apart in a value: the types, keys and nesting (texts and numbers
    alike stand for every text and number; the status, an enumeration, by its value)."""
    kind = type(value)
    if kind is dict:
        return tuple((k, value[k] if k == "status" else _shape(value[k])) for k in value)
    if kind is list:
        return ("[]", frozenset(_shape(v) for v in value))
    return kind


def _validate_report(doc: dict[str, Any], name: str) -> None:
    """``doc`` against the check report's schema; the first violation as a UsageError naming its
    place (``results[12].name``). Results of one shape are validated once: a report of 400,000
    rows has a handful of shapes, and validating each row would take minutes."""
    import jsonschema

    from modelcheck.report.text import shown

    schema_path = Path(__file__).resolve().parent.parent / "schemas" / "check.schema.json"
    schema = json.loads(schema_path.read_text(encoding="utf-8"))
    try:
        first_of_shape: dict[Any, int] = {}
        nested = (dict, list)
        for i, r in enumerate(doc["results"]):   # _shape(r), with the calls for plain values saved
            key = tuple((k, v if k == "status" else _shape(v) if type(v) in nested else type(v))
                        for k, v in r.items())
            first_of_shape.setdefault(key, i)
        picked = sorted(first_of_shape.values())
        probe = dict(doc, results=[doc["results"][i] for i in picked])
        validator = jsonschema.validators.validator_for(schema)(schema)
        error = jsonschema.exceptions.best_match(validator.iter_errors(probe))
    except RecursionError:
        raise UsageError("not a JSON report of 'modelcheck check': nested far deeper than a report is",
                         path=name) from None
    if error is None:
        return
    steps = list(error.absolute_path)
    if len(steps) > 1 and steps[0] == "results" and isinstance(steps[1], int):
        steps[1] = picked[steps[1]]
    where = "".join(f"[{s}]" if isinstance(s, int) else (f".{s}" if i else str(s)) for i, s in enumerate(steps))
    what = {"type": f"is {type(error.instance).__name__}, not {error.validator_value}",
            "required": shown(error.message, 120), "enum": f"is not one of {error.validator_value}"}.get(
        str(error.validator), shown(error.message, 120))
    raise UsageError(f"not a JSON report of 'modelcheck check': {where or 'the document'} {what}", path=name)


# ------------------------------------------------------------------------------- console
def comparison_renderable(cmp: dict[str, Any], *, max_rows: int = 30, width: int = 100) -> Any:
    """A rich renderable for a console ``width`` wide: one summary line, then new failures and
    resolved results."""
    from rich.console import Group
    from rich.table import Table
    from rich.text import Text

    from modelcheck.report.text import MAX_LINE
    from modelcheck.report.text import shown as safe

    c = cmp["counts"]
    when = cmp.get("baseline", {}).get("generated")
    parts: list[Any] = [Text.assemble(
        ("Compared with the baseline", "bold"), (f" of {safe(when)}" if when else ""), ": ",
        (f"{c['new_failures']} new failure(s)", "bold red" if c["new_failures"] else "green"), ", ",
        (f"{c['resolved']} resolved", "green"), ", ", f"{c['still_failing']} still failing, ",
        (f"{c['new_unchecked']} newly unchecked", "yellow" if c["new_unchecked"] else ""), ", ",
        f"{c['members_added']} member(s) added, {c['members_removed']} removed")]
    for label, key in (("models added", "models_added"), ("models no longer checked", "models_removed"),
                       ("models not readable now (not compared)", "models_unreadable")):
        if cmp.get(key):
            parts.append(Text(f"  {label}: " + ", ".join(safe(k) for k in cmp[key]), style="yellow"))
    for note in cmp.get("notes", []):
        parts.append(Text(f"  note: {safe(note, MAX_LINE)}", style="yellow"))

    def table(title: str, rows: list[dict[str, Any]], style: str, extra: str) -> Table:
        from modelcheck.report.fitting import fitted_table

        shown = rows[:max_rows]
        cells = {"Model": [safe(e["model"]) for e in shown], "GlobalId": [safe(e["global_id"]) for e in shown],
                 "Check": [safe(e["check"]) for e in shown], "Load case": [safe(e["load_case"] or "—") for e in shown],
                 "Ratio": [_num(e.get("ratio")) for e in shown],
                 extra: [_num(e.get("baseline_ratio")) if extra == "Baseline ratio"
                         else safe(e.get("baseline_status") or "absent") for e in shown]}
        columns = [(c, "right" if c in ("Ratio", extra) else "left", v) for c, v in cells.items()]
        body = [[Text(v[i], style=style if c == "Ratio" else "") for c, v in cells.items()]
                for i in range(len(shown))]
        more = f"… and {len(rows) - max_rows} more (see the JSON report)" if len(rows) > max_rows else None
        return fitted_table(title, columns, body, width, more)

    if cmp["new_failures"]:
        parts.append(table(f"New failures ({c['new_failures']})", cmp["new_failures"], "bold red",
                           "Baseline status"))
    if cmp["resolved"]:
        parts.append(table(f"Resolved ({c['resolved']})", cmp["resolved"], "green", "Baseline ratio"))
    return Group(*parts)


def _num(v: Any) -> str:
    return "—" if not isinstance(v, int | float) else f"{v:.2f}"
