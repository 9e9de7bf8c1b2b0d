"""Where the shipped data files (rule sets, material library, shape tables) are."""

from __future__ import annotations

from importlib import resources
from pathlib import Path


def data_dir() -> Path:
    """The folder of shipped data files (``modelcheck/rulesets/``)."""
    return Path(str(resources.files("modelcheck.rulesets")))


def data_path(name: str) -> Path:
    """A shipped data file by name, e.g. ``data_path("materials.toml")``."""
    return data_dir() / name
