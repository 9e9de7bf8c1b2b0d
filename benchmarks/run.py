"""The large-model benchmark: `modelcheck check` end to end against a bare `ifcopenshell.open`.

    python benchmarks/run.py                 # 10k, 30k and 100k members, the building, the batch run
    python benchmarks/run.py --sizes 10000 --no-building --no-batch   # a quick look
    python benchmarks/run.py --repeat 3      # best of three runs per measurement

For each size it generates (once, cached in benchmarks/_work/) a synthetic IFC4 model and a load
table with benchmarks/make_model.py; the whole-building case is a model in which the members are a
small share of the elements (by default 10,000 members among 160,000 elements: `make_model.py
--building`). For each model it runs, each in a fresh process:

* the bare open:    python -c "import ifcopenshell; ifcopenshell.open(MODEL)"
* the check:        modelcheck check MODEL --loads TABLE --format json --output OUT
                    (as a user runs it: --jobs defaults to the machine's cores, and a large
                    model is shared out among them)
* the check, one process:  the same with --jobs 1

and prints the wall time of each, the check's ratio to the open and its time per member, and
peak memory two ways:

* max RSS: the largest resident set of any one process (what `time -v` reports);
* peak PSS: the largest total, over time, of the proportional set size of the command's whole
  process tree, sampled every 20 ms in a separate run (forked processes share the model's
  pages; PSS counts a shared page once in all, so the sum is the memory the command really
  takes). For the single-process open the two agree.

each with its ratio to the open's peak, and the max RSS of the one-process check with its ratio.

Before each measured run the command's previous report is removed and the kernel's dirty pages
are written out (os.sync), so no run pays for the disk write of the run before it; the package's
bytecode is compiled once at the start, as an installed package has it.

The batch part checks 8 copies of the 10k model with --jobs 1 and --jobs 2 and prints the
speed-up. The guard figures: the whole-building check ≤ 1.1 × its open, the 100,000-member check
≤ 2.5 × its open, the largest single process ≤ 1.5 × the open's, batch speed-up ≥ 1.7 × with two
workers.
"""

from __future__ import annotations

import argparse
import compileall
import os
import shutil
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
WORK = HERE / "_work"
sys.path.insert(0, str(HERE.parent))


def settle(cmd: list[str]) -> None:
    """Before a measured run: the command's report of a previous run removed and every dirty page
    written out. Otherwise the kernel may still be writing the previous report to disk, and the
    run that replaces it waits for that (or pays for its write-back) as if it were its own cost."""
    if "--output" in cmd:
        Path(cmd[cmd.index("--output") + 1]).unlink(missing_ok=True)
    os.sync()


def measure(cmd: list[str]) -> tuple[float, float]:
    """(wall seconds, max RSS in MiB of any process of the tree) of one command in a fresh process."""
    settle(cmd)
    t0 = time.perf_counter()
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - t0
    err = proc.stderr.read().decode(errors="replace") if proc.stderr else ""
    code = os.waitstatus_to_exitcode(status)
    if code not in (0, 1):
        raise SystemExit(f"benchmark command failed ({code}): {' '.join(cmd)}\n{err}")
    return wall, usage.ru_maxrss / 1024.0  # Linux reports KiB; the largest of the process and its children


def _tree(pid: int) -> list[int]:
    out, todo = [], [pid]
    while todo:
        p = todo.pop()
        out.append(p)
        try:
            with open(f"/proc/{p}/task/{p}/children") as fh:
                todo += [int(c) for c in fh.read().split()]
        except OSError:
            pass
    return out


def _pss_kib(pid: int) -> int:
    try:
        with open(f"/proc/{pid}/smaps_rollup") as fh:
            for line in fh:
                if line.startswith("Pss:"):
                    return int(line.split()[1])
    except OSError:
        pass
    return 0


def peak_pss(cmd: list[str], interval: float = 0.02) -> float:
    """Peak over time of the summed PSS (MiB) of the command's process tree."""
    settle(cmd)
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    peak = 0
    while proc.poll() is None:
        peak = max(peak, sum(_pss_kib(p) for p in _tree(proc.pid)))
        time.sleep(interval)
    return peak / 1024.0


