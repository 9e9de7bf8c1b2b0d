"""Shared helpers of the robustness corpus: broken inputs made from good ones, and the CLI run
in-process (fast) or in a fresh process (no hang, no traceback) with the inputs hashed around it.

Every corpus case ends in one of two answers:

* an input error: exit code 2 and exactly one ``modelcheck: error:`` line on stderr naming the
  file (and the line / row / GlobalId where the file has one);
* or, where only part of a model is bad, results: the bad members ``unchecked`` with a warning
  that names the reason, the rest of the model checked as usual.

Never a traceback, never the CLI's "internal error" line (that is a bug of ours), never a
changed input file.
"""

from __future__ import annotations

import json
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from modelcheck.cli import main
from modelcheck.testing.author import ModelBuilder
from tests.helpers import REPO, axial_force, digests, run_modelcheck

#: the summary line of a model (one line, printed whatever the formats)
SUMMARY_RE = re.compile(r"\): (nothing could be checked — )?\d+ members? found, \d+ checked — ")

#: a member's GlobalId as ifcopenshell.guid writes it (22 characters of the IFC base-64 alphabet)
GUID_RE = re.compile(r"[0-9A-Za-z_$]{22}")


@dataclass(frozen=True)
class Outcome:
    code: int
    stdout: str
    stderr: str

    @property
    def lines(self) -> list[str]:
        """Non-empty stderr lines but the summary line of each model (``path (schema, units):
        N members found, …``), which a run writing its report to standard output prints there."""
        return [ln for ln in self.stderr.splitlines() if ln.strip() and not SUMMARY_RE.search(ln)]

    @property
    def errors(self) -> list[str]:
        return [ln for ln in self.lines if ln.startswith("modelcheck: error:")]

    def json(self) -> Any:
        return json.loads(self.stdout)


def assert_clean(out: Outcome) -> None:
    """No traceback and no 'internal error' (an exception of ours that escaped its stage)."""
    assert "Traceback" not in out.stderr, out.stderr
    assert "internal error" not in out.stderr, out.stderr
    assert "Traceback" not in out.stdout


def run_inprocess(capsys: Any, args: Sequence[str], inputs: Iterable[str | Path] = ()) -> Outcome:
    """``modelcheck.cli.main(args)`` with stdout/stderr captured; inputs must come out unchanged.

    ``main`` turns every project error into one stderr line and any other exception into an
    'internal error' line, so a clean result here also means no traceback would reach a user.
    """
    before = digests(inputs)
    capsys.readouterr()  # drop anything printed earlier in the test
    try:
        code = main(list(args))
    except SystemExit as exc:  # argparse errors exit
        code = int(exc.code or 0)
    captured = capsys.readouterr()
    out = Outcome(code, captured.out, captured.err)
    assert digests(before) == before, "an input file was changed"
    assert_clean(out)
    return out


def run_process(args: Sequence[str], inputs: Iterable[str | Path] = (), timeout: float = 120,
                cwd: str | Path = REPO, **options: Any) -> Outcome:
    """``python -m modelcheck args`` in a fresh process with a timeout (a hang fails the test);
    ``options`` go to ``helpers.run_modelcheck`` (``preexec_fn``: limits on the process)."""
    before = digests(inputs)
    r = run_modelcheck(*args, timeout=timeout, cwd=cwd, **options)
    out = Outcome(r.returncode, r.stdout, r.stderr)
    assert digests(before) == before, "an input file was changed"
    assert_clean(out)
    return out


def run_check_json(capsys: Any, *paths: str | Path, extra: Sequence[str] = (),
                   inputs: Iterable[str | Path] = ()) -> Outcome:
    """``modelcheck check PATHS --jobs 1 --no-config --format json EXTRA`` in this process
    (``run_inprocess``: the models and ``inputs`` hashed around it)."""
    return run_inprocess(capsys, ["check", *map(str, paths), "--jobs", "1", "--no-config", "--format", "json",
                                  *extra], inputs=(*paths, *inputs))


def members_by_name(capsys: Any, path: str | Path) -> dict[str, dict[str, Any]]:
    """Name -> member entry of ``modelcheck members PATH --format json`` (in this process; exit 0)."""
    out = run_inprocess(capsys, ["members", str(path), "--format", "json"], inputs=[path])
    assert out.code == 0, out.stderr
    return {m["name"]: m for m in out.json()["models"][0]["members"]}


