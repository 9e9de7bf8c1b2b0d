"""Open an IFC file: every way a file can be broken turned into one clear error; parsed lazily."""

from __future__ import annotations

import contextlib
import os
import re
import shutil
import tempfile
import zipfile
import zlib
from pathlib import Path
from typing import IO, Any

import ifcopenshell

from modelcheck.common.errors import ModelReadError
from modelcheck.common.files import input_file

SUPPORTED_SCHEMAS = ("IFC2X3", "IFC4", "IFC4X3")

#: the UTF-8 byte-order mark some exporters and text editors write before ``ISO-10303-21;``
UTF8_BOM = b"\xef\xbb\xbf"
#: how far into a file its first keyword is looked for (a byte-order mark and white space before it)
_HEAD_BYTES = 1024


def open_model(path: str | os.PathLike[str]) -> Any:
    """``ifcopenshell.open`` with every way a file can be broken turned into one clear error."""
    return open_model_checked(path)[0]


def open_model_checked(path: str | os.PathLike[str]) -> tuple[Any, tuple[str, ...]]:
    """``open_model``, and what the parser logged on the way (text it skipped, instances with
    attributes missing), one line each naming the file's line where the parser gives an offset."""
    model, log, _ = _open(path)
    return model, _parser_problems(Path(path), log)


def _fds_on(p: Path) -> tuple[int, ...]:
    """This process's open descriptors on file ``p`` (Linux; () elsewhere)."""
    try:
        st = p.stat()
        names = os.listdir("/proc/self/fd")
    except OSError:  # no /proc: not Linux; such systems do not share a model among processes
        return ()
    out = []
    for name in names:
        try:
            s = os.fstat(int(name))
        except (OSError, ValueError):
            continue
        if (s.st_dev, s.st_ino) == (st.st_dev, st.st_ino):
            out.append(int(name))
    return tuple(sorted(out))


def _open(path: str | os.PathLike[str]) -> tuple[Any, str, tuple[int, ...]]:
    """The opened model, the parser's raw log of the open and the descriptors it keeps open.

    The model is opened lazily (``ifcopenshell.open(..., lazy=True)``): one quick indexing pass,
    and each entity parsed when it is first read. A checker reads a small part of a model's
    entities (none of its placements, styles or most of its geometry), so this is where it saves
    most of the open's time and memory. The price: a syntax error inside an entity shows when
    that entity is read, as a RuntimeError naming its byte offset (see ``explain_parse_error``).

    A UTF-8 byte-order mark before ``ISO-10303-21;`` (which ifcopenshell's parser refuses) is read
    from a temporary copy in which the mark's three bytes are three spaces: every other byte keeps
    its offset, so a byte offset the parser names is the same line of the input file, which itself
    is never written.
    """
    p = input_file(path, ModelReadError, "an IFC file")
    name = str(path)
    size = p.stat().st_size
    if size == 0:
        raise ModelReadError("empty file, not an IFC model", path=name)
    with open(p, "rb") as fh:
        head = fh.read(_HEAD_BYTES)
    zipped = zipfile.is_zipfile(p)
    bom = False
    if zipped:
        if p.suffix.lower() != ".ifczip":
            raise ModelReadError("is a zip archive, not an IFC model (rename to .ifczip if it holds one)", path=name)
        tail = _zipped_model_tail(p)
        if tail is not None and b"END-ISO-10303-21" not in tail:
            raise ModelReadError("the model in the zip archive is truncated or empty: it does not end with "
                                 "END-ISO-10303-21;", path=name)
        member = _zipped_model_name(p)
        if member is not None:
            try:
                with zipfile.ZipFile(p) as zf, zf.open(member) as fh:
                    bom = fh.read(len(UTF8_BOM)) == UTF8_BOM
            except (zipfile.BadZipFile, zlib.error, OSError, EOFError, NotImplementedError, RuntimeError) as exc:
                raise ModelReadError(f"the zip archive cannot be read: {exc}", path=name) from None
    else:
        bom = head.startswith(UTF8_BOM)
        start = head.removeprefix(UTF8_BOM).lstrip()
        if not start.startswith(b"ISO-10303-21"):
            if start.startswith(b"<"):
                raise ModelReadError("is XML; only IFC-SPF (.ifc) and .ifczip are read", path=name)
            raise ModelReadError("not an IFC-SPF file (it does not start with ISO-10303-21)", path=name)
        with open(p, "rb") as fh:
            fh.seek(max(0, size - 256))
            tail = fh.read()
        if b"END-ISO-10303-21" not in tail:
            raise ModelReadError("file is truncated: it does not end with END-ISO-10303-21;", path=name)
    ifcopenshell.get_log()  # drop what earlier opens in this process left in the parser's log
    copy = _copy_without_bom(p, member if zipped else None) if bom else None
    try:
        # ifcopenshell's type hints lack the lazy keyword that its open() takes
        model = ifcopenshell.open(str(copy or p), lazy=True)   # type: ignore[call-overload]
        fds = _fds_on(copy or p)
    except (ifcopenshell.Error, RuntimeError, OSError, ValueError, UnicodeDecodeError, LookupError) as exc:
        text = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        logged = _parser_messages(p, ifcopenshell.get_log())
        if logged:  # "Syntax error during parse, check logs": say what the log says, and where
            line, msg = logged[0]
            text = text.removesuffix(", check logs") + (f" at line {line}" if line else "") + f": {msg}"
        raise ModelReadError(f"cannot be parsed as IFC: {text}", path=name) from None
    finally:
        if copy is not None:   # the lazy parser keeps its descriptor: the copy lives until it closes
            with contextlib.suppress(OSError):   # (a system that cannot remove an open file keeps it)
                copy.unlink(missing_ok=True)
    schema = _schema_of(model)
    if schema not in SUPPORTED_SCHEMAS:
        raise ModelReadError(f"schema {model.schema!r} is not supported (IFC2X3, IFC4, IFC4X3)", path=name)
    log = ifcopenshell.get_log()
    twice = _DEFINED_TWICE.search(log)
    if twice:
        # the parser keeps one of the two and only logs it: which one a check would read is
        # not the file's to say, so the model is not read at all
        eid = int(twice["id"])
        raise ModelReadError(f"cannot be parsed as IFC: entity #{eid} is defined twice"
                             f"{_lines_defining(p, eid)}; every entity name must be unique", path=name)
    if _END_READ_AS_ENTITY.search(log):
        # an entity left open (a ')' missing) swallows the rest of the file: what is left of the
        # model is not the model; the parser says where it noticed ("; inside an instance")
        where = _UNCLOSED_AT.search(log)
        at = (explain_parse_error(p, RuntimeError(f"at offset {where['offset']}")).removeprefix("at ") + ": "
              if where else "")
        raise ModelReadError(f"cannot be parsed as IFC: {at}an entity is not closed (a ')' or a quote is missing?); "
                             "the rest of the file was read as part of it", path=name)
    return model, log, fds


