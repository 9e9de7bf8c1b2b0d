"""What many test modules share, written once: where the repository is, digests of files, the
``modelcheck`` command run in a fresh process, the SI values of the units the tests write numbers
in, and shortcuts for the models the tests build (a member's force property, plain profiles).

Tables built by hand (members, forces) are in ``tests/tables.py``; the robustness corpus's
runners and broken inputs in ``tests/corpus.py``; models are written with
``modelcheck.testing.author.ModelBuilder``.
"""

from __future__ import annotations

import hashlib
import os
import subprocess
import sys
from collections.abc import Iterable, Mapping
from pathlib import Path
from typing import Any

import pandas as pd
import pint

from modelcheck.ifc.index import build_index
from modelcheck.ifc.reader import read_members
from modelcheck.testing.author import ModelBuilder

REPO = Path(__file__).resolve().parents[1]
SAMPLES = REPO / "sample_models"


# ------------------------------------------------------------------------------- digests
def digest(path: str | Path) -> str:
    """SHA-256 of a file's bytes (an input file must come out of a run unchanged)."""
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()


def digests(paths: Iterable[str | Path]) -> dict[str, str]:
    return {str(p): digest(p) for p in paths}


# ------------------------------------------------------------------------------- the command
def run_modelcheck(*args: str, cwd: str | Path = REPO, env: Mapping[str, str] | None = None,
                   timeout: float = 300, **options: Any) -> subprocess.CompletedProcess[str]:
    """``python -m modelcheck ARGS`` in a fresh process, from the repository unless ``cwd`` says
    otherwise, its output captured as text, with a timeout (a hang fails the test).

    The test's own ``COLUMNS`` is not passed on, so the console width is the command's default
    unless ``env`` sets it; ``env`` adds to the environment. ``options`` go to ``subprocess.run``
    (``preexec_fn``; ``stdout`` and ``stderr`` in place of capturing both)."""
    environ = {k: v for k, v in os.environ.items() if k != "COLUMNS"} | dict(env or {})
    streams: dict[str, Any] = {} if "stdout" in options or "stderr" in options else {"capture_output": True}
    return subprocess.run([sys.executable, "-m", "modelcheck", *args], text=True, timeout=timeout, cwd=cwd,
                          env=environ, **streams, **options)


# ------------------------------------------------------------------------------- units
#: an independent pint registry (pint's own definition files, not the project's registry): the
#: reference the tests convert with
UREG = pint.UnitRegistry()


def si(value: float | str, unit: str | None = None) -> float:
    """The magnitude in SI base units (m, N, Pa, …) of ``value unit``, or of a quantity written as
    text ('235 MPa'), by pint."""
    q = UREG.Quantity(value) if unit is None else UREG.Quantity(value, unit)
    return float(q.to_base_units().magnitude)


KN = 1000.0                  # N: SI prefix kilo (ISO 80000-1)
IN = si(1, "inch")           # m: 0.0254 exactly, the international inch (pint)
IN2 = IN**2                  # m²
FT = si(1, "ft")             # m: 12 in (pint)
KIP = si(1, "kip")           # N: 1000 lbf (pint)
KSI = si(1, "ksi")           # Pa: kip/in² (pint)
#: N: 1 lbf = 0.453 592 37 kg × 9.806 65 m/s² = 4.448 221 615 260 5 N (exact; NIST SP 811)
LBF_NIST = 4.4482216152605
KIP_NIST = 1000.0 * LBF_NIST  # NIST SP 811: kip = 1000 lbf


# ------------------------------------------------------------------------------- models
def axial_force(value: Any, measure: str = "IfcForceMeasure") -> dict[str, dict[str, tuple[str, Any]]]:
    """The ``psets`` argument of ``ModelBuilder.member`` giving a member the axial force
    ``value`` (in the model's force unit) in MC_MemberForces.AxialForce, the model-property route
    the README documents."""
    return {"MC_MemberForces": {"AxialForce": (measure, value)}}


def round_bar(mb: ModelBuilder, d: float, name: str | None = None) -> Any:
    """An IfcCircleProfileDef of diameter ``d`` (radius d/2, the model's length unit), named
    ``name`` or 'RD<d>', with no Position (the profile plane's origin)."""
    return mb.f.createIfcCircleProfileDef("AREA", f"RD{d:g}" if name is None else name, None, d / 2)


def rectangle(mb: ModelBuilder, b: float, h: float, name: str | None = None) -> Any:
    """An IfcRectangleProfileDef of b × h (XDim × YDim), named ``name`` or '<b>x<h>', with no
    Position."""
    return mb.f.createIfcRectangleProfileDef("AREA", f"{b:g}x{h:g}" if name is None else name, None, b, h)


def read_built(mb: ModelBuilder, folder: Path, name: str = "model.ifc") -> pd.DataFrame:
    """Write the builder's model to ``folder/name`` and read its member table, indexed by name."""
    path = folder / name
    mb.write(str(path))
    return read_members(build_index(str(path))).frame.set_index("name")
