"""The boards the substitute check's tests run on: a small invented board of one's own (BOM and
design sheet), the sample board with its alternates file, and helpers to read results."""

from __future__ import annotations

import functools
from pathlib import Path

import pytest

from bomcheck.substitute import Alternate, SubstituteOptions, read_alternates, run_substitute

ROOT = Path(__file__).resolve().parents[1]
SAMPLE_BOM = ROOT / "sample_boms" / "bw7-controller-bom.csv"
SAMPLE_DESIGN = ROOT / "sample_boms" / "bw7-design.csv"
SAMPLE_ALTERNATES = ROOT / "sample_boms" / "bw7-alternates.csv"

BOM = """\
Designator,Qty,Value,Description,Manufacturer,MPN,Package,Voltage,Tolerance,Dielectric
"C1, C2",2,1uF,CAP CER 1UF 50V 10% X7R 0805,Tessel Passives,TP-0805-105K-50-X7R,0805,50V,10%,X7R
C3,1,10nF,CAP CER 10NF 100V 10% X7R 0603,Tessel Passives,TP-0603-103K-100-X7R,0603,100V,10%,X7R
C4,1,22uF,CAP TANT 22UF 16V 10% CASE C,Brackwell Tantalum,BW-C-226K-016,C,16V,10%,
C5,1,100pF,CAP CER 100PF 50V 5% C0G 0402,Tessel Passives,TP-0402-101J-50-C0G,0402,50V,5%,C0G
C6,1,10uF,CAP CER 10UF 25V 10% X5R 1206,Tessel Passives,TP-1206-106K-25-X5R,1206,25V,10%,X5R
C7,1,100nF,CAP FILM 0.1UF 310VAC X2 PP,Orrin Film,OF-X2-104-310,P15,310VAC,10%,
R1,1,10k,RES 10K 1% 0402,Ferrow Resistive,FR-0402-103F,0402,,1%,
"""
DESIGN = """\
refdes,v_dc [V],v_tol_pct [%],v_ac_rms [V],t_ambient_c [°C],c_min_f,v_reverse_pk [V]
*,,,,55,none,0
C1,3.3,0,,55,,
C2,24,0,,55,,
C3,24,0,,95,,
C4,12,5,,55,,
C5,3.3,0,,55,,
C6,12,0,,55,,
C7,,,253,55,,
"""


@pytest.fixture
def board(tmp_path):
    """(BOM path, design-sheet path) of the small board."""
    bom, design = tmp_path / "bom.csv", tmp_path / "design.csv"
    bom.write_text(BOM, encoding="utf-8")
    design.write_text(DESIGN, encoding="utf-8")
    return str(bom), str(design)


@functools.lru_cache(maxsize=None)
def sample_result():
    """The sample board's alternates file checked once per session (each alternate's check
    stands alone, so tests may pick the ones they need)."""
    return run_substitute(str(SAMPLE_BOM), str(SAMPLE_DESIGN),
                          read_alternates(str(SAMPLE_ALTERNATES)))


def check(board, *alternates, **options):
    """The results of checking ``alternates`` on ``board`` with ``SubstituteOptions(**options)``."""
    bom, design = board
    return run_substitute(bom, design, alternates, SubstituteOptions(**options)).results


def alt(original, description, **kw):
    """An alternate for ``original`` given by its description (MPN ``NEW-PART-1``)."""
    return Alternate(original=original, mpn=kw.pop("mpn", "NEW-PART-1"),
                     cells={"description": description}, **kw)


def by_refdes(result):
    return {p.refdes: p for p in result.placements}


def rules_of(placement, side):
    return {v.rule_id: getattr(v, side) for v in placement.verdicts if getattr(v, side)}
