"""Shared fixtures: small models built in code with modelcheck.testing.author. Shared helpers that
are not fixtures are in tests/helpers.py."""

from __future__ import annotations

from pathlib import Path

import pytest


@pytest.fixture
def tmp_model(tmp_path):
    """Write a ModelBuilder to tmp_path/name and return the path."""

    def _write(mb, name: str = "model.ifc") -> Path:
        p = tmp_path / name
        mb.write(str(p))
        return p

    return _write
