"""The JSON report of `modelcheck check` (contract in the README, schema in modelcheck/schemas).

Deterministic: the same inputs give the same bytes apart from the ``generated`` timestamp;
results are in a stable order (model, GlobalId, check order of the rule set, load case).
"""

from __future__ import annotations

import datetime as _dt
import math
import os
from json.encoder import encode_basestring as _escape  # noqa: E402  (C escaper: "…" with \" \\ \n \u00XX)
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from modelcheck.common.vocabulary import quantity_object
from modelcheck.report.formats import WriteOptions
from modelcheck.report.members import CAUTION

if TYPE_CHECKING:
    from modelcheck.core.model import CheckRun
    from modelcheck.rules.engine import CheckRows


def _none(v: Any) -> Any:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return None
    return v


_q = quantity_object


def result_dicts(results: pd.DataFrame) -> list[dict[str, Any]]:
    """Result rows as dicts of the JSON contract (column-wise: no per-row pandas access)."""
    n = len(results)
    if not n:
        return []

    def col(name: str) -> list[Any]:
        return results[name].tolist() if name in results.columns else [None] * n

    def texts(name: str) -> list[Any]:
        return [_none(v) for v in col(name)]

    def qs(values: list[Any], units: list[Any], sources: list[Any]) -> list[Any]:
        return [_q(v, u, s) for v, u, s in zip(values, units, sources, strict=True)]

    unit = col("unit")
    demand = qs(col("demand"), unit, col("demand_source"))
    capacity = qs(col("capacity"), unit, col("capacity_source"))
    # an infinite ratio (capacity 0, a fail) is null: JSON has no infinity; the status says fail
    ratio = [float(f"{r:.6g}") if r is not None and math.isfinite(r) else None for r in col("ratio")]
    has_sugg = "suggestion" in results.columns
    sugg = col("suggestion")
    out = []
    for i, (model, gid, cls, name, tag, check, case, status, missing, message) in enumerate(zip(
            col("model"), col("global_id"), col("ifc_class"), texts("name"), texts("tag"), col("check"),
            texts("load_case"), col("status"), col("missing"), col("message"), strict=True)):
        item = {"model": model, "global_id": gid, "ifc_class": cls, "name": name, "tag": tag, "check": check,
                "load_case": case, "status": status, "demand": demand[i], "capacity": capacity[i],
                "ratio": ratio[i], "missing": list(missing or []), "message": str(message or "")}
        # every row has the key (null where there is none), however the results were produced
        item["suggestion"] = sugg[i] if has_sugg and isinstance(sugg[i], dict) else None
        out.append(item)
    return out


_ROW_SEP = b",\n    "
ROW_SEPARATOR = _ROW_SEP   # between two encoded rows


def encode_rows(rows: list[dict[str, Any]]) -> bytes:
    """JSON rows as the report writes them (one per line, orjson), joined by the row separator."""
    import orjson

    enc = orjson.dumps
    return _ROW_SEP.join([enc(r) for r in rows])


def encode_results(results: pd.DataFrame, chunk: int = 65536) -> bytes:
    """The result rows of the JSON report, encoded: the bytes ``encode_rows(result_dicts(results))``
    gives, built without a dict per row.

    What many rows share is encoded once (a member's identity, a check's unit and sources, the
    combinations of check, load case and status); the numbers of a chunk are rounded to six
    significant digits over arrays and written by one orjson call; each row is then joined
    from those pieces. About five times faster than a dict per row, which matters at 400,000
    results."""
    pieces = []
    for start in range(0, len(results), chunk):
        pieces.append(_encode_chunk(results.iloc[start:start + chunk]))
    return _ROW_SEP.join(p for p in pieces if p)


