"""The row accounting of an import: the categories every BOM row falls in, and the identity."""

from __future__ import annotations

from collections.abc import Mapping

__all__ = ["ROW_CATEGORIES", "accounting_identity"]

# The categories every source row falls in, with their labels: rows read = the sum of these.
ROW_CATEGORIES: tuple[tuple[str, str], ...] = (
    ("capacitor_rows", "capacitor rows"), ("non_capacitor_rows", "non-capacitor rows"),
    ("unreadable_rows", "unreadable rows"), ("approved_source_rows", "approved-source rows"),
    ("not_placement_rows", "rows that are not placements"),
)


def accounting_identity(totals: Mapping[str, int]) -> tuple[str, bool]:
    """``("rows read 12 = capacitor rows 8 + ...", holds)``: the row categories of an import,
    the approved-source and not-placement terms only when there are such rows."""
    terms = [(k, label) for k, label in ROW_CATEGORIES
             if k in totals and (k in ("capacitor_rows", "non_capacitor_rows", "unreadable_rows")
                                 or int(totals[k]))]
    total = sum(int(totals[k]) for k, _ in terms)
    text = f"rows read {totals['rows_read']} = " + " + ".join(
        f"{label} {totals[k]}" for k, label in terms)
    if int(totals.get("hidden_rows", 0)):
        text += f"; hidden rows not read {totals['hidden_rows']} (--include-hidden reads them)"
    return text, total == int(totals["rows_read"])
