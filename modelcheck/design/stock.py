"""Candidate sizes: stock bars, threaded rods and catalog sections, as member-table rows.

Where the sizes come from (data, not code):

* ``rulesets/stock.toml``: the US and SI bar series (round, square, flat) and the thread series
  and shape table each uses. A rule set uses the series of its ``units``; an optional
  ``[stock]`` table in the rule set picks the other series (``series = "SI"``) or replaces single
  keys (same syntax as stock.toml). US: round and square bars in 1/16 in steps, flats 1/4 in /
  1/2 in wide steps (common practice). SI: the rolled sizes of EN 10060 (round), EN 10059
  (square) and EN 10058 (flat) — the sizes mills roll and stockholders carry, rather than a
  1 mm step that would propose bars to be turned down from the next rolled size.
* ``rulesets/threads.toml`` through :mod:`modelcheck.design.screw_threads`: ASME B1.1 UNC and ISO 261 coarse
  threads with their tensile-stress areas.
* ``rulesets/shapes-aisc.csv`` and ``rulesets/shapes-en.csv``: catalog sections, each row naming
  its source.

Every builder returns a *candidate table*: one row per size, smallest area first, with the
geometry in SI (``area``, ``r_min``, ``d``, ``h``, ``b``, ``tf``, ``tw``, ``t``), a
``designation``, its ``family``, the ``shape`` family of the member table, the ``label`` a
synthetic member gets as its name (so a rule set's name selectors, e.g. ``*rod*``, treat it as
they would a modelled member) and the ``source`` of its numbers. :func:`as_members` turns
candidates into member-table rows.

Example::

    >>> from modelcheck.rules.ruleset import load_ruleset
    >>> series = stock_series(load_ruleset("steel-asd-us"))
    >>> round_bars(series).designation.iloc[:3].tolist()
    ['round bar 1/4 in', 'round bar 5/16 in', 'round bar 3/8 in']
"""

from __future__ import annotations

import csv
import math
import re
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass
from fractions import Fraction
from functools import lru_cache
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
import pint

from modelcheck.common.data import data_path
from modelcheck.common.errors import RuleSetError
from modelcheck.common.problems import Problems, file_lines
from modelcheck.common.units import Q_, QuantityTextError, parse_quantity, parse_unit
from modelcheck.common.vocabulary import STOCK_KINDS, Shape, quantities
from modelcheck.design.screw_threads import INCH, thread_series
from modelcheck.design.shape_tables import HEADER_RE

if TYPE_CHECKING:
    from modelcheck.rules.ruleset import RuleSet

#: columns of a candidate table
CANDIDATE_COLUMNS: tuple[str, ...] = (
    "designation", "family", "shape", "area", "r_min", "d", "h", "b", "tf", "tw", "t", "r_root", "As",
    "label", "source",
)
#: the member-table columns of a section (``table.SECTION_VALUE_COLUMNS``, tested)
GEOMETRY_COLUMNS: tuple[str, ...] = ("area", "r_min", "d", "h", "b", "tf", "tw", "t", "r_root")

_ROUND, _SQUARE, _FLAT, _THREADED = (next(k for k in STOCK_KINDS if k.name == n)
                                     for n in ("round", "square", "flat", "threaded"))

#: keys of a stock series (stock.toml and a rule set's [stock] table)
SERIES_KEYS: tuple[str, ...] = ("about", "round", "square", "flat_thickness", "flat_width", "threads", "shapes")
THREAD_SERIES = ("UNC", "ISO coarse")



# ---------------------------------------------------------------------------------------------
# lengths written as text


def parse_length(text: str, what: str = "length") -> tuple[Fraction, str]:
    """'1 1/2 in' -> (3/2, 'in'); '20 mm' -> (20, 'mm'), read by
    :func:`modelcheck.common.units.parse_quantity`. Raises ValueError naming ``what``."""
    try:
        q = parse_quantity(str(text), "length", what=what)
    except QuantityTextError as exc:
        raise ValueError(str(exc)) from None
    value = q.number
    try:
        size = metres(value, q.unit)
    except ValueError:
        raise ValueError(f"{what} {text!r} is no finite length a double can hold") from None
    if value != 0 and size == 0:
        raise ValueError(f"{what} {text!r} is too small for a double to hold")
    if size > MAX_STOCK_SIZE:
        raise ValueError(f"{what} {text!r} is longer than {MAX_STOCK_SIZE:g} m, not a size of stock")
    return value, q.unit


