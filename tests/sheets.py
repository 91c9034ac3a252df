"""Workbook helpers for the reviewer's workbook tests (bomcheck.render.xlsx and its sheet
modules): the sample's report and workbook as fixtures, a sheet read back as header and rows, a
column's cells, the Summary's labels."""

import pytest

from bomcheck.render.xlsx_cells import header_of


@pytest.fixture(scope="module")
def report(sample_report_bare):
    """The sample board's plain audit (conftest.sample_report_bare)."""
    return sample_report_bare


@pytest.fixture(scope="module")
def book(sample_workbook):
    """The sample's workbook, written once per session (conftest.sample_workbook)."""
    return sample_workbook[1]


def table(ws) -> tuple[list[str], list[tuple]]:
    """Header and data rows of a sheet with one header row."""
    rows = list(ws.iter_rows(values_only=True))
    return list(rows[0]), rows[1:]


def column(ws, header: str) -> list:
    """The data cells (not values) under ``header``."""
    names = [c.value for c in ws[1]]
    j = names.index(header if header in names else header_of(header)) + 1
    return [ws.cell(row=i, column=j) for i in range(2, ws.max_row + 1)]


def summary_values(ws) -> dict:
    """Column A label -> column B value for every Summary row with a label."""
    return {r[0]: r[1] for r in ws.iter_rows(values_only=True) if isinstance(r[0], str)}
