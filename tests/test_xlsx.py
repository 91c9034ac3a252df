"""Tests of bomcheck.render.xlsx: the reviewer's workbook, reopened with openpyxl and its cells asserted."""

from __future__ import annotations

import csv
import os
import zipfile
from dataclasses import replace
from datetime import datetime, timezone
from pathlib import Path

import openpyxl
import pytest

from bomcheck.render import xlsx
from bomcheck.pipeline.audit import AuditOptions, run_audit
from bomcheck.errors import InputError
from bomcheck.status import STATUS_ORDER

ROOT = Path(__file__).resolve().parents[1]
SAMPLE_BOM = ROOT / "sample_boms" / "bw7-controller-bom.csv"
SAMPLE_DESIGN = ROOT / "sample_boms" / "bw7-design.csv"
GENERATED = datetime(2031, 1, 2, 3, 4, 5)
RANK = {s: i for i, s in enumerate(STATUS_ORDER)}


@pytest.fixture(scope="module")
def report():
    return run_audit(str(SAMPLE_BOM), str(SAMPLE_DESIGN))


@pytest.fixture(scope="module")
def book(report, tmp_path_factory):
    path = tmp_path_factory.mktemp("xlsx") / "audit.xlsx"
    xlsx.write_workbook(report, path, generated=GENERATED)
    return openpyxl.load_workbook(path)


def table(ws) -> tuple[list[str], list[tuple]]:
    """Header and data rows of a sheet with one header row."""
    rows = list(ws.iter_rows(values_only=True))
    return list(rows[0]), rows[1:]


def column(ws, header: str) -> list:
    """The data cells (not values) under ``header``."""
    names = [c.value for c in ws[1]]
    j = names.index(header if header in names else xlsx.header_of(header)) + 1
    return [ws.cell(row=i, column=j) for i in range(2, ws.max_row + 1)]


def summary_values(ws) -> dict:
    """Column A label -> column B value for every Summary row with a label."""
    return {r[0]: r[1] for r in ws.iter_rows(values_only=True) if isinstance(r[0], str)}


def luminance(rgb: str) -> float:
    # WCAG 2.1 relative luminance (sRGB)
    def chan(c: float) -> float:
        return c / 12.92 if c <= 0.03928 else ((c + 0.055) / 1.055) ** 2.4
    r, g, b = (int(rgb[i:i + 2], 16) / 255 for i in (0, 2, 4))
    return 0.2126 * chan(r) + 0.7152 * chan(g) + 0.0722 * chan(b)


def contrast(a: str, b: str) -> float:
    # WCAG 2.1 contrast ratio (L1 + 0.05) / (L2 + 0.05)
    la, lb = sorted((luminance(a), luminance(b)), reverse=True)
    return (la + 0.05) / (lb + 0.05)


# ---- sheets and Summary ----------------------------------------------------------------------

def test_sheet_names(book):
    assert book.sheetnames == ["Summary", "Placements", "Findings", "Rules", "Not audited",
                               "Voltage chart", "Chart data"]


@pytest.mark.parametrize("key, label", [
    ("rows_read", "rows read"),
    ("capacitor_rows", "capacitor rows"),
    ("non_capacitor_rows", "non-capacitor rows"),
    ("unreadable_rows", "unreadable rows"),
    ("placements", "placements"),
    ("fitted", "fitted placements (Placements sheet)"),
    ("not_fitted", "not-fitted placements"),
    ("design_unmatched", "design rows not in the BOM"),
    ("fail", "fail"), ("nodata", "nodata"), ("warn", "warn"), ("pass", "pass"),
])
def test_summary_totals_equal_report_totals(book, report, key, label):
    assert summary_values(book["Summary"])[label] == report.totals[key]


def test_summary_accounting_identity_and_head(book, report):
    rows = list(book["Summary"].iter_rows(values_only=True))
    t = report.totals
    identity = next(r for r in rows if r[0] == "rows read = capacitor rows + non-capacitor rows "
                                                  "+ unreadable rows")
    assert identity[1] == (f"{t['rows_read']} = {t['capacitor_rows']} + "
                           f"{t['non_capacitor_rows']} + {t['unreadable_rows']}")
    assert identity[2] == "holds"
    values = summary_values(book["Summary"])
    assert values["tool version"] == f"bomcheck {report.tool_version}"
    assert values["generated"] == GENERATED
    assert values["overall status"] == report.status
    assert values["Not audited sheet rows"] == len(report.not_audited()) + len(
        report.design_unmatched)


