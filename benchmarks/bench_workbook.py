"""Benchmark of the reviewer's workbook: ``bomcheck.render.xlsx.write_workbook`` against the fastest
writer floor for the same cells, measured in the same run: openpyxl in write-only mode, no
styles, the values of every sheet of the workbook just written. Goal (issue 13): within 1.2x.

    python benchmarks/bench_workbook.py [--placements 10000] [--runs 3]
"""

from __future__ import annotations

import argparse
import tempfile
from pathlib import Path

from synth import write_board
from timing import median_of, verdict

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
        ours = median_of(lambda: write_workbook(report, str(ours_path)), args.runs)
        floor = median_of(lambda: _floor(cells, floor_path), args.runs)
    count = sum(len(r) for rows in cells.values() for r in rows)
    print(f"placements: {args.placements}, cells: {count} in {len(cells)} sheets, "
          f"runs: {args.runs}")
    print(f"openpyxl write-only floor (median): {floor:.3f} s")
    print(f"write_workbook (median): {ours:.3f} s")
    print(f"ratio: {ours / floor:.2f}x   goal: within {GOAL:g}x: {verdict(ours / floor, GOAL)}")


if __name__ == "__main__":
    main()
