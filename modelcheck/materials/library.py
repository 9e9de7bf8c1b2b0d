"""The material library: grades matched by name when a model states no mechanical values.

The library is a TOML file (``rulesets/materials.toml``; its opening comment documents the
syntax). Values there carry units ("36 ksi", "210000 MPa", "12e-6 1/K") and are converted to SI
here (Pa, 1/K), each with its provenance ``"rulesets/materials.toml: <grade>"`` and the published
source the file names beside it.

Example::

    >>> from modelcheck.materials.library import match_material
    >>> m = match_material("ASTM A36 plate")
    >>> m.grade, round(m.Fy / 1e6, 1), m.Fy_source
    ('ASTM A36', 248.2, 'rulesets/materials.toml: ASTM A36')

Matching rule (also written in the library file):

* both the model's name and each pattern are lower-cased and every run of characters other than
  letters and digits becomes one space;
* a pattern matches where it occurs between token boundaries (start/end of the name, or a
  character that is not a letter or digit): "S235" matches "Steel S235 JR" but not "S2355";
* the longest matching (normalised) pattern wins; equally long best matches of two different
  grades make the name ambiguous and :func:`match_material` returns ``None``
  (:func:`match_candidates` lists them);
* a category given by the model filters the candidates: "steel" admits steel and stainless
  grades, "stainless" and "aluminium" only their own; a category word the library's
  ``[categories]`` table does not know does not filter.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Any

import pint

from modelcheck.common.data import data_path
from modelcheck.common.errors import RuleSetError
from modelcheck.common.problems import Problems, read_toml
from modelcheck.common.units import VALUE_PATTERN, QuantityTextError, parse_quantity

#: material categories ("unknown" is the fallback of plausible_range: a name nothing recognises)
CATEGORIES: tuple[str, ...] = ("steel", "stainless", "aluminium", "concrete", "timber", "masonry", "other")
#: the category of a material whose name and Category nothing recognises
UNKNOWN = "unknown"

#: value keys of a grade -> (SI unit, pint dimensionality it must have, human description)
VALUE_KEYS: dict[str, tuple[str, str]] = {
    "E": ("Pa", "a pressure (e.g. '210000 MPa')"),
    "Fy": ("Pa", "a pressure (e.g. '355 MPa')"),
    "Fu": ("Pa", "a pressure (e.g. '490 MPa')"),
    "alpha": ("1/K", "per temperature step (e.g. '12e-6 1/K')"),
}
#: how far a tensile strength may fall below the yield strength before the pair cannot be: the
#: rounding of a value converted between unit systems to three figures (345 MPa beside 50 ksi,
#: 344.7 MPa)
STRENGTH_ROUNDING = 0.005
#: quantities a plausible range may bound: the grade values and the mass density
RANGE_KEYS: dict[str, tuple[str, str]] = VALUE_KEYS | {
    "density": ("kg/m**3", "a mass density (e.g. '7850 kg/m**3')"),
}
_REQUIRED_VALUES = ("E",)
#: values a grade may give apart for round hollow sections (ASTM A500: a lower yield strength for
#: round than for square and rectangular tubing), used for members of that shape
ROUND_KEYS: dict[str, str] = {"Fy_round": "Fy"}
_MATERIAL_KEYS = frozenset({"category", "standard", "names", "note", *VALUE_KEYS, *ROUND_KEYS})
_VALUE_RE = re.compile(VALUE_PATTERN)   # the number and unit parts of a value, as parse_quantity reads them
_NON_ALNUM = re.compile(r"[^0-9a-z]+")


@dataclass(frozen=True)
class LibraryMaterial:
    """One grade of the library; values in SI (Pa, 1/K), ``None`` where the standard gives none."""

    grade: str                      # e.g. "ASTM A36"
    category: str                   # steel | stainless | aluminium
    standard: str                   # product standard, e.g. "ASTM A36/A36M"
    E: float | None
    Fy: float | None
    Fu: float | None
    alpha: float | None
    E_source: str | None            # "rulesets/materials.toml: ASTM A36"
    Fy_source: str | None
    Fu_source: str | None
    alpha_source: str | None
    E_basis: str | None             # the published source the file names beside the value
    Fy_basis: str | None
    Fu_basis: str | None
    alpha_basis: str | None
    patterns: tuple[str, ...]       # name patterns as written in the file
    note: str | None = None
    #: values that differ for round hollow sections: quantity -> (SI value, source, basis)
    round_values: tuple[tuple[str, float, str, str], ...] = ()

    def value(self, key: str) -> float | None:
        """``value("Fy")`` -> the value of ``E``, ``Fy``, ``Fu`` or ``alpha`` (None for another key)."""
        return getattr(self, key, None) if key in VALUE_KEYS else None

    def source(self, key: str) -> str | None:
        return getattr(self, f"{key}_source")

    def basis(self, key: str) -> str | None:
        return getattr(self, f"{key}_basis")


@dataclass(frozen=True)
class PlausibleRange:
    """The screening bounds of one quantity for one category, as the library file states them.

    ``text`` is the range as written there ("150–230 GPa"), for a message to quote::

        r = plausible("timber", "E")
        f"outside the plausible range for {r.category} ({r.text})"
    """

    category: str          # the category the range was written for ("unknown": the fallback)
    key: str               # E | Fy | Fu | alpha | density
    low: float             # SI
    high: float            # SI
    text: str              # "150–230 GPa"
    source: str | None     # where the bounds come from, as the file names it

    def contains(self, value: float) -> bool:
        return math.isfinite(value) and self.low <= value <= self.high


@dataclass(frozen=True)
class MaterialLibrary:
    """A loaded library: grades, category words, plausible ranges (all SI)."""

    path: str                                           # file the library was read from
    label: str                                          # how provenance names it
    materials: tuple[LibraryMaterial, ...]
    patterns: tuple[tuple[str, int], ...]               # (normalised pattern, index in materials)
    category_words: tuple[tuple[str, str], ...]         # (normalised word, category)
    plausible: tuple[PlausibleRange, ...]

    def category_of(self, word: str | None) -> str | None:
        """A category word of a model ('Structural Steel') -> library category, or None."""
        if not word:
            return None
        norm = normalise(word)
        if norm in CATEGORIES or norm == UNKNOWN:
            return norm
        for w, cat in self.category_words:
            if w == norm:
                return cat
        return None



def normalise(text: str) -> str:
    """Lower case; every run of characters other than letters/digits becomes one space.

    >>> normalise("ASTM A572 Gr.50")
    'astm a572 gr 50'
    """
    return _NON_ALNUM.sub(" ", text.casefold()).strip()


def _find(pattern: str, name: str) -> bool:
    """True where normalised ``pattern`` occurs in normalised ``name`` between token boundaries."""
    start = name.find(pattern)
    n = len(pattern)
    while start >= 0:
        before = name[start - 1] if start > 0 else " "
        after = name[start + n] if start + n < len(name) else " "
        if not before.isalnum() and not after.isalnum():
            return True
        start = name.find(pattern, start + 1)
    return False


def default_library_path() -> Path:
    return data_path("materials.toml")


def load_library(path: str | Path | None = None) -> MaterialLibrary:
    """Read and validate a library file (cached per path); errors are :class:`RuleSetError`."""
    p = Path(path) if path is not None else default_library_path()
    return _load_cached(str(p), path is None, _stamp(p))


def _stamp(p: Path) -> tuple[int, int]:
    """(mtime, size) of a library file: part of every cache key, so an edited file loads anew."""
    try:
        st = p.stat()
    except OSError:
        return (0, 0)  # reported by the loader with the file name
    return (st.st_mtime_ns, st.st_size)


@lru_cache(maxsize=8)
def _load_cached(path: str, is_default: bool, _stamp: tuple[int, int]) -> MaterialLibrary:
    """Parse one file; ``_stamp`` (mtime, size) makes an edited file load anew."""
    label = f"rulesets/{Path(path).name}" if is_default else path
    problems = Problems(path, RuleSetError)
    return _parse(read_toml(problems, "the material library"), problems, label)


def quantity_si(text: Any, key: str, problems: Problems[RuleSetError], where: str) -> float:
    """'36 ksi' -> 248211262.55 (SI) with the dimension of ``key``; RuleSetError otherwise."""
    si_unit, what = RANGE_KEYS[key]
    if not isinstance(text, str):
        raise problems.error(where, f"value must be a string '<number> <unit>', got {text!r}")
    m = _VALUE_RE.match(text)
    if m is None or not m.group("unit"):
        raise problems.error(where, f"value {text!r} is not '<number> <unit>' (a unit is required)")
    unit_text = m.group("unit")
    try:   # the one reader of a number with a unit ("12e-6 / K": the number, then "per K")
        # pint reads a temperature in a denominator as a step ('1/degF' -> 1/delta_degF)
        q = parse_quantity(text, None, what="value")
        si = q.quantity.to(si_unit).magnitude
    except pint.DimensionalityError as exc:
        raise problems.error(where, f"unit {unit_text!r} of {text!r} is not {what}") from exc
    except QuantityTextError as exc:
        raise problems.error(where, f"unit {unit_text!r} of {text!r} is not understood: {exc}") from None
    except (pint.PintError, AttributeError, TypeError, ValueError) as exc:
        raise problems.error(where, f"unit {unit_text!r} of {text!r} is not understood: {exc}") from exc
    if not math.isfinite(si):
        raise problems.error(where, f"value {text!r} is not a finite number")
    return float(si)


def _parse(doc: dict[str, Any], problems: Problems[RuleSetError], label: str) -> MaterialLibrary:
    unknown = set(doc) - {"library", "categories", "plausible", "material"}
    if unknown:
        raise problems.error(sorted(unknown)[0], "unknown top-level table (expected library, categories, "
                                                 "plausible, material)")

    words: list[tuple[str, str]] = []
    cats = doc.get("categories", {})
    if not isinstance(cats, dict):
        raise problems.error("categories", "must be a table of category = [words]")
    for cat, ws in cats.items():
        if cat not in CATEGORIES:
            raise problems.error(f"categories.{cat}", f"unknown category (expected one of {', '.join(CATEGORIES)})")
        if not isinstance(ws, list) or not all(isinstance(w, str) for w in ws):
            raise problems.error(f"categories.{cat}", "must be a list of strings")
        words += [(normalise(w), cat) for w in ws]

    plausible: list[PlausibleRange] = []
    pl = doc.get("plausible", {})
    if not isinstance(pl, dict):
        raise problems.error("plausible", "must be a table of [plausible.<category>] tables")
    for cat, ranges in pl.items():
        where = f"plausible.{cat}"
        if cat not in (*CATEGORIES, UNKNOWN):
            raise problems.error(where, f"unknown category (expected one of {', '.join(CATEGORIES)}, unknown)")
        if not isinstance(ranges, dict):
            raise problems.error(where, "must be a table of key = [low, high]")
        for key, entry in ranges.items():
            plausible.append(_plausible_entry(problems, f"{where}.{key}", cat, key, entry))
    fallback = {r.key for r in plausible if r.category == UNKNOWN}
    if not fallback >= set(VALUE_KEYS):
        missing = ", ".join(k for k in VALUE_KEYS if k not in fallback)
        raise problems.error("plausible.unknown", f"missing {missing}: the fallback ranges need every key")

    mats = doc.get("material", {})
    if not isinstance(mats, dict) or not mats:
        raise problems.error("material", "no [material.\"<grade>\"] tables found")
    materials: list[LibraryMaterial] = []
    patterns: list[tuple[str, int]] = []
    owner: dict[str, str] = {}
    for grade, spec in mats.items():
        where = f"material.{grade!r}"
        if not isinstance(spec, dict):
            raise problems.error(where, "must be a table")
        extra = set(spec) - _MATERIAL_KEYS
        if extra:
            raise problems.error(f"{where}.{sorted(extra)[0]}",
                                 f"unknown key (expected {', '.join(sorted(_MATERIAL_KEYS))})")
        category = spec.get("category")
        if category not in CATEGORIES:
            raise problems.error(f"{where}.category", f"must be one of {', '.join(CATEGORIES)}, got {category!r}")
        names = spec.get("names")
        if not isinstance(names, list) or not names or not all(isinstance(n, str) and normalise(n)
                                                                for n in names):
            raise problems.error(f"{where}.names", "must be a non-empty list of non-empty name patterns")
        standard = spec.get("standard")
        if not isinstance(standard, str) or not standard:
            raise problems.error(f"{where}.standard", "must be a non-empty string")
        note = spec.get("note")
        if note is not None and not isinstance(note, str):
            raise problems.error(f"{where}.note", "must be a string")
        values: dict[str, Any] = {}
        for key in VALUE_KEYS:
            entry = spec.get(key)
            if entry is None:
                if key in _REQUIRED_VALUES:
                    raise problems.error(f"{where}.{key}", "missing (required)")
                values.update({key: None, f"{key}_source": None, f"{key}_basis": None})
                continue
            v = _value_entry(problems, f"{where}.{key}", key, entry)
            values.update({key: v, f"{key}_source": f"{label}: {grade}", f"{key}_basis": entry["source"]})
        round_values: list[tuple[str, float, str, str]] = []
        yields: list[tuple[str, float | None, dict[str, Any]]] = [   # (key, SI value, its entry)
            ("Fy", values.get("Fy"), spec.get("Fy") or {})]
        for rkey, q in ROUND_KEYS.items():
            entry = spec.get(rkey)
            if entry is None:
                continue
            if values.get(q) is None:
                raise problems.error(f"{where}.{rkey}", f"given without {q}: {q} is the value for every other shape")
            v = _value_entry(problems, f"{where}.{rkey}", q, entry)
            round_values.append((q, v, f"{label}: {grade} (round)", entry["source"]))
            yields.append((rkey, v, entry))
        fu = values.get("Fu")
        for key, fy, entry in yields:
            if fy is not None and fu is not None and fu < fy * (1 - STRENGTH_ROUNDING):
                # a tensile strength is the largest stress of the tensile test, never below the yield strength
                raise problems.error(f"{where}.Fu.value", f"tensile strength {spec['Fu']['value']!r} is below the "
                                     f"yield strength {key} {entry.get('value')!r}; are the two swapped?")
        index = len(materials)
        seen: set[str] = set()
        for n in names:
            norm = normalise(n)
            if norm in seen:
                continue
            seen.add(norm)
            if norm in owner:
                raise problems.error(f"{where}.names",
                                     f"pattern {n!r} is also a pattern of grade {owner[norm]!r}")
            owner[norm] = grade
            patterns.append((norm, index))
        materials.append(LibraryMaterial(grade=grade, category=category, standard=standard,
                                         patterns=tuple(names), note=note, round_values=tuple(round_values),
                                         **values))
    return MaterialLibrary(path=problems.path, label=label, materials=tuple(materials), patterns=tuple(patterns),
                           category_words=tuple(words), plausible=tuple(plausible))


def _value_entry(problems: Problems[RuleSetError], where: str, key: str, entry: Any) -> float:
    """The SI value of a grade's ``{ value = "<number> <unit>", source = "..." }`` entry at ``where``,
    a quantity of ``key``'s kind (E, Fy, Fu, alpha); positive, with its published source named."""
    if not isinstance(entry, dict) or set(entry) != {"value", "source"}:
        raise problems.error(where, "must be { value = \"<number> <unit>\", source = \"...\" }")
    if not isinstance(entry["source"], str) or not entry["source"].strip():
        raise problems.error(f"{where}.source", "must name the published source of the value")
    v = quantity_si(entry["value"], key, problems, f"{where}.value")
    if v <= 0:
        raise problems.error(f"{where}.value", f"must be positive, got {entry['value']!r}")
    return v