#: no size of bar, rod or section is longer than this (m): a limit far beyond any real one
MAX_STOCK_SIZE = 100.0


def metres(value: Fraction, unit: str) -> float:
    """An exact number of ``unit`` in metres; ValueError where it is no finite double."""
    try:
        out = float(value) * _factor(unit)
    except OverflowError:
        raise ValueError(f"{value} {unit} overflows") from None
    if not math.isfinite(out):
        raise ValueError(f"{value} {unit} overflows")
    return out


@lru_cache(maxsize=64)
def _factor(unit: str) -> float:
    return float(Q_(1.0, unit).to("m").magnitude)


def length_label(m: float, system: str) -> str:
    """A length as stock lists it: '1 1/16 in' (US, fractions to 1/64), '20 mm' (SI)."""
    if system == "US":
        inches = m / INCH
        frac = Fraction(inches).limit_denominator(64)
        if abs(float(frac) - inches) <= 1e-9 * max(1.0, inches):
            return f"{_mixed(frac)} in"
        return f"{inches:.4g} in"
    return f"{m * 1e3:.4g} mm"


def _mixed(f: Fraction) -> str:
    whole, rest = divmod(f.numerator, f.denominator)
    if rest == 0:
        return str(whole)
    part = f"{rest}/{f.denominator}"
    return f"{whole} {part}" if whole else part


# ---------------------------------------------------------------------------------------------
# stock series


@dataclass(frozen=True)
class StockSeries:
    """The sizes one rule set chooses from; lengths in metres, smallest first."""

    system: str                          # "US" or "SI": how sizes are labelled
    about: str                           # basis of the series, for reports
    round: tuple[float, ...]
    square: tuple[float, ...]
    flat_thickness: tuple[float, ...]
    flat_width: tuple[float, ...]
    threads: str                         # "UNC" or "ISO coarse"
    shapes: str                          # shape-table file name, e.g. "shapes-aisc.csv"
    origin: str                          # "rulesets/stock.toml [US]" (+ the rule set's [stock])


@lru_cache(maxsize=1)
def _shipped() -> dict[str, Any]:
    path = data_path("stock.toml")
    try:
        with open(path, "rb") as fh:
            data = tomllib.load(fh)
    except (OSError, tomllib.TOMLDecodeError) as exc:
        raise RuleSetError(f"stock series cannot be read: {exc}", path=str(path)) from exc
    return data


def _sizes(raw: Any, key: str) -> tuple[float, ...]:
    """A list of lengths and {from, to, step} ranges -> sorted unique metres."""
    if not isinstance(raw, list) or not raw:
        raise ValueError(f"{key} is a list of lengths (\"3/4 in\") and ranges {{ from, to, step }}")
    out: list[float] = []
    for item in raw:
        if isinstance(item, str):
            v, u = parse_length(item, key)
            out.append(metres(v, u))
        elif isinstance(item, dict):
            unknown = set(item) - {"from", "to", "step"}
            if unknown or set(item) != {"from", "to", "step"}:
                raise ValueError(f"a range in {key} has exactly the keys from, to, step")
            (a, ua), (b, ub), (s, us) = (parse_length(str(item[k]), f"{key}.{k}") for k in ("from", "to", "step"))
            if s <= 0:
                raise ValueError(f"{key}: step {item['step']!r} must be positive")
            # exact arithmetic in the step's unit where the units agree (1/4 in + k/16 in)
            if ua == ub == us:
                if (b - a) / s > 10000:
                    raise ValueError(f"{key}: more than 10000 sizes in one range")
                k = 0
                while a + k * s <= b:
                    out.append(metres(a + k * s, us))
                    k += 1
                    if k > 10000:
                        raise ValueError(f"{key}: more than 10000 sizes in one range")
            else:
                lo, hi, st = metres(a, ua), metres(b, ub), metres(s, us)
                n = int(math.floor((hi - lo) / st * (1 + 1e-12))) + 1
                if n > 10000:
                    raise ValueError(f"{key}: more than 10000 sizes in one range")
                out.extend(lo + i * st for i in range(n))
        else:
            raise ValueError(f"{key}: {item!r} is neither a length nor a range")
    if any(not (x > 0 and math.isfinite(x)) for x in out):
        raise ValueError(f"{key}: sizes must be positive")
    return tuple(sorted(set(out)))


