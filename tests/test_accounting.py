"""Normalise stage (bomcheck/parse/accounting.py): the row accounting of a BOM import, every row
read falls in exactly one category and the identity says so (common practice of reconciliation:
the parts add up to the whole)."""

from __future__ import annotations

from bomcheck.parse.accounting import ROW_CATEGORIES, accounting_identity


def _totals(**given: int) -> dict[str, int]:
    base = {k: 0 for k, _ in ROW_CATEGORIES}
    base.update(given)
    return base


def test_the_three_main_terms_are_always_written():
    # Arithmetic: 12 = 8 + 3 + 1.
    text, holds = accounting_identity(_totals(rows_read=12, capacitor_rows=8,
                                              non_capacitor_rows=3, unreadable_rows=1))
    assert holds
    assert text == "rows read 12 = capacitor rows 8 + non-capacitor rows 3 + unreadable rows 1"


def test_approved_source_and_structure_rows_appear_only_when_there_are_some():
    # Arithmetic: 10 = 2 + 1 + 0 + 3 + 4; the terms a flat BOM never has are left out.
    text, holds = accounting_identity(_totals(rows_read=10, capacitor_rows=2,
                                              non_capacitor_rows=1, approved_source_rows=3,
                                              not_placement_rows=4))
    assert holds and text.endswith("approved-source rows 3 + rows that are not placements 4")


def test_a_row_not_accounted_for_breaks_the_identity():
    # 12 read but 11 accounted for: the identity fails (no row may vanish unreported).
    text, holds = accounting_identity(_totals(rows_read=12, capacitor_rows=8,
                                              non_capacitor_rows=3))
    assert not holds and text.startswith("rows read 12 = ")


def test_hidden_rows_are_named_with_the_option_that_reads_them():
    # No wrong pass (project rule): rows not read are said, with the way to read them.
    text, holds = accounting_identity(_totals(rows_read=2, capacitor_rows=2, hidden_rows=5))
    assert holds and "hidden rows not read 5" in text and "--include-hidden" in text


def test_every_category_has_a_distinct_key_and_label():
    # One spelling per concept (project vocabulary).
    keys = [k for k, _ in ROW_CATEGORIES]
    labels = [label for _, label in ROW_CATEGORIES]
    assert len(set(keys)) == len(keys) == len(set(labels)) == 5