def test_summary_lists_inputs_rule_sets_sources_and_cautions_verbatim(book, report):
    cells = {v for r in book["Summary"].iter_rows(values_only=True) for v in r if v is not None}
    for d in report.inputs:
        assert d["path"] in cells and d["sha256"] in cells
    for d in report.rulesets:
        assert d["name"] in cells and d["version"] in cells
    for s in report.rulesets[-1]["sources"]:
        assert s["id"] in cells and s["title"] in cells
    for caution in report.cautions:
        assert caution in cells


def test_generated_defaults_to_now_in_utc(report, tmp_path):
    path = tmp_path / "now.xlsx"
    before = datetime.now(timezone.utc).replace(tzinfo=None, microsecond=0)
    xlsx.write_workbook(report, path)
    stamp = summary_values(openpyxl.load_workbook(path)["Summary"])["generated (UTC)"]
    assert before <= stamp <= datetime.now(timezone.utc).replace(tzinfo=None)


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
    for name in ("governing rule", "limit", "margin", "explanation", "BOM row", "status"):
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


def test_palette_darkens_with_severity_and_stays_readable():
    order = [s for s in STATUS_ORDER if s in xlsx.STATUS_PALETTE]
    lum = [luminance(xlsx.STATUS_PALETTE[s][0]) for s in order]
    assert lum == sorted(lum, reverse=True)
    for fill, font, _ in xlsx.STATUS_PALETTE.values():
        assert contrast(fill, font) >= 4.5  # WCAG 2.1 SC 1.4.3, normal text


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


# ---- chart -----------------------------------------------------------------------------------

def test_chart_series_per_technology_and_limit_line(book, report):
    charts = book["Voltage chart"]._charts
    assert len(charts) == 1
    chart = charts[0]
    assert type(chart).__name__ == "ScatterChart"
    t = report.table
    plotted = t[t["voltage_ratio"].notna() & t["t_operating_c"].notna()]
    technologies = set(plotted["technology"].fillna(xlsx.UNKNOWN_TECHNOLOGY))
    # DC voltage-ratio rules only: AC-rated parts are plotted apart from the DC limit lines
    rules = [r for r in report.rules.rules if r.enabled and r.metric == "voltage_ratio"
             and r.applies.voltage_kind != "ac"]
    # Distinct lines: constants by value, curves by their points.
    shapes = {(r.fail.value,) if not r.fail.is_curve else (r.fail.xs, r.fail.ys, r.fail.step)
              for r in rules}
    titles = [s.tx.v for s in chart.series]
    assert len(chart.series) == len(technologies) + len(shapes)
    assert technologies <= set(titles)
    lines = [x for x in titles if x.startswith("limit")]
    for rule in rules:
        assert sum(rule.id in x.replace(",", " ").split() for x in lines) == 1, rule.id


def test_chart_data_holds_every_plotted_placement(book, report):
    header, rows = table(book["Chart data"])
    t = report.table
    # AC-rated parts are kept off the DC limit lines (they are not judged against them).
    dc = t["voltage_kind"] != "ac"
    n = int((t["voltage_ratio"].notna() & t["t_operating_c"].notna() & dc).sum())
    assert n < int((t["voltage_ratio"].notna() & t["t_operating_c"].notna()).sum())
    assert sum(1 for r in rows if r[1] is not None) == n


def test_step_limit_drawn_as_a_step():
    from bomcheck.evaluate.rules import load_rules

    # NASA EEE-INST-002 Section C1 Table 4, step reading (strict-step): 50 % to 70 degC, 30 % above
    lines = xlsx.limit_lines(load_rules(["strict-step"]), 40.0, 100.0)
    name, xs, ys = next(x for x in lines if "EEE-TAN-V-STEP" in x[0])
    assert (70.0, 0.5) in zip(xs, ys) and (70.0, 0.3) in zip(xs, ys)
    assert ys[0] == 0.5 and ys[-1] == 0.3 and xs == sorted(xs)


