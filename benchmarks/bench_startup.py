"""Benchmark of start-up: the whole audit of the shipped sample board (BOM, design sheet and
parts data, JSON report) against a process that only imports pandas. Goal (issue 13): 1.3x.

    python benchmarks/bench_startup.py [--runs 7]

The package's bytecode is compiled first, as an installed package has it: without it (a checkout
run with PYTHONDONTWRITEBYTECODE set) every run compiles bomcheck's sources again, about 0.2 s.
A third process imports every module the audit imports and does nothing else, which splits the
audit's time into imports and the run itself. The CPU times are printed too: on a machine that
other work shares they move less than the wall times the goal is set on. Where the time goes in detail:
``python -X importtime -m bomcheck audit ...`` and ``python -m cProfile -m bomcheck audit ...``.
"""

from __future__ import annotations

import argparse
import compileall
import resource
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

from timing import run, verdict

GOAL = 1.3
ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "sample_boms"


def imported_modules(audit: list[str]) -> list[str]:
    """Every module the audit process imports, in import order (``-X importtime``)."""
    out = subprocess.run([audit[0], "-X", "importtime", *audit[1:]], capture_output=True,
                         text=True)
    names = [line.split("|")[2].strip() for line in out.stderr.splitlines()
             if line.startswith("import time:") and line.count("|") == 2]
    return [n for n in names if n and n != "imported package" and not n.endswith("__main__")]


def timed(cmd: list[str]) -> tuple[float, float]:
    """(wall seconds, CPU seconds) of one run of ``cmd``. The CPU time (user + system, from the
    children's resource usage) moves less than the wall time when other work shares the cores."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    wall = run(cmd)[0]
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return wall, (after.ru_utime + after.ru_stime) - (before.ru_utime + before.ru_stime)


def medians(commands: list[list[str]], runs: int) -> tuple[list[float], list[float]]:
    """Median wall and CPU times of each command over ``runs`` rounds that run them in turn
    (after one warm-up round), so that machine noise hits all of them alike."""
    for cmd in commands:
        run(cmd)
    times: list[list[tuple[float, float]]] = [[] for _ in commands]
    for _ in range(runs):
        for cmd, spent in zip(commands, times):
            spent.append(timed(cmd))
    return ([statistics.median(w for w, _ in t) for t in times],
            [statistics.median(c for _, c in t) for t in times])


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--runs", type=int, default=7)
    args = ap.parse_args()
    compileall.compile_dir(ROOT / "bomcheck", quiet=1)
    with tempfile.TemporaryDirectory() as tmp:
        audit = [sys.executable, "-m", "bomcheck", "audit",
                 str(SAMPLE / "bw7-controller-bom.csv"), "--design",
                 str(SAMPLE / "bw7-design.csv"), "--parts", str(SAMPLE / "bw7-parts.csv"),
                 "--json", str(Path(tmp) / "r.json"), "--quiet", "--no-config"]
        modules = Path(tmp) / "modules.txt"
        modules.write_text("\n".join(imported_modules(audit)), encoding="utf-8")
        # (a module the audit tried and did not find, such as _winapi, is tried here too)
        imports = [sys.executable, "-c", "import importlib, sys\nfor name in open(sys.argv[1])."
                   "read().split():\n    try:\n        importlib.import_module(name)\n"
                   "    except ImportError:\n        pass", str(modules)]
        subprocess.run(imports, check=True)
        (pandas, imported, audited), cpu = medians(
            [[sys.executable, "-c", "import pandas"], imports, audit], args.runs)
    print(f"runs: {args.runs}")
    print(f"import pandas process (median): {pandas:.3f} s")
    print(f"process importing what the audit imports (median): {imported:.3f} s "
          f"({imported / pandas:.2f}x)")
    print(f"sample board audit process (median): {audited:.3f} s: imports "
          f"{imported - pandas:+.3f} s beyond pandas, the run itself {audited - imported:.3f} s")
    print(f"CPU time (median, user + system): import pandas {cpu[0]:.3f} s, imports "
          f"{cpu[1]:.3f} s ({cpu[1] / cpu[0]:.2f}x), audit {cpu[2]:.3f} s ({cpu[2] / cpu[0]:.2f}x)")
    print(f"ratio: {audited / pandas:.2f}x   goal: {GOAL:g}x: {verdict(audited / pandas, GOAL)}")


if __name__ == "__main__":
    main()