def best(cmd: list[str], repeat: int) -> tuple[float, float]:
    runs = [measure(cmd) for _ in range(repeat)]
    return min(r[0] for r in runs), max(r[1] for r in runs)


def model_for(n: int, others: int = 0) -> tuple[Path, Path]:
    """The model of ``n`` members (among ``others`` more elements) and its load table, generated
    the first time they are asked for."""
    from benchmarks.make_model import build

    model = WORK / (f"b{n}-{others}.ifc" if others else f"m{n}.ifc")
    table = model.with_name(model.stem + "-forces.csv")
    if not model.exists() or not table.exists():
        print(f"generating a {n}-member model{f' among {n + others} elements' if others else ''} …", flush=True)
        build(n, model, others=others)
    return model, table


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[10_000, 30_000, 100_000])
    ap.add_argument("--repeat", type=int, default=1)
    ap.add_argument("--building", type=int, nargs=2, default=[10_000, 150_000], metavar=("MEMBERS", "OTHERS"),
                    help="the whole-building case: MEMBERS members among OTHERS more elements")
    ap.add_argument("--no-building", action="store_true")
    ap.add_argument("--no-batch", action="store_true")
    a = ap.parse_args()
    py = sys.executable
    # an installed package has its bytecode (pip compiles it; an editable install writes it on
    # first use, unless PYTHONDONTWRITEBYTECODE is set): compiled here, not on every measured run
    compileall.compile_dir(str(HERE.parent / "modelcheck"), quiet=1)
    print(f"machine: {os.cpu_count()} cores; check = default --jobs ({os.cpu_count()}), '1 proc' = --jobs 1")
    cases = [(f"{n} members", n, 0) for n in a.sizes]
    if not a.no_building:
        members, others = a.building
        cases.append((f"building {members // 1000}k/{(members + others) // 1000}k", members, others))
    print(f"{'model':>18} {'open s':>7} {'check s':>8} {'ratio':>6} {'1 proc s':>8} {'ratio':>6} "
          f"{'µs/member':>9} | {'open MiB':>8} {'check maxRSS':>12} {'ratio':>6} {'check PSS':>9} {'ratio':>6} "
          f"{'1 proc MiB':>10} {'ratio':>6}")
    for label, n, others in cases:
        model, table = model_for(n, others)
        out = WORK / f"{model.stem}-report.json"
        bare = [py, "-c", "import sys, ifcopenshell; ifcopenshell.open(sys.argv[1])", str(model)]
        check = [py, "-m", "modelcheck", "check", str(model), "--loads", str(table), "--format", "json",
                 "--output", str(out), "--no-config"]
        t_open, m_open = best(bare, a.repeat)
        t_chk, m_chk = best(check, a.repeat)
        t_one, m_one = best([*check, "--jobs", "1"], a.repeat)
        p_open, p_chk = peak_pss(bare), peak_pss(check)
        base = max(m_open, p_open)   # the open's peak (one process: its max RSS and PSS agree)
        print(f"{label:>18} {t_open:>7.2f} {t_chk:>8.2f} {t_chk / t_open:>6.2f} {t_one:>8.2f} {t_one / t_open:>6.2f} "
              f"{t_chk / n * 1e6:>9.1f} | {base:>8.0f} {m_chk:>12.0f} {m_chk / base:>6.2f} {p_chk:>9.0f} "
              f"{p_chk / base:>6.2f} {m_one:>10.0f} {m_one / base:>6.2f}", flush=True)
    if not a.no_batch:
        model, table = model_for(10_000)
        batch = WORK / "batch"
        batch.mkdir(exist_ok=True)
        for i in range(8):
            dst = batch / f"copy{i}.ifc"
            if not dst.exists():
                shutil.copyfile(model, dst)
        times = {}
        for jobs in (1, 2):
            times[jobs], _ = best([py, "-m", "modelcheck", "check", str(batch), "--loads", str(table), "--format",
                                   "json", "--output", str(WORK / f"batch-{jobs}.json"), "--jobs", str(jobs),
                                   "--no-config"], a.repeat)
        print(f"batch of 8 × 10k members: --jobs 1 {times[1]:.2f} s, --jobs 2 {times[2]:.2f} s, "
              f"speed-up {times[1] / times[2]:.2f} ×")


if __name__ == "__main__":
    main()
