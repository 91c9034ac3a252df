"""Timing helpers shared by the benchmarks: whole processes timed with their peak memory, and
medians of runs that alternate with their baseline so machine noise hits both alike."""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import time


def run(cmd: list[str], ok: tuple[int, ...] = (0, 1)) -> tuple[float, float]:
    """Run ``cmd``; return (wall seconds, peak resident memory in MB of it and its children)."""
    start = time.perf_counter()
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(proc.pid, 0)
    elapsed = time.perf_counter() - start
    err = proc.stderr.read().decode(errors="replace")
    proc.stderr.close()
    code = os.waitstatus_to_exitcode(status)
    if code not in ok:
        sys.exit(f"command failed ({code}): {' '.join(cmd)}\n{err}")
    return elapsed, usage.ru_maxrss / 1024  # Linux reports KB


def alternate(a: list[str], b: list[str], runs: int) -> tuple[float, float]:
    """Medians of ``runs`` alternating runs of the commands ``a`` and ``b`` (after one warm-up
    run of each)."""
    run(a), run(b)
    ta, tb = [], []
    for _ in range(runs):
        tb.append(run(b)[0])
        ta.append(run(a)[0])
    return statistics.median(ta), statistics.median(tb)


def median_of(fn, runs: int) -> float:
    """Median wall time of ``runs`` calls of ``fn`` in this process."""
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def verdict(ratio: float, goal: float) -> str:
    """'met' or 'not met' for a ratio against its goal (lower is better)."""
    return "met" if ratio <= goal else "not met"


def read_csv_cmd(*paths) -> list[str]:
    """The baseline process: import pandas and read each CSV."""
    reads = "; ".join(f"pd.read_csv({str(p)!r})" for p in paths)
    return [sys.executable, "-c", f"import pandas as pd; {reads}"]


def audit_cmd(bom, design, out) -> list[str]:
    """The audit process with its JSON report."""
    return [sys.executable, "-m", "bomcheck", "audit", str(bom), "--design", str(design),
            "--json", str(out), "--quiet", "--no-config", "--fail-on", "fail",
            # benchmark boards are larger than the default input limits allow
            "--max-placements", "100000000", "--max-rows", "100000000",
            "--max-cells", "2000000000", "--max-file-mb", "100000"]
