"""Shared fixtures: small models built in code with modelcheck.testing.author."""

from __future__ import annotations

import hashlib
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]
SAMPLES = REPO / "sample_models"


def digest(path: Path) -> str:
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()


@pytest.fixture
def tmp_model(tmp_path):
    """Write a ModelBuilder to tmp_path/name and return the path."""

    def _write(mb, name: str = "model.ifc") -> Path:
        p = tmp_path / name
        mb.write(str(p))
        return p

    return _write
