"""Benchmark: the whole `bomcheck audit BOM --design SHEET --json OUT` process against the whole
process `python -c "import pandas; read_csv(BOM); read_csv(SHEET)"` on the same synthetic input.

The two are run alternately in the same session and the medians compared, so machine noise hits
both alike. Run: python benchmarks/bench_audit.py [--placements 100000] [--runs 5]
"""

from __future__ import annotations

import argparse
import random
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

VALUES = [
    ("100nF", "CAP CER 0.1UF {v}V 10% X7R 0402", "X7R"),
    ("1uF", "CAP CER 1UF {v}V 10% X5R 0603", "X5R"),
    ("10uF", "CAP CER 10UF {v}V 20% X5R 0805", "X5R"),
    ("22pF", "CAP CER 22PF {v}V 5% C0G 0402", "C0G"),
    ("4u7", "CAP CER 4U7 {v}V X7R 0805", "X7R"),
    ("47uF", "CAP TANT 47UF {v}V 10% CASE D", ""),
    ("220uF", "CAP ALU ELEC 220UF {v}V 105C 8x11.5", ""),
    ("100uF", "CAP TANT POLYMER 100UF {v}V 20% CASE B", ""),
    ("1uF", "CAP FILM 1UF {v}V PP", ""),
    ("104", "CAP CER {v}V X7R 0402 10%", ""),
]
VOLTS = [6.3, 10, 16, 25, 35, 50, 63, 100]
RAILS = [(3.3, 55), (5.0, 60), (12.0, 70), (24.0, 85)]


def make_inputs(folder: Path, n: int, seed: int = 7) -> tuple[Path, Path]:
    """A BOM of ``n`` single-designator lines (a few hundred distinct value strings) and a design
    sheet with one row per placement."""
    rnd = random.Random(seed)
    bom = folder / "synthetic-bom.csv"
    design = folder / "synthetic-design.csv"
    with bom.open("w", encoding="utf-8") as f, design.open("w", encoding="utf-8") as d:
        f.write("Designator,Qty,Value,Description,Manufacturer Part Number,Package\n")
        d.write("refdes,v_dc [V],v_ripple_pk [V],t_ambient_c [°C],life_h [h]\n")
        for i in range(1, n + 1):
            value, desc, _ = VALUES[rnd.randrange(len(VALUES))]
            volts = VOLTS[rnd.randrange(len(VOLTS))]
            v = f"{volts:g}"
            f.write(f"C{i},1,{value},{desc.format(v=v)},SYN-{value}-{v},\n")
            rail, temp = RAILS[rnd.randrange(len(RAILS))]
            d.write(f"C{i},{rail},{rail * 0.01:.3f},{temp},50000\n")
    return bom, design


def _time(cmd: list[str]) -> float:
    start = time.perf_counter()
    proc = subprocess.run(cmd, capture_output=True, text=True)
    elapsed = time.perf_counter() - start
    if proc.returncode not in (0, 1):
        sys.exit(f"command failed ({proc.returncode}): {' '.join(cmd)}\n{proc.stderr}")
    return elapsed


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--placements", type=int, default=100_000)
    ap.add_argument("--runs", type=int, default=5)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        bom, design = make_inputs(folder, args.placements)
        out = folder / "report.json"
        audit = [sys.executable, "-m", "bomcheck", "audit", str(bom), "--design", str(design),
                 "--json", str(out), "--quiet", "--max-placements", str(2 * args.placements)]
        baseline = [sys.executable, "-c",
                    f"import pandas; pandas.read_csv({str(bom)!r}); pandas.read_csv({str(design)!r})"]
        _time(audit)  # warm the disk cache and pint's registry cache
        a_times, b_times = [], []
        for _ in range(args.runs):
            b_times.append(_time(baseline))
            a_times.append(_time(audit))
        a, b = statistics.median(a_times), statistics.median(b_times)
        print(f"placements: {args.placements}, runs: {args.runs}")
        print(f"read_csv process (median): {b:.3f} s")
        print(f"audit process (median):    {a:.3f} s   report {out.stat().st_size / 1e6:.1f} MB")
        print(f"ratio audit / read_csv:    {a / b:.2f}x (goal: within 3x)")


if __name__ == "__main__":
    main()