def round_sig6(values: Any) -> np.ndarray:
    """``float(f"{v:.6g}")`` of each value, over an array (NaN where not finite).

    A power of ten up to 10^22 is exact in binary, so rounding the scaled value to an integer
    and dividing it back gives the double nearest the six-digit decimal, as the text round trip
    does; the few values within a hair of a rounding tie are rounded through the text."""
    x = np.asarray(values, dtype=float)
    out = np.where(np.isfinite(x), 0.0, np.nan)
    ok = np.flatnonzero(np.isfinite(x) & (x != 0))
    v = x[ok]
    if len(v):
        with np.errstate(all="ignore"):
            k = 5 - np.floor(np.log10(np.abs(v))).astype(np.int64)
            up = 10.0 ** np.clip(k, 0, 308)
            down = 10.0 ** np.clip(-k, 0, 308)
            scaled = np.where(k >= 0, v * up, v / down)
            whole = np.round(scaled)
            out[ok] = np.where(k >= 0, whole / up, whole * down)
            tie = np.abs(np.abs(scaled - np.trunc(scaled)) - 0.5) < 1e-6
            near_edge = (np.abs(scaled) < 1e5 * (1 + 1e-9)) | (np.abs(scaled) >= 1e6 * (1 - 1e-9))
            inexact = np.abs(k) > 22   # 10^k is exact in binary only up to 10^22
        for j in np.flatnonzero(tie | near_edge | inexact | ~np.isfinite(scaled)).tolist():
            out[ok[j]] = float(f"{v[j]:.6g}")
    return out


def _number_texts(values: np.ndarray) -> np.ndarray:
    """JSON texts (bytes) of rounded numbers (b'null' for NaN, as orjson writes a non-finite
    float), from a single orjson call over the array."""
    import orjson

    if not len(values):
        return _objects([])
    return _objects(orjson.dumps(np.ascontiguousarray(values, dtype=np.float64),
                                 option=orjson.OPT_SERIALIZE_NUMPY)[1:-1].split(b","))


def _text(value: Any) -> str:
    """A JSON string (or null) as orjson writes it: the standard library's C escaper gives the
    same text (checked in the tests) and is several times faster per call on short strings."""
    if value is None:
        return "null"
    if not isinstance(value, str):
        import orjson

        return orjson.dumps(value).decode("utf-8")
    return _escape(value)


def _json_texts(texts: list[str]) -> np.ndarray:
    """UTF-8 JSON strings of ``texts``. When none needs an escape (the usual case for messages),
    the quotes are joined in around all of them at once instead of escaping each."""
    if not texts:
        return _objects([])
    raw = "\x00".join(texts).encode("utf-8")
    if raw.count(b"\x00") == len(texts) - 1 and not _needs_escape(raw):
        return _objects((b'"' + raw.replace(b"\x00", b'"\x00"') + b'"').split(b"\x00"))
    return _encode_all([_escape(t) for t in texts])


def _needs_escape(raw: bytes) -> bool:
    """Whether UTF-8 text holds a byte a JSON string escapes, NUL aside: a quote, a backslash or
    another control character (the bytes of a multi-byte character are all 0x80 and above)."""
    b = np.frombuffer(raw, dtype=np.uint8)
    return bool((((b < 0x20) & (b != 0)) | (b == 0x22) | (b == 0x5C)).any())


def _encode_all(texts: list[str]) -> np.ndarray:
    """UTF-8 of each text, in one encode: escaped JSON text holds no NUL, so NUL separates them."""
    return _objects("\x00".join(texts).encode("utf-8").split(b"\x00"))


def _objects(items: list[Any]) -> np.ndarray:
    out = np.empty(len(items), dtype=object)
    out[:] = items
    return out