# ------------------------------------------------------------------------------- models
def good_builder(schema: str = "IFC4", *, force_unit: bool = True, with_units: bool = True) -> ModelBuilder:
    """Two hangers in a millimetre model: H1 a 20 mm round bar, H2 a 40 × 10 flat bar, S355 steel,
    each with an axial force of 20 kN in MC_MemberForces.AxialForce."""
    mb = ModelBuilder(schema=schema, units="mm", force_unit=force_unit, with_units=with_units)
    steel = mb.material("S355", category="steel", E=210000.0, Fy=355.0, Fu=490.0)
    rod = mb.f.createIfcCircleProfileDef("AREA", "RD20", profile_position(mb), 10.0)
    flat = mb.f.createIfcRectangleProfileDef("AREA", "FL40x10", profile_position(mb), 40.0, 10.0)
    force = axial_force(20000.0)
    mb.member("IfcMember", name="H1", tag="H1", profile=rod, material=steel, length=2400.0,
              predefined_type="MEMBER", psets=force)
    mb.member("IfcMember", name="H2", tag="H2", profile=flat, material=steel, length=2400.0,
              predefined_type="MEMBER", psets=force)
    return mb


def profile_position(mb: ModelBuilder) -> Any:
    """A profile's Position (required in IFC2X3, optional later): the origin of the profile plane."""
    return mb.f.createIfcAxis2Placement2D(mb.f.createIfcCartesianPoint((0.0, 0.0)), None)


def write_model(mb: ModelBuilder, path: Path) -> Path:
    mb.write(str(path))
    return path


def replace_once(path: Path, old: str, new: str) -> Path:
    """Edit a model's text (STEP files are ASCII): ``old`` must occur exactly once."""
    text = path.read_text(encoding="ascii")
    assert text.count(old) == 1, (old, text.count(old))
    path.write_text(text.replace(old, new), encoding="ascii")
    return path


def entity_line(path: Path, pattern: str) -> str:
    """The one DATA line matching the regular expression ``pattern``."""
    hits = [ln for ln in path.read_text(encoding="ascii").splitlines() if re.search(pattern, ln)]
    assert len(hits) == 1, (pattern, hits)
    return hits[0]


def member_ids(mb: ModelBuilder) -> dict[str, str]:
    """Name -> GlobalId of the builder's members."""
    return {m.Name: m.GlobalId for m in mb.f.by_type("IfcMember")}


def results_by_member(doc: dict[str, Any]) -> dict[str, list[dict[str, Any]]]:
    out: dict[str, list[dict[str, Any]]] = {}
    for r in doc["results"]:
        out.setdefault(r["global_id"], []).append(r)
    return out


def rich_builder(schema: str = "IFC4") -> ModelBuilder:
    """``good_builder`` plus the other ways a member's data is reached: P1 an IPE 200 post whose
    section and body come from its type (a mapped representation), R1 a 16 mm rod as a swept disk
    with its material direct and base quantities."""
    mb = good_builder(schema)
    f = mb.f
    steel = f.by_type("IfcMaterial")[0]
    ipe = f.createIfcIShapeProfileDef("AREA", "IPE200", profile_position(mb), 100.0, 200.0, 5.6, 8.5, 12.0)
    typ = mb.member_type(name="POST-T", profile=ipe, material=steel, body_length=3000.0)
    mb.member("IfcMember", name="P1", tag="P1", material=None, length=3000.0, member_type=typ, body="mapped",
              material_via="none", psets=axial_force(-50000.0))
    mb.member("IfcMember", name="R1", tag="R1", material=steel, length=2000.0, body="swept_disk", disk=(8.0, None),
              material_via="direct", qto={"Length": 2000.0, "CrossSectionArea": 201.06},
              psets=axial_force(10000.0))
    return mb


def data_lines(path: Path) -> list[tuple[int, str]]:
    """(line number, text) of every entity line of a model written by ifcopenshell."""
    return [(no, ln) for no, ln in enumerate(path.read_text(encoding="ascii").splitlines(), 1)
            if re.match(r"#\d+=", ln)]


def with_line(path: Path, out: Path, line_no: int, new_text: str) -> Path:
    """A copy of ``path`` with line ``line_no`` (1-based) replaced."""
    lines = path.read_text(encoding="ascii").splitlines()
    lines[line_no - 1] = new_text
    out.write_text("\n".join(lines) + "\n", encoding="ascii")
    return out


def line_of_entity(path: Path, eid: int) -> int:
    return next(no for no, ln in data_lines(path) if ln.startswith(f"#{eid}="))


def set_ref(path: Path, out: Path, eid: int, old: int, new: str) -> Path:
    """A copy of ``path`` in which entity #eid's reference to #old reads ``new`` ('#99999', '$')."""
    no = line_of_entity(path, eid)
    line = path.read_text(encoding="ascii").splitlines()[no - 1]
    head, body = line.split("=", 1)
    changed = re.sub(rf"#{old}(?!\d)", new, body, count=1)
    assert changed != body, (line, old)
    return with_line(path, out, no, f"{head}={changed}")
