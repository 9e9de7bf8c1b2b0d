"""The problems found in one input file, and where in the file each one is.

Every reader of a data file (rule sets, the material library, the material-name patterns, the
stock series) reports a problem the same way: one :class:`Problems` per file gathers them, each
an error of the project naming the file and the place, ``file:where: message``, on one line.
A reader that lists every problem of a file (``modelcheck rules validate``) adds them and reports
them together at the end; one that stops at the first raises :meth:`Problems.error` at once.

The place is given as the reader knows it:

* a key path, ``("check", 2, "demand")``, looked up in the file's line map
  (:func:`toml_lines`): the line of that key, or of the nearest table around it;
* a text, ``"material.'ASTM A36'.names"`` or ``"line 12"``, written as it is;
* ``None``: the file alone.

Example::

    >>> from modelcheck.common.errors import RuleSetError
    >>> problems = Problems("rules.toml", RuleSetError, lines=toml_lines('[ruleset]\\nname = 5\\n'))
    >>> problems.add(("ruleset", "name"), "[ruleset] name is a text")
    >>> [str(e) for e in problems.items]
    ['rules.toml:2: [ruleset] name is a text']
"""

from __future__ import annotations

import re
import tomllib
from collections.abc import Collection, Mapping
from pathlib import Path
from typing import Any, Generic, TypeVar

from modelcheck.common.errors import ModelcheckError

#: a place in a file: a key path looked up in the line map, a text written as it is, or None
Key = tuple[Any, ...]
Where = Key | str | None
E = TypeVar("E", bound=ModelcheckError)


class Problems(Generic[E]):
    """Collects the problems of one file, each an ``error`` (a ``ModelcheckError`` class) naming
    the file and where.

    ``lines`` maps key paths to line numbers (:func:`toml_lines`); a key path it does not hold
    is placed at its nearest enclosing table, and at ``unplaced`` when no table of it is there
    (line 1 by default; ``None`` names the file alone). :meth:`within` gives a view that adds a label in front of each message
    (``check stress: …``) and gathers into the same list.
    """

    def __init__(self, path: str, error: type[E], *, lines: Mapping[Key, int] | None = None,
                 unplaced: int | None = 1, label: str | None = None, _items: list[E] | None = None) -> None:
        self.path = path
        self.error_type = error
        self.lines: Mapping[Key, int] = lines if lines is not None else {}
        self.unplaced = unplaced
        self.label = label
        self._items: list[E] = _items if _items is not None else []

    def line(self, key: Key) -> int | None:
        """The line of ``key``, or of the nearest enclosing table the line map holds."""
        while key:
            if key in self.lines:
                return self.lines[key]
            key = key[:-1]
        return self.unplaced

    def where(self, place: Where) -> str | None:
        if place is None or isinstance(place, str):
            return place
        line = self.line(place)
        return None if line is None else str(line)

    def error(self, place: Where, message: str) -> E:
        """The error for one problem (not gathered): ``file:where: [label: ]message``."""
        if self.label is not None:
            message = f"{self.label}: {message}"
        return self.error_type(message, path=self.path, where=self.where(place))

    def add(self, place: Where, message: str) -> None:
        """Gather one problem."""
        self._items.append(self.error(place, message))

    def within(self, label: str) -> Problems[E]:
        """A view that puts ``label: `` in front of each message and gathers into this list."""
        return Problems(self.path, self.error_type, lines=self.lines, unplaced=self.unplaced,
                        label=f"{self.label}: {label}" if self.label is not None else label, _items=self._items)

    @property
    def items(self) -> tuple[E, ...]:
        """The problems in the order they were found."""
        return tuple(self._items)

    def by_line(self) -> list[E]:
        """The problems in the order of their lines in the file (found order within a line)."""
        return sorted(self._items, key=lambda e: int(e.where) if e.where and e.where.isdigit() else 0)

    def __bool__(self) -> bool:
        return bool(self._items)

    def __len__(self) -> int:
        return len(self._items)


