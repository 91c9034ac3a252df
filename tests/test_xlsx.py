"""Tests of bomcheck.render.xlsx: the reviewer's workbook, reopened with openpyxl and its cells
asserted. Its Summary sheet: test_xlsx_summary.py; its chart: test_xlsx_chart.py; cell helpers and
colours: test_xlsx_cells.py; the limit lines: test_chartdata.py."""

from __future__ import annotations

import csv
import os
import zipfile
from dataclasses import replace

import openpyxl
import pytest
from sheets import book, report  # noqa: F401 (fixtures)
from sheets import column, summary_values, table

from conftest import SAMPLE_WORKBOOK_TIME as GENERATED
from bomcheck.render import xlsx
from bomcheck.pipeline.audit import AuditOptions, run_audit
from bomcheck.errors import InputError
from bomcheck.status import STATUS_ORDER

RANK = {s: i for i, s in enumerate(STATUS_ORDER)}


# ---- sheets ----------------------------------------------------------------------------------

def test_sheet_names(book):
    assert book.sheetnames == ["Summary", "Placements", "Findings", "Rules", "Not audited",
                               "Voltage chart", "Chart data"]


# ---- Placements and Findings -----------------------------------------------------------------

def test_placements_one_row_per_fitted_placement_worst_first(book, report):
    header, rows = table(book["Placements"])
    assert len(rows) == len(report.table) == report.totals["fitted"]
    refdes = [r[header.index("designator")] for r in rows]
    assert refdes == list(report.worst_first()["refdes"])
    ranks = [RANK[r[header.index("status")]] for r in rows]
    assert ranks == sorted(ranks, reverse=True)


def test_placements_carry_every_spec_condition_and_metric_field(book, report):
    header = [c.value for c in book["Placements"][1]]
    for name in ("capacitance_f", "voltage_v", "dielectric", "technology", "t_ambient_c",
                 "v_dc", "voltage_ratio", "t_operating_c", "c_tol_factor", "c_temp_factor",
                 "c_bias_factor", "c_aging_factor", "c_worst_f", "c_margin", "text",
                 # circuit metrics the JSON carries (issue: discharge time, shock energy)
                 "discharge_s", "shock_energy_j", "energy_j", "v_share_cap_v"):
        assert xlsx.header_of(name) in header, name
    for name in ("governing rule", "limit", "margin", "message", "BOM row", "status"):
        assert name in header, name
    # headers are words with units, not internal names
    assert xlsx.header_of("discharge_s").endswith("[s]")
    assert xlsx.header_of("voltage_ratio") == "voltage ratio (applied peak / rated) [%]"
    # no column is empty on every row
    _, rows = table(book["Placements"])
    for j, name in enumerate(header):
        assert any(r[j] is not None for r in rows), name


def placement_cell(book, refdes: str, header: str):
    ws = book["Placements"]
    names = [c.value for c in ws[1]]
    for row in ws.iter_rows(min_row=2):
        if row[names.index("designator")].value == refdes:
            return row[names.index(header if header in names else xlsx.header_of(header))]
    raise AssertionError(refdes)


# C43 in the sample BOM: "CAP CER 4.7UF 10V 10% X5R 0603", design row: 95 degC ambient.
@pytest.mark.parametrize("header, value, unit", [
    ("capacitance_f", 4.7, "uF"),          # 4.7 uF stored in uF
    ("voltage_v", 10.0, "V"),
    ("t_operating_c", 95.0, "°C"),
    ("temp_max_c", 85.0, "°C"),           # EIA-198 class II: X5R upper temperature 85 degC
    ("tol_minus_pct", 0.10, "%"),         # 10 % stored as a fraction, shown as a percentage
    ("c_tol_factor", 0.90, "%"),          # nominal less 10 % tolerance
])
def test_numbers_are_numbers_with_unit_formats(book, header, value, unit):
    cell = placement_cell(book, "C43", header)
    assert cell.data_type == "n"
    assert cell.value == pytest.approx(value)
    assert unit in cell.number_format


def test_voltage_ratio_is_a_fraction_shown_as_percent(book, report):
    cell = placement_cell(book, "C31", "voltage_ratio")
    expected = report.table.set_index("refdes").at["C31", "voltage_ratio"]
    assert cell.value == pytest.approx(expected) and cell.number_format.endswith("%")
    # 5.2 V peak on a 6.3 V part (sample design rail +5V with tolerance and ripple)
    assert cell.value == pytest.approx(5.2 / 6.3, rel=1e-3)


