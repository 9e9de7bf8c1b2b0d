"""Small text helpers shared by the file reporters."""

from __future__ import annotations

import math
from typing import Any


def number(v: Any) -> str:
    """Four significant figures in plain decimals (19480, 0.01948; never 1.948e+04), or an em
    dash for a missing / non-finite value."""
    if v is None or (isinstance(v, float) and not math.isfinite(v)):
        return "—"
    return plain(float(v))


def plain(v: float, digits: int = 4) -> str:
    """``v`` to ``digits`` significant figures without an exponent, trailing zeros dropped; an
    exponent only beyond 10¹⁵ or below 10⁻⁹, where plain decimals would be unreadable."""
    if v == 0 or not math.isfinite(v):
        return f"{v:g}"
    mag = math.floor(math.log10(abs(v)))
    if mag >= 15 or mag < -9:
        return f"{v:.{digits}g}"
    if mag >= digits - 1:
        text = f"{round(v, digits - 1 - mag):.0f}"
    else:
        text = f"{v:.{digits - 1 - mag}f}"
        text = text.rstrip("0").rstrip(".") if "." in text else text
    return "0" if text in ("-0", "") else text


def xml_text(text: Any) -> str:
    """Text safe for XML 1.0: missing -> "", control characters other than tab/newline dropped."""
    s = "" if text is None or (isinstance(text, float) and math.isnan(text)) else str(text)
    return "".join(ch for ch in s if ch in "\t\n\r" or ord(ch) >= 0x20)
