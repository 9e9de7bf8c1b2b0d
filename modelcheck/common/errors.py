"""Errors the user can cause.

Every one of them carries a message that names where the problem is (file, line/row,
GlobalId). The CLI prints ``modelcheck: error: <message>`` on one line and exits with 2.
"""

from __future__ import annotations


class ModelcheckError(Exception):
    """Base class of every error caused by the user's input."""

    def __init__(self, message: str, *, path: str | None = None, where: str | None = None) -> None:
        self.path = path
        self.where = where
        parts = [p for p in (path, where) if p]
        prefix = ":".join(parts)
        text = f"{prefix}: {message}" if prefix else message
        # one line, always: a message may quote the user's text, and that text may hold line breaks
        super().__init__(" ".join(text.splitlines()) if len(text.splitlines()) > 1 else text)


class ModelReadError(ModelcheckError):
    """An IFC model that cannot be opened or understood."""


class LoadTableError(ModelcheckError):
    """A load table (CSV/XLSX) that cannot be read: bad units, bad rows, bad keys."""


class RuleSetError(ModelcheckError):
    """A rule-set file with a syntax, name, unit or safety error."""


class UsageError(ModelcheckError):
    """Command-line arguments that do not make sense together."""


class OutputError(ModelcheckError):
    """A report or an annotated model that could not be written (a full disk, a device that
    takes no data, no permission): named with the file it was going to."""
