"""A material's category, grade and stated yield strength, read from its name.

The patterns are data: ``modelcheck/rulesets/material-names.toml`` (its opening comment documents
the syntax and the order in which patterns decide). This module loads and validates that file and
applies it.

Example::

    >>> from modelcheck.materials.names import read_name
    >>> r = read_name("Metal - Steel - 345 MPa")
    >>> r.category, r.category_pattern, round(r.Fy / 1e6), r.Fy_pattern
    ('steel', 'steel-word', 345, 'stress-in-name')
    >>> read_name("CONCRETE/C30/37").grade
    'C30/37'
    >>> read_name("Material 7").category
    'unknown'
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Any

from modelcheck.common.data import data_path
from modelcheck.common.errors import RuleSetError
from modelcheck.common.problems import Problems, read_toml
from modelcheck.materials.library import CATEGORIES, UNKNOWN, load_library, quantity_si

_KEYS = frozenset({"name", "match", "category", "grade", "Fy", "applies_to", "about"})
_LETTER = r"[^\W\d_]"
# a match starts where a run of letters or of digits starts, and ends where one ends
_START = rf"(?:(?<!{_LETTER})(?={_LETTER})|(?<!\d)(?=\d)|(?=[\W_]))"
_END = rf"(?:(?<={_LETTER})(?!{_LETTER})|(?<=\d)(?!\d)|(?<=[\W_]))"
_FIELD = re.compile(r"\{(\d+)(?::(upper))?\}")


@dataclass(frozen=True)
class NamePattern:
    """One [[pattern]] of the file, compiled."""

    name: str
    regex: re.Pattern[str]
    category: str | None
    grade: str | None             # template: "S{1}", "{0:upper}"
    Fy: str | None                # template: "{1} ksi"
    applies_to: frozenset[str] | None
    about: str

    def applies(self, category: str) -> bool:
        if self.applies_to is not None:
            return category in self.applies_to
        return self.category is None or self.category == category


@dataclass(frozen=True)
class NameReading:
    """What a material's name (and Category) say: the category ("unknown" when nothing
    recognises it), the grade and a yield strength the name states (Pa), each with the pattern
    that read it."""

    category: str
    category_pattern: str | None      # None where IfcMaterial.Category decided (or nothing did)
    grade: str | None = None
    grade_pattern: str | None = None
    Fy: float | None = None
    Fy_pattern: str | None = None
    Fy_text: str | None = None        # the strength as the name states it: "50 ksi"

    @property
    def known(self) -> bool:
        return self.category != UNKNOWN


def default_names_path() -> Path:
    return data_path("material-names.toml")


def _fill(template: str, m: re.Match[str]) -> str:
    def field(f: re.Match[str]) -> str:
        text = m.group(int(f.group(1))) or ""
        return text.upper() if f.group(2) else text
    return " ".join(_FIELD.sub(field, template).split())


@lru_cache(maxsize=4)
def _load(path: str, label: str, _stamp: tuple[int, int]) -> tuple[NamePattern, ...]:
    problems = Problems(path, RuleSetError)
    doc = read_toml(problems, "the material-name patterns", plural=True)
    unknown = set(doc) - {"pattern"}
    if unknown:
        raise problems.error(sorted(unknown)[0], "unknown top-level key (expected [[pattern]] tables)")
    items = doc.get("pattern")
    if not isinstance(items, list) or not items:
        raise problems.error(None, "no [[pattern]] tables found")
    out: list[NamePattern] = []
    seen: set[str] = set()
    for i, spec in enumerate(items):
        out.append(_pattern(spec, i, problems, seen))
    return tuple(out)


def _pattern(spec: Any, i: int, problems: Problems[RuleSetError], seen: set[str]) -> NamePattern:
    where = f"pattern {i + 1}"
    if not isinstance(spec, dict):
        raise problems.error(where, "must be a table")
    name = spec.get("name")
    if not isinstance(name, str) or not name.strip():
        raise problems.error(where, "needs a name")
    where = f"pattern {name!r}"
    if name in seen:
        raise problems.error(where, "name used twice")
    seen.add(name)
    extra = set(spec) - _KEYS
    if extra:
        raise problems.error(where, f"unknown key {sorted(extra)[0]!r} (expected {', '.join(sorted(_KEYS))})")
    about = spec.get("about")
    if not isinstance(about, str) or not about.strip():
        raise problems.error(where, "needs an 'about' saying what it reads")
    text = spec.get("match")
    if not isinstance(text, str) or not text:
        raise problems.error(where, "needs a 'match' regular expression")
    try:
        regex = re.compile(f"{_START}(?:{text}){_END}", re.IGNORECASE)
    except re.error as exc:
        raise problems.error(where, f"'match' is not a regular expression: {exc}") from exc
    category = spec.get("category")
    if category is not None and category not in CATEGORIES:
        raise problems.error(where, f"category must be one of {', '.join(CATEGORIES)}, got {category!r}")
    applies = spec.get("applies_to")
    if applies is not None:
        if not isinstance(applies, list) or not all(a in (*CATEGORIES, UNKNOWN) for a in applies):
            raise problems.error(where, f"applies_to must list categories ({', '.join(CATEGORIES)}, unknown)")
        applies = frozenset(applies)
    for key in ("grade", "Fy"):
        t = spec.get(key)
        if t is None:
            continue
        if not isinstance(t, str) or not t.strip():
            raise problems.error(where, f"{key} must be a text template")
        for f in _FIELD.finditer(t):
            if int(f.group(1)) > regex.groups:
                raise problems.error(where, f"{key} refers to group {f.group(1)}, which 'match' does not have")
        if key == "Fy":   # "<number> <unit>": a written unit must be a pressure
            number, _, unit = t.strip().partition(" ")
            if not _FIELD.fullmatch(number) or not unit:
                raise problems.error(where, "Fy must be '{n} <unit>' or '{n} {m}' (a group holding the unit)")
            if not _FIELD.search(unit):
                quantity_si(f"1 {_unit_text(unit)}", "Fy", problems, f"{where}.Fy")
    if category is None and spec.get("grade") is None and spec.get("Fy") is None:
        raise problems.error(where, "gives nothing: needs a category, a grade or an Fy")
    return NamePattern(name, regex, category, spec.get("grade"), spec.get("Fy"), applies, about)


#: units as names write them -> as pint reads them (a name's "n/mm2" is newtons, not nano)
_UNIT_WORDS = {"mpa": "MPa", "gpa": "GPa", "kpa": "kPa", "pa": "Pa", "ksi": "ksi", "psi": "psi",
               "n/mm2": "N/mm**2", "n/mm²": "N/mm**2", "n/mm^2": "N/mm**2"}


def _unit_text(unit: str) -> str:
    return _UNIT_WORDS.get(unit.strip().casefold().replace(" ", ""), unit.strip())


def load_patterns(path: str | Path | None = None) -> tuple[NamePattern, ...]:
    """The patterns of the file (the shipped one by default), validated; RuleSetError otherwise."""
    p = Path(path) if path is not None else default_names_path()
    label = f"rulesets/{p.name}" if path is None else str(p)
    return _load(str(p), label, _stamp(p))


def _stamp(p: Path) -> tuple[int, int]:
    try:
        st = p.stat()
    except OSError:
        return (0, 0)
    return (st.st_mtime_ns, st.st_size)


def category_of_word(word: str | None, *, path: str | Path | None = None) -> str | None:
    """The category an IfcMaterial.Category text names ("Structural Steel", "Wood"), or None."""
    if not isinstance(word, str) or not word.strip():
        return None
    cat = load_library().category_of(word)
    if cat is not None and cat != UNKNOWN:
        return cat
    for p in load_patterns(path):
        if p.category is not None and p.regex.search(word):
            return p.category
    return None


def read_name(name: str | None, category: str | None = None, *,
              path: str | Path | None = None) -> NameReading:
    """What ``name`` and the model's ``category`` (IfcMaterial.Category) say about a material."""
    name = name if isinstance(name, str) else ""            # a file may hold anything there
    category = category if isinstance(category, str) else ""
    return _read_cached(name, category, None if path is None else str(path),
                        _stamp(Path(path) if path is not None else default_names_path()))