def test_linear_limit_passes_through_its_points():
    from bomcheck.evaluate.rules import load_rules

    # industrial.toml IND-FLM-CAT: 100 % to 85 degC, 75 % at 105 degC, 50 % at 125 degC
    lines = xlsx.limit_lines(load_rules(["industrial"]), 55.0, 95.0)
    name, xs, ys = next(x for x in lines if "IND-FLM-CAT" in x[0])
    assert dict(zip(xs, ys))[105.0] == pytest.approx(0.75)
    assert xs[0] < 55.0 and xs[-1] > 125.0


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


@pytest.mark.parametrize("text, expected", [
    ("ok\x01text", "ok\ufffdtext"),  # XML 1.0 forbids C0 controls but tab, LF, CR
    ("tab\tand\nline", "tab\tand\nline"),
    ("x" * 40_000, "x" * (xlsx.MAX_CELL_CHARS - 1) + "…"),  # Excel: 32,767 characters a cell
])
def test_safe_text(text, expected):
    assert xlsx.safe_text(text) == expected


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

@pytest.fixture(scope="module")
def sample_with_parts(tmp_path_factory):
    """The sample board with its parts data, audited to JSON and to the workbook."""
    import json

    from bomcheck.cli.main import main

    folder = tmp_path_factory.mktemp("parts")
    main(["audit", str(SAMPLE_BOM), "--design", str(SAMPLE_DESIGN), "--parts",
          str(ROOT / "sample_boms" / "bw7-parts.csv"), "--no-config", "--quiet",
          "--json", str(folder / "a.json"), "--xlsx", str(folder / "a.xlsx")])
    return (json.loads((folder / "a.json").read_text(encoding="utf-8")),
            openpyxl.load_workbook(folder / "a.xlsx"), folder / "a.xlsx")


def test_placements_carry_every_figure_the_json_carries(sample_with_parts):
    report, wb, _ = sample_with_parts
    headers = {c.value for c in wb["Placements"][1]}
    figures = {k for p in report["placements"] for part in ("metrics", "conditions")
               for k in p.get(part, {})}
    assert {"esr_ohm", "energy_j", "life_ratio", "v_share_cap_v"} <= figures  # the sample's data
    missing = sorted(k for k in figures if xlsx.header_of(k) not in headers)
    assert missing == []


def test_no_column_is_empty_on_every_row(sample_with_parts):
    _, wb, _ = sample_with_parts
    for name in ("Placements", "Findings", "Rules", "Not audited", "Chart data"):
        ws = wb[name]
        if ws.max_row < 2:
            continue
        empty = [ws.cell(row=1, column=j).value for j in range(1, ws.max_column + 1)
                 if all(ws.cell(row=i, column=j).value is None
                        for i in range(2, ws.max_row + 1))]
        assert empty == [], f"{name}: {empty}"


def test_chart_series_point_at_their_columns(sample_with_parts):
    # The chart's references follow the Chart data columns that are written (an empty column
    # left out shifts the ones after it).
    import re

    _, wb, path = sample_with_parts
    headers = {cell.column_letter: cell.value for cell in wb["Chart data"][1]}
    with zipfile.ZipFile(path) as z:
        chart = next(z.read(n).decode("utf-8") for n in z.namelist()
                     if n.startswith("xl/charts/chart"))
    used = set(re.findall(r"'Chart data'!\$([A-Z]+)\$", chart))
    assert {headers[c] for c in used} == {
        xlsx.header_of("t_operating_c"), xlsx.header_of("voltage_ratio"),
        "voltage ratio limit [%]"}


@pytest.mark.parametrize("name", sorted(__import__("bomcheck.vocabulary").vocabulary.METRICS))
def test_every_metric_has_a_short_header_with_its_unit(name):
    from bomcheck.vocabulary import METRICS

    m = METRICS[name]
    header = xlsx.header_of(name)
    assert header.startswith(m.title) and len(m.title) <= 50
    if m.percent:
        assert header.endswith("[%]")


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
