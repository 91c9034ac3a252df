"""Benchmark of the importer on a BOM whose every line has its own description: 30k lines,
``bomcheck.parse.importer.read_bom`` against ``pandas.read_csv`` of the same file, in this process
after both are imported, medians of alternating runs. Goal (issue 13): within 10x.

    python benchmarks/bench_descriptions.py [--lines 30000] [--runs 3]
"""

from __future__ import annotations

import argparse
import random
import tempfile
from pathlib import Path

from timing import median_of, verdict

GOAL = 10.0


def write_bom(path: Path, lines: int, seed: int = 3) -> None:
    """``lines`` single-designator lines, each description distinct (a running lot note and a
    varying word order, as hand-kept BOMs have); the value strings repeat."""
    rnd = random.Random(seed)
    values = ("100nF 50V X7R 0603", "1uF 25V X5R 0805", "10uF 16V X5R 1206", "22pF 50V C0G 0402",
              "4u7 35V X7R 1206", "47uF 16V tantalum case D")
    with path.open("w", encoding="utf-8") as f:
        f.write("Designator,Qty,Value,Description,Manufacturer,MPN\n")
        for i in range(1, lines + 1):
            value = values[rnd.randrange(len(values))]
            words = ["capacitor", value, f"lot {i:06d}", rnd.choice(("decoupling", "bulk",
                                                                     "filter", "timing"))]
            rnd.shuffle(words)
            f.write(f"C{i},1,{value},{' '.join(words)},Kvellon Passives,KV-{i:06d}\n")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--lines", type=int, default=30_000)
    ap.add_argument("--runs", type=int, default=3)
    args = ap.parse_args()
    import pandas as pd

    from bomcheck.parse.importer import ImportOptions, read_bom

    with tempfile.TemporaryDirectory() as tmp:
        bom = Path(tmp) / "descriptions.csv"
        write_bom(bom, args.lines)
        read_bom(str(bom), ImportOptions())  # warm caches
        ours = median_of(lambda: read_bom(str(bom), ImportOptions()), args.runs)
        base = median_of(lambda: pd.read_csv(bom), args.runs)
    print(f"lines: {args.lines} (every description distinct), runs: {args.runs}")
    print(f"pandas.read_csv (median): {base:.3f} s")
    print(f"read_bom (median): {ours:.3f} s")
    print(f"ratio: {ours / base:.1f}x   goal: within {GOAL:g}x: {verdict(ours / base, GOAL)}")


if __name__ == "__main__":
    main()
