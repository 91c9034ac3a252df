"""Benchmark of scale: the whole `bomcheck audit BOM --design SHEET --json OUT` process at 100k
and 1M placements (and 2M with --two-million), each with a design row per placement: wall time,
peak resident memory, the 100k -> 1M time ratio, and 10M extrapolated from the largest runs.

Goals (issue 13): 1M placements under 10 s and 2 GB; 100k -> 1M within 12x (linear). Memory
stays bounded because the JSON report is written chunk by chunk (bomcheck.report.jsonform), never
as one string. --profile runs the largest size once more in this process under cProfile and
prints the ten largest costs.

    python benchmarks/bench_scale.py [--two-million] [--profile]
"""

from __future__ import annotations

import argparse
import math
import tempfile
from pathlib import Path

from synth import write_board
from timing import audit_cmd, read_csv_cmd, run, verdict

GOAL_S, GOAL_MB, GOAL_RATIO = 10.0, 2048.0, 12.0


def _profile(bom: Path, design: Path, out: Path) -> None:
    import cProfile
    import pstats

    from bomcheck.cli.main import main

    prof = cProfile.Profile()
    prof.runcall(main, ["audit", str(bom), "--design", str(design), "--json", str(out),
                        "--quiet", "--no-config"])
    print("\nten largest costs (own time):")
    pstats.Stats(prof).sort_stats("tottime").print_stats(10)
    print("ten largest costs (cumulative):")
    pstats.Stats(prof).sort_stats("cumulative").print_stats(25)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--two-million", action="store_true", help="also measure 2M placements")
    ap.add_argument("--profile", action="store_true", help="profile the largest size")
    ap.add_argument("--sizes", type=int, nargs="*", help="placements to measure instead")
    args = ap.parse_args()
    sizes = args.sizes or [100_000, 1_000_000] + ([2_000_000] if args.two_million else [])
    measured: dict[int, tuple[float, float, float]] = {}
    with tempfile.TemporaryDirectory() as tmp:
        for n in sizes:
            bom, design = write_board(Path(tmp), n, prefix=f"n{n}")
            out = Path(tmp) / f"report-{n}.json"
            base = run(read_csv_cmd(bom, design))[0]
            wall, rss = run(audit_cmd(bom, design, out))
            measured[n] = (wall, rss, base)
            print(f"{n:>9} placements: {wall:7.2f} s, peak {rss:7.0f} MB, report "
                  f"{out.stat().st_size / 1e6:.0f} MB; read_csv process {base:.2f} s "
                  f"(ratio {wall / base:.1f}x)")
            out.unlink()
        if 100_000 in measured and 1_000_000 in measured:
            t1, m1, _ = measured[1_000_000]
            ratio = t1 / measured[100_000][0]
            print(f"100k -> 1M time ratio: {ratio:.1f}x   goal: within {GOAL_RATIO:g}x: "
                  f"{verdict(ratio, GOAL_RATIO)}")
            print(f"1M: {t1:.1f} s (goal under {GOAL_S:g} s: {verdict(t1, GOAL_S)}), "
                  f"{m1:.0f} MB (goal under {GOAL_MB:g} MB: {verdict(m1, GOAL_MB)})")
        big = sorted(measured)[-2:]
        if len(big) == 2:
            (n0, (t0, r0, _)), (n1, (t1, r1, _)) = [(n, measured[n]) for n in big]
            k = math.log(t1 / t0) / math.log(n1 / n0)  # measured growth exponent
            t10 = t1 * (10_000_000 / n1) ** k
            r10 = r1 + (r1 - r0) / (n1 - n0) * (10_000_000 - n1)
            print(f"10M extrapolated from {n0} and {n1}: {t10:.0f} s (time grows as n^{k:.2f}), "
                  f"peak about {r10:.0f} MB (memory linear in n)")
        if args.profile:
            n = sizes[-1]
            _profile(Path(tmp) / f"n{n}-bom.csv", Path(tmp) / f"n{n}-design.csv",
                     Path(tmp) / "profiled.json")


if __name__ == "__main__":
    main()
