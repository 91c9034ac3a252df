"""Benchmark of start-up: the whole audit of the shipped sample board (BOM, design sheet and
parts data, JSON report) against a process that only imports pandas. Goal (issue 13): 1.3x.

    python benchmarks/bench_startup.py [--runs 7]

The package's bytecode is compiled first, as an installed package has it: without it (a checkout
run with PYTHONDONTWRITEBYTECODE set) every run compiles bomcheck's sources again, about 0.2 s.
Where the time goes: ``python -X importtime -m bomcheck audit ...`` and ``-m cProfile``.
"""

from __future__ import annotations

import argparse
import compileall
import sys
import tempfile
from pathlib import Path

from timing import alternate, verdict

GOAL = 1.3
ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "sample_boms"


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
        a, b = alternate(audit, [sys.executable, "-c", "import pandas"], args.runs)
    print(f"runs: {args.runs}")
    print(f"import pandas process (median): {b:.3f} s")
    print(f"sample board audit process (median): {a:.3f} s")
    print(f"ratio: {a / b:.2f}x   goal: {GOAL:g}x: {verdict(a / b, GOAL)}")


if __name__ == "__main__":
    main()