def test_governing_limit_uses_its_metrics_unit(book):
    ratio = placement_cell(book, "C31", "limit")   # IND-CER-V, 70 %
    temp = placement_cell(book, "C43", "limit")    # IND-CER-TM, Tmax - 10 degC
    # severe environment (default): 60 % (System Reliability Center sheet, ceramic)
    assert ratio.value == pytest.approx(0.6) and ratio.number_format.endswith("%")
    assert temp.value == pytest.approx(10.0) and "°C" in temp.number_format


def test_status_cells_filled_by_status(book, report):
    cells = column(book["Placements"], "status")
    seen = {}
    for cell in cells:
        fill = cell.fill.fgColor.rgb[-6:]
        assert fill == xlsx.STATUS_PALETTE[cell.value][0]
        seen[cell.value] = fill
    assert set(seen) == set(report.table["status"])
    assert len(set(seen.values())) == len(seen)


def test_findings_one_row_per_non_pass_verdict_worst_first(book, report):
    header, rows = table(book["Findings"])
    v = report.verdicts
    assert len(rows) == int((v["status"] != "pass").sum())
    ranks = [RANK[r[header.index("status")]] for r in rows]
    assert ranks == sorted(ranks, reverse=True)
    got = sorted((r[header.index("designator")], r[header.index("rule")]) for r in rows)
    assert got == sorted(zip(v.loc[v["status"] != "pass", "refdes"],
                             v.loc[v["status"] != "pass", "rule_id"]))


def test_sheets_have_frozen_header_and_filter(book):
    for name in ("Placements", "Findings", "Rules", "Not audited"):
        ws = book[name]
        assert ws.freeze_panes and ws.freeze_panes.endswith("2")
        assert ws.auto_filter.ref.startswith("A1:") and ws.auto_filter.ref.endswith(
            str(ws.max_row))
        widths = [ws.column_dimensions[c].width for c in "ABC"]
        assert all(6 <= w <= 100 for w in widths)


# ---- Rules and Not audited -------------------------------------------------------------------

def test_rules_sheet_lists_the_rules_in_force(book, report):
    header, rows = table(book["Rules"])
    assert [r[0] for r in rows] == [rule.id for rule in report.rules.rules]
    by_id = {r[0]: dict(zip(header, r)) for r in rows}
    # industrial.toml: IND-TAN-CAT, 100 % up to 85 degC, linear to 66.67 % at 125 degC
    assert "85 °C" in by_id["IND-TAN-CAT"]["curve points"]
    assert "125 °C" in by_id["IND-TAN-CAT"]["curve points"]
    # the default severe environment: the reliability center sheet's severe ceramic column, 60 %
    assert by_id["IND-CER-V"]["fail value"] == pytest.approx(0.6)
    assert by_id["IND-CER-V"]["source"] == report.rules.rule("IND-CER-V").source
    assert by_id["IND-CER-V"]["enabled"] is True


def test_not_audited_accounts_for_every_row(book, report):
    header, rows = table(book["Not audited"])
    assert len(rows) == len(report.not_audited()) + len(report.design_unmatched)
    kinds = [r[header.index("kind")] for r in rows]
    t = report.totals
    assert kinds.count("not_fitted") == t["not_fitted"]
    assert kinds.count("not_capacitor") == t["non_capacitor_rows"]
    assert kinds.count("unreadable") == t["unreadable_rows"]
    assert kinds.count("not_in_bom") == t["design_unmatched"]
    assert all(r[header.index("reason")] for r in rows)


# ---- security --------------------------------------------------------------------------------

HOSTILE = ('=HYPERLINK("http://x","y")', "+1+1", "-2", "@SUM(A1)")


@pytest.fixture(scope="module")
def hostile_book(tmp_path_factory):
    folder = tmp_path_factory.mktemp("hostile")
    bom, design = folder / "bom.csv", folder / "design.csv"
    rows = [["Designator", "Qty", "Description", "Manufacturer Part Number"]]
    rows += [[f"C{i}", "1", "CAP CER 100NF 50V X7R 0402", text]
             for i, text in enumerate(HOSTILE, 1)]
    rows += [["C9", "1", f"{HOSTILE[0]} CAP CER 1UF 25V X5R 0603", "KV-2210-X7R"],
             ["R1", "1", HOSTILE[0], "RZ-1001-T"]]
    with bom.open("w", newline="", encoding="utf-8") as f:
        csv.writer(f).writerows(rows)
    with design.open("w", newline="", encoding="utf-8") as f:
        csv.writer(f).writerows([["refdes", "v_dc [V]", "t_ambient_c [°C]", "notes"],
                                 ["C1", "12", "55", "=1+2"], ["C2", "5", "55", "#N/A"]])
    out = folder / "hostile.xlsx"
    xlsx.write_workbook(run_audit(str(bom), str(design)), out, generated=GENERATED)
    return out