def _encode_chunk(res: pd.DataFrame) -> bytes:
    """One chunk of rows, assembled column by column (object arrays of bytes) and joined once."""
    n = len(res)
    if not n:
        return b""

    def col(name: str) -> list[Any]:
        return res[name].tolist() if name in res.columns else [None] * n

    # a member's identity, encoded once per run of rows that share it (a member's rows are
    # consecutive; a row that differs in any of the five values starts a new run)
    models, gids, classes, names, tags = col("model"), col("global_id"), col("ifc_class"), col("name"), col("tag")
    starts = np.zeros(n, dtype=bool)
    starts[0] = True
    for values in (gids, models, names, tags, classes):
        arr = _objects(values)
        starts[1:] |= arr[1:] != arr[:-1]   # NaN != NaN: a new run, which costs a little, never a wrong row
    at = np.flatnonzero(starts).tolist()
    prefix = _identity_texts(*([v[i] for i in at] for v in (models, gids, classes, names, tags)))[np.cumsum(starts) - 1]

    def encoded(columns: list[str], make: Any) -> np.ndarray:
        """make(key) for each row's values of ``columns``, computed once per distinct key."""
        lists = [col(c) for c in columns]
        combo = np.zeros(n, dtype=np.int64)
        for values in lists:   # one integer per combination of the columns' values (few of each)
            c, u = pd.factorize(pd.Series(values, dtype=object), use_na_sentinel=False)
            combo = combo * (len(u) + 1) + c
        return _once_per_key(combo, lambda i: make(tuple(v[i] for v in lists)))

    mid = encoded(["check", "load_case", "status"], lambda k: _mid_text(k[0], k[1], k[2]))
    tails = [encoded(["unit", source], lambda k, after=after: _tail_text(k[0], k[1], after))
             for source, after in (("demand_source", _AFTER_DEMAND), ("capacity_source", _AFTER_CAPACITY))]
    sugg = res["suggestion"].to_numpy(dtype=object) if "suggestion" in res.columns else None
    return _join_rows(prefix, mid, col("demand"), tails[0], col("capacity"), tails[1], col("ratio"),
                      col("missing"), col("message"), sugg)


_AFTER_DEMAND = ',"capacity":'
_AFTER_CAPACITY = ',"ratio":'


def _identity_texts(models: list[Any], gids: list[Any], classes: list[Any], names: list[Any],
                    tags: list[Any]) -> np.ndarray:
    """The start of a row up to its check, for members given by their five identity values."""
    cols = [_column_texts(v).tolist() for v in (models, gids, classes, names, tags)]
    k0, k1, k2, k3, k4, k5 = (b'{"model":', b',"global_id":', b',"ifc_class":', b',"name":', b',"tag":',
                              b',"check":')
    return _objects([b"".join((k0, m, k1, g, k2, c, k3, n, k4, t, k5)) for m, g, c, n, t in zip(*cols, strict=True)])


def _column_texts(values: list[Any]) -> np.ndarray:
    """UTF-8 JSON texts of a column's values (null for None or NaN): texts that need no escape all
    at once; a column with other values, each distinct value once."""
    if all(type(v) is str for v in values):
        return _json_texts(values)
    codes, uniques = pd.factorize(pd.Series(values, dtype=object), use_na_sentinel=False)
    distinct = list(uniques)
    if all(type(u) is str for u in distinct):
        return _json_texts(distinct)[codes]
    return _encode_all([_escape(u) if type(u) is str else _text(_none(u)) for u in distinct])[codes]


def _mid_text(check: Any, load_case: Any, status: Any) -> str:
    return f'{_text(check)},"load_case":{_text(_none(load_case))},"status":{_text(status)},"demand":'


def _tail_text(unit: Any, source: Any, after: str) -> str:
    """The rest of a known quantity's object after its value, then ``after``."""
    return f',"unit":{_text(str(unit or ""))},"source":{_text(str(source or ""))}}}' + after


def _once_per_key(keys: np.ndarray, make: Any) -> np.ndarray:
    """Encoded ``make(i)`` for each row, where ``i`` is the first row with that row's key: each
    text is made once per distinct key (a few per check)."""
    codes, uniques = pd.factorize(keys)
    first_row = np.zeros(len(uniques), dtype=np.int64)
    first_row[codes[::-1]] = np.arange(len(keys))[::-1]
    return _encode_all([make(i) for i in first_row.tolist()])[codes]


#: rows encoded at a time: the rows of text never exist whole in memory. A block's pieces are a few
#: small objects per row (numbers, messages, the joined row: about 1.5 MB for 2,048 rows); freed
#: before the next block's are made, they leave the interpreter's small-object memory for the next
#: block to reuse. Blocks eight times larger empty whole arenas, which the interpreter gives back
#: to the system and the next block faults in again (a part's rules and rows took a sixth longer)
JOIN_BLOCK = 2048


