"""The Substitutes sheets of the workbook (``bomcheck.render.xlsx_substitutes``): input text
stays text, and the file appears only once complete."""

from substitute_boards import board  # noqa: F401 (a fixture)

from bomcheck.substitute import Alternate, run_substitute


def test_formula_like_alternate_text_stays_text_in_the_sheet(board, tmp_path):
    from openpyxl import load_workbook

    from bomcheck.render.xlsx_substitutes import write_substitute_workbook

    formula = '=HYPERLINK("http://example.invalid","click")'
    bom, design = board
    result = run_substitute(bom, design, [Alternate("C5", mpn="+1+1",
                                                    cells={"description": formula})])
    out = tmp_path / "subs.xlsx"
    write_substitute_workbook(result, out)
    wb = load_workbook(out)
    assert wb.sheetnames == ["Substitutes", "Substitute placements", "Substitute verdicts"]
    cells = {c.value: c for row in wb["Substitutes"].iter_rows(min_row=2) for c in row}
    assert cells[formula].data_type == "s"
    assert cells["+1+1"].data_type == "s"
    assert not [c for ws in wb for row in ws.iter_rows() for c in row if c.data_type == "f"]
    assert list(tmp_path.glob(".*.tmp")) == []