def _problem(path: str, key: tuple[str, ...], message: str) -> RuleSetError:
    """The error of a stock key (``("stock", "round")`` of a rule set, ``("US", "round")`` of
    stock.toml), placed on its line of ``path`` (the file alone where it has no such line)."""
    lines = file_lines(path, arrays=("check",))
    return Problems(path, RuleSetError, lines=lines, unplaced=None).error(key, message)


def stock_series(ruleset: RuleSet) -> StockSeries:
    """The stock series of a rule set: stock.toml's series of its units, with its [stock] keys.

    Raises :class:`RuleSetError` (file and line) for a bad key or size in either file.
    """
    own: Mapping[str, Any] = getattr(ruleset, "stock", None) or {}
    rs_path = str(getattr(ruleset, "path", ""))
    unknown = sorted(set(own) - set(SERIES_KEYS) - {"series"})
    if unknown:
        raise _problem(rs_path, ("stock", unknown[0]),
                       f"[stock]: unknown key {unknown[0]!r} (keys: series, {', '.join(SERIES_KEYS)})")
    system = own.get("series", getattr(ruleset, "units", "SI"))
    shipped = _shipped()
    stock_path = str(data_path("stock.toml"))
    if system not in ("US", "SI") or system not in shipped:
        raise _problem(rs_path, ("stock", "series"), f"[stock]: series {system!r} is not one of US, SI")
    base = shipped[system]
    origin = f"rulesets/stock.toml [{system}]" + (f" with [stock] of {ruleset.name}" if own else "")
    values: dict[str, Any] = {}
    for key in SERIES_KEYS:
        from_rs = key in own
        raw = own[key] if from_rs else base.get(key)
        try:
            if raw is None:
                raise ValueError(f"{key} is missing")
            if key in ("about", "threads", "shapes"):
                if not isinstance(raw, str) or not raw.strip():
                    raise ValueError(f"{key} is a text")
                if key == "threads" and raw not in THREAD_SERIES:
                    raise ValueError(f"threads is one of {', '.join(THREAD_SERIES)}, not {raw!r}")
                if key == "shapes" and not data_path(raw).is_file():
                    raise ValueError(f"shape table {raw!r} is not a shipped file")
                values[key] = raw.strip()
            else:
                values[key] = _sizes(raw, key)
        except ValueError as exc:
            if from_rs:
                raise _problem(rs_path, ("stock", key), f"[stock]: {exc}") from None
            raise _problem(stock_path, (system, key), f"[{system}]: {exc}") from None
    return StockSeries(system=system, origin=origin, **values)


# ---------------------------------------------------------------------------------------------
# candidate tables


def _frame(rows: dict[str, Any]) -> pd.DataFrame:
    n = len(rows["designation"])
    cols: dict[str, Any] = {}
    for c in CANDIDATE_COLUMNS:
        if c in rows:
            cols[c] = rows[c]
        elif c in ("designation", "family", "shape", "label", "source"):
            cols[c] = [None] * n
        else:
            cols[c] = np.full(n, np.nan)
    frame = pd.DataFrame(cols)
    for c in GEOMETRY_COLUMNS + ("As",):
        frame[c] = frame[c].astype(float)
    order = np.lexsort((np.arange(n), frame["area"].to_numpy()))
    return frame.iloc[order].reset_index(drop=True)