def _join_rows(prefix: np.ndarray, mid: np.ndarray, demand: Any, demand_tail: np.ndarray, capacity: Any,
               capacity_tail: np.ndarray, ratio: Any, missing: Any, message: Any, suggestion: Any,
               sink: Any = None) -> bytes:
    """Rows from their pieces: the identity and check parts and the quantities' tails as encoded
    per row, the rest as values (numbers, missing lists, messages, suggestion dicts or None).
    With ``sink`` (a binary file) the rows are written to it in blocks of ``JOIN_BLOCK``, after a
    row separator when the file already holds rows, and b"" is returned: each block's pieces are
    made, joined and written before the next block's, so only a block's worth exists at a time."""
    import orjson

    n = len(prefix)
    if sink is not None:
        for start in range(0, n, JOIN_BLOCK):
            at = slice(start, start + JOIN_BLOCK)
            block = _join_rows(prefix[at], mid[at], demand[at], demand_tail[at], capacity[at], capacity_tail[at],
                               ratio[at], missing[at], message[at], suggestion[at] if suggestion is not None else None)
            if start or sink.tell():
                sink.write(_ROW_SEP)
            sink.write(block)
        return b""

    def quantity(values: Any, tail: np.ndarray, after: str) -> list[np.ndarray]:
        """Three pieces per row: '{"value":', the number and the rest of the object followed by
        ``after``; '', 'null' and ``after`` where the value is null. The pieces go into the row
        as they are: no text is made per row that the final join would only copy again."""
        rounded = round_sig6(values)
        known = ~np.isnan(rounded)
        head = np.full(n, b'{"value":', dtype=object)
        head[~known] = b""
        number = np.full(n, b"null", dtype=object)
        number[known] = _number_texts(rounded[known])
        tail = tail.copy()
        tail[~known] = after.encode()
        return [head, number, tail]

    messages = message.tolist() if isinstance(message, np.ndarray) else message
    encoded_messages = _json_texts([m if type(m) is str else str(m or "") for m in messages])
    lists = missing.tolist() if isinstance(missing, np.ndarray) else missing
    missing_piece = np.full(n, b',"missing":[],"message":', dtype=object)
    for i in np.flatnonzero(np.fromiter(map(bool, lists), dtype=bool, count=n)).tolist():
        missing_piece[i] = b',"missing":' + orjson.dumps(list(lists[i])) + b',"message":'
    end = np.full(n, b',"suggestion":null}' + _ROW_SEP, dtype=object)   # every row has the key
    if suggestion is not None:
        for i in np.flatnonzero(pd.notna(suggestion)).tolist():   # a dict on a few failing rows, else None
            if isinstance(suggestion[i], dict):
                end[i] = b',"suggestion":' + orjson.dumps(suggestion[i]) + b"}" + _ROW_SEP
    pieces = [prefix, mid, *quantity(demand, demand_tail, _AFTER_DEMAND),
              *quantity(capacity, capacity_tail, _AFTER_CAPACITY), _number_texts(round_sig6(ratio)),
              missing_piece, encoded_messages, end]
    # a row's pieces joined, then the rows: twice as fast as one join over all the pieces
    return b"".join([b"".join(row) for row in zip(*(p.tolist() for p in pieces), strict=True)])[:-len(_ROW_SEP)]