@pytest.mark.parametrize("text", [*HOSTILE, "=1+2", "#N/A"])
def test_input_text_comes_back_as_text(hostile_book, text):
    wb = openpyxl.load_workbook(hostile_book)
    found = [c for ws in wb.worksheets for row in ws.iter_rows() for c in row if c.value == text]
    assert found, text
    assert all(c.data_type == "s" for c in found)


@pytest.mark.parametrize("text", ["\tTAB LEAD", "\rCR LEAD", "=SUM(1,2)", "-rail"])
def test_leading_tab_cr_and_formula_signs_stay_text(report, tmp_path, text):
    # The readers strip cell edges; a report value built in code carries the raw text.
    notes = report.table.assign(notes=text)
    path = tmp_path / "notes.xlsx"
    xlsx.write_workbook(replace(report, table=notes), path, generated=GENERATED)
    cells = column(openpyxl.load_workbook(path)["Placements"], "notes")
    # XML 1.0 section 2.11: a parser reads a bare CR as LF, so a leading CR comes back as LF.
    shown = text.replace("\r", "\n")
    assert cells and all(c.value == shown and c.data_type == "s" for c in cells)


def test_text_starting_with_a_formula_is_kept_whole(hostile_book):
    wb = openpyxl.load_workbook(hostile_book)
    texts = [c.value for c in column(wb["Placements"], "text")]
    assert f"{HOSTILE[0]} CAP CER 1UF 25V X5R 0603" in texts


def test_no_formula_anywhere(hostile_book):
    with zipfile.ZipFile(hostile_book) as z:
        for name in z.namelist():
            if name.startswith("xl/worksheets/"):
                xml = z.read(name).decode("utf-8")
                assert "<f>" not in xml and "<f " not in xml, name
                assert "<hyperlink" not in xml, name


# ---- atomic writing and limits ---------------------------------------------------------------

def test_failed_write_leaves_no_file(report, tmp_path, monkeypatch):
    def broken(self):
        raise RuntimeError("chart step failed")

    monkeypatch.setattr(xlsx._Book, "_chart", broken)
    with pytest.raises(RuntimeError):
        xlsx.write_workbook(report, tmp_path / "audit.xlsx")
    assert list(tmp_path.iterdir()) == []


def test_failed_write_keeps_the_previous_report(report, tmp_path, monkeypatch):
    path = tmp_path / "audit.xlsx"
    path.write_bytes(b"previous report")

    def broken(self, *args, **kwargs):
        raise RuntimeError("save failed")

    monkeypatch.setattr(openpyxl.Workbook, "save", broken)
    with pytest.raises(RuntimeError):
        xlsx.write_workbook(report, path)
    assert path.read_bytes() == b"previous report"
    assert [p.name for p in tmp_path.iterdir()] == ["audit.xlsx"]


def test_unwritable_folder_is_an_input_error(report, tmp_path):
    with pytest.raises(InputError, match="cannot write workbook"):
        xlsx.write_workbook(report, tmp_path / "missing" / "audit.xlsx")


def test_past_the_row_limit_only_findings_and_summary_says_so(report, tmp_path, monkeypatch):
    non_pass = int((report.table["status"] != "pass").sum())
    limit = non_pass + 5  # more than the non-pass placements, fewer than all placements
    assert limit - 1 < len(report.table)
    monkeypatch.setattr(xlsx, "MAX_ROWS", limit)
    path = tmp_path / "limited.xlsx"
    xlsx.write_workbook(report, path, generated=GENERATED)
    wb = openpyxl.load_workbook(path)
    header, rows = table(wb["Placements"])
    assert len(rows) == non_pass
    assert "pass" not in {r[header.index("status")] for r in rows}
    notes = [r[1] for r in wb["Summary"].iter_rows(values_only=True) if r[0] == "note"]
    assert any("not a pass" in n for n in notes)
    assert all(ws.max_row <= limit for ws in wb.worksheets if ws.title != "Summary")
    # Summary still counts every placement.
    assert summary_values(wb["Summary"])["fitted placements (Placements sheet)"] == len(
        report.table)