def _plausible_entry(problems: Problems[RuleSetError], where: str, cat: str, key: str, entry: Any) -> PlausibleRange:
    """``key = ["150 GPa", "230 GPa"]`` or ``key = { range = [...], source = "..." }``."""
    if key not in RANGE_KEYS:
        raise problems.error(where, f"unknown key (expected {', '.join(RANGE_KEYS)})")
    source = None
    if isinstance(entry, dict):
        if set(entry) - {"range", "source"} or "range" not in entry:
            raise problems.error(where, "must be [low, high] or { range = [low, high], source = \"...\" }")
        source = entry.get("source")
        if source is not None and (not isinstance(source, str) or not source.strip()):
            raise problems.error(f"{where}.source", "must name where the bounds come from")
        entry = entry["range"]
    if not isinstance(entry, list) or len(entry) != 2:
        raise problems.error(where, "must be a list [low, high] of two values with units")
    lo = quantity_si(entry[0], key, problems, where)
    hi = quantity_si(entry[1], key, problems, where)
    if not lo < hi:
        raise problems.error(where, f"low {entry[0]!r} is not below high {entry[1]!r}")
    return PlausibleRange(cat, key, lo, hi, _range_text(str(entry[0]), str(entry[1])), source)


def _range_text(low: str, high: str) -> str:
    """'150 GPa', '230 GPa' -> '150–230 GPa'; '8 GPa', '1 TPa' -> '8 GPa–1 TPa'."""
    lo, hi = _VALUE_RE.match(low), _VALUE_RE.match(high)
    if lo is not None and hi is not None and lo.group("unit") == hi.group("unit"):
        return f"{lo.group('num')}–{hi.group('num')} {hi.group('unit') or ''}".strip()
    return f"{low.strip()}–{high.strip()}"


