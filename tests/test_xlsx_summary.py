"""The workbook's Summary sheet (bomcheck.render.xlsx_summary): totals equal the report's, the
row-accounting identity, inputs, rule sets, sources and cautions verbatim, the generation time."""

from dataclasses import replace
from datetime import datetime, timezone

import openpyxl
import pytest
from sheets import book, report  # noqa: F401 (fixtures)
from sheets import summary_values

from conftest import SAMPLE_WORKBOOK_TIME as GENERATED
from bomcheck.render import xlsx


# Moved from test_xlsx.py.
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


def test_an_identity_that_does_not_add_up_says_so(report, tmp_path):
    # no wrong pass (DEVELOPERS.md): a row count that does not add up is shown, never "holds"
    totals = {**report.totals, "rows_read": report.totals["rows_read"] + 1}
    path = tmp_path / "broken.xlsx"
    xlsx.write_workbook(replace(report, totals=totals), path, generated=GENERATED)
    rows = list(openpyxl.load_workbook(path)["Summary"].iter_rows(values_only=True))
    identity = next(r for r in rows if str(r[0]).startswith("rows read = "))
    assert identity[2] == "DOES NOT HOLD"
    placements = next(r for r in rows if r[0] == "placements = fitted + not fitted")
    assert placements[2] == "holds"
    t = report.totals
    assert placements[1] == f"{t['placements']:,} = {t['fitted']:,} + {t['not_fitted']:,}"


def test_statuses_are_listed_worst_first_with_every_count(book, report):
    rows = list(book["Summary"].iter_rows(values_only=True))
    start = next(i for i, r in enumerate(rows) if r[0] == "status" and r[1] == "placements")
    listed = [r[0] for r in rows[start + 1:start + 6]]
    assert listed == ["fail", "nodata", "warn", "waived", "pass"]  # the one status order
    assert sum(r[1] for r in rows[start + 1:start + 6]) == len(report.table)
