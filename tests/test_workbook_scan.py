"""Read stage: the XLSX zip scan that runs before a spreadsheet library reads a workbook."""

from __future__ import annotations

import io
import sys
import zipfile
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))

from hostile_corpus import BOM_ROWS, sheet_xml, xlsx_bytes  # noqa: E402

from bomcheck.errors import InputError  # noqa: E402
from bomcheck.read.limits import Limits  # noqa: E402
from bomcheck.read.workbook_scan import column_letters, column_number, scan_workbook  # noqa: E402


@pytest.mark.parametrize("letters, n", [("A", 1), ("Z", 26), ("AA", 27), ("AMJ", 1024),
                                        ("XFD", 16384)])
def test_column_letters(letters, n):
    # A1 reference style: bijective base 26 (ECMA-376 Part 1, 18.17.2.3 cell references).
    assert column_number(letters) == n and column_letters(n) == letters


def _scan(data: bytes, lim: Limits = Limits()):
    with zipfile.ZipFile(io.BytesIO(data)) as zf:
        return scan_workbook(zf, "b.xlsx", lim)


def test_scan_finds_sizes_hidden_parts_and_percent_cells():
    xml = sheet_xml(BOM_ROWS, row_attrs={3: ' hidden="1"'},
                    cols='<col min="2" max="3" hidden="1"/>',
                    extra='<row r="7"><c r="D7" s="1"><v>0.05</v></c></row>')
    scan = _scan(xlsx_bytes([("BOM", xml, "visible"), ("Old", sheet_xml([["x"]]), "hidden")]))
    bom, old = scan.sheets
    assert (bom.last_row, bom.last_column) == (7, 4)
    assert bom.hidden_rows == {3} and bom.hidden_columns == {2, 3}
    assert bom.percent_cells == {(7, 4)}  # style 1 has the built-in format 9, "0%"
    assert old.hidden and not bom.hidden


def test_a_sheet_part_no_entry_leads_to_is_still_held_to_the_limits():
    good = sheet_xml(BOM_ROWS)
    rels = ('<?xml version="1.0"?><Relationships xmlns="http://schemas.openxmlformats.org/'
            'package/2006/relationships"><Relationship Id="rId1" Type="worksheet" '
            'Target="odd\\\\path.xml"/></Relationships>')
    data = xlsx_bytes([("BOM", good.replace("</sheetData>", '<row r="1048576"><c r='
                                            '"XFD1048576"/></row></sheetData>'), "visible")],
                      replace={"xl/_rels/workbook.xml.rels": rels.encode()})
    with pytest.raises(InputError, match="refused"):
        _scan(data)


def test_cell_count_limit_without_cell_positions():
    # Cells written without an r attribute take the next column: their count is held to the
    # cell limit even though no position says how wide the row is.
    xml = sheet_xml(BOM_ROWS, extra="<row>" + "<c><v>1</v></c>" * 3000 + "</row>")
    with pytest.raises(InputError, match="cell count"):
        _scan(xlsx_bytes([("BOM", xml, "visible")]), Limits(cells=2000))