def match_candidates(name: str | None, category: str | None = None, *,
                     path: str | Path | None = None) -> tuple[tuple[LibraryMaterial, str], ...]:
    """Every grade whose patterns match ``name``, best first, with its longest matching pattern."""
    if not name:
        return ()
    lib = load_library(path)
    return _candidates(lib, normalise(name), lib.category_of(category))


def _candidates(lib: MaterialLibrary, norm_name: str,
                category: str | None) -> tuple[tuple[LibraryMaterial, str], ...]:
    allowed = None if category in (None, UNKNOWN) else ({"steel", "stainless"} if category == "steel" else {category})
    best: dict[int, str] = {}
    for pattern, idx in lib.patterns:
        if allowed is not None and lib.materials[idx].category not in allowed:
            continue
        if len(pattern) > len(best.get(idx, "")) and _find(pattern, norm_name):
            best[idx] = pattern
    ranked = sorted(best.items(), key=lambda kv: (-len(kv[1]), kv[0]))
    return tuple((lib.materials[i], p) for i, p in ranked)


def match_material(name: str | None, category: str | None = None, *,
                   path: str | Path | None = None) -> LibraryMaterial | None:
    """The library grade a model's material name denotes, or ``None`` (no match, or ambiguous).

    >>> match_material("S355J2+N").grade
    'EN 10025 S355'
    >>> match_material("S2355") is None
    True
    """
    if not name:
        return None
    p = Path(path) if path is not None else default_library_path()
    return _match_cached(name, category, str(path) if path is not None else None, _stamp(p))