def round_bars(series: StockSeries) -> pd.DataFrame:
    """Solid round bars: A = π d²/4, r = d/4."""
    d = np.asarray(series.round)
    names = [f"{_ROUND.family} {length_label(x, series.system)}" for x in d]
    return _frame({"designation": names, "family": [_ROUND.family] * len(d), "shape": [_ROUND.shape] * len(d),
                   "area": math.pi * d**2 / 4, "r_min": d / 4, "d": d, "label": names,
                   "source": [series.origin] * len(d)})


def square_bars(series: StockSeries) -> pd.DataFrame:
    """Solid square bars of side a: A = a², r = a/√12."""
    a = np.asarray(series.square)
    names = [f"{_SQUARE.family} {length_label(x, series.system)}" for x in a]
    return _frame({"designation": names, "family": [_SQUARE.family] * len(a), "shape": [_SQUARE.shape] * len(a),
                   "area": a**2, "r_min": a / math.sqrt(12), "h": a, "b": a, "label": names,
                   "source": [series.origin] * len(a)})


def flat_label(width: float, thickness: float, system: str) -> str:
    w, t = length_label(width, system), length_label(thickness, system)
    wu, tu = w.rsplit(" ", 1), t.rsplit(" ", 1)
    if wu[1] == tu[1]:
        return f"{_FLAT.family} {wu[0]} x {tu[0]} {tu[1]}"
    return f"{_FLAT.family} {w} x {t}"


def flat_bars(series: StockSeries, thicknesses: tuple[float, ...] | None = None) -> pd.DataFrame:
    """Flat bars of the given thicknesses (default: the series') in the series' widths.

    Only widths larger than the thickness are flats (A = w t, r = t/√12 about the weak axis);
    in the member table h is the thickness, b the width and t the thickness.
    """
    ts = tuple(series.flat_thickness if thicknesses is None else thicknesses)
    widths = np.asarray(series.flat_width)
    t_all: list[float] = []
    w_all: list[float] = []
    for t in ts:
        ws = widths[widths > t * (1 + 1e-9)]
        t_all += [t] * len(ws)
        w_all += ws.tolist()
    t_arr, w_arr = np.asarray(t_all, dtype=float), np.asarray(w_all, dtype=float)
    names = [flat_label(w, t, series.system) for w, t in zip(w_arr.tolist(), t_arr.tolist(), strict=True)]
    return _frame({"designation": names, "family": [_FLAT.family] * len(names), "shape": [_FLAT.shape] * len(names),
                   "area": w_arr * t_arr, "r_min": t_arr / math.sqrt(12), "h": t_arr, "b": w_arr, "t": t_arr,
                   "label": names, "source": [series.origin] * len(names)})


def threaded_rods(series: StockSeries | str) -> pd.DataFrame:
    """Threaded rods of a thread series: body d = nominal diameter (A = π d²/4, r = d/4) and the
    tensile-stress area As of ASME B1.1 / ISO 898-1 (which the rules engine finds from d)."""
    name = series if isinstance(series, str) else series.threads
    sizes = thread_series(name)
    d = np.asarray([s.d_m for s in sizes])
    std = "ASME B1.1 UNC" if name == "UNC" else "ISO 261 coarse"
    return _frame({"designation": [s.designation for s in sizes], "family": [_THREADED.family] * len(sizes),
                   "shape": [_THREADED.shape] * len(sizes), "area": math.pi * d**2 / 4, "r_min": d / 4, "d": d,
                   "As": np.asarray([s.As_m2 for s in sizes]),
                   "label": [f"{_THREADED.family} {s.designation}" for s in sizes],
                   "source": [f"{std} (rulesets/threads.toml)"] * len(sizes)})


# ---------------------------------------------------------------------------------------------
# shape tables