def encode_check_rows(rows: CheckRows, suggestions: dict[int, dict[str, Any]] | None = None, sink: Any = None) -> bytes:
    """The JSON rows of ``rows`` (``modelcheck.rules.engine.CheckRows``), with ``suggestions``
    (row index -> suggestion) on their rows: the same bytes as ``encode_results`` on the results
    table with those suggestions, without making that table (tested). With ``sink`` (a binary
    file) they are written to it, after a row separator when it already holds rows, and b"" is
    returned."""
    n = len(rows)
    if not n:
        return b""
    member = rows.member
    starts = np.ones(n, dtype=bool)
    starts[1:] = member[1:] != member[:-1]   # a member's rows are consecutive
    firsts = member[starts]
    text = rows.data.text
    prefix = _identity_texts(*(text(c)[firsts].tolist() for c in ("model", "global_id", "ifc_class", "name",
                                                                   "tag")))[np.cumsum(starts) - 1]
    ids, units = rows.per_check("check"), rows.per_check("unit")
    statuses = rows.column("status")   # few distinct: made per row only as references
    case_key = rows.rank + 1           # -1: no load case
    mid = _once_per_key((rows.check_order * (int(case_key.max()) + 1) + case_key) * 3 + rows.status,
                        lambda i: _mid_text(ids[rows.check_order[i]], rows.load_case[i], statuses[i]))
    tails = [_encode_all([_tail_text(u, src, after) for u, src in zip(units, rows.per_check(source), strict=True)])
             [rows.check_order] for source, after in (("demand_source", _AFTER_DEMAND),
                                                       ("capacity_source", _AFTER_CAPACITY))]
    sugg = None
    if suggestions:
        sugg = np.full(n, None, dtype=object)
        for i, x in suggestions.items():
            sugg[i] = x
    return _join_rows(prefix, mid, rows.demand, tails[0], rows.capacity, tails[1], rows.ratio, rows.missing,
                      rows.message, sugg, sink)


class EncodedRows:
    """Result rows already encoded (in the batch workers, or the parts of a model): a list of
    consecutive chunks, each bytes or the descriptor of a file that holds them (a forked part's
    memory file); written as they are, a file streamed, never loaded whole."""

    def __init__(self, chunks: list[bytes | int]) -> None:
        self.chunks = [c for c in chunks if (os.fstat(c).st_size if isinstance(c, int) else c)]

    def __bool__(self) -> bool:
        return bool(self.chunks)

    def write(self, fh: Any) -> None:
        for i, chunk in enumerate(self.chunks):
            if i:
                fh.write(_ROW_SEP)
            if isinstance(chunk, int):
                _send(chunk, fh)
            else:
                fh.write(chunk)


def _send(fd: int, fh: Any) -> None:
    """Copy the file open as ``fd`` (from its start) into ``fh``: inside the kernel (os.sendfile)
    where ``fh`` is a file that allows it, else in blocks."""
    size = os.fstat(fd).st_size
    sent = 0
    try:
        out = fh.fileno()
    except (AttributeError, OSError, ValueError):   # an in-memory buffer
        out = None
    if out is not None:
        fh.flush()
        try:
            while sent < size:
                n = os.sendfile(out, fd, sent, size - sent)
                if n == 0:
                    break
                sent += n
        except OSError:
            if sent:
                raise
    while sent < size:
        block = os.pread(fd, min(1 << 22, size - sent), sent)
        if not block:
            break
        fh.write(block)
        sent += len(block)


def write_json(doc: dict[str, Any], fh: Any) -> None:
    """Write the document as JSON to the binary file ``fh``: indented, but each result on one line.

    Readable in a diff (one changed result is one changed line) and fast: the results arrive
    already encoded (``EncodedRows``, built column by column, some chunks in memory files) and
    are written as they are, a file streamed inside the kernel, never held twice in memory.
    Non-finite numbers never reach the file."""
    import json


    fh.write(b"{\n")
    keys = list(doc)
    for i, key in enumerate(keys):
        value = doc[key]
        fh.write(f"  {json.dumps(key)}: ".encode())
        if isinstance(value, EncodedRows) and value:
            fh.write(b"[\n    ")
            value.write(fh)
            fh.write(b"\n  ]")
        elif isinstance(value, EncodedRows):
            fh.write(b"[]")
        else:
            text = json.dumps(value, indent=2, ensure_ascii=False, allow_nan=False).replace("\n", "\n  ")
            fh.write(text.encode("utf-8"))
        fh.write(b",\n" if i < len(keys) - 1 else b"\n")
    fh.write(b"}\n")