@lru_cache(maxsize=4096)
def _match_cached(name: str, category: str | None, path: str | None,
                  _stamp: tuple[int, int]) -> LibraryMaterial | None:
    lib = load_library(path)
    found = _candidates(lib, normalise(name), lib.category_of(category))
    if not found:
        return None
    if len(found) > 1 and len(found[0][1]) == len(found[1][1]):
        return None  # ambiguous: two grades match equally well
    return found[0][0]


def plausible_ranges(category: str | None, *, path: str | Path | None = None) -> dict[str, PlausibleRange]:
    """The screening bounds of every quantity for a category (see :class:`PlausibleRange`).

    ``category`` is a category ("timber") or any category word of a model ("Structural Steel");
    ``None``, "unknown" or a word nothing recognises gives the "unknown" bounds, wide enough to
    catch unit slips only. A key the library leaves out for a category falls back to the
    "unknown" bounds (the range's ``category`` then says "unknown").
    """
    lib = load_library(path)
    cat = lib.category_of(category) or UNKNOWN
    ranges = {r.key: r for r in lib.plausible if r.category == UNKNOWN}
    ranges.update({r.key: r for r in lib.plausible if r.category == cat})
    return ranges


def plausible(category: str | None, key: str, *, path: str | Path | None = None) -> PlausibleRange | None:
    """The screening bounds of ``key`` (E, Fy, Fu, alpha, density) for ``category``; None where
    the library bounds that quantity for no category."""
    return plausible_ranges(category, path=path).get(key)


def plausible_range(category: str | None, *, path: str | Path | None = None) -> dict[str, tuple[float, float]]:
    """Screening bounds ``{"E": (lo, hi), "Fy": …, "Fu": …, "alpha": …, "density": …}`` in SI
    for a category (see :func:`plausible_ranges`)."""
    return {k: (r.low, r.high) for k, r in plausible_ranges(category, path=path).items()}
