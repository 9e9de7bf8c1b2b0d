"""`modelcheck check`: options (with the project configuration) -> runner -> reports -> exit code.

Exit codes: 0 no failure; 1 at least one failing member (with --strict also any unchecked), or
a model whose members were found but none could be checked; 2 a usage error or an input that
could not be read (the other models are still reported)."""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path
from typing import TYPE_CHECKING, Any

from modelcheck.cli.common import (
    EXIT_FAIL,
    EXIT_INPUT,
    EXIT_OK,
    expand_load_paths,
    force_options,
    guard_output,
    names_standard_output,
    read_inputs,
    report_console,
    say,
)
from modelcheck.common.errors import UsageError
from modelcheck.report.formats import format_names

if TYPE_CHECKING:
    from modelcheck.core.model import CheckRun, ForceOptions
    from modelcheck.rules.ruleset import RuleSet
    from modelcheck.run.job import Rows



def merge_config(args: argparse.Namespace) -> argparse.Namespace:
    """Fill options not given on the command line from the project configuration file."""
    from modelcheck.cli.config import load_config

    if args.no_config:
        return args
    cfg = load_config(Path.cwd())
    if not args.models and "models" in cfg:
        args.models = list(cfg["models"])
    if not args.loads and "loads" in cfg:
        args.loads = list(cfg["loads"])
    for key in ("rules", "format", "output", "baseline", "fail_on", "strict", "jobs", "force_property",
                "annotate", "validate", "scheduler", "analysis_frame", "units", "details"):
        if getattr(args, key, None) is None and key in cfg:
            setattr(args, key, cfg[key])
            if key == "format":   # named here, where the file is known, not as if typed as --format
                from modelcheck.cli.config import config_path

                names = format_names()
                unknown = [f.strip() for f in cfg[key].split(",") if f.strip() not in names]
                if unknown:
                    raise UsageError(f"format: unknown {', '.join(unknown)} (choose from {', '.join(names)})",
                                     path=str(config_path(Path.cwd())))
    return args


def cmd_check(args: argparse.Namespace) -> int:
    import datetime as dt

    args = merge_config(args)
    from modelcheck.core.read import expand_paths
    from modelcheck.report.check_json import check_document
    from modelcheck.rules.ruleset import load_ruleset

    if not args.models:
        raise UsageError("no model given (name files, folders or patterns, or set 'models' in modelcheck.toml)")
    from modelcheck.report.formats import FORMATS, WriteOptions, default_file_name, format_named, write_report

    names = [f.strip() for f in (args.format or "console").split(",") if f.strip()]
    unknown = [f for f in names if format_named(f) is None]
    if unknown:
        raise UsageError(f"unknown --format {', '.join(unknown)} "
                         f"(choose from {', '.join(format_names())})")
    formats = [fmt for fmt in map(format_named, names) if fmt is not None]
    files = [f for f in formats if f.extension is not None]   # the rest go to the terminal
    if len(files) == 1 and not files[0].binary and names_standard_output(args.output):
        args.output = None   # '--output /dev/stdout': the stream itself
    if files and not args.output and (len(files) > 1 or any(f.binary for f in files)):
        raise UsageError(f"--format {','.join(f.name for f in files)} needs --output "
                         f"({'a folder for several formats' if len(files) > 1 else 'a file'})")
    if args.fail_on == "new" and not args.baseline:
        raise UsageError("--fail-on new needs --baseline PREVIOUS.json")
    paths = expand_paths(args.models)
    load_paths = expand_load_paths(args.loads)
    inputs = read_inputs(args, paths, load_paths)
    if len(files) > 1 and Path(args.output).exists() and not Path(args.output).is_dir():
        raise UsageError(f"--output {args.output}: several formats are written into a folder, and this is a file")
    targets = {f.name: (os.path.join(args.output, default_file_name(f)) if len(files) > 1 else args.output)
               for f in FORMATS if f in files}
    for out in targets.values():
        if out:
            guard_output(out, inputs, new_folder=len(files) > 1)
    baseline = None
    if args.baseline:
        from modelcheck.report.compare import load_baseline

        baseline = load_baseline(args.baseline)
    from modelcheck.common.timing import stage

    jobs = args.jobs if args.jobs is not None else (os.cpu_count() or 1)
    if jobs < 1:
        raise UsageError("--jobs must be at least 1")
    with stage("rule set + load tables"):
        ruleset = load_ruleset(args.rules or "steel-asd-us")
        fopts = force_options(args, ruleset)
    # formats that need no results table: the statuses alone (summary, exit code), the rows encoded
    slim = bool(formats) and not any(f.needs_results for f in formats) and not args.baseline and not args.annotate
    from modelcheck.run.job import Rows

    encode_json = any(f.json_rows for f in files)
    rows = Rows.JSON_ONLY if encode_json and slim else Rows.JSON if encode_json else Rows.TABLE
    with stage("check models"):
        run = _run_with_progress(paths, ruleset, fopts, jobs, bool(args.validate), args.scheduler,
                                 rows, units=args.units or "model")
    now = dt.datetime.now(dt.UTC).replace(microsecond=0)
    comparison = None
    if baseline is not None:
        from modelcheck.report.compare import compare

        comparison = compare(check_document(run, now=now), baseline)
    if len(files) > 1:
        os.makedirs(args.output, exist_ok=True)
    from modelcheck.common.timing import stage
    from modelcheck.run.sinks import release_rows

    try:
        if args.annotate:   # first: the copy reads every entity, and may find a model unreadable
            _annotate(run, args.annotate, inputs)
        from modelcheck.common.files import output_file, writing

        options = WriteOptions(now=now, comparison=comparison, strict=bool(args.strict),
                               only_new=args.fail_on == "new", details=args.details)
        for f in files:
            target = targets[f.name]
            with stage(f"write {f.name}"), writing(target):
                if target is None:
                    write_report(f, run, None, options)
                    continue
                guard_output(target, inputs)   # again: --annotate has written meanwhile
                with output_file(target) as path:
                    write_report(f, run, path, options)
    finally:
        release_rows(run.json_rows)
    terminal = list(dict.fromkeys(f for f in formats if f.extension is None))
    if terminal:
        from modelcheck.common.files import writing

        # on standard output, unless a file format goes there
        stream = sys.stderr if bool(files) and not args.output else sys.stdout
        with writing(None):
            for f in terminal:
                f.write(run, stream, options)
            stream.flush()
    else:   # file formats only: still one line per model, on stderr when a report goes to stdout
        from modelcheck.report.console import summary_line

        con = report_console(stderr=not args.output)
        for m in run.models:
            if not m.error:   # an unreadable model has its one error line below
                con.print(summary_line(m, run.results), soft_wrap=True)   # one line, whatever its length
    for m in run.models:
        if m.error:
            say(f"modelcheck: error: {m.error}")
    return exit_code(run, bool(args.strict), args.fail_on or "any", comparison)


