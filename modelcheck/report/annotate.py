"""Write a copy of a model with each checked element's results as a property set.

Any IFC viewer can then colour or filter the members by status or ratio. The property set is
named ``MC_CheckResult`` (a name of our own: buildingSMART reserves ``Pset_``)::

    WorstRatio         IfcRatioMeasure  highest demand/capacity ratio over all checks and load
                                        cases; left out when the status is unchecked (the
                                        ratios of the checks that ran do not cover the member)
    Status             IfcLabel         fail | unchecked | pass (worst over all checks)
    GoverningCheck     IfcLabel         the check of the governing result
    GoverningLoadCase  IfcLabel         its load case (left out for checks without one)
    Missing            IfcText          what the unchecked checks lack, "; "-separated (only
                                        when something is missing)

The governing result is the failing one with the highest ratio, else the unchecked one, else
the passing one with the highest ratio. The input file is only read; the copy is written to a
temporary file beside the output and moved into place. Annotating an annotated copy first
removes every ``MC_CheckResult`` set in it, so the copy shows the given results only.

Example::

    n = annotate_model("tower.ifc", "tower.checked.ifc", run.results)
"""

from __future__ import annotations

import os
import shutil
import tempfile
import uuid
from pathlib import Path
from typing import Any

import pandas as pd

from modelcheck.common.errors import ModelcheckError, UsageError
from modelcheck.common.table import STATUS_RANK, records

PSET_NAME = "MC_CheckResult"
_NAMESPACE = uuid.UUID("b7d2e4f0-3c5a-4e61-8f2d-9a0c1e7b5d34")


def _same_file(a: Path, b: Path) -> bool:
    if a.resolve() == b.resolve():
        return True
    try:
        return b.exists() and os.path.samefile(a, b)
    except OSError:
        return False


def _guid(*parts: str) -> str:
    import ifcopenshell.guid

    return ifcopenshell.guid.compress(uuid.uuid5(_NAMESPACE, "\n".join(parts)).hex)


def summarize(results: pd.DataFrame) -> pd.DataFrame:
    """One row per GlobalId: status, worst ratio, governing check and load case, missing inputs."""
    if not len(results):
        return pd.DataFrame(columns=["global_id", "status", "worst_ratio", "check", "load_case", "missing"])
    r = results.assign(_rank=results["status"].map(STATUS_RANK), _ratio=pd.to_numeric(results["ratio"], errors="coerce"))
    gov = (r.assign(_key=r["_ratio"].fillna(-1.0))
           .sort_values(["_rank", "_key"], ascending=[True, False], kind="stable")
           .drop_duplicates("global_id", keep="first"))
    worst = r.groupby("global_id", sort=False)["_ratio"].max()
    missing = (r[r["status"] == "unchecked"].groupby("global_id", sort=False)["missing"]
               .agg(lambda s: "; ".join(sorted({m for lst in s for m in (lst or [])}))))
    out = pd.DataFrame({
        "global_id": gov["global_id"].to_numpy(dtype=object),
        "status": gov["status"].to_numpy(dtype=object),
        "check": gov["check"].to_numpy(dtype=object),
        "load_case": gov["load_case"].to_numpy(dtype=object),
    })
    out["worst_ratio"] = out["global_id"].map(worst).astype(float)
    # an unchecked member's ratios cover only the checks that ran: none is written, so a viewer
    # colouring by WorstRatio cannot show an unverified member as fine
    out.loc[out["status"] == "unchecked", "worst_ratio"] = float("nan")
    out["missing"] = out["global_id"].map(missing).astype(object)
    return out.sort_values("global_id", kind="stable").reset_index(drop=True)


def _rows_for_model(results: pd.DataFrame, model_path: Path) -> pd.DataFrame:
    """The results of this model (the results table may hold several models)."""
    if not len(results) or "model" not in results.columns:
        return results
    target = model_path.resolve()
    keep = {m for m in results["model"].dropna().unique() if Path(str(m)).resolve() == target}
    return results[results["model"].isin(keep)]


