"""Tests of bomcheck.parse.linecells: lines whose cells read alike are merged once, and each line
still gets, column by column, what reading its own cells one line at a time gives
(``CellParser.combo``). Part numbers, makers and lot numbers are invented."""

import csv
import math
import random

import numpy as np
import pytest

from bomcheck.parse import linecells
from bomcheck.parse.bomresult import ImportFinding
from bomcheck.parse.importer import read_bom
from bomcheck.parse.linespec import _NOT_FITTED, SPEC_COLUMNS, CellParser, not_fitted_mark

# Cells as BOMs write them: readings, marks, other parts, unread numbers and doubts (a bare
# number, a thousands comma, two tolerances), so that lines have warnings in one, two or no
# cells.
_VALUES = ("100nF", "0.1uF 50V", "4u7", "104", "2R2", "1uF 25V X5R 0805", "4K7", "10R", "8MHz",
           "100n DNP", "", "1,500uF", "-10uF", "85", "1E-05", "100nF 10% 20%", "CAP 1uF lot 42",
           "10uF X5R 125C", "CABLE FFC")
_DESCRIPTIONS = ("CAP CER 0.1UF 16V X5R 0402 LOT {k}", "capacitor 1uF 25V X7R 0805 lot {k}",
                 "ceramic cap {k} {k}", "TANT 47uF 16V case D S/N {k}", "DNP on variant B only",
                 "", "RESISTOR 4K7", "MLCC 10uF 6.3V X5R 0603 85C", "cap 1uF 50V 10% 20% {k}",
                 "Kondensator 2,2uF 35V", "crystal 8MHz", "do not populate {k}")
_VOLTAGES = ("", "", "50V", "25", "6V3", "16 V", "100")
_DIELECTRICS = ("", "", "X7R", "X5R", "C0G")


def _board(tmp_path, lines, seed):
    """A BOM of ``lines`` lines drawn from the cells above (C, R and U designators)."""
    rng = random.Random(seed)
    rows = ["Designator,Qty,Value,Description,Voltage,Dielectric,Manufacturer,MPN"]
    for i in range(1, lines + 1):
        ref = f"{rng.choice('CCCCRU')}{i}"
        desc = rng.choice(_DESCRIPTIONS).format(k=rng.randrange(10**6))
        rows.append(f'{ref},1,"{rng.choice(_VALUES)}","{desc}",{rng.choice(_VOLTAGES)},'
                    f"{rng.choice(_DIELECTRICS)},Kvellon Passives,KV-{i:05d}")
    path = tmp_path / "bom.csv"
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    return str(path), rows


def _same_value(a, b):
    if isinstance(a, float) and isinstance(b, float) and math.isnan(a) and math.isnan(b):
        return True
    if b is None and isinstance(a, float) and math.isnan(a):
        return True  # a float column holds NaN where the spec holds None
    return a == b


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_each_placement_has_what_its_line_read_alone_gives(tmp_path, seed):
    path, _ = _board(tmp_path, 400, seed)
    result = read_bom(path)
    p = result.placements
    assert len(p) > 100
    parser = CellParser(semicolon=False)
    with open(path, encoding="utf-8", newline="") as f:
        file_rows = list(csv.reader(f))
    sources = ("value", "description", "voltage", "dielectric")
    columns = {"value": "value_text", "description": "description"}
    for _, row in p.iterrows():
        cells = {s: "" for s in sources}
        cells["value"], cells["description"] = row["value_text"], row["description"]
        # Voltage and dielectric cells are read back from the file's line.
        line = file_rows[int(row["row"]) - 1]
        cells["voltage"], cells["dielectric"] = line[4], line[5]
        combo = parser.combo(cells)
        assert row["text"] == combo.text
        for src, col in columns.items():
            assert row[col] == (combo.value_text if src == "value" else combo.description)
        for k in SPEC_COLUMNS:
            assert _same_value(row[k], combo.spec[k]), (row["row"], k, row[k], combo.spec[k])


def test_lines_differing_in_unread_numbers_are_merged_once_and_keep_their_own_findings(
        tmp_path, monkeypatch):
    rows = ["Designator,Qty,Value,Description,Manufacturer,MPN"]
    for i in range(1, 201):
        rows.append(f"C{i},1,100nF 50V X7R 0603,capacitor 100nF 50V X7R 0603 lot {i:06d},"
                    f"Kvellon Passives,KV-{i:06d}")
    path = tmp_path / "lots.csv"
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    merges = []
    real = CellParser.core

    def counting(self, info):
        merges.append(1)
        return real(self, info)

    monkeypatch.setattr(CellParser, "core", counting)
    result = read_bom(str(path))
    assert len(merges) == 1  # one distinct reading, one merge
    p = result.placements
    assert len(p) == 200
    assert p["unread"].tolist() == [("lot", f"{i:06d}") for i in range(1, 201)]
    assert [f.message for f in result.findings] == [
        f"description: a number without a unit was not read ('{i:06d}')" for i in range(1, 201)]
    assert p["capacitance_f"].tolist() == [pytest.approx(100e-9)] * 200


def test_one_cell_keeps_its_warnings_as_they_are_two_cells_keep_each_once():
    # A line with one read cell takes its warnings as the parser gave them; a merged line
    # keeps each warning once, first-seen order (the per-line CellParser.combo rule).
    vals = np.empty(2, dtype=object)
    vals[0], vals[1] = ("w1", "w1"), ()
    sc = linecells.SourceCells("description", np.array([0, 1]), np.array(["a", "b"], dtype=object),
                               np.array([True, True]), vals, vals, vals)
    one = np.array([True, False])
    got = linecells._own_column([sc], [np.array([0, 0])], "warnings", one)
    assert got.tolist() == [("w1", "w1"), ("w1",)]


def test_not_fitted_quick_test_agrees_with_the_pattern():
    rng = random.Random(4)
    marks = ("DNP", "dnp", "no pop", "NO-POPULATE", "not fitted", "Do Not Stuff", "nicht bestückt",
             "UNBESTUECKT", "non monté", "NF", "N/F", "N.F.", "NC", "N.C.", "100 NF", "xNC")
    words = ("100nF", "50V", "X7R", "lot", "0603", "cap", "note", "only", "variant", "B", "-",
             "(", ")", "nc", "Nf", "dn", "un", "done")
    for _ in range(20000):
        w = [rng.choice(words) for _ in range(rng.randint(0, 6))]
        if rng.random() < 0.4:
            w.insert(rng.randint(0, len(w)), rng.choice(marks))
        text = rng.choice(("", " ", "/")).join(w)
        m = _NOT_FITTED.search(text)
        assert not_fitted_mark(text) == (m.group(0) if m else None), text


def test_findings_sorted_by_key_as_by_comparison():
    rng = random.Random(5)
    fs = [ImportFinding(rng.randrange(5), rng.choice((None, "C1", "C2")),
                        rng.choice(("a", "b")), rng.choice(("x", "y"))) for _ in range(300)]
    assert sorted(fs, key=ImportFinding.sort_key) == sorted(fs)
