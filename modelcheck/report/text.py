"""Small text helpers shared by the file reporters."""

from __future__ import annotations

import math
from typing import Any


def number(v: Any) -> str:
    """Four significant figures, or an em dash for a missing / non-finite value."""
    if v is None or (isinstance(v, float) and not math.isfinite(v)):
        return "—"
    return f"{v:.4g}"


def xml_text(text: Any) -> str:
    """Text safe for XML 1.0: missing -> "", control characters other than tab/newline dropped."""
    s = "" if text is None or (isinstance(text, float) and math.isnan(text)) else str(text)
    return "".join(ch for ch in s if ch in "\t\n\r" or ord(ch) >= 0x20)