def _run_with_progress(paths: list[str], ruleset: RuleSet, fopts: ForceOptions, jobs: int, validate: bool,
                       scheduler: str | None, rows: Rows, units: str = "model") -> CheckRun:
    """Run the batch; a rich progress bar on a terminal with several models, quiet otherwise."""
    from modelcheck.run.runner import run_check

    if len(paths) < 2 or not sys.stderr.isatty():
        return run_check(paths, ruleset, fopts, jobs=jobs, validate=validate, scheduler=scheduler,
                         rows=rows, units=units)
    from rich.console import Console
    from rich.progress import Progress

    with Progress(transient=True, console=Console(stderr=True)) as bar:
        task = bar.add_task("checking models", total=len(paths))
        return run_check(paths, ruleset, fopts, jobs=jobs, validate=validate, scheduler=scheduler,
                         progress=lambda: bar.advance(task), rows=rows, units=units)


def _annotate(run: Any, target: str, inputs: list[str]) -> None:

    from modelcheck.report.annotate import annotate_model

    readable = [m for m in run.models if not m.error]
    several = len(readable) > 1 or os.path.isdir(target)
    names: dict[str, str] = {}
    for m in readable:
        if several and names.setdefault(Path(m.path).name, m.path) != m.path:
            raise UsageError(f"--annotate {target}: {names[Path(m.path).name]} and {m.path} would both be written "
                             f"as {Path(m.path).name} in that folder; annotate them one at a time")
    outs = [os.path.join(target, Path(m.path).name) if several else target for m in readable]
    for out in outs:   # every target judged before any is written
        guard_output(out, inputs, option="--annotate", new_folder=several)
    if several and readable:
        os.makedirs(target, exist_ok=True)
    from modelcheck.common.files import writing

    for m, out in zip(readable, outs, strict=True):
        with writing(out):
            annotate_model(m.path, out, run.results)


def exit_code(run: Any, strict: bool, fail_on: str = "any", comparison: Any = None) -> int:
    if any(m.error for m in run.models):
        return EXIT_INPUT
    if any(m.coverage is not None and m.coverage.verified_nothing for m in run.models):
        return EXIT_FAIL   # members were found and not one could be checked: nothing was verified
    if fail_on == "new" and comparison is not None:
        from modelcheck.report.compare import new_problems

        return EXIT_FAIL if new_problems(comparison, strict=strict) else EXIT_OK
    status = run.results["status"] if len(run.results) else None
    if status is not None and (status == "fail").any():
        return EXIT_FAIL
    if strict and status is not None and (status == "unchecked").any():
        return EXIT_FAIL
    return EXIT_OK