def _copy_without_bom(p: Path, member: str | None = None) -> Path:
    """A temporary copy of ``p`` (or of the model ``member`` of the zip archive ``p``) with its
    leading UTF-8 byte-order mark turned into three spaces (white space before ``ISO-10303-21;`` is
    read; the byte offsets stay those of the input)."""
    fd, tmp = tempfile.mkstemp(prefix="modelcheck-", suffix=".ifc")
    try:
        with contextlib.ExitStack() as stack:
            dst = stack.enter_context(os.fdopen(fd, "wb"))
            src: IO[bytes]
            if member is None:
                src = stack.enter_context(open(p, "rb"))
            else:
                src = stack.enter_context(stack.enter_context(zipfile.ZipFile(p)).open(member))
            src.read(len(UTF8_BOM))
            dst.write(b" " * len(UTF8_BOM))
            shutil.copyfileobj(src, dst, 1 << 20)
    except (OSError, zipfile.BadZipFile, zlib.error) as exc:
        Path(tmp).unlink(missing_ok=True)
        raise ModelReadError(f"starts with a byte-order mark and a copy without it cannot be written: {exc}",
                             path=str(p)) from None
    return Path(tmp)


#: the parser met an entity name a second time
_DEFINED_TWICE = re.compile(r"Overwriting instance with name #(?P<id>\d+)")


def _lines_defining(p: Path, eid: int) -> str:
    """' (lines 12 and 40)': the lines of a plain IFC-SPF file where entity #eid is defined."""
    if zipfile.is_zipfile(p):
        return ""
    pattern = re.compile(rb"(?:^|;)\s*#" + str(eid).encode() + rb"\s*=", re.MULTILINE)
    lines: list[int] = []
    with open(p, "rb") as fh:
        data = fh.read()
    for m in pattern.finditer(data):
        lines.append(data.count(b"\n", 0, m.end()) + 1)
    if len(lines) < 2:
        return ""
    return " (lines " + ", ".join(map(str, lines[:-1])) + f" and {lines[-1]})"


#: the parser met the end of the DATA section inside an entity
_END_READ_AS_ENTITY = re.compile(r"Entity with name '(?:ENDSEC|END-ISO-10303-21)' not found in schema")
_UNCLOSED_AT = re.compile(r"Lazy loading not possible \([^()]*? at offset (?P<offset>\d+)\)")