def test_empty_rule_set_and_no_design_still_writes(tmp_path):
    bom = tmp_path / "bom.csv"
    bom.write_text("Designator,Qty,Description\nC1,1,CAP CER 10NF 50V X7R 0402\n",
                   encoding="utf-8")
    r = run_audit(str(bom), None, AuditOptions())
    path = tmp_path / "one.xlsx"
    xlsx.write_workbook(r, path, generated=GENERATED)
    wb = openpyxl.load_workbook(path)
    header, rows = table(wb["Placements"])
    assert len(rows) == 1 and rows[0][header.index("status")] == "nodata"


# ---- opened where reviewers open it: LibreOffice Calc, printed to PDF ------------------------

def _soffice() -> str | None:
    import shutil

    return shutil.which("soffice") or shutil.which("libreoffice")


def test_libreoffice_prints_the_workbook_with_its_chart_and_no_hash_cells(report, tmp_path):
    import shutil
    import subprocess

    soffice = _soffice()
    if soffice is None:
        pytest.skip("LibreOffice (soffice) is not installed: this check renders the workbook "
                    "as Calc does (Debian/Ubuntu: apt-get install libreoffice-calc)")
    if shutil.which("pdftotext") is None:
        pytest.skip("pdftotext is not installed: it reads the PDF's text (Debian/Ubuntu: "
                    "apt-get install poppler-utils)")
    path = tmp_path / "audit.xlsx"
    xlsx.write_workbook(report, path, generated=GENERATED)
    run = subprocess.run([soffice, "--headless", "--norestore",
                          f"-env:UserInstallation={(tmp_path / 'lo').as_uri()}",
                          "--convert-to", "pdf", "--outdir", str(tmp_path), str(path)],
                         capture_output=True, text=True, timeout=300,
                         env={**os.environ, "HOME": str(tmp_path)})
    pdf = tmp_path / "audit.pdf"
    assert pdf.exists(), run.stderr[-2000:]
    text = subprocess.run(["pdftotext", "-layout", str(pdf), "-"], capture_output=True,
                          text=True, check=True).stdout
    assert "###" not in text  # no number too wide for its column
    # the chart rendered: its title, axis titles and legend entries are drawn in the PDF
    assert text.count("Voltage ratio against operating temperature") >= 2
    assert "operating temperature [°C]" in text and "aluminium-electrolytic" in text
    pages = subprocess.run(["pdfinfo", str(pdf)], capture_output=True, text=True).stdout
    count = int(next(line.split()[-1] for line in pages.splitlines()
                     if line.startswith("Pages:")))
    assert count <= 25  # a 63-placement board prints to a sensible number of pages


# ---- every figure of the JSON report, no empty column -----------------------------------------

def test_placements_carry_every_figure_the_json_carries(sample_parts_outputs):
    report, wb, _ = sample_parts_outputs
    headers = {c.value for c in wb["Placements"][1]}
    figures = {k for p in report["placements"] for part in ("metrics", "conditions")
               for k in p.get(part, {})}
    assert {"esr_ohm", "energy_j", "life_ratio", "v_share_cap_v"} <= figures  # the sample's data
    missing = sorted(k for k in figures if xlsx.header_of(k) not in headers)
    assert missing == []


def test_no_column_is_empty_on_every_row(sample_parts_outputs):
    _, wb, _ = sample_parts_outputs
    for name in ("Placements", "Findings", "Rules", "Not audited", "Chart data"):
        ws = wb[name]
        if ws.max_row < 2:
            continue
        empty = [ws.cell(row=1, column=j).value for j in range(1, ws.max_column + 1)
                 if all(ws.cell(row=i, column=j).value is None
                        for i in range(2, ws.max_row + 1))]
        assert empty == [], f"{name}: {empty}"


def test_wrapped_rows_get_the_height_of_their_lines(book):
    # A Findings message longer than its column is wider wraps: its row is taller than one
    # line (15 points a line), and a one-line row keeps the default height.
    ws = book["Findings"]
    headers = [c.value for c in ws[1]]
    j = headers.index("message") + 1
    width = ws.column_dimensions[openpyxl.utils.get_column_letter(j)].width
    long_rows = [i for i in range(2, ws.max_row + 1)
                 if len(ws.cell(row=i, column=j).value or "") * 1.1 > 2 * width]
    assert long_rows
    for i in long_rows:
        assert ws.row_dimensions[i].height >= 2 * 15