def write_members_json(doc: dict[str, Any], fh: Any) -> None:
    """The members document: like ``write_json``, each member on one line inside its model."""
    import json

    import orjson

    fh.write(b'{\n  "models": [')
    for i, model in enumerate(doc["models"]):
        fh.write(b"\n    {" if i == 0 else b",\n    {")
        keys = list(model)
        for j, key in enumerate(keys):
            fh.write(f"\n      {json.dumps(key)}: ".encode())
            value = model[key]
            if key == "members" and value:
                sep = b",\n        "
                fh.write(b"[\n        ")
                for start in range(0, len(value), 4096):
                    if start:
                        fh.write(sep)
                    fh.write(sep.join([orjson.dumps(m) for m in value[start:start + 4096]]))
                fh.write(b"\n      ]")
            else:
                fh.write(json.dumps(value, indent=2, ensure_ascii=False, allow_nan=False)
                         .replace("\n", "\n      ").encode("utf-8"))
            if j < len(keys) - 1:
                fh.write(b",")
        fh.write(b"\n    }")
    fh.write(b"\n  ]" if doc["models"] else b"]")
    rest = {k: v for k, v in doc.items() if k != "models"}
    for key, value in rest.items():
        text = json.dumps(value, indent=2, ensure_ascii=False, allow_nan=False).replace("\n", "\n  ")
        fh.write(f",\n  {json.dumps(key)}: {text}".encode())
    fh.write(b"\n}\n")


def summary_counts(run: CheckRun) -> dict[str, int]:
    """Counts by status over results, and the number of models that could not be read."""
    st: pd.Series | dict[str, int] = run.results["status"].value_counts() if len(run.results) else {}
    return {"pass": int(st.get("pass", 0)), "fail": int(st.get("fail", 0)),
            "unchecked": int(st.get("unchecked", 0)), "errors": sum(1 for m in run.models if m.error)}


def check_document(run: CheckRun, *, comparison: dict[str, Any] | None = None,
                   now: _dt.datetime | None = None, encoded: bool = False) -> dict[str, Any]:
    """The JSON document of a check run; ``encoded=True`` gives the result rows encoded (for
    ``write_json``): as the workers encoded them, or encoded here, instead of as dicts."""
    rs = run.ruleset
    doc: dict[str, Any] = {
        "generated": (now or _dt.datetime.now(_dt.UTC)).replace(microsecond=0).isoformat(),
        "ruleset": {"name": rs.name, "path": str(rs.path), "basis": getattr(rs, "basis", "") or "",
                    "units": getattr(rs, "units", "") or ""},
        "models": [{"path": m.path, "schema": m.schema, "error": m.error, "members": int(m.member_count),
                    "units": getattr(m, "units", None),
                    "warnings": list(m.warnings) + list(m.force_messages) + list(m.validation),
                    "member_warnings": {g: list(w) for g, w in m.member_warnings.items()}}
                   for m in run.models],
        "results": ((EncodedRows(rows) if (rows := getattr(run, "json_rows", None)) is not None
                     else EncodedRows([encode_results(run.results)])) if encoded
                    else result_dicts(run.results)),
        "unmatched_force_rows": run.unmatched_rows,
    }
    if comparison is not None:
        doc["comparison"] = comparison
    doc["summary"] = summary_counts(run)
    doc["caution"] = CAUTION
    return doc


def write(run: CheckRun, target: Any, options: WriteOptions) -> None:
    """The JSON report of ``run`` to ``target`` (a path, or a text stream: its binary buffer),
    with the ``WriteOptions`` of ``modelcheck.report.formats``."""
    doc = check_document(run, comparison=options.comparison, now=options.now, encoded=True)
    if isinstance(target, (str, os.PathLike)):
        with open(target, "wb") as fh:
            write_json(doc, fh)
        return
    buffer = getattr(target, "buffer", None)
    if buffer is not None:
        write_json(doc, buffer)
        return
    import io

    out = io.BytesIO()
    write_json(doc, out)
    target.write(out.getvalue().decode("utf-8"))
