"""Input files: the checks every reader does before opening one."""

from __future__ import annotations

import os
import stat
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

from modelcheck.common.errors import ModelcheckError


def input_file(path: str | os.PathLike[str], error: type[ModelcheckError], what: str) -> Path:
    """``path`` as a Path when it names an existing file; else ``error`` naming it.

    ``what`` completes "is a folder, not …" (e.g. "an IFC file", "a load table").
    """
    p = Path(path)
    if not utf8_name(str(path)):
        raise error("the file name is not UTF-8 text (reports are UTF-8 and name every file); rename the file",
                    path=str(path))
    if not p.exists():
        raise error("no such file", path=str(path))
    if p.is_dir():
        raise error(f"is a folder, not {what}", path=str(path))
    if not regular_file(p):   # reading a device or a pipe may never end (/dev/zero, a FIFO nobody writes)
        raise error(f"is not a regular file (a device, pipe or socket), not {what}; name a file", path=str(path))
    return p


def regular_file(p: Path) -> bool:
    """Whether ``p`` (links followed) is a regular file: not a device, pipe or socket."""
    try:
        return stat.S_ISREG(p.stat().st_mode)
    except OSError:
        return False


def utf8_name(name: str) -> bool:
    """Whether a file name can be written as UTF-8 (a name in another encoding reaches Python with
    undecodable bytes kept as lone surrogates, which no report, nor the IFC parser, can take)."""
    try:
        name.encode("utf-8")
    except UnicodeEncodeError:
        return False
    return True


@contextmanager
def writing(path: str | os.PathLike[str] | None) -> Iterator[None]:
    """Around the writing of an output: an OSError on the way (a full disk, ``/dev/full``, no
    permission) becomes an :class:`OutputError` naming ``path`` (None: standard output). A closed
    pipe (a reader that stopped, as ``head`` does) is left to the caller."""
    from modelcheck.common.errors import OutputError

    try:
        yield
    except BrokenPipeError:
        raise
    except OSError as exc:
        raise OutputError(f"cannot be written: {exc.strerror or exc}",
                          path=str(path) if path is not None else "standard output") from None


@contextmanager
def output_file(path: str | os.PathLike[str]) -> Iterator[str]:
    """The path to write the output ``path`` through: a new file beside it (hidden, its name ending
    in the output's), put in its place once written whole, so that an interrupted or failed write never
    leaves part of a report behind; the report that was there stays as it was until then. A link
    to the output is followed (the link stays a link); an existing report's permissions are
    kept. Written directly: a path that is no regular file (``/dev/null``, a pipe), a name of an
    open descriptor (``/dev/stdout``, ``/proc/self/fd/1``: a file the shell opened stays the file
    written), and a folder in which no new file can be made."""
    target = Path(os.path.realpath(path))
    try:
        st: os.stat_result | None = target.stat()
    except OSError:
        st = None
    given = os.path.abspath(path)
    if (st is not None and not stat.S_ISREG(st.st_mode)) or given.startswith(("/dev/", "/proc/")):
        yield str(path)
        return
    part = None
    for n in range(100):   # a name no other file has (one left by a run that was killed, say)
        name = target.with_name(f".partial-{os.getpid()}-{n}-{target.name}")
        try:
            os.close(os.open(name, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o666))
        except FileExistsError:
            continue
        except OSError:
            break
        part = name
        break
    if part is None:
        yield str(path)
        return
    try:
        if st is not None:
            os.chmod(part, stat.S_IMODE(st.st_mode))
        yield str(part)
        os.replace(part, target)
    except BaseException:
        try:
            os.unlink(part)
        except OSError:
            pass
        raise
