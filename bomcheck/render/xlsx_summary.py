"""Report stage, spreadsheet edge: the workbook's Summary sheet (status, rule sets and their
sources, inputs, totals with the accounting identities, waivers, notes and cautions)."""

from __future__ import annotations

import math
from collections.abc import Sequence

from bomcheck.parse.accounting import ROW_CATEGORIES
from bomcheck.render.xlsx_cells import STATUS_PALETTE, _print_setup
from bomcheck.status import STATUS_ORDER

_TOTAL_LABELS: tuple[tuple[str, str], ...] = (
    ("rows_read", "rows read"),
    ("capacitor_rows", "capacitor rows"),
    ("non_capacitor_rows", "non-capacitor rows"),
    ("unreadable_rows", "unreadable rows"),
    ("blank_rows", "blank rows (not counted as read)"),
    ("continuation_rows", "continuation rows"),
    ("placements", "placements"),
    ("fitted", "fitted placements (Placements sheet)"),
    ("not_fitted", "not-fitted placements"),
    ("audited", "placements audited"),
    ("design_unmatched", "design rows not in the BOM"),
)


class _Rows:
    """Appends rows to the Summary sheet, counting them (a write-only sheet cannot be asked)."""

    def __init__(self, book, ws) -> None:
        self.book, self.ws, self.count = book, ws, 0

    def __call__(self, values: Sequence = ()) -> None:
        self.count += 1
        self.ws.append(list(values))

    def header(self, headers: Sequence[str]) -> None:
        self([self.book._put(h, "bc header") for h in headers])

    def section(self, title: str) -> None:
        self([self.book._put(title, "bc section")])

    def wrapped(self, label: str, text: str) -> None:
        """A label and a wrapped text with the row height it needs: about 1.1 characters of the
        column per character of Calibri 11, 15 points a line."""
        lines = math.ceil(len(text) * 1.1 / self.ws.column_dimensions["B"].width)
        self.ws.row_dimensions[self.count + 1].height = 15 * max(1, lines) + 3
        self([label, self.book._put(text, "bc wrap")])


def write_summary(book, ws) -> None:
    """Fill the Summary sheet ``ws`` of ``book`` (an ``xlsx._Book``)."""
    r, put = book.report, book._put
    for col, width in zip("ABCD", (34, 72, 68, 14)):
        ws.column_dimensions[col].width = width
    _print_setup(ws, "A1:D1", landscape=False)
    rows = _Rows(book, ws)
    rows([put("bomcheck capacitor derating audit", "bc title")])
    rows(["overall status", put(r.status, book.status_style(r.status))])
    rows(["tool version", f"bomcheck {r.tool_version}"])
    rows([book.generated_label, put(book.generated, "bc date")])
    _rule_sets_and_inputs(rows, r, put)
    _totals(rows, r, book)
    _waivers(rows, r, put)
    if book.notes:
        rows()
        rows.section("Notes")
        for note in book.notes:
            rows.wrapped("note", note)
    rows()
    rows(["environment", put(r.environment)])
    if r.input_warnings:
        rows.section("Input warnings")
        for w in r.input_warnings:
            rows(["input warning", put(str(w), "bc wrap")])
    rows()
    rows.section("Cautions")
    for i, caution in enumerate(r.cautions, 1):
        rows.wrapped(f"caution {i}", caution)
    ws.print_area = f"A1:D{rows.count}"


def _rule_sets_and_inputs(rows: _Rows, r, put) -> None:
    rows()
    rows.section("Rule sets")
    rows.header(("rule set", "title", "file", "version"))
    for d in r.rulesets:
        extends = f" (extends {d['extends']})" if d.get("extends") else ""
        rows([put(d.get("name")), put(f"{d.get('title') or ''}{extends}"), put(d.get("path")),
              put(d.get("version"))])
    sources = r.rulesets[-1].get("sources", []) if r.rulesets else []
    rows()
    rows.section("Sources of the rules")
    rows.header(("source", "title", "clause", "confidence"))
    for s in sources:
        rows([put(s.get("id")), put(s.get("title")), put(s.get("clause")),
              put(s.get("confidence"))])
    rows()
    rows.section("Inputs")
    rows.header(("input", "path", "SHA-256"))
    for d in r.inputs:
        rows([put(d.get("role")), put(d.get("path")), put(d.get("sha256"))])


def _totals(rows: _Rows, r, book) -> None:
    """Placements by status (worst first), then where every row went and the identities."""
    put, t = book._put, r.totals
    rows()
    rows.section("Placements by status (worst first)")
    rows.header(("status", "placements"))
    statuses = list(reversed(STATUS_ORDER))
    statuses += sorted(k for k in STATUS_PALETTE if k in t and k not in statuses)
    for s in statuses:
        rows([put(s, book.status_style(s)), put(int(t.get(s, 0)), "bc count")])
    rows(["placements audited", put(int(t.get("audited", len(r.table))), "bc count")])
    rows()
    rows.section("Where every row went")
    labels = dict(_TOTAL_LABELS)
    keys = [k for k, _ in _TOTAL_LABELS if k in t]
    keys += [k for k in t if k not in labels and k not in STATUS_PALETTE and k not in keys]
    for k in keys:
        rows([labels.get(k, k.replace("_", " ")), put(int(t[k]), "bc count")])
    for identity in _identities(t):
        rows(identity)
    not_audited = len(r.not_audited()) + len(r.design_unmatched)
    rows(["Not audited sheet rows", put(not_audited, "bc count"),
          "not-fitted placements + non-capacitor rows + unreadable rows + design rows "
          "not in the BOM"])


def _waivers(rows: _Rows, r, put) -> None:
    waivers = [f.to_dict() for f in getattr(r, "waiver_findings", ())]
    if not waivers:
        return
    rows()
    rows.section("Waivers")
    rows.header(("waiver", "what became of it", "approved by / expires", "file row"))
    for d in waivers:
        rows([put(f"{d.get('code')}: {d.get('refdes')} {d.get('rule')}"), put(d.get("message")),
              put(f"{d.get('approved_by') or ''} / {d.get('expires') or ''}"), d.get("row")])


def _identities(t: dict) -> list[list]:
    """The accounting identities with their numbers and whether they hold."""
    out = []
    keys = ("rows_read", "capacitor_rows", "non_capacitor_rows", "unreadable_rows")
    if all(k in t for k in keys):
        terms = [(k, label) for k, label in ROW_CATEGORIES
                 if k in keys or int(t.get(k, 0))]  # approved-source... rows only when present
        total = sum(int(t[k]) for k, _ in terms)
        out.append(["rows read = " + " + ".join(label for _, label in terms),
                    f"{int(t['rows_read']):,} = " + " + ".join(f"{int(t[k]):,}" for k, _ in terms),
                    "holds" if int(t["rows_read"]) == total else "DOES NOT HOLD"])
    keys = ("placements", "fitted", "not_fitted")
    if all(k in t for k in keys):
        a, b, c = (int(t[k]) for k in keys)
        out.append(["placements = fitted + not fitted", f"{a:,} = {b:,} + {c:,}",
                    "holds" if a == b + c else "DOES NOT HOLD"])
    return out