def explain_parse_error(path: str | os.PathLike[str], exc: BaseException) -> str:
    """``str(exc)`` with ifcopenshell's 'at offset N' turned into 'at line L' of a plain IFC-SPF file."""
    text = " ".join(str(exc).split()) or type(exc).__name__
    m = re.search(r"\bat offset (\d+)", text)
    if m is None:
        return text
    p = Path(path)
    try:
        if zipfile.is_zipfile(p):
            return text
        offset = int(m.group(1))
        with open(p, "rb") as fh:
            line = fh.read(offset).count(b"\n") + 1
    except OSError:
        return text
    text = text[:m.start()] + f"at line {line}" + text[m.end():]
    return text.replace("invalid valid token", "is not a valid token")


def is_parse_error(exc: BaseException) -> bool:
    """Whether an ifcopenshell RuntimeError is the lazy parser meeting text that is not IFC-SPF."""
    return isinstance(exc, RuntimeError) and re.search(r"\bat offset \d+", str(exc)) is not None


def raise_if_parse_error(path: str | os.PathLike[str], exc: BaseException) -> None:
    """A syntax error found while reading an entity makes the whole model unreadable, as it would
    have at the open had the file been parsed eagerly: one line naming the file and its line."""
    if is_parse_error(exc):
        raise ModelReadError(f"cannot be parsed as IFC: {explain_parse_error(path, exc)}", path=str(path)) from None


def _zipped_model_name(p: Path) -> str | None:
    """The name of the IFC-SPF file in a zip (the one ifcopenshell.open would read), or None."""
    try:
        with zipfile.ZipFile(p) as zf:
            name = next((n for n in zf.namelist() if Path(n).suffix.lower() in (".ifc", ".ifcxml")), None)
    except (zipfile.BadZipFile, OSError) as exc:
        raise ModelReadError(f"the zip archive cannot be read: {exc}", path=str(p)) from None
    return name if name is not None and Path(name).suffix.lower() == ".ifc" else None


def _zipped_model_tail(p: Path) -> bytes | None:
    """The last bytes of the IFC-SPF file in a zip (the one ifcopenshell.open would read), or None."""
    try:
        with zipfile.ZipFile(p) as zf:
            name = next((n for n in zf.namelist() if Path(n).suffix.lower() in (".ifc", ".ifcxml")), None)
            if name is None or Path(name).suffix.lower() != ".ifc":
                return None  # no model in it, or ifcXML: ifcopenshell.open says so
            tail = b""
            with zf.open(name) as fh:
                while chunk := fh.read(1 << 20):
                    tail = (tail + chunk)[-256:]
            return tail
    except (zipfile.BadZipFile, zlib.error, OSError, EOFError, NotImplementedError) as exc:
        raise ModelReadError(f"the zip archive cannot be read: {exc}", path=str(p)) from None


_LOG_LINE = re.compile(r"^\[(?:error|warning)\]\s+(?:\[[A-Z]+\d*\]\s+)?\[[^\]]*\]\s*(?P<msg>\S.*)$")
_LOG_LIMIT = 10


def _parser_messages(p: Path, log: str, limit: int = _LOG_LIMIT) -> list[tuple[int | None, str]]:
    """(line, message) of the first ``limit`` messages in ifcopenshell's parser log; the line where
    the message gives a byte offset into a plain IFC-SPF file."""
    msgs = [m["msg"] for ln in log.splitlines() if (m := _LOG_LINE.match(ln.strip()))][:limit]
    offsets = [int(m.group(1)) if (m := re.search(r"at offset (\d+)", s)) else None for s in msgs]
    lines: dict[int, int] = {}
    wanted = sorted({o for o in offsets if o is not None})
    if wanted and not zipfile.is_zipfile(p):
        with open(p, "rb") as fh:
            data = fh.read(wanted[-1])
        lines = {o: data.count(b"\n", 0, o) + 1 for o in wanted}
    return [(lines.get(o) if o is not None else None, s) for s, o in zip(msgs, offsets, strict=True)]


def _parser_problems(p: Path, log: str) -> tuple[str, ...]:
    """ifcopenshell's parser log as model warnings: 'file:line: IFC parser: message'."""
    total = sum(1 for ln in log.splitlines() if _LOG_LINE.match(ln.strip()))
    out = [f"{p}:{line}: IFC parser: {msg}" if line else f"{p}: IFC parser: {msg}"
           for line, msg in _parser_messages(p, log)]
    if total > len(out):
        out.append(f"{p}: IFC parser: {total - len(out)} more message(s)")
    return tuple(out)


def _schema_of(model: Any) -> str:
    s = str(getattr(model, "schema_identifier", None) or model.schema).upper()
    if s.startswith("IFC4X3"):
        return "IFC4X3"
    if s.startswith("IFC2X3"):
        return "IFC2X3"
    if s.startswith("IFC4"):
        return "IFC4"
    return s