def _remove_old_sets(f: Any) -> None:
    """Remove every MC_CheckResult set already in the model: the copy shows this run only."""
    for rel in list(f.by_type("IfcRelDefinesByProperties")):
        pset = rel.RelatingPropertyDefinition
        if pset is None or not pset.is_a("IfcPropertySet") or pset.Name != PSET_NAME:
            continue
        props = list(pset.HasProperties or ())
        f.remove(rel)
        if f.get_total_inverses(pset) == 0:
            f.remove(pset)
            for p in props:
                if f.get_total_inverses(p) == 0:
                    f.remove(p)


def annotate_model(model_path: str | os.PathLike[str], out_path: str | os.PathLike[str],
                   results: pd.DataFrame) -> int:
    """Write ``out_path``: a copy of ``model_path`` with ``MC_CheckResult`` on each checked element.

    Returns the number of elements annotated. Refuses (UsageError) to write over the input; the
    input file is never modified. A GlobalId in ``results`` that the model does not hold is an
    error naming it (the results belong to another model).
    """
    from modelcheck.ifc.opening import raise_if_parse_error

    src, dst = Path(model_path), Path(out_path)
    if _same_file(src, dst):
        raise UsageError(f"--annotate {out_path} is the input model; refusing to write over it "
                         "(choose another file name)")
    if dst.is_dir():
        raise UsageError(f"--annotate {out_path} is a folder; give a file name ending in .ifc", path=str(dst))
    if dst.suffix.lower() not in (".ifc", ".ifczip"):
        raise UsageError(f"--annotate {out_path}: the copy must end in .ifc or .ifczip", path=str(dst))
    rows = summarize(_rows_for_model(results, src))
    try:
        return _annotate_copy(src, dst, rows)
    except RuntimeError as exc:
        # the copy parses every entity, also those no check reads (placements, styles): a
        # syntax error there makes the model unreadable here, with its line
        raise_if_parse_error(src, exc)
        raise


def _annotate_copy(src: Path, dst: Path, rows: pd.DataFrame) -> int:
    from modelcheck.ifc.index import open_model

    f = open_model(src)

    elements: list[tuple[Any, dict[str, Any]]] = []
    for rec in records(rows):
        try:
            el = f.by_guid(rec["global_id"])
        except RuntimeError:
            raise ModelcheckError(f"GlobalId {rec['global_id']} of the results is not in this model "
                                  "(results of another model?)", path=str(src)) from None
        elements.append((el, rec))
    _remove_old_sets(f)

    schema = str(f.schema).upper()
    owner = None
    if schema.startswith("IFC2X3"):  # OwnerHistory is mandatory there; reuse the file's own
        histories = f.by_type("IfcOwnerHistory")
        if not histories:
            raise ModelcheckError("IFC2X3 model without an IfcOwnerHistory; cannot add property sets",
                                  path=str(src))
        owner = histories[0]

    def single(name: str, measure: str, value: Any) -> Any:
        return f.create_entity("IfcPropertySingleValue", Name=name,
                               NominalValue=f.create_entity(measure, value))

    for el, rec in elements:
        props = []
        ratio = rec["worst_ratio"]
        if ratio == ratio:  # not NaN
            props.append(single("WorstRatio", "IfcRatioMeasure", float(ratio)))
        props.append(single("Status", "IfcLabel", str(rec["status"])))
        props.append(single("GoverningCheck", "IfcLabel", str(rec["check"])))
        if isinstance(rec["load_case"], str) and rec["load_case"]:
            props.append(single("GoverningLoadCase", "IfcLabel", rec["load_case"]))
        if isinstance(rec["missing"], str) and rec["missing"]:
            props.append(single("Missing", "IfcText", rec["missing"]))
        gid = rec["global_id"]
        pset = f.create_entity("IfcPropertySet", GlobalId=_guid(gid, PSET_NAME), OwnerHistory=owner,
                               Name=PSET_NAME, HasProperties=props)
        f.create_entity("IfcRelDefinesByProperties", GlobalId=_guid(gid, PSET_NAME, "rel"), OwnerHistory=owner,
                        RelatedObjects=[el], RelatingPropertyDefinition=pset)

    dst.parent.mkdir(parents=True, exist_ok=True)
    tmp_dir = tempfile.mkdtemp(prefix=".modelcheck-", dir=dst.parent)
    try:
        tmp = Path(tmp_dir) / dst.name
        f.write(str(tmp))
        os.replace(tmp, dst)
    finally:
        shutil.rmtree(tmp_dir, ignore_errors=True)
    return len(elements)
