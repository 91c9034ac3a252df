"""Invented inputs for the benchmarks: BOMs with a design row per placement, and whole boards.

Every BOM line is one designator; a few hundred distinct value strings (values x ratings x
tolerances x packages) are spread over the placements, and every placement has its own
operating conditions (DC rail, ripple and ambient drawn per placement), so nothing downstream
can lean on a handful of repeated rails. Part numbers and the maker are invented.
"""

from __future__ import annotations

import random
from pathlib import Path

# (value column, description template with {v} for the rated voltage, MPN stem, farads)
VALUES = (
    ("100nF", "CAP CER 0.1UF {v}V {t} X7R {p}", "QX104", 100e-9),
    ("1uF", "CAP CER 1UF {v}V {t} X5R {p}", "QX105", 1e-6),
    ("10uF", "CAP CER 10UF {v}V {t} X5R {p}", "QX106", 10e-6),
    ("22pF", "CAP CER 22PF {v}V {t} C0G {p}", "QX220", 22e-12),
    ("4u7", "CAP CER 4U7 {v}V {t} X7R {p}", "QX475", 4.7e-6),
    ("47uF", "CAP TANT 47UF {v}V {t} CASE D", "TV476", 47e-6),
    ("220uF", "CAP ALU ELEC 220UF {v}V 105C 8x11.5", "AE227", 220e-6),
    ("100uF", "CAP TANT POLYMER 100UF {v}V {t} CASE B", "TP107", 100e-6),
    ("1uF", "CAP FILM 1UF {v}V PP", "FP105", 1e-6),
    ("2n2", "CAP CER 2N2 {v}V {t} X7R {p}", "QX222", 2.2e-9),
)
VOLTS = (6.3, 10, 16, 25, 35, 50, 63, 100)
TOLS = ("5%", "10%", "20%")
PACKAGES = ("0402", "0603", "0805", "1206")
# Nominal rails; each placement's own v_dc is the rail with a small per-placement offset.
RAILS = (1.8, 3.3, 5.0, 12.0, 15.0, 24.0, 48.0)
MAKER = "Kvellon Passives"  # invented


def _line(rnd: random.Random) -> tuple[str, str, str, float, float]:
    """(value, description, MPN, rated volts, farads) of one random BOM line."""
    value, desc, stem, farads = VALUES[rnd.randrange(len(VALUES))]
    volts = VOLTS[rnd.randrange(len(VOLTS))]
    tol, pkg = TOLS[rnd.randrange(len(TOLS))], PACKAGES[rnd.randrange(len(PACKAGES))]
    text = desc.format(v=f"{volts:g}", t=tol, p=pkg)
    return value, text, f"{stem}-{volts:g}{tol[:-1]}-{pkg}", volts, farads


def _rail_for(rnd: random.Random, volts: float) -> float:
    """A rail that stresses a part of ``volts`` anywhere from lightly to beyond its rating."""
    fitting = [r for r in RAILS if r <= volts * 1.1] or [RAILS[0]]
    return fitting[-1 - rnd.randrange(min(3, len(fitting)))]


def write_board(folder: Path, n: int, *, seed: int = 7, prefix: str = "synthetic",
                first: int = 1) -> tuple[Path, Path]:
    """A BOM of ``n`` single-designator lines (C{first}...) and a design sheet with one row of
    its own conditions per placement; returns (bom, design)."""
    rnd = random.Random(seed)
    bom = folder / f"{prefix}-bom.csv"
    design = folder / f"{prefix}-design.csv"
    with bom.open("w", encoding="utf-8") as f, design.open("w", encoding="utf-8") as d:
        f.write("Designator,Qty,Value,Description,Manufacturer,Manufacturer Part Number\n")
        d.write("refdes,v_dc [V],v_ripple_pk [V],v_reverse_pk [V],t_ambient_c [°C],"
                "c_min_f [F],life_h [h]\n")
        for i in range(first, first + n):
            value, text, mpn, volts, farads = _line(rnd)
            f.write(f"C{i},1,{value},{text},{MAKER},{mpn}\n")
            rail = _rail_for(rnd, volts) * (1 + rnd.randrange(-50, 51) / 1000)
            ripple = rail * rnd.randrange(1, 40) / 1000
            ambient = rnd.randrange(25, 106)
            need = farads * rnd.choice((0.2, 0.5, 0.7, 0.9))
            d.write(f"C{i},{rail:.3f},{ripple:.4f},0,{ambient},{need:.3g},"
                    f"{rnd.choice((20000, 50000))}\n")
    return bom, design


def write_manifest(folder: Path, boards: int, placements: int, *, seed: int = 11) -> Path:
    """``boards`` invented boards of ``placements`` placements each and a manifest naming them
    (``boards.toml``); returns the manifest path."""
    lines = []
    for b in range(1, boards + 1):
        product = f"Orrin-{b:02d}"  # invented product line
        bom, design = write_board(folder, placements, seed=seed + b, prefix=product.lower())
        lines += ["[[board]]", f'product = "{product}"', f'bom = "{bom.name}"',
                  f'design = "{design.name}"', ""]
    manifest = folder / "boards.toml"
    manifest.write_text("\n".join(lines), encoding="utf-8")
    return manifest