def read_toml(problems: Problems[Any], what: str, *, plural: bool = False) -> dict[str, Any]:
    """The TOML document at ``problems.path``; a file that cannot be read, is not UTF-8 text or
    is not valid TOML is raised as ``problems``' error: "cannot read {what}: …", "{what} is not
    UTF-8 text", "TOML syntax error: …" at "line N"."""
    try:
        raw = Path(problems.path).read_bytes()
    except OSError as exc:
        raise problems.error(None, f"cannot read {what}: {exc.strerror or exc}") from exc
    try:
        return tomllib.loads(raw.decode("utf-8"))
    except UnicodeDecodeError as exc:
        raise problems.error(None, f"{what} {'are' if plural else 'is'} not UTF-8 text") from exc
    except tomllib.TOMLDecodeError as exc:
        m = _TOML_LINE.search(str(exc))
        raise problems.error(f"line {m.group(1)}" if m else None, f"TOML syntax error: {exc}") from exc
    except RecursionError:   # tomllib descends once per nested array or inline table
        raise problems.error(None, "TOML syntax error: arrays or tables nested too deeply") from None


_TOML_LINE = re.compile(r"line (\d+)")

# ---------------------------------------------------------------------------------------------
# the line of every key of a TOML file


def _split_key(text: str) -> tuple[str, ...]:
    parts = re.findall(r'"[^"]*"|\'[^\']*\'|[^.\s]+', text)
    return tuple(p.strip("\"'") for p in parts)


_HEADER_ARRAY_RE = re.compile(r"\[\[\s*([^\]]+?)\s*\]\]")
_HEADER_RE = re.compile(r"\[\s*([^\]]+?)\s*\]")
_KEY_RE = re.compile(
    r"((?:[A-Za-z0-9_-]+|\"[^\"]*\"|'[^']*')(?:\s*\.\s*(?:[A-Za-z0-9_-]+|\"[^\"]*\"|'[^']*'))*)\s*="
)


def toml_lines(text: str, arrays: Collection[str] = ()) -> dict[Key, int]:
    """Line number of every table header and key of a TOML text: ``("ruleset", "name") -> 2``.

    The tables of an array named in ``arrays`` are counted: with ``arrays=("check",)`` the key
    ``demand`` of the third ``[[check]]`` is ``("check", 2, "demand")`` and its ``[check.select]``
    table ``("check", 2, "select")``.
    """
    lines: dict[Key, int] = {}
    section: Key = ()
    counts = {name: -1 for name in arrays}
    open_string: str | None = None
    open_brackets = 0          # inside a value (array) that runs over several lines
    for no, raw in enumerate(text.splitlines(), 1):
        if open_string is not None:
            if raw.count(open_string) % 2 == 1:
                open_string = None
            continue
        s = raw.strip()
        if open_brackets > 0:
            open_brackets += _bracket_balance(s)
            continue
        if not s or s.startswith("#"):
            continue
        m = _HEADER_ARRAY_RE.match(s)
        if m:
            path = _split_key(m.group(1))
            if len(path) == 1 and path[0] in counts:
                counts[path[0]] += 1
                section = (path[0], counts[path[0]])
            else:
                section = path
            lines.setdefault(section, no)
            continue
        m = _HEADER_RE.match(s)
        if m:
            path = _split_key(m.group(1))
            count = counts.get(path[0], -1) if path else -1
            section = (path[0], count) + path[1:] if count >= 0 else path
            lines.setdefault(section, no)
            continue
        m = _KEY_RE.match(s)
        if m:
            lines.setdefault(section + _split_key(m.group(1)), no)
            rest = s[m.end():]
            for delim in ('"""', "'''"):
                if rest.count(delim) % 2 == 1:
                    open_string = delim
                    break
            else:
                open_brackets = max(0, _bracket_balance(rest))
    return lines


def file_lines(path: str, arrays: Collection[str] = ()) -> dict[Key, int]:
    """:func:`toml_lines` of a file; empty where the file cannot be read as UTF-8 text."""
    try:
        return toml_lines(Path(path).read_text(encoding="utf-8"), arrays)
    except (OSError, UnicodeDecodeError):
        return {}


def _bracket_balance(text: str) -> int:
    """Opening minus closing brackets of a TOML line, outside quotes and comments (roughly)."""
    depth = 0
    quote: str | None = None
    for ch in text:
        if quote:
            if ch == quote:
                quote = None
        elif ch in "\"'":
            quote = ch
        elif ch == "#":
            break
        elif ch in "[{":
            depth += 1
        elif ch in "]}":
            depth -= 1
    return depth
