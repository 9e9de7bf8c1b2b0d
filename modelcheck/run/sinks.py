"""Where a model's JSON rows go (the core's :class:`~modelcheck.core.model.RowSink`), chosen by
the runner: bytes that travel back with the result (:class:`BytesRows`), or a file the parent
made before the work started and that the worker inherits (:class:`FileRows`: a memory file
where the system has them). A row file's descriptor stands for its rows until the report has
streamed them (``report.check_json.EncodedRows``, by ``os.sendfile``) and ``release_rows``
closes it.

    sink = FileRows(row_file(0), statuses_only=True)
    result = check_model(path, ref, forces, sink=sink)     # result.json_rows == the descriptor
"""

from __future__ import annotations

import io
import os
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass, field
from typing import BinaryIO

from modelcheck.core.model import EncodedRows
from modelcheck.run.job import Rows
from modelcheck.run.tricks import without


@dataclass
class BytesRows:
    """The rows as bytes, returned with the model's result."""

    statuses_only: bool = False
    _buffer: io.BytesIO = field(default_factory=io.BytesIO)

    @contextmanager
    def open(self) -> Iterator[BinaryIO]:
        yield self._buffer

    def rows(self) -> EncodedRows:
        return self._buffer.getvalue()


@dataclass(frozen=True)
class FileRows:
    """The rows written to the file open as ``fd`` (made by the parent: a forked worker inherits
    it); the descriptor stands for them."""

    fd: int
    statuses_only: bool = False

    @contextmanager
    def open(self) -> Iterator[BinaryIO]:
        with os.fdopen(os.dup(self.fd), "wb") as out:
            yield out

    def rows(self) -> EncodedRows:
        return self.fd


def sink_for(rows: Rows, fd: int | None = None) -> BytesRows | FileRows | None:
    """The sink of the rows a job needs: none for a results table alone, the file ``fd`` when
    given, else bytes."""
    if rows is Rows.TABLE:
        return None
    only = rows is Rows.JSON_ONLY
    return FileRows(fd, only) if fd is not None else BytesRows(only)


def row_file(k: int) -> int | None:
    """A descriptor of a new, empty file for the JSON rows of part (or batch model) ``k``
    (``memory_file``); None when memory files are turned off (``MODELCHECK_WITHOUT=memfd``):
    the rows then travel as bytes."""
    return None if without("memfd") else memory_file(f"modelcheck-rows-{k}")


def memory_file(name: str) -> int:
    """A descriptor of a new, empty file: in memory where the system has memory files (nothing
    goes to disk, and nothing is left when the command ends), else an unnamed temporary file."""
    if hasattr(os, "memfd_create") and not without("memfd"):
        return os.memfd_create(name)
    import tempfile

    with tempfile.TemporaryFile(prefix=f"{name}-") as fh:
        return os.dup(fh.fileno())


def release_rows(chunks: Sequence[EncodedRows | None] | None) -> None:
    """Close the row files among encoded row chunks (once the report is written): their memory
    is given back."""
    for chunk in chunks or ():
        if isinstance(chunk, int):
            try:
                os.close(chunk)
            except OSError:
                pass
