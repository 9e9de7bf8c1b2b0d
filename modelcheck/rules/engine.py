"""Run a rule set over the member table: one result per member × applicable check × load case.

Each check is evaluated once over arrays of all the rows it applies to (pint quantities
wrapping numpy arrays); nothing loops over members doing unit arithmetic.

Example::

    >>> from modelcheck.rules.ruleset import load_ruleset
    >>> results = run_checks(load_ruleset("steel-asd-us"), members, forces)   # doctest: +SKIP
    >>> results[results.status == "fail"][["global_id", "check", "ratio"]]     # doctest: +SKIP

Status: "pass" where demand ≤ capacity (within 1 part in 10⁹, so rounding never fails a member
exactly at its limit), "fail" otherwise, "unchecked" where an input the check needs is missing
or the demand or capacity is not a finite number — never "pass" on missing data.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import numpy as np
import pandas as pd
import pint

from modelcheck.common.errors import RuleSetError
from modelcheck.common.table import REJECTED, RESULT_COLUMNS, SECTION_VALUE_COLUMNS, STATUS_RANK, frame_of
from modelcheck.common.units import Q_, ureg
from modelcheck.common.vocabulary import Shape
from modelcheck.design.designations import named_root, named_wall
from modelcheck.design.screw_threads import thread_tensile_area
from modelcheck.rules.expr import Cond, Expression, ExpressionError, Text, Value, parse_expression
from modelcheck.rules.names import MEMBER_QUANTITIES, TEXT_NAMES
from modelcheck.rules.ruleset import Check, RuleSet, Scope

#: columns of the results table: the contract's, then extras
EXTRA_COLUMNS: tuple[str, ...] = ("clause", "title")
COLUMNS: tuple[str, ...] = RESULT_COLUMNS + EXTRA_COLUMNS

#: pass when demand <= capacity * (1 + PASS_TOLERANCE)
PASS_TOLERANCE = 1e-9

_TEXT_RESULT_COLUMNS = ("model", "global_id", "ifc_class", "name", "tag", "check", "load_case", "status",
                        "unit", "message", "demand_source", "capacity_source", "clause", "title")


class MemberData:
    """Columns of the member table as numpy arrays (SI floats, text as object with None), cached."""

    def __init__(self, members: pd.DataFrame) -> None:
        self.members = members
        self.n = len(members)
        self._numbers: dict[str, np.ndarray] = {}
        self._texts: dict[str, np.ndarray] = {}
        self._rejected: dict[str, np.ndarray] = {}

    def rejected(self, column: str) -> np.ndarray:
        """Per member, why the model's value for ``column`` was not used (object: str, or None
        where the model gave none or it was used): the member table's ``rejected`` pairs of that
        column, of the section for a section value, or of the whole member ("*")."""
        if column not in self._rejected:
            keys = {column, "*"} | ({"section"} if column in SECTION_VALUE_COLUMNS else set())
            out = np.full(self.n, None, dtype=object)
            if REJECTED in self.members.columns:
                pairs = self.members[REJECTED].to_numpy(dtype=object)
                for i in np.flatnonzero([bool(p) for p in pairs.tolist()]).tolist():
                    reasons = [why for col, why in pairs[i] if col in keys]
                    if reasons:
                        out[i] = "; ".join(dict.fromkeys(reasons))
            self._rejected[column] = out
        return self._rejected[column]

    def text(self, column: str) -> np.ndarray:
        if column not in self._texts:
            if column == "thread":
                self._thread()
            elif column in self.members.columns:
                self._texts[column] = self.members[column].to_numpy(dtype=object, na_value=None)   # type: ignore[call-overload]  # pandas-stubs leave out na_value=None, which pandas takes
            else:
                self._texts[column] = np.full(self.n, None, dtype=object)
        return self._texts[column]

    def number(self, name: str) -> np.ndarray:
        """A member quantity in its SI unit, NaN where missing."""
        if name not in self._numbers:
            if name == "As":
                self._thread()
            elif name == "r_named":
                self._numbers[name] = named_root(self.text("section_name"), self.text("shape"), self.number("h"),
                                                 self.number("b"), self.number("tf"), self.number("tw"))
            elif name == "t_named":
                self._numbers[name] = named_wall(self.text("section_name"), self.text("shape"), self.number("h"),
                                                 self.number("b"), self.number("d"), self.number("t"))
            else:
                column = MEMBER_QUANTITIES[name].column
                if column is not None and column in self.members.columns:
                    values = pd.to_numeric(self.members[column], errors="coerce")
                    self._numbers[name] = np.asarray(values, dtype=float)
                else:
                    self._numbers[name] = np.full(self.n, np.nan)
        return self._numbers[name]

    def _thread(self) -> None:
        d = self.number("d")
        round_bar = self.text("shape") == Shape.ROUND_BAR
        area, designation = thread_tensile_area(np.where(round_bar, d, np.nan))
        self._numbers["As"] = area
        self._texts["thread"] = designation


def _force_rows(members: pd.DataFrame, forces: pd.DataFrame | None) -> dict[str, np.ndarray]:
    """Every member × load case of the forces table, and one row with no force for other members.

    ``rank`` is the load case's place in the natural order of the case names (-1: no case).
    A force row whose model is empty applies to that GlobalId in every model.
    """
    n = len(members)
    if forces is None or len(forces) == 0:
        return {"member": np.arange(n), "P": np.full(n, np.nan), "load_case": np.full(n, None, dtype=object),
                "rank": np.full(n, -1), "note": np.full(n, None, dtype=object)}
    models = _objects(members, "model")
    gids = _objects(members, "global_id")
    f_model = _objects(forces, "model")
    f_gid = _objects(forces, "global_id")
    f_case = _objects(forces, "load_case")
    f_p = np.asarray(pd.to_numeric(forces["axial_force"], errors="coerce"), dtype=float)
    codes = _case_ranks(f_case)
    every_row_has_model = not pd.isna(pd.Series(f_model, dtype=object)).any()
    one_model = n > 0 and models[0] is not None and bool((models == models[0]).all())
    lookup = None
    if every_row_has_model and one_model:   # one model (or a part of one): its GlobalIds are its keys
        by_gid = pd.Index(gids)
        if by_gid.is_unique:
            lookup = by_gid.get_indexer(f_gid)
            lookup[f_model != models[0]] = -1
    elif every_row_has_model:
        member_keys = pd.Index(member_key(models, gids))
        if member_keys.is_unique:
            lookup = member_keys.get_indexer(member_key(f_model, f_gid))
    if lookup is not None:
        ok = lookup >= 0
        m, f = lookup[ok], np.flatnonzero(ok)
    else:
        left = pd.DataFrame({"model": pd.Series(models, dtype=object).fillna("\x00"),
                             "global_id": pd.Series(gids, dtype=object).fillna("\x00"), "_m": np.arange(n)})
        right = pd.DataFrame({"model": pd.Series(f_model, dtype=object),
                              "global_id": pd.Series(f_gid, dtype=object), "_f": np.arange(len(forces))})
        with_model = right[right["model"].notna()]
        without_model = right[right["model"].isna()].drop(columns="model")
        parts = [left.merge(with_model, on=["model", "global_id"], how="inner")[["_m", "_f"]]]
        if len(without_model):
            parts.append(left.merge(without_model, on="global_id", how="inner")[["_m", "_f"]])
        matched = pd.concat(parts, ignore_index=True)
        m = matched["_m"].to_numpy(dtype=np.int64)
        f = matched["_f"].to_numpy(dtype=np.int64)
    has_force = np.zeros(n, dtype=bool)
    has_force[m] = True
    unmatched = np.flatnonzero(~has_force)
    # a force row without a value says why in its source ("P: doubtful analysis end forces ..."):
    # that is what an unchecked result lists as missing
    note = np.full(len(f), None, dtype=object)
    blank = np.isnan(f_p[f])
    if blank.any() and "source" in forces.columns:
        src = _objects(forces, "source")[f[blank]]
        note[blank] = [s if isinstance(s, str) and s.startswith("P: ") else None for s in src.tolist()]
    return {
        "member": np.concatenate([m, unmatched]),
        "P": np.concatenate([f_p[f], np.full(len(unmatched), np.nan)]),
        "load_case": np.concatenate([f_case[f], np.full(len(unmatched), None, dtype=object)]),
        "rank": np.concatenate([codes[f], np.full(len(unmatched), -1)]),
        "note": np.concatenate([note, np.full(len(unmatched), None, dtype=object)]),
    }


def _natural_key(text: str) -> tuple[Any, ...]:
    """'LC2' before 'LC10': digits compare as numbers."""
    import re

    return tuple(int(t) if t.isdigit() else t.casefold() for t in re.split(r"(\d+)", text)) + (text,)


def _case_ranks(cases: np.ndarray) -> np.ndarray:
    """Each row's load case as its rank in the natural order of the load-case names (-1: none).

    An order of the names, not of the rows: a member's results come out in the same order
    whatever else is in the forces table (a model checked in parts, a batch)."""
    codes, uniques = pd.factorize(pd.Series(cases, dtype=object), use_na_sentinel=True)
    order = sorted(range(len(uniques)), key=lambda i: _natural_key(str(uniques[i])))
    rank = np.empty(len(uniques), dtype=np.int64)
    rank[order] = np.arange(len(uniques))
    return np.where(codes >= 0, rank[np.maximum(codes, 0)], -1)


def _objects(frame: pd.DataFrame, column: str) -> np.ndarray:
    if column not in frame.columns:
        return np.full(len(frame), None, dtype=object)
    return frame[column].to_numpy(dtype=object, na_value=None)   # type: ignore[call-overload]  # pandas-stubs leave out na_value=None, which pandas takes


def member_key(models: Any, gids: Any) -> np.ndarray:
    """'model NUL GlobalId' of each row, a missing value as '' (``models`` None: no model column):
    the key of a member wherever members, forces and results are matched."""
    g = _blank_missing(gids)
    m = np.full(len(g), "", dtype=object) if models is None else _blank_missing(models)
    return m + "\x00" + g


def _blank_missing(values: Any) -> np.ndarray:
    arr = np.asarray(pd.Series(values, dtype=object).to_numpy(), dtype=object)
    return np.where(pd.isna(arr), "", arr).astype(object)


def _nothing_missing(n: int) -> np.ndarray:
    """An object array of n empty tuples (one shared object: nothing reads them to change them,
    and a list per row of a large results table costs a tenth of a second)."""
    out = np.empty(n, dtype=object)
    out.fill(())
    return out


def _broadcast(x: Any, n: int) -> np.ndarray:
    return np.broadcast_to(np.asarray(x, dtype=float), (n,)).copy()


def _cond(value: Value, n: int, what: str) -> tuple[np.ndarray, np.ndarray]:
    if not isinstance(value, Cond):
        raise ExpressionError(f"{what} must be a condition")
    return (np.broadcast_to(np.asarray(value.value, dtype=bool), (n,)),
            np.broadcast_to(np.asarray(value.known, dtype=bool), (n,)))


def _number_text(x: float) -> str:
    if x != x:
        return "n/a"
    a = abs(x)
    if a == 0 or 1e-4 <= a < 1e4:
        return f"{x:.4g}"
    if 1e4 <= a < 1e9:
        return f"{x:.0f}"
    return f"{x:.3e}"


def _number_texts(values: np.ndarray, spec: str = "") -> np.ndarray:
    """``format(x, spec)`` (``_number_text(x)`` without a spec) of each value, as an object array;
    'n/a' for NaN. One formatting pass per magnitude class instead of a call per value."""
    out = np.full(len(values), "n/a", dtype=object)
    ok = ~np.isnan(values)
    if spec:
        out[ok] = [format(x, spec) for x in values[ok].tolist()]
        return out
    a = np.abs(values)
    with np.errstate(invalid="ignore"):
        plain = ok & ((a == 0) | ((a >= 1e-4) & (a < 1e4)))
        whole = ok & (a >= 1e4) & (a < 1e9)
    sci = ok & ~plain & ~whole
    out[plain] = [f"{x:.4g}" for x in values[plain].tolist()]
    out[whole] = [f"{x:.0f}" for x in values[whole].tolist()]
    out[sci] = [f"{x:.3e}" for x in values[sci].tolist()]
    return out


def _unit_label(unit: str) -> str:
    if not unit:
        return ""
    return f"{ureg.Unit(unit):~P}"


def _format(value: Value, spec: str, unit: str | None, ruleset: RuleSet, idx: np.ndarray, n: int) -> np.ndarray:
    """Strings (object array) of ``value`` at rows ``idx``: numbers in display units, text as is.

    Each distinct value is formatted once (members share sections, materials and limits).
    """
    if isinstance(value, pint.Quantity):
        u = unit if unit is not None else ruleset.display_unit(value)
        mags = _broadcast(value.m_as(u), n)[idx]
        codes, uniques = pd.factorize(mags, use_na_sentinel=False)
        label = "" if "%" in spec or not u else " " + _unit_label(u)
        return (_number_texts(np.asarray(uniques, dtype=float), spec) + label)[codes]
    if isinstance(value, Text):
        vals = np.broadcast_to(np.asarray(value.values, dtype=object), (n,))[idx]
        return np.where(pd.isna(pd.Series(vals, dtype=object)).to_numpy(), "", vals).astype(object)
    if isinstance(value, Cond):
        v, k = _cond(value, n, "message")
        return np.where(k[idx], np.where(v[idx], "yes", "no"), "unknown").astype(object)
    return np.full(len(idx), "", dtype=object)


def _inputs(name: str, data: MemberData, member: np.ndarray, p: np.ndarray) -> np.ndarray:
    return p if name == "P" else data.number(name)[member]


def _missing_lists(check: Check, ruleset: RuleSet, data: MemberData, member: np.ndarray, p: np.ndarray,
                   case: np.ndarray, note: np.ndarray | None = None) -> list[list[str]]:
    """For each (unchecked) row, the inputs it lacks that the check needs, with where they were looked for.

    An input counts when the row stays unchecked with every other missing input filled in, so a
    value the check does not need for that member (an I-section's flange in a branch a round bar
    never takes) is not listed.
    """
    n = len(member)
    wanted = check.inputs | check.optional     # a value tested with known() may still be needed
    values = {name: _inputs(name, data, member, p) for name in MEMBER_QUANTITIES if name in wanted}
    candidates = [name for name, v in values.items() if np.isnan(v).any()]
    needed: dict[str, np.ndarray] = {}
    if len(candidates) == 1:
        needed[candidates[0]] = np.isnan(values[candidates[0]])
    else:
        filled = {name: np.where(np.isnan(values[name]), MEMBER_QUANTITIES[name].dummy, values[name])
                  for name in candidates}
        for name in candidates:
            override = {other: filled[other] for other in candidates if other != name}
            scope = Scope(_base_lookup(data, member, p, case, override), ruleset.parameter_map,
                          ruleset.definition_map)
            _, unknown, demand, capacity = _evaluate(check, scope, n)
            bad = unknown | np.logical_or.reduce(_unverifiable(check, demand, capacity))
            needed[name] = bad & np.isnan(values[name])
    lists: list[list[str]] = [[] for _ in range(n)]
    texts: dict[Any, str] = {}   # one text per distinct (input, load case, shape, diameter)
    shape, d = data.text("shape"), data.number("d")
    for name in candidates:
        why = data.rejected(MEMBER_QUANTITIES[name].column or name)
        for j in np.flatnonzero(needed[name]).tolist():
            m = int(member[j])
            if name == "P" and note is not None and note[j] is not None:
                lists[j].append(note[j])   # the force row says why it has no value
                continue
            # the model gave a value the reader did not use (for P: the member has no force at all)
            if why[m] is not None and not (name == "P" and case[j] is not None):
                lists[j].append(f"{name}: {why[m]}")
                continue
            key = (name, case[j] if name == "P" else None) if name != "As" else (name, shape[m], d[m])
            text = texts.get(key)
            if text is None:
                text = texts[key] = _missing_text(name, ruleset, data, m, case[j])
            lists[j].append(text)
    return lists


def _missing_text(name: str, ruleset: RuleSet, data: MemberData, m: int, case: Any) -> str:
    if name == "P" and case is not None:
        return f"P: load case {case!r} has no axial force value for this member"
    if name == "As":
        shape = data.text("shape")[m]
        d = data.number("d")[m]
        if shape != Shape.ROUND_BAR:
            return f"As: {'a ' + shape if shape else 'a section of unknown shape'} has no thread (round bars only)"
        if np.isnan(d):
            return "As: no rod diameter d to find the thread size"
        unit = ruleset.display["length"]
        return (f"As: d = {_number_text(Q_(d, 'm').m_as(unit))} {_unit_label(unit)} is not a standard "
                "UNC (ASME B1.1) or ISO coarse (ISO 261) thread size")
    return MEMBER_QUANTITIES[name].missing


def _base_lookup(data: MemberData, member: np.ndarray, p: np.ndarray, case: np.ndarray,
                 override: dict[str, np.ndarray] | None = None) -> Callable[[str], Value]:
    override = override or {}

    def base(name: str) -> Value:
        if name in override:
            return Q_(override[name], MEMBER_QUANTITIES[name].unit)
        if name == "P":
            return Q_(p, "N")
        if name in MEMBER_QUANTITIES:
            return Q_(data.number(name)[member], MEMBER_QUANTITIES[name].unit)
        if name == "load_case":
            return Text(case)
        if name in TEXT_NAMES:
            return Text(data.text(name)[member])
        raise ExpressionError(f"unknown name {name!r}")
    return base


def _evaluate(check: Check, scope: Scope, n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(applies, condition unknown, demand, capacity) over n rows, numbers in the check's unit."""
    keep = np.ones(n, dtype=bool)
    unknown = np.zeros(n, dtype=bool)
    if check.when is not None:
        value, known = _cond(check.when.evaluate(scope), n, "when")
        keep = value | ~known
        unknown = ~known
    demand_q = check.demand.evaluate(scope)
    capacity_q = check.capacity.evaluate(scope)
    if not isinstance(demand_q, pint.Quantity) or not isinstance(capacity_q, pint.Quantity):
        raise ExpressionError("demand and capacity must be numbers")
    with np.errstate(over="ignore", invalid="ignore"):   # a value too large for a float becomes inf: unchecked
        demand, capacity = demand_q.m_as(check.unit), capacity_q.m_as(check.unit)
    return keep, unknown, _broadcast(demand, n), _broadcast(capacity, n)


