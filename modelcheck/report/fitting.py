"""Tables that fit the console's width without breaking a word: the layout every console table
(checks, comparison, member inventory) shares."""

from __future__ import annotations

from rich import box
from rich.table import Table
from rich.text import Text

#: characters between two columns: the separator and one space of padding
_GAP = 2


def _fit(mins: list[int], maxs: list[int], width: int) -> list[int] | None:
    """Column widths within ``width``: each at least its longest word, the room left shared in
    proportion to what each needs to show its cells on one line. None when even the longest
    words do not fit side by side."""
    room = width - _GAP * (len(mins) - 1)
    if sum(maxs) <= room:
        return list(maxs)
    if sum(mins) > room:
        return None
    spare = room - sum(mins)
    want = [mx - mn for mn, mx in zip(mins, maxs, strict=True)]
    total = sum(want)
    widths = [mn + (spare * w // total if total else 0) for mn, w in zip(mins, want, strict=True)]
    left = room - sum(widths)
    for i in sorted(range(len(widths)), key=lambda i: -(want[i] - (widths[i] - mins[i]))):
        if left <= 0:
            break
        if widths[i] < maxs[i]:
            widths[i] += 1
            left -= 1
    return widths


def fitted_table(title: str, columns: list[tuple[str, str, list[str]]], rows: list[list[Text]], width: int,
           caption: str | None = None, leading: int = 0) -> Table:
    """A light table that fits ``width`` without breaking a word, where the words fit at all.

    ``columns``: (header, justify, cell texts) each. A number column's header (``A [mm²]``) stays
    on one line where the room allows."""
    mins, maxs = _limits(columns)
    whole = [max(mn, len(header)) if justify == "right" else mn
             for mn, (header, justify, _) in zip(mins, columns, strict=True)]
    widths = _fit(whole, maxs, width) or _fit(mins, maxs, width)
    t = Table(title=Text(title, style="bold"), title_justify="left", header_style="bold", box=box.SIMPLE_HEAD,
              show_edge=False, pad_edge=False, padding=(0, 1, 0, 0), expand=False, leading=leading,
              caption=Text(caption) if caption else None, caption_justify="left")
    for i, (header, justify, _) in enumerate(columns):
        t.add_column(Text(header), justify=justify, overflow="fold",  # type: ignore[arg-type]
                     width=widths[i] if widths is not None else None)
    for row in rows:
        t.add_row(*row)
    return t


def _words(cells: list[str]) -> int:
    """The longest word of any cell (the narrowest a column can be without breaking one)."""
    return max((len(w) for c in cells for w in str(c).split()), default=1)


def _limits(columns: list[tuple[str, str, list[str]]]) -> tuple[list[int], list[int]]:
    """(narrowest, widest) of each column: its longest word (a right-aligned number with its unit
    is one word) and its longest line."""
    mins = [max(_words(cells) if justify != "right" else max([len(c) for c in cells] or [1]), _words([header]))
            for header, justify, cells in columns]
    maxs = [max([len(line) for c in [header, *cells] for line in str(c).splitlines()] or [1])
            for header, _, cells in columns]
    return mins, maxs
