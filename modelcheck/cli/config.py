"""Project configuration for `modelcheck check`, so a CI step is just ``modelcheck check``.

modelcheck looks in the working directory for ``modelcheck.toml``, else for a
``[tool.modelcheck]`` table in ``pyproject.toml`` (having both is an error: keep one). Options
given on the command line win over the file. Paths are relative to the working directory.

Keys (all optional)::

    models         = ["models/", "extra/*.ifc"]   # files, folders, glob patterns (list of strings)
    rules          = "steel-asd-us"               # shipped rule-set name or a .toml file
    loads          = ["loads/forces.csv"]         # axial-force tables (list of strings)
    format         = "console,junit,html"         # or ["console", "junit", "html"]
    output         = "reports/"                   # file (one format) or folder (several)
    baseline       = "reports/baseline.json"      # earlier JSON report to compare with
    fail_on        = "new"                        # "any" (default) or "new"
    strict         = false                        # unchecked members fail the run too
    jobs           = 4                            # worker processes (integer, at least 1)
    force_property = "MC_MemberForces.AxialForce" # PSET.PROPERTY holding each member's force
    annotate       = "reports/annotated/"         # annotated IFC copy (file, or folder for several)
    validate       = false                        # list schema violations as warnings
    scheduler      = "tcp://10.0.0.5:8786"        # run on this Dask cluster instead of locally
    analysis_frame = "local"                      # frame of analysis end forces: as-flagged, local, global
    units          = "model"                      # results in the model's own system, "SI" or "US"
    details        = false                        # the console's wide layout at any width

Example ``modelcheck.toml`` for a CI job::

    models   = ["models/"]
    rules    = "steel-asd-us"
    loads    = ["loads/forces.csv"]
    format   = "console,junit,bcf,html,json"
    output   = "reports/"
    baseline = "reports/main.json"
    fail_on  = "new"

An unknown key or a value of the wrong type is a UsageError naming the file and the key.
"""

from __future__ import annotations

import tomllib
from pathlib import Path
from typing import Any

from modelcheck.common.errors import UsageError

CONFIG_FILE = "modelcheck.toml"
PYPROJECT = "pyproject.toml"

#: key -> (kind, description of the expected value)
KEYS: dict[str, str] = {
    "models": "list[str]",
    "rules": "str",
    "loads": "list[str]",
    "format": "formats",
    "output": "str",
    "baseline": "str",
    "fail_on": "fail_on",
    "strict": "bool",
    "jobs": "jobs",
    "force_property": "force_property",
    "annotate": "str",
    "validate": "bool",
    "scheduler": "str",
    "analysis_frame": "analysis_frame",
    "units": "units",
    "details": "bool",
}
_EXPECTED = {
    "list[str]": "a list of strings",
    "str": "a non-empty string",
    "formats": 'a string like "console,junit" or a list of strings',
    "fail_on": '"any" or "new"',
    "bool": "true or false",
    "jobs": "an integer of at least 1",
    "force_property": 'a string "PSET.PROPERTY"',
    "analysis_frame": '"as-flagged", "local" or "global"',
    "units": '"model", "SI" or "US"',
}


def config_path(cwd: Path) -> Path | None:
    """The file the configuration comes from, or None when there is none."""
    cwd = Path(cwd)
    own = cwd / CONFIG_FILE
    py = cwd / PYPROJECT
    py_has = py.is_file() and "modelcheck" in (_read(py).get("tool") or {})
    if own.is_file() and py_has:
        raise UsageError(f"both {own} and [tool.modelcheck] in {py} configure modelcheck; keep one")
    if own.is_file():
        return own
    return py if py_has else None


def _read(path: Path) -> dict[str, Any]:
    try:
        with open(path, "rb") as fh:
            return tomllib.load(fh)
    except tomllib.TOMLDecodeError as exc:
        raise UsageError(f"not valid TOML: {exc}", path=str(path)) from None
    except UnicodeDecodeError as exc:
        raise UsageError(f"not UTF-8 text (byte {exc.start}); TOML files are UTF-8", path=str(path)) from None
    except OSError as exc:
        raise UsageError(f"cannot be read: {exc.strerror}", path=str(path)) from None


def _check(kind: str, value: Any) -> Any:
    """The value normalised, or None when it has the wrong type."""
    if kind == "list[str]":
        ok = isinstance(value, list) and all(isinstance(v, str) and v for v in value)
        return list(value) if ok else None
    if kind == "str":
        return value if isinstance(value, str) and value else None
    if kind == "formats":
        if isinstance(value, str) and value.strip():
            items = [v.strip() for v in value.split(",")]
        elif isinstance(value, list) and value and all(isinstance(v, str) for v in value):
            items = [v.strip() for v in value]
        else:
            return None
        return ",".join(items) if all(items) else None
    if kind == "fail_on":
        return value if value in ("any", "new") else None
    if kind == "units":
        return value if value in ("model", "SI", "US") else None
    if kind == "bool":
        return value if isinstance(value, bool) else None
    if kind == "jobs":
        return value if isinstance(value, int) and not isinstance(value, bool) and value >= 1 else None
    if kind == "force_property":
        ok = isinstance(value, str) and value.count(".") >= 1 and all(value.split(".", 1))
        return value if ok else None
    if kind == "analysis_frame":
        return value if value in ("as-flagged", "local", "global") else None
    raise AssertionError(kind)


def load_config(cwd: Path) -> dict[str, Any]:
    """The configuration found in ``cwd`` as a dict of the keys above ({} when there is none)."""
    path = config_path(Path(cwd))
    if path is None:
        return {}
    data = _read(path)
    where = str(path)
    if path.name == PYPROJECT:
        data = data["tool"]["modelcheck"]
        if not isinstance(data, dict):
            raise UsageError("[tool.modelcheck] must be a table", path=where)
        prefix = "tool.modelcheck."
    else:
        prefix = ""
    out: dict[str, Any] = {}
    for key, value in data.items():
        if key not in KEYS:
            hint = f" (did you mean {key.replace('-', '_')!r}?)" if key.replace("-", "_") in KEYS else ""
            raise UsageError(f"unknown key {prefix}{key}{hint}; known keys: {', '.join(KEYS)}", path=where)
        norm = _check(KEYS[key], value)
        if norm is None:
            raise UsageError(f"{prefix}{key} must be {_EXPECTED[KEYS[key]]}, not {value!r}", path=where)
        out[key] = norm
    return out