@lru_cache(maxsize=8)
def _load_shapes(name: str, _stamp: tuple[int, int]) -> pd.DataFrame:
    path = data_path(name)
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise RuleSetError(f"shape table cannot be read: {exc}", path=str(path)) from exc
    lines = [(no, line) for no, line in enumerate(text.splitlines(), 1)
             if line.strip() and not line.lstrip().startswith("#")]
    if not lines:
        raise RuleSetError("shape table has no header", path=str(path))
    reader = csv.reader([line for _, line in lines])
    header = next(reader)
    factors: dict[int, tuple[str, float]] = {}
    names: dict[int, str] = {}
    for i, h in enumerate(header):
        m = HEADER_RE.match(h)
        if not m:
            raise RuleSetError(f"column {h!r}: write a name and an optional [unit]", path=str(path),
                               where=str(lines[0][0]))
        col, unit = m.group(1), m.group(2)
        names[i] = col
        if unit:
            target = "m**2" if col in ("A", "A_pub") else "m"
            try:
                q = Q_(1.0, parse_unit(unit))
                factors[i] = (col, float(q.to(target).magnitude))
            except (pint.PintError, ValueError, AttributeError, TypeError) as exc:
                raise RuleSetError(f"column {h!r}: {unit!r} is not a unit of {'area' if target == 'm**2' else 'length'} "
                                   f"({exc})", path=str(path), where=str(lines[0][0])) from None
    required = {"family", "designation", "shape", "A", "r_min", "source"}
    missing = required - set(names.values())
    if missing:
        raise RuleSetError(f"shape table lacks column(s) {', '.join(sorted(missing))}", path=str(path),
                           where=str(lines[0][0]))
    records = []
    for (no, _), row in zip(lines[1:], reader, strict=False):
        if len(row) != len(header):
            raise RuleSetError(f"row has {len(row)} values, the header {len(header)}", path=str(path), where=str(no))
        rec: dict[str, Any] = {"line": no}
        for i, v in enumerate(row):
            col = names[i]
            if i in factors:
                if v.strip() == "":
                    rec[col] = math.nan
                    continue
                try:
                    rec[col] = float(v) * factors[i][1]
                except ValueError:
                    raise RuleSetError(f"{col} = {v!r} is not a number", path=str(path), where=str(no)) from None
            else:
                rec[col] = v.strip()
        if not (rec.get("A", math.nan) > 0 and rec.get("r_min", math.nan) > 0):
            raise RuleSetError(f"{rec.get('designation')}: A and r_min must be positive numbers",
                               path=str(path), where=str(no))
        records.append(rec)
    df = pd.DataFrame.from_records(records)
    df = df.rename(columns={"A": "area"})
    out = pd.DataFrame({
        "designation": df["designation"], "family": df["family"], "shape": df["shape"],
        "area": df["area"], "r_min": df["r_min"],
        **{c: (df[c] if c in df.columns else np.nan) for c in ("d", "h", "b", "tf", "tw", "t")},
        # the table's r is the root radius of an I, channel or tee (of a tube: its corner radius)
        "r_root": (df["r"].where(df["shape"].isin([Shape.I_SECTION, Shape.CHANNEL_U, Shape.TEE]))
                   if "r" in df.columns else np.nan),
        "As": np.nan, "label": df["designation"],
        "source": [f"rulesets/{name}: {s}" for s in df["source"]],
    })
    return out


def load_shapes(name: str) -> pd.DataFrame:
    """A shipped shape table (e.g. ``"shapes-en.csv"``) as a candidate table in SI, file order."""
    path = data_path(name)
    try:
        st = path.stat()
    except OSError as exc:
        raise RuleSetError(f"no shape table: {exc.strerror or exc}", path=str(path)) from exc
    return _load_shapes(name, (st.st_mtime_ns, st.st_size)).copy()


def catalog_families(table: str) -> list[str]:
    """The families of a shape table, in file order."""
    return list(dict.fromkeys(load_shapes(table)["family"]))


def catalog_shapes(table: str, families: tuple[str, ...] | None = None, shape: str | None = None) -> pd.DataFrame:
    """Catalog sections of ``table``, optionally of some families and one shape family, smallest area first."""
    df = load_shapes(table)
    if families is not None:
        wanted = {f.upper() for f in families}
        df = df[df["family"].str.upper().isin(wanted)]
    if shape is not None:
        df = df[df["shape"] == shape]
    return _frame({c: df[c].tolist() if df[c].dtype == object else df[c].to_numpy() for c in CANDIDATE_COLUMNS})


