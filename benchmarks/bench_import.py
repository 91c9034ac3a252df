"""Benchmark of the read and normalise stages: ``read_bom`` against ``pandas.read_csv``.

Writes a synthetic BOM of 100k capacitor placements (a few hundred distinct value strings, some
grouped designator lines, not-fitted lines and non-capacitor lines) to a temporary directory,
then times ``pandas.read_csv`` of the file and ``bomcheck.parse.importer.read_bom`` of the same file
alternately in this process, after both are imported, and prints the medians and their ratio.

    python benchmarks/bench_import.py [--placements 100000] [--runs 7] [--distinct 300]
                                      [--description-only]

``--description-only`` writes a BOM whose only text column is the description (a line with one
source of text, the importer's per-line merge is skipped); with ``--distinct 30000`` it measures
the parse-dominated case.
"""

from __future__ import annotations

import argparse
import random
import statistics
import tempfile
import time
import zlib
from pathlib import Path


def _values(rng: random.Random, n: int) -> list[tuple[str, str]]:
    """``n`` distinct (value, description) pairs written the way BOMs write them."""
    mantissas = ("1", "1.5", "2.2", "3.3", "4.7", "6.8", "10", "15", "22", "33", "47", "68",
                 "100", "220", "470")
    out: set[tuple[str, str]] = set()
    while len(out) < n:
        m, p = rng.choice(mantissas), rng.choice("pnu")
        v = rng.choice(("6V3", "10V", "16V", "25V", "50V", "100V"))
        d = rng.choice(("X7R", "X5R", "C0G", "X6S"))
        style = rng.randrange(4)
        value = (f"{m}{p}F", f"{m}{p}", f"{m}{p}F {v}", f"{m} {p}F/{v}")[style]
        tail = f" {rng.choice(('10%', '20%', 'K', 'M', '5%'))}" if n > 1000 else ""
        extra = f" KV{rng.randrange(10**6)}" if n > 1000 else ""
        out.add((value, f"CAP CER {m}{p}F {v} {d} {rng.choice(('0402', '0603', '0805'))}"
                 f"{tail}{extra}"))
    return sorted(out)


def write_bom(path: Path, placements: int, distinct: int = 300, seed: int = 1,
              description_only: bool = False) -> None:
    """A flat export: mostly one designator per row, 2 % grouped lines, 1 % not fitted, and one
    non-capacitor row per twenty capacitor rows."""
    rng = random.Random(seed)
    values = _values(rng, distinct)
    if description_only:
        _write_description_only(path, placements, values, rng)
        return
    lines = ["Designator,Qty,Value,Description,Manufacturer,MPN,Package,Voltage,Notes"]
    n = 0
    r = 0
    while n < placements:
        value, desc = rng.choice(values)
        pkg = desc.rsplit(" ", 1)[1]
        volt = desc.split()[3]
        mpn = f"KV-{zlib.crc32(desc.encode()) % 9000 + 1000}-{pkg}"
        roll = rng.random()
        if roll < 0.02 and placements - n >= 4:
            k = rng.randrange(2, 5)
            ref = f'"C{n + 1}-C{n + k}"'
            qty = k
        else:
            k, ref, qty = 1, f"C{n + 1}", 1
        note = "DNP" if roll > 0.99 else ""
        lines.append(f"{ref},{qty},{value},{desc},Kvellon Passives,{mpn},{pkg},{volt},{note}")
        n += k
        r += 1
        if r % 20 == 0:
            lines.append(f"R{r},1,4K7,RES 4K7 1% 0402,Varnholt Resistive,VR-4K7-0402,0402,,")
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def _write_description_only(path: Path, placements: int, values: list[tuple[str, str]],
                            rng: random.Random) -> None:
    lines = ["Designator,Qty,Description,Manufacturer,MPN"]
    for n in range(placements):
        desc = values[n % len(values)][1] if n < len(values) else rng.choice(values)[1]
        lines.append(f"C{n + 1},1,{desc},Kvellon Passives,KV-{zlib.crc32(desc.encode()) % 9000}")
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--placements", type=int, default=100_000)
    ap.add_argument("--runs", type=int, default=7)
    ap.add_argument("--distinct", type=int, default=300)
    ap.add_argument("--description-only", action="store_true")
    args = ap.parse_args()

    import pandas as pd

    from bomcheck.parse.importer import read_bom
    from bomcheck.read.limits import Limits, use_limits

    with tempfile.TemporaryDirectory() as tmp, use_limits(Limits(placements=2 * args.placements)):
        path = Path(tmp) / "bench_bom.csv"
        write_bom(path, args.placements, args.distinct, description_only=args.description_only)
        size = path.stat().st_size
        result = read_bom(str(path))  # warm-up; also the accounting shown below
        pd.read_csv(path)
        t_csv: list[float] = []
        t_bom: list[float] = []
        for _ in range(args.runs):
            t0 = time.perf_counter()
            pd.read_csv(path)
            t1 = time.perf_counter()
            read_bom(str(path))
            t2 = time.perf_counter()
            t_csv.append(t1 - t0)
            t_bom.append(t2 - t1)
    csv_s, bom_s = statistics.median(t_csv), statistics.median(t_bom)
    totals = result.totals
    print(f"BOM: {totals['rows_read']} rows, {totals['placements']} placements "
          f"({totals['fitted']} fitted), {size / 1e6:.1f} MB, "
          f"{result.placements['value_text'].nunique()} distinct value strings, "
          f"{result.placements['description'].nunique()} distinct descriptions")
    print(f"pandas.read_csv: {csv_s * 1000:.0f} ms (median of {args.runs})")
    print(f"read_bom:        {bom_s * 1000:.0f} ms (median of {args.runs}); "
          f"{totals['placements'] / bom_s / 1e3:.0f}k placements/s")
    print(f"ratio read_bom / read_csv: {bom_s / csv_s:.2f} (goal: at most 3)")


if __name__ == "__main__":
    main()
