"""Which members a rule set or a check applies to.

A selector is a set of keys; a member is selected when it matches every key given (AND), and
matches a key when its value matches any of the key's patterns (OR). Patterns are shell-style
(``*`` any text, ``?`` one character, ``[abc]`` one of), case-insensitive; an empty value never
matches. ``ifc_class`` names IFC classes and includes their subtypes (IfcMember selects
IfcMemberStandardCase). ``any_name`` matches the Name, ObjectType, type name, PredefinedType,
Tag or profile (section) name. ``exclude`` holds keys of its own: a member matching all of them is left out.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from typing import Any

import numpy as np
import pandas as pd

from modelcheck.rules.expr import glob_match

#: selector key -> member-table columns it looks at (a match in any of them counts)
SELECTOR_KEYS: dict[str, tuple[str, ...]] = {
    "ifc_class": ("ifc_class",),
    "predefined_type": ("predefined_type",),
    "object_type": ("object_type",),
    "name": ("name",),
    "tag": ("tag",),
    "type_name": ("type_name",),
    "any_name": ("name", "object_type", "type_name", "predefined_type", "tag", "section_name"),
    "material": ("material",),
    "material_category": ("material_category",),
    "material_grade": ("material_grade",),
    "storey": ("storey",),
    "shape": ("shape",),
    "section_name": ("section_name",),
}

_SCHEMAS = ("IFC4X3_ADD2", "IFC4", "IFC2X3")


@lru_cache(maxsize=1)
def _schemas() -> tuple[object, ...]:
    import ifcopenshell.ifcopenshell_wrapper as wrapper

    found = []
    for name in _SCHEMAS:
        try:
            found.append(wrapper.schema_by_name(name))
        except RuntimeError:
            continue
    return tuple(found)


def _declaration(schema: object, name: str) -> object | None:
    try:
        return schema.declaration_by_name(name)  # type: ignore[attr-defined]
    except RuntimeError:
        return None


@lru_cache(maxsize=1024)
def ifc_class_name(name: str) -> str | None:
    """The IFC entity name as the schemas spell it ('ifcmember' -> 'IfcMember'); None if none has it."""
    for schema in _schemas():
        decl = _declaration(schema, name)
        if decl is not None and hasattr(decl, "supertype"):
            return str(decl.name())  # type: ignore[attr-defined]
    return None


@lru_cache(maxsize=4096)
def is_ifc_subclass(cls: str, ancestor: str) -> bool:
    """True when ``cls`` is ``ancestor`` or one of its subtypes in any of IFC2X3, IFC4, IFC4X3."""
    if cls.lower() == ancestor.lower():
        return True
    for schema in _schemas():
        decl = _declaration(schema, cls)
        while decl is not None and hasattr(decl, "supertype"):
            if str(decl.name()).lower() == ancestor.lower():  # type: ignore[attr-defined]
                return True
            decl = decl.supertype()  # type: ignore[attr-defined]
    return False


def _column(members: pd.DataFrame, column: str) -> np.ndarray:
    if column not in members.columns:
        return np.full(len(members), None, dtype=object)
    return members[column].to_numpy(dtype=object, na_value=None)   # type: ignore[call-overload]  # pandas-stubs leave out na_value=None, which pandas takes


def _label(key: str) -> str:
    return "class" if key == "ifc_class" else key.replace("_", " ")


def _values(key: str, members: pd.DataFrame) -> list[str]:
    """'<key> <value>' of each member for one selector key ('<key> unknown' where it has none)."""
    column = SELECTOR_KEYS[key][0] if key != "any_name" else "name"
    vals = _column(members, column)
    return [f"{_label(key)} {v}" if v is not None and str(v).strip() else f"{_label(key)} unknown"
            for v in vals.tolist()]


def _mismatch(key: str, patterns: tuple[str, ...], members: pd.DataFrame) -> list[str]:
    """Why members do not match one selector key: their value, or for ``any_name`` the patterns."""
    if key == "any_name":
        return [f"no name matching {', '.join(patterns)}"] * len(members)
    return _values(key, members)


@dataclass(frozen=True)
class Selector:
    """Selector keys with their patterns; ``exclude`` another selector whose matches are dropped."""

    keys: tuple[tuple[str, tuple[str, ...]], ...] = ()
    exclude: Selector | None = None

    @property
    def empty(self) -> bool:
        return not self.keys and self.exclude is None

    def describe(self) -> str:
        """One line, e.g. 'shape: round-bar; any_name: *rod*; except material_category: aluminium'."""
        text = "; ".join(f"{k}: {', '.join(v)}" for k, v in self.keys) or "all members"
        if self.exclude is not None and self.exclude.keys:
            text += "; except " + self.exclude.describe()
        return text

    def left_out(self, members: pd.DataFrame) -> list[tuple[str, int]]:
        """Why each of ``members`` (ones this selector does not select) is left out, counted:
        [(reason, members)], most first. The reason names the first key a member does not
        match with the member's own value ("shape flat-bar", "class IfcBeam", "no name matching
        *rod*"), or, for a member the exclusion matches, its values of the exclusion's keys
        ("material category concrete")."""
        n = len(members)
        if not n:
            return []
        reason = np.full(n, None, dtype=object)
        for key, patterns in self.keys:
            open_ = pd.isna(reason)
            miss = open_ & ~Selector(((key, patterns),)).mask(members)
            if miss.any():
                reason[miss] = _mismatch(key, patterns, members[miss])
        if self.exclude is not None and self.exclude.keys:
            open_ = pd.isna(reason)
            hit = open_ & self.exclude.mask(members)
            if hit.any():
                texts = [_values(key, members[hit]) for key, _ in self.exclude.keys]
                reason[hit] = [", ".join(parts) for parts in zip(*texts, strict=True)]
        counts = pd.Series(reason, dtype=object).fillna("selection").value_counts(sort=False)
        return sorted(((str(k), int(v)) for k, v in counts.items()), key=lambda kv: (-kv[1], kv[0]))

    def mask(self, members: pd.DataFrame, cache: dict[Any, np.ndarray] | None = None) -> np.ndarray:
        """Boolean array: which rows of ``members`` this selector selects.

        ``cache`` (a dict kept by the caller for one member table) holds each column's values and
        its match of a set of patterns, so selectors that share keys (a check's and its
        exclusion's, several checks' on one kind of member) match each column once."""
        if cache is None:
            cache = {}
        n = len(members)
        result = np.ones(n, dtype=bool)
        for key, patterns in self.keys:
            if key == "ifc_class":
                values = _column(members, "ifc_class")
                uniq = {v for v in values.tolist() if v is not None}
                hits = [v for v in uniq if any(is_ifc_subclass(str(v), p) for p in patterns)]
                hit = np.isin(values, np.asarray(hits, dtype=object)) if hits else np.zeros(n, dtype=bool)
            else:
                hit = np.zeros(n, dtype=bool)
                for column in SELECTOR_KEYS[key]:
                    found = cache.get((column, patterns))
                    if found is None:
                        column_values = cache.get(column)
                        if column_values is None:
                            column_values = cache[column] = _column(members, column)
                        found = cache[(column, patterns)] = np.asarray(glob_match(column_values, patterns).value, dtype=bool)
                    hit |= found
            result &= hit
        if self.exclude is not None and self.exclude.keys:
            result &= ~self.exclude.mask(members, cache)
        return result


#: GlobalIds an exclusion line names before it says how many more there are
EXCLUDED_SHOWN = 8


def excluded_members(selector: Selector, members: pd.DataFrame) -> dict[str, list[str]]:
    """The members ``selector``'s ``exclude`` leaves out (ones its keys alone would select),
    grouped by what excluded them: the values of the exclude keys' columns, e.g. "concrete" for
    ``exclude = { material_category = [...] }``. GlobalIds sorted; an empty dict when none."""
    ex = selector.exclude
    if ex is None or not ex.keys or not len(members):
        return {}
    cache: dict[Any, np.ndarray] = {}
    left_out = Selector(selector.keys).mask(members, cache) & ex.mask(members, cache)
    if not left_out.any():
        return {}
    rows = np.flatnonzero(left_out)
    labels = [""] * len(rows)
    for key, _patterns in ex.keys:
        cols = SELECTOR_KEYS.get(key, (key,))
        values = [_column(members, c)[rows] for c in cols]
        for i in range(len(rows)):
            v = next((str(col[i]) for col in values if col[i] is not None), "")
            labels[i] = f"{labels[i]}, {v}" if labels[i] else v
    gids = _column(members, "global_id")[rows]
    out: dict[str, list[str]] = {}
    for label, gid in zip(labels, gids.tolist(), strict=True):
        out.setdefault(label or "by the rule set's exclusion", []).append(str(gid))
    return {k: sorted(v) for k, v in sorted(out.items())}


def exclusion_lines(excluded: dict[str, list[str]], selector: Selector) -> list[str]:
    """One warning line per reason: 'excluded: concrete — 2 members (…): outside the rule set
    (except material_category: concrete*, …)'."""
    lines = []
    rule = selector.exclude.describe() if selector.exclude is not None else ""
    for label, gids in excluded.items():
        shown = ", ".join(gids[:EXCLUDED_SHOWN]) + (f" … (+{len(gids) - EXCLUDED_SHOWN})"
                                                    if len(gids) > EXCLUDED_SHOWN else "")
        n = len(gids)
        lines.append(f"excluded: {label} — {n} member{'s' if n != 1 else ''} ({shown}) not checked: "
                     f"the rule set leaves out {rule}")
    return lines
