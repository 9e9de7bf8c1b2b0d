"""Input files: the checks every reader does before opening one."""

from __future__ import annotations

import os
from pathlib import Path

from modelcheck.errors import ModelcheckError


def input_file(path: str | os.PathLike[str], error: type[ModelcheckError], what: str) -> Path:
    """``path`` as a Path when it names an existing file; else ``error`` naming it.

    ``what`` completes "is a folder, not …" (e.g. "an IFC file", "a load table").
    """
    p = Path(path)
    if not p.exists():
        raise error("no such file", path=str(path))
    if p.is_dir():
        raise error(f"is a folder, not {what}", path=str(path))
    return p
