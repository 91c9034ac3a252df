"""Report stage, CI edge: CSV (RFC 4180, CRLF line ends) of an audit, a batch and a where-used query.

Audit: one row per fitted placement (BOM order) with its governing verdict, status and
message; ``waived`` lists the placement's waived verdicts (``rule (was status): reason``).
Text cells go through ``textsafe.csv_field``, the CSV-injection guard used by every writer: a
cell that starts with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return gets a leading single
quote and is quoted, and a cell holding a separator followed by such a lead (``x;=1+1``) is
quoted, so that no spreadsheet runs either as a formula whatever its list separator (OWASP, "CSV
Injection"); numbers written by bomcheck itself are left as numbers (SI units).
"""

from __future__ import annotations

import csv
import io
from dataclasses import astuple, fields
from typing import Any

import numpy as np
import pandas as pd

from bomcheck.quantity import is_missing
from bomcheck.render.textsafe import FORMULA_LEADS, csv_field, csv_line
from bomcheck.render.verdicts import governing, waived_by_placement
from bomcheck.report.whereused import Use

CSV_COLUMNS: tuple[str, ...] = (
    "refdes", "row", "status", "waived_from", "rule", "metric", "value", "limit", "margin",
    "technology", "capacitance_f", "voltage_v", "dielectric", "package", "text", "message",
    "source", "waived",
)
INJECTION_LEAD = FORMULA_LEADS
# Where each column's values come from: the placement table or its governing verdict.
_FROM_TABLE = {"refdes", "row", "status", "technology", "capacitance_f", "voltage_v",
               "dielectric", "package", "text"}
_FROM_VERDICT = {"waived_from": "waived_from", "rule": "rule_id", "metric": "metric",
                 "value": "value", "limit": "limit", "margin": "margin",
                 "message": "message", "source": "source"}
_NUMBERS = {"value", "limit", "margin", "capacitance_f", "voltage_v"}


def cell(value: Any) -> str:
    """A text field with the CSV-injection guard (``textsafe.csv_field``); "" when missing."""
    return "" if is_missing(value) else csv_field(value)


def _num(value: Any) -> str:
    return "" if is_missing(value) else format(float(value), ".6g")


def _row(value: Any) -> str:
    return "" if is_missing(value) else str(int(value))


def _fields(values: pd.Series, write) -> np.ndarray:
    """The CSV field of each value of a column: ``write`` runs once per distinct value."""
    codes, uniques = pd.factorize(values.to_numpy(dtype=object), use_na_sentinel=True)
    texts = np.asarray([*map(write, uniques.tolist()), ""], dtype=object)
    return texts[codes]


def csv_rows(report) -> str:
    """One CSV row per fitted placement in BOM order: designator, BOM row, status (and the
    status a waiver replaced), the governing verdict with its value, limit and margin (SI
    units), the part's key fields, its BOM text and the message. Column by column: each
    distinct value of a column is written once."""
    t = report.table
    gov = governing(report)
    empty = pd.Series(None, index=t.index, dtype=object)
    columns = []
    for name in CSV_COLUMNS[:-1]:
        if name in _FROM_TABLE:
            values = t[name] if name in t.columns else empty
        else:
            key = _FROM_VERDICT[name]
            values = gov[key].reindex(t.index) if key in gov.columns else empty
        if name in _NUMBERS:  # nearly all distinct (and -0.0 keeps its sign): value by value
            columns.append(list(map(_num, values.tolist())))
        else:
            columns.append(_fields(values, _row if name == "row" else cell).tolist())
    waived = waived_by_placement(report)
    columns.append([cell(waived.get(int(i), "")) for i in t.index] if waived else
                   [""] * len(t))
    return csv_line(CSV_COLUMNS) + "".join(map(csv_line, zip(*columns)))


def board_csv(report, product: str) -> str:
    """One board's rows of a batch's CSV: the product, then the audit's columns (no header)."""
    rows = csv.reader(io.StringIO(csv_rows(report), newline=""))
    next(rows, None)  # the header is written once for all boards
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\r\n")
    for row in rows:
        writer.writerow([product, *row])
    return buf.getvalue()


def batch_csv_header() -> str:
    """The header row of a batch's CSV: ``product``, then the audit's columns."""
    buf = io.StringIO()
    csv.writer(buf, lineterminator="\r\n").writerow(["product", *CSV_COLUMNS])
    return buf.getvalue()


def uses_csv(uses: tuple[Use, ...]) -> str:
    """A where-used query's uses as CSV, one row per placement (problems joined with spaces;
    text cells guarded against spreadsheet formula injection like the audit's CSV)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\r\n")
    w.writerow([f.name for f in fields(Use)])
    for u in uses:
        row = list(astuple(u))
        row[-1] = " ".join(u.problems)
        w.writerow([cell(v) if isinstance(v, str) else "" if v is None else v for v in row])
    return buf.getvalue()
