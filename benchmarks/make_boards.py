"""Write N invented boards (BOM and design sheet with a row per placement) and the manifest
that names them, for `bomcheck audit --manifest` and `bomcheck where-used`.

    python benchmarks/make_boards.py OUT_DIR [--boards 20] [--placements 5000]
    bomcheck audit --manifest OUT_DIR/boards.toml --json OUT_DIR/all.json
"""

from __future__ import annotations

import argparse
from pathlib import Path

from synth import write_manifest


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("out", type=Path)
    ap.add_argument("--boards", type=int, default=20)
    ap.add_argument("--placements", type=int, default=5000)
    args = ap.parse_args()
    args.out.mkdir(parents=True, exist_ok=True)
    print(write_manifest(args.out, args.boards, args.placements))


if __name__ == "__main__":
    main()