def _unverifiable(check: Check, demand: np.ndarray,
                  capacity: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(demand not finite, capacity not a positive finite value, demand negative where the check
    has neither ``when`` nor ``magnitude``) of each row: a row with any of them is never passed.

    A capacity of zero or less is no capacity (a rule or a value that went wrong); a negative
    demand of a check that applies to every member (a compression force in a tension stress)
    would otherwise pass by being negative.
    """
    with np.errstate(invalid="ignore"):
        bad_demand = ~np.isfinite(demand)
        bad_capacity = ~(np.isfinite(capacity) & (capacity > 0))
        if check.when is None and not check.magnitude:
            negative = ~bad_demand & (demand < 0)
        else:
            negative = np.zeros(len(demand), dtype=bool)
    return bad_demand, bad_capacity, negative


def _unverifiable_text(check: Check, demand: float, capacity: float, bad_capacity: bool, bad_demand: bool) -> str:
    """Why a row whose inputs are all there is not checked, with the value that stops it."""
    unit = check.unit
    label = f" {_unit_label(unit)}" if unit else ""
    if bad_capacity:
        return (f"capacity is not a positive finite value (capacity = {_number_text(capacity)}{label}, "
                f"from {check.capacity.source})")
    if bad_demand:
        return f"demand is not a finite number (demand = {_number_text(demand)}{label}, from {check.demand.source})"
    return (f"demand is negative (demand = {_number_text(demand)}{label}, from {check.demand.source}) and the "
            "check has no 'when' condition: a negative demand is not compared (add a 'when', or "
            "'magnitude = true' to compare its size)")


def _run_check(check: Check, order: int, ruleset: RuleSet, data: MemberData,
               member: np.ndarray, p: np.ndarray, case: np.ndarray, rank: np.ndarray,
               messages: bool = True, note: np.ndarray | None = None) -> dict[str, Any] | None:
    n = len(member)
    if n == 0:
        return None
    extra: dict[str, Value] = {}
    scope = Scope(_base_lookup(data, member, p, case), ruleset.parameter_map, ruleset.definition_map, extra)
    keep, unknown, demand, capacity = _evaluate(check, scope, n)
    bad_demand, bad_capacity, negative = _unverifiable(check, demand, capacity)
    if check.magnitude:
        demand = np.abs(demand)
    with np.errstate(all="ignore"):
        unchecked = unknown | bad_demand | bad_capacity | negative
        ratio = np.where(capacity != 0, demand / np.where(capacity != 0, capacity, 1.0),
                         np.where(demand > 0, np.inf, np.nan))
        passed = ~unchecked & (demand - capacity <= PASS_TOLERANCE * np.abs(capacity))
    ratio[unchecked] = np.nan
    status = np.where(unchecked, UNCHECKED, np.where(passed, PASS, FAIL)).astype(np.int8)

    rows = np.flatnonzero(keep)
    k = len(rows)
    unchecked_k = unchecked[rows]
    message = np.full(k, "", dtype=object)
    missing = _nothing_missing(k)
    u_pos = np.flatnonzero(unchecked_k)
    if len(u_pos):
        u_rows = rows[u_pos]
        lists = _missing_lists(check, ruleset, data, member[u_rows], p[u_rows], case[u_rows],
                               None if note is None else note[u_rows])
        for j, pos in enumerate(u_pos.tolist()):
            missing[pos] = lists[j]
            if lists[j]:
                message[pos] = "not checked: missing " + ", ".join(s.split(":", 1)[0] for s in lists[j])
            elif unknown[rows[pos]]:
                message[pos] = "not checked: the applicability condition cannot be decided"
            else:
                r = int(rows[pos])
                message[pos] = "not checked: " + _unverifiable_text(check, demand[r], capacity[r],
                                                                  bool(bad_capacity[r]), bool(bad_demand[r]))
    c_pos = np.flatnonzero(~unchecked_k)
    if len(c_pos) and messages:
        c_rows = rows[c_pos]
        if check.message:
            extra.update({"demand": Q_(demand, check.unit), "capacity": Q_(capacity, check.unit),
                          "ratio": Q_(ratio, "")})
            text = np.full(len(c_rows), "", dtype=object)
            for part in check.message:
                if part.expr is None:
                    text = text + part.text
                    continue
                value = part.expr.evaluate(scope)
                own_unit = check.unit if part.expr.source in ("demand", "capacity") else None
                text = text + _format(value, part.spec, own_unit, ruleset, c_rows, n)
            message[c_pos] = text
        else:
            message[c_pos] = check.title
    return {
        "member": member[rows], "check_order": np.full(k, order), "rank": rank[rows], "load_case": case[rows],
        "status": status[rows], "demand": demand[rows], "capacity": capacity[rows], "ratio": ratio[rows],
        "missing": missing, "message": message,
    }


#: status codes of CheckRows: the rank of table.STATUS_RANK (the worst first)
FAIL, UNCHECKED, PASS = (STATUS_RANK[s] for s in ("fail", "unchecked", "pass"))
STATUS_NAMES = np.array(sorted(STATUS_RANK, key=STATUS_RANK.__getitem__), dtype=object)

#: results columns that are the same for every row of a check: the Check attribute of each
_PER_CHECK = {"check": "id", "unit": "unit", "demand_source": "demand_source",
              "capacity_source": "capacity_source", "clause": "clause", "title": "title"}
_IDENTITY = ("model", "global_id", "ifc_class", "name", "tag")


class CheckRows:
    """Results as arrays, one item per result in the report's order; ``frame()`` is the results
    table. A check's own values (id, unit, sources) are kept once per check, the member's once per
    member: a large table is made only when asked for."""

    def __init__(self, data: MemberData, checks: tuple[Check, ...], *, member: np.ndarray,
                 check_order: np.ndarray, rank: np.ndarray, load_case: np.ndarray, status: np.ndarray,
                 demand: np.ndarray, capacity: np.ndarray, ratio: np.ndarray, missing: np.ndarray,
                 message: np.ndarray) -> None:
        self.data, self.checks = data, checks
        self.member, self.check_order, self.rank, self.load_case = member, check_order, rank, load_case
        self.status = status   # codes: FAIL, UNCHECKED, PASS
        self.demand, self.capacity, self.ratio = demand, capacity, ratio
        self.missing, self.message = missing, message

    def __len__(self) -> int:
        return len(self.member)

    def per_check(self, column: str) -> np.ndarray:
        """A per-check column's value for each check (by check order)."""
        out = np.empty(len(self.checks), dtype=object)
        out[:] = [getattr(c, _PER_CHECK[column]) for c in self.checks]
        return out

    def column(self, column: str, rows: Any = slice(None)) -> np.ndarray:
        """One column of the results table (``rows`` of it) as an array."""
        if column in _IDENTITY:
            return self.data.text(column)[self.member[rows]]
        if column in _PER_CHECK:
            return self.per_check(column)[self.check_order[rows]]
        if column == "status":
            return STATUS_NAMES[self.status[rows]]
        return getattr(self, column)[rows]

    def frame(self, rows: Any = slice(None)) -> pd.DataFrame:
        """The results table (of ``rows`` only, e.g. an index array), columns :data:`COLUMNS`."""
        columns: dict[str, Any] = {}
        for c in COLUMNS:
            columns[c] = pd.Series(self.column(c, rows),
                                   dtype=object if c in _TEXT_RESULT_COLUMNS or c == "missing" else float)
        return frame_of(columns)


def empty_results() -> pd.DataFrame:
    frame = pd.DataFrame({c: pd.Series(dtype=object) for c in COLUMNS})
    for c in ("demand", "capacity", "ratio"):
        frame[c] = frame[c].astype(float)
    return frame


def run_checks(ruleset: RuleSet, members: pd.DataFrame, forces: pd.DataFrame | None = None,
               checks: list[str] | None = None, *, messages: bool = True) -> pd.DataFrame:
    """Results of ``ruleset`` (or of the listed ``checks`` of it) over ``members`` and ``forces``.

    ``members`` has the columns of :func:`modelcheck.common.table.member_columns` (absent columns count
    as missing values); ``forces`` those of :data:`modelcheck.common.table.FORCE_COLUMNS` (tension
    positive, newtons). Returns the columns :data:`COLUMNS` in the order (model, global_id,
    check order in the file, load case in the natural order of its name: LC2 before LC10).
    ``messages=False`` leaves the message of checked results empty (sizing and suggestions
    evaluate many candidates whose messages nobody reads).
    """
    rows = check_rows(ruleset, members, forces, checks, messages=messages)
    return empty_results() if rows is None else rows.frame()


def check_rows(ruleset: RuleSet, members: pd.DataFrame, forces: pd.DataFrame | None = None,
               checks: list[str] | None = None, *, messages: bool = True) -> CheckRows | None:
    """The results of ``run_checks`` as arrays in the report's order (None when there are none):
    what the results table is made of, and what the JSON report encodes without making it."""
    members = members.reset_index(drop=True)
    data = MemberData(members)
    selected_checks = [c for c in ruleset.checks if checks is None or c.id in checks]
    if checks is not None:
        unknown_ids = sorted(set(checks) - {c.id for c in ruleset.checks})
        if unknown_ids:
            raise RuleSetError(f"no check {unknown_ids[0]!r} in rule set {ruleset.name}", path=ruleset.path)
    if data.n == 0 or not selected_checks:
        return None
    match_cache: dict[Any, np.ndarray] = {}   # selectors share columns and patterns
    base_mask = ruleset.select.mask(members, match_cache)
    need_force = any(c.needs_force for c in selected_checks)
    frows = _force_rows(members, forces) if need_force else None
    all_members = np.arange(data.n)
    no_case = np.full(data.n, None, dtype=object)
    no_force = np.full(data.n, np.nan)
    parts: list[dict[str, Any]] = []
    selected_ids = {c.id for c in selected_checks}
    select_masks: dict[Any, np.ndarray] = {}
    for order, check in enumerate(ruleset.checks):
        if check.id not in selected_ids:
            continue
        if check.select not in select_masks:   # checks often share a selection
            select_masks[check.select] = check.select.mask(members, match_cache)
        mask = base_mask & select_masks[check.select]
        if check.needs_force:
            assert frows is not None
            take = mask[frows["member"]]
            args = (frows["member"][take], frows["P"][take], frows["load_case"][take], frows["rank"][take])
            note = frows["note"][take]
        else:
            args = (all_members[mask], no_force[mask], no_case[mask], np.full(int(mask.sum()), -1))
            note = None
        try:
            part = _run_check(check, order, ruleset, data, *args, messages=messages, note=note)
        except ExpressionError as exc:
            raise RuleSetError(f"check {check.id}: {exc}", path=ruleset.path, where=str(check.line)) from exc
        if part is not None and len(part["member"]):
            parts.append(part)
    if not parts:
        return None
    cat = {k: np.concatenate([p[k] for p in parts]) for k in parts[0]}
    member = cat["member"]
    model_code = pd.factorize(pd.Series(data.text("model"), dtype=object).fillna(""), sort=True)[0]
    gid_code = pd.factorize(pd.Series(data.text("global_id"), dtype=object).fillna(""), sort=True)[0]
    ranked = np.lexsort((cat["rank"], cat["check_order"], gid_code[member], model_code[member]))
    return CheckRows(data, tuple(ruleset.checks), **{k: v[ranked] for k, v in cat.items()})


def evaluate_expression(ruleset: RuleSet, expression: str | Expression, members: pd.DataFrame,
                        P: Any = None) -> Value:
    """Evaluate an expression of ``ruleset``'s names over every member (no selection, no `when`).

    ``P`` is the axial force in newtons, one per member or one for all (NaN when omitted). Used
    to rate capacities and size members: e.g. ``evaluate_expression(rs, "Fy / Omega_t * A", m)``.
    """
    if isinstance(expression, str):
        names = (set(MEMBER_QUANTITIES) | set(TEXT_NAMES) | set(ruleset.parameter_map)
                 | set(ruleset.definition_map))
        expression = parse_expression(expression, names)
    members = members.reset_index(drop=True)
    data = MemberData(members)
    n = data.n
    p = _broadcast(np.nan if P is None else P, n)
    base = _base_lookup(data, np.arange(n), p, np.full(n, None, dtype=object))
    return expression.evaluate(Scope(base, ruleset.parameter_map, ruleset.definition_map))