@lru_cache(maxsize=4096)
def _read_cached(name: str, category: str, path: str | None, _stamp: tuple[int, int]) -> NameReading:
    patterns = load_patterns(path)
    cat = category_of_word(category, path=path)
    cat_pattern = None
    hits = [(p, m) for p in patterns if (m := p.regex.search(name)) is not None] if name.strip() else []
    if cat is None:
        for p, _m in hits:
            if p.category is not None:
                cat, cat_pattern = p.category, p.name
                break
    cat = cat or UNKNOWN
    grade = grade_pattern = fy_text = fy_pattern = None
    fy = None
    problems = Problems(path or str(default_names_path()), RuleSetError)
    for p, m in hits:
        if not p.applies(cat):
            continue
        if grade is None and p.grade is not None:
            grade, grade_pattern = _fill(p.grade, m), p.name
        if fy is None and p.Fy is not None:
            # every place the pattern matches must state one strength: "345 MPa / 450 MPa" names
            # two, and which is the yield strength is a guess; the pattern then reads none
            stated = {_fy_text(p.Fy, each) for each in p.regex.finditer(name)}
            values = {quantity_si(t, "Fy", problems, f"pattern {p.name!r}") for t in stated}
            if len(values) == 1:
                fy_text, fy_pattern, fy = _fy_text(p.Fy, m), p.name, values.pop()
    return NameReading(cat, cat_pattern, grade, grade_pattern, fy, fy_pattern, fy_text)


def _fy_text(template: str, m: re.Match[str]) -> str:
    """The strength a match of an Fy pattern states, as pint reads it: "345 MPa", "50 ksi"."""
    number, _, unit = _fill(template, m).partition(" ")
    return f"{number} {_unit_text(unit)}"
