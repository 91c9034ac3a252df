"""The workbook's cells (bomcheck.render.xlsx_cells): headers with units, cell text made safe,
status colours that stay readable (WCAG 2.1 contrast)."""

import pytest

from bomcheck.render import xlsx_cells as xlsx
from bomcheck.status import STATUS_ORDER
from bomcheck.vocabulary import METRICS


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


# Moved from test_xlsx.py.
def test_palette_darkens_with_severity_and_stays_readable():
    order = [s for s in STATUS_ORDER if s in xlsx.STATUS_PALETTE]
    lum = [luminance(xlsx.STATUS_PALETTE[s][0]) for s in order]
    assert lum == sorted(lum, reverse=True)
    for fill, font, _ in xlsx.STATUS_PALETTE.values():
        assert contrast(fill, font) >= 4.5  # WCAG 2.1 SC 1.4.3, normal text


@pytest.mark.parametrize("text, expected", [
    ("ok\x01text", "ok\ufffdtext"),  # XML 1.0 forbids C0 controls but tab, LF, CR
    ("tab\tand\nline", "tab\tand\nline"),
    ("x" * 40_000, "x" * (xlsx.MAX_CELL_CHARS - 1) + "…"),  # Excel: 32,767 characters a cell
])
def test_safe_text(text, expected):
    assert xlsx.safe_text(text) == expected


@pytest.mark.parametrize("name", sorted(METRICS))
def test_every_metric_has_a_short_header_with_its_unit(name):
    m = METRICS[name]
    header = xlsx.header_of(name)
    assert header.startswith(m.title) and len(m.title) <= 50
    if m.percent:
        assert header.endswith("[%]")


@pytest.mark.parametrize("name, header", [
    ("voltage_v", "rated voltage [V]"),       # the vocabulary's one spelling (DEVELOPERS.md)
    ("capacitance_f", "capacitance [uF]"),    # stored in uF, as datasheets state capacitors
    ("some_new_field", "some new field"),     # an unknown name: its words, no unit
])
def test_headers_are_words_with_their_unit(name, header):
    assert xlsx.header_of(name) == header


def test_a_basis_column_is_named_after_its_figure():
    assert xlsx.header_of("temp_margin_c_basis") == (
        xlsx.header_of("temp_margin_c").split(" [")[0] + ": basis")


@pytest.mark.parametrize("text, unsafe", [
    ("=1+2", True), ("+1", True), ("-rail", True), ("@SUM(A1)", True),  # OWASP CSV injection
    ("#N/A", True),                                # a spreadsheet error value, not text
    ("CAP CER 100NF", False), ("1-2", False),
])
def test_is_unsafe_finds_formula_leads_and_error_values(text, unsafe):
    assert xlsx.is_unsafe(text) is unsafe


def test_filled_leaves_out_columns_empty_on_every_row():
    cols = [xlsx._Column("a", ["x", None]), xlsx._Column("b", [None, None])]
    assert [c.header for c in xlsx.filled(cols, 2)] == ["a"]
    assert xlsx.filled(cols, 0) == cols  # a sheet without rows keeps every header


def test_placement_fields_keep_the_report_order_and_only_present_columns():
    fields = xlsx.placement_fields(["voltage_ratio", "row", "voltage_v", "v_dc", "esr_ohm",
                                    "voltage_ratio_basis", "unrelated"])
    assert fields.index("voltage_v") < fields.index("v_dc") < fields.index("voltage_ratio")
    assert "row" not in fields and "unrelated" not in fields
    assert "voltage_ratio_basis" in fields and "esr_ohm" in fields
