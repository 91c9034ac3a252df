"""Benchmark of the reviewer's workbook: ``bomcheck.render.xlsx.write_workbook`` against the fastest
writer floor for the same cells, measured in the same run: openpyxl in write-only mode, no
styles, the values of every sheet of the workbook just written. Goal (issue 13): within 1.2x.

The two are run alternately (ours, floor, ours...) so that load from other processes hits both
alike; the ratio is given for wall time and for this process's CPU time (the steadier figure on
a shared machine).

    python benchmarks/bench_workbook.py [--placements 10000] [--runs 3]
"""

from __future__ import annotations

import argparse
import statistics
import tempfile
import time
from pathlib import Path

from synth import write_board
from timing import verdict

GOAL = 1.2


def _cells(path: Path) -> dict[str, list[tuple]]:
    import openpyxl

    book = openpyxl.load_workbook(path, read_only=True)
    out = {ws.title: [tuple(r) for r in ws.iter_rows(values_only=True)] for ws in book}
    book.close()
    return out


def _floor(cells: dict[str, list[tuple]], path: Path) -> None:
    import openpyxl

    book = openpyxl.Workbook(write_only=True)
    for title, rows in cells.items():
        ws = book.create_sheet(title)
        for row in rows:
            ws.append(row)
    book.save(path)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--placements", type=int, default=10_000)
    ap.add_argument("--runs", type=int, default=3)
    args = ap.parse_args()
    from bomcheck.pipeline.audit import run_audit
    from bomcheck.render.xlsx import write_workbook

    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        bom, design = write_board(folder, args.placements)
        report = run_audit(str(bom), str(design))
        ours_path, floor_path = folder / "audit.xlsx", folder / "floor.xlsx"
        write_workbook(report, str(ours_path))
        cells = _cells(ours_path)
        times = _alternate(lambda: write_workbook(report, str(ours_path)),
                           lambda: _floor(cells, floor_path), args.runs)
    count = sum(1 for rows in cells.values() for r in rows for v in r if v is not None)
    print(f"placements: {args.placements}, non-empty cells: {count} in {len(cells)} sheets, "
          f"runs: {args.runs}")
    for clock, (ours, floor) in times.items():
        print(f"{clock}: openpyxl write-only floor (median) {floor:.3f} s, write_workbook "
              f"(median) {ours:.3f} s, ratio {ours / floor:.2f}x   goal: within {GOAL:g}x: "
              f"{verdict(ours / floor, GOAL)}")


def _alternate(ours, floor, runs: int) -> dict[str, tuple[float, float]]:
    """Median wall and CPU seconds of ``runs`` alternating calls of ``ours`` and ``floor``."""
    got: dict[str, list[list[float]]] = {"wall": [[], []], "cpu": [[], []]}
    for _ in range(runs):
        for k, fn in enumerate((ours, floor)):
            wall, cpu = time.perf_counter(), time.process_time()
            fn()
            got["wall"][k].append(time.perf_counter() - wall)
            got["cpu"][k].append(time.process_time() - cpu)
    return {clock: (statistics.median(a), statistics.median(b)) for clock, (a, b) in got.items()}


if __name__ == "__main__":
    main()