#: (pattern on the upper-cased, space-free section name, shape table, family)
_FAMILY_PATTERNS: tuple[tuple[re.Pattern[str], str, str], ...] = (
    (re.compile(r"W\d+(\.\d+)?X\d"), "shapes-aisc.csv", "W"),
    (re.compile(r"HSS\d"), "shapes-aisc.csv", "HSS"),
    (re.compile(r"IPE\d"), "shapes-en.csv", "IPE"),
    (re.compile(r"(HEA\d|HE\d+A\b|HE\d+A$)"), "shapes-en.csv", "HEA"),
    (re.compile(r"CHS\d"), "shapes-en.csv", "CHS"),
    (re.compile(r"SHS\d"), "shapes-en.csv", "SHS"),
    (re.compile(r"RHS\d"), "shapes-en.csv", "RHS"),
)
_AISC_ANGLE = re.compile(r"^L\s*\d+(-\d+/\d+)?X\d")     # L4X4X3/8, L3-1/2X3-1/2X1/4
_EN_ANGLE = re.compile(r"^L\s*\d+(\.\d+)?\s*[xX×]\s*\d")  # L 70x70x7, L70X70X7


def catalog_family(section_name: str | None) -> tuple[str, str] | None:
    """(shape table, family) a section name belongs to, or None: 'W8X31' -> ('shapes-aisc.csv', 'W')."""
    if not section_name:
        return None
    raw = section_name.strip()
    compact = re.sub(r"\s+", "", raw.upper())
    for pattern, table, family in _FAMILY_PATTERNS:
        if pattern.match(compact):
            return table, family
    if _AISC_ANGLE.match(raw) and "x" not in raw:
        return "shapes-aisc.csv", "L"
    if _EN_ANGLE.match(raw):
        return "shapes-en.csv", "L"
    return None


# ---------------------------------------------------------------------------------------------
# candidates as member rows

#: member-table columns a candidate replaces
SECTION_OVERRIDES: tuple[str, ...] = ("shape", "section_name", "profile_type", "area", "area_source", "r_min",
                                      "r_min_source", "d", "h", "b", "tf", "tw", "t", "r_root")


def as_members(candidates: pd.DataFrame, *, base: Mapping[str, Any] | None = None,
               ids: list[str] | None = None, model: str = "size") -> pd.DataFrame:
    """Candidates as member-table rows (SI), with ``base`` values for every other column.

    ``base`` holds material and identity values shared by all rows (E, Fy, Fu, alpha and their
    sources, material names, length, ifc_class …); the name is the candidate's label unless
    ``base`` sets one.
    """
    from modelcheck.common.table import member_columns

    numeric = {q.column for q in quantities() if q.column is not None}

    n = len(candidates)
    base = dict(base or {})
    cols: dict[str, Any] = {}
    for c in member_columns():
        if c in base:
            cols[c] = [base[c]] * n
        elif c in numeric:
            cols[c] = np.full(n, np.nan)
        else:
            cols[c] = [None] * n
    frame = pd.DataFrame(cols)
    frame["model"] = base.get("model", model)
    frame["global_id"] = ids if ids is not None else [f"c{i}" for i in range(n)]
    if "name" not in base:
        frame["name"] = candidates["label"].to_numpy(dtype=object)
    frame["shape"] = candidates["shape"].to_numpy(dtype=object)
    frame["section_name"] = candidates["designation"].to_numpy(dtype=object)
    for c in GEOMETRY_COLUMNS:
        frame[c] = candidates[c].to_numpy(dtype=float)
    frame["area_source"] = candidates["source"].to_numpy(dtype=object)
    frame["r_min_source"] = candidates["source"].to_numpy(dtype=object)
    frame["warnings"] = [[] for _ in range(n)]
    return frame
