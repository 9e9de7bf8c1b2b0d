"""Capacity rating: the allowable tension and compression force of every member, with no force known.

Method (documented in the README): the rule set itself is evaluated, not a copy of its
formulas. Each member gets three probe forces in tension (+1, +2, +4 kN) and three in
compression (−1, −2, −4 kN) as load cases, and the rule set runs once over all of them
(:func:`modelcheck.rules.engine.run_checks`). For every check that applies, the demand at the
probes gives its slope in P; a check is *force-limiting* when its demand grows with |P| while
its capacity stays put, and its allowable force is where the demand line meets the capacity::

    demand(P) = a + b·|P|   (a = 0 for a stress P/A, a = α·ΔT·L for an elongation)
    P_allow   = (capacity − a) / b           (P/A ≤ F gives P_allow = F·A)

The third probe confirms the line (a check whose demand is not linear in P, or whose capacity
changes with P, is reported, not guessed). The governing allowable force of a direction is the
least over its force-limiting checks — tension yielding and rupture, threaded-rod tension,
flexural buckling (its capacity Fcr depends on KL/r, not on P), and elongation where the rule set
limits it. Checks that do not depend on the force (slenderness limits, minimum rod size) do not
set a force; when one fails, it fails at every force, so no force is acceptable: that direction
(both, for a check without P such as a minimum rod size) gets None, with the failing check as
the reason.

A member lacking data that a check needs (no Fy, no length for buckling, no area) gets None for
that direction, with the missing inputs as the reason: a partial rating is never shown as the
allowable force.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from modelcheck.common.vocabulary import quantity_object

if TYPE_CHECKING:
    from modelcheck.report.quantities import DisplayUnits
    from modelcheck.rules.ruleset import RuleSet

#: said after a check that fails at every force: why the direction has no rating
NO_FORCE = " (no force satisfies it: no rating)"

#: probe forces in newtons (magnitudes); three points confirm the demand is a line in |P|
PROBES: tuple[float, ...] = (1e3, 2e3, 4e3)
_LINEAR_TOL = 1e-7


#: probe load cases: tension +0 +1 +2, compression -0 -1 -2 (index k into PROBES)
CASES: tuple[str, ...] = tuple(f"+{k}" for k in range(len(PROBES))) + tuple(f"-{k}" for k in range(len(PROBES)))


def _probe_forces(members: pd.DataFrame, ids: np.ndarray) -> pd.DataFrame:
    n = len(members)
    models = members["model"].to_numpy(dtype=object) if "model" in members.columns else np.full(n, None)
    cases = list(CASES)
    values = list(PROBES) + [-p for p in PROBES]
    m = len(cases)
    return pd.DataFrame({
        "model": np.repeat(models, m), "global_id": np.repeat(ids, m),
        "load_case": np.tile(np.asarray(cases, dtype=object), n),
        "axial_force": np.tile(np.asarray(values, dtype=float), n),
        "source": "capacity probe",
    })


def _direction(res: pd.DataFrame, sign: str, n: int) -> dict[str, np.ndarray]:
    """Allowable force [N], governing check, and reason per member for one direction."""
    allow = np.full(n, np.nan)
    gov = np.full(n, None, dtype=object)
    reason = np.full(n, None, dtype=object)
    code = pd.Categorical(res["load_case"], categories=list(CASES)).codes
    first = 0 if sign == "+" else len(PROBES)
    take = (code >= first) & (code < first + len(PROBES))
    part = res[take]
    if not len(part):
        return {"allow": allow, "gov": gov, "reason": reason}
    part = part.assign(k=code[take] - first)
    key = ["m", "check"]
    # unchecked at any probe: that check (and so the direction) cannot be rated
    unchecked = part[part["status"] == "unchecked"].drop_duplicates(key)
    idx = part[key].drop_duplicates().reset_index(drop=True)
    pos = pd.MultiIndex.from_frame(idx).get_indexer(pd.MultiIndex.from_frame(part[key]))
    k = part["k"].to_numpy()
    d = np.full((len(idx), len(PROBES)), np.nan)
    c = np.full((len(idx), len(PROBES)), np.nan)
    d[pos, k] = part["demand"].to_numpy(dtype=float)
    c[pos, k] = part["capacity"].to_numpy(dtype=float)
    failing = np.zeros(len(idx), dtype=bool)
    np.logical_or.at(failing, pos, (part["status"] == "fail").to_numpy())
    complete = np.isfinite(d).all(axis=1) & np.isfinite(c).all(axis=1)
    with np.errstate(all="ignore"):
        b = d[:, 1] - d[:, 0]                    # demand per probe step (1 kN)
        a = d[:, 0] - b
        scale = np.maximum(np.abs(d).max(axis=1), 1e-300)
        linear = (np.abs(d[:, 2] - d[:, 1] - 2 * b) <= _LINEAR_TOL * scale) & \
                 (np.abs(c[:, 2] - c[:, 0]) <= _LINEAR_TOL * np.maximum(np.abs(c[:, 0]), 1e-300))
        grows = b > _LINEAR_TOL * scale
        p_allow = np.maximum((c[:, 0] - a) / b, 0.0) * PROBES[0]
    idx["complete"] = complete
    idx["linear"] = linear
    idx["grows"] = grows
    idx["p"] = p_allow
    idx["failing"] = failing
    # force-limiting checks of complete, linear rows
    lim = idx[idx["complete"] & idx["linear"] & idx["grows"] & np.isfinite(idx["p"])]
    if len(lim):
        order = lim.sort_values(["m", "p"], kind="stable").drop_duplicates("m")
        allow[order["m"].to_numpy()] = order["p"].to_numpy()
        gov[order["m"].to_numpy()] = order["check"].to_numpy(dtype=object)
    # force-independent checks that fail at every force (a slenderness limit): no force is
    # acceptable, so the direction has no rating, with that reason
    msg0 = part[part["k"] == 0].drop_duplicates(key).set_index(key)["message"]
    fixed = idx[idx["complete"] & ~idx["grows"] & idx["failing"]]
    if len(fixed):
        texts = msg0.reindex(pd.MultiIndex.from_frame(fixed[key])).to_numpy(dtype=object)
        blocked: dict[int, list[str]] = {}
        for m_, check, msg in zip(fixed["m"].tolist(), fixed["check"].tolist(), texts.tolist(), strict=True):
            blocked.setdefault(m_, []).append(f"{check} fails at any force: {msg}")
        mm = np.asarray(list(blocked), dtype=int)
        allow[mm] = np.nan
        gov[mm] = None
        reason[mm] = ["; ".join(v) + NO_FORCE for v in blocked.values()]
    # not linear: cannot be rated
    bent = idx[idx["complete"] & ~idx["linear"]].drop_duplicates("m")
    if len(bent):
        mm = bent["m"].to_numpy()
        allow[mm] = np.nan
        gov[mm] = None
        reason[mm] = [f"{ch}: demand is not linear in the force; not rated" for ch in bent["check"].tolist()]
    # unchecked rows win over everything: the rating would rest on missing data
    if len(unchecked):
        firsts = unchecked.drop_duplicates("m")
        mm = firsts["m"].to_numpy()
        allow[mm] = np.nan
        gov[mm] = None
        reason[mm] = [f"{ch}: " + ("; ".join(miss) if miss else str(msg))
                      for ch, miss, msg in zip(firsts["check"].tolist(), firsts["missing"].tolist(),
                                               firsts["message"].tolist(), strict=True)]
    return {"allow": allow, "gov": gov, "reason": reason}


def _obj(lists: list[Any]) -> np.ndarray:
    out = np.empty(len(lists), dtype=object)
    for i, v in enumerate(lists):
        out[i] = v
    return out


def rating_key(ruleset: RuleSet, members: pd.DataFrame) -> pd.DataFrame:
    """What the rule set can see of each member: the columns its expressions read, and one
    column per selector (the selector's mask). Members equal in all of them get equal results,
    whatever their GlobalId, tag or name."""
    from modelcheck.rules.names import MEMBER_QUANTITIES

    cols: set[str] = set()
    for ch in ruleset.checks:
        for name in ch.inputs | ch.optional:
            if name == "As":
                cols.update(("d", "shape"))
            elif name == "r_named":
                cols.update(("section_name", "shape", "h", "b", "tf", "tw"))
            elif name == "t_named":
                cols.update(("section_name", "shape", "h", "b", "d", "t"))
            elif name != "P" and MEMBER_QUANTITIES[name].column is not None:
                cols.add(str(MEMBER_QUANTITIES[name].column))
        for name in ch.texts:
            if name == "thread":
                cols.update(("d", "shape"))
            elif name != "load_case":
                cols.add(name)
    key = members[sorted(c for c in cols if c in members.columns)].copy()
    key["_select"] = ruleset.select.mask(members)
    for i, ch in enumerate(ruleset.checks):
        if not ch.select.empty:
            key[f"_select{i}"] = ch.select.mask(members)
    return key


def rate_members(ruleset: RuleSet, members: pd.DataFrame, units: DisplayUnits) -> pd.DataFrame:
    """Allowable axial forces of every member under ``ruleset``: one row per member.

    Columns: ``global_id``; ``tension`` and ``compression`` (JSON quantity dicts
    ``{"value", "unit", "source"}`` in ``units.unit("force")``, or None); ``tension_check`` and
    ``compression_check`` (the governing check id, or None); ``tension_note`` and
    ``compression_note`` (why a value is None, or what else fails at any force; None when
    there is nothing to say).

    Members the rule set cannot tell apart (:func:`rating_key`: same section, material, length
    and selector matches) are rated once.
    """
    frame = members.reset_index(drop=True)
    n = len(frame)
    gids = frame["global_id"].to_numpy(dtype=object) if "global_id" in frame.columns else np.full(n, None)
    out_cols = ("tension", "compression", "tension_check", "compression_check", "tension_note", "compression_note")
    if n == 0:
        return pd.DataFrame({"global_id": pd.Series(dtype=object), **{c: pd.Series(dtype=object) for c in out_cols}})
    key = rating_key(ruleset, frame)
    codes = key.groupby(list(key.columns), dropna=False, sort=False).ngroup().to_numpy()
    first = pd.Series(np.arange(n)).groupby(codes).first().to_numpy()
    rated = _rate(ruleset, frame.iloc[first].reset_index(drop=True), units)
    out = {"global_id": pd.Series(gids, dtype=object)}
    for c in out_cols:
        values = rated[c].to_numpy(dtype=object)[codes]
        if c in ("tension", "compression"):   # each member its own dict
            values = _obj([None if v is None else dict(v) for v in values.tolist()])
        out[c] = pd.Series(values, dtype=object)
    return pd.DataFrame(out)


def _rate(ruleset: RuleSet, frame: pd.DataFrame, units: DisplayUnits) -> pd.DataFrame:
    """rate_members over distinct members."""
    from modelcheck.rules.engine import run_checks

    n = len(frame)
    ids = np.asarray([f"rate{i}" for i in range(n)], dtype=object)
    probe = frame.copy()
    probe["global_id"] = ids
    res = run_checks(ruleset, probe, _probe_forces(probe, ids))
    pos = pd.Index(ids).get_indexer(res["global_id"].to_numpy(dtype=object))
    res = res.assign(m=pos)
    covered = np.zeros(n, dtype=bool)
    covered[res["m"].to_numpy()] = True
    # checks without P (one row per member): a failure holds at any force
    fixed = res[res["load_case"].isna() & (res["status"] == "fail")]
    fixed_notes: list[list[str]] = [[] for _ in range(n)]
    for m_, check, msg in zip(fixed["m"], fixed["check"], fixed["message"], strict=True):
        fixed_notes[m_].append(f"{check} fails at any force: {msg}")
    t = _direction(res, "+", n)
    c = _direction(res, "-", n)
    # a check without P that fails (a minimum size) fails at every force of either direction
    for d in (t, c):
        for i, texts in enumerate(fixed_notes):
            if texts and d["reason"][i] is None:
                d["allow"][i] = np.nan
                d["gov"][i] = None
                d["reason"][i] = "; ".join(texts) + NO_FORCE

    unit = units.unit("force")
    factor = units.convert("force", 1.0)
    check_map = {ch.id: ch for ch in ruleset.checks}

    def q(p: float, check: str | None) -> dict[str, Any] | None:
        if check is None or not np.isfinite(p):
            return None
        ch = check_map[check]
        clause = f" ({ch.clause})" if ch.clause else ""
        return quantity_object(p * factor, unit, f"{ruleset.name}: {check}{clause}")

    def note(d: dict[str, np.ndarray], i: int, what: str) -> str | None:
        parts: list[str] = []
        if not covered[i]:
            parts.append(f"rule set {ruleset.name} does not cover this member (its [select])")
        elif d["reason"][i] is not None:
            parts.append(str(d["reason"][i]))
        elif d["gov"][i] is None:
            parts.append(f"no {what} check of {ruleset.name} limits the force of this member")
        parts += [x for x in fixed_notes[i] if x not in str(d["reason"][i])]
        return "; ".join(parts) or None

    return pd.DataFrame({
        "tension": pd.Series([q(t["allow"][i], t["gov"][i]) for i in range(n)], dtype=object),
        "compression": pd.Series([q(c["allow"][i], c["gov"][i]) for i in range(n)], dtype=object),
        "tension_check": pd.Series(t["gov"], dtype=object),
        "compression_check": pd.Series(c["gov"], dtype=object),
        "tension_note": pd.Series([note(t, i, "tension") for i in range(n)], dtype=object),
        "compression_note": pd.Series([note(c, i, "compression") for i in range(n)], dtype=object),
    })
