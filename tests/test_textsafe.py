"""Output integrity (bomcheck.render.textsafe): hostile cells through every writer, checked with
real parsers, and each format's escaping function on any text. The files themselves (atomic
writes, stale temporary files, the output lock): test_outfiles.py."""

from __future__ import annotations

import csv
import html
import io
import json
import os
import xml.etree.ElementTree as ET
import zipfile

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from hostile_cells import BOM_NAME, DESIGN, HEADER, bom_lines

from bomcheck.cli.main import main
from bomcheck.render.textsafe import csv_field, html_text, md_text, natural_key, xml_text

@pytest.fixture(scope="module")
def outputs(tmp_path_factory):
    """Every output of one audit of a BOM built from hostile cells."""
    folder = tmp_path_factory.mktemp("hostile")
    (folder / BOM_NAME).write_text(HEADER + bom_lines(), encoding="utf-8")
    (folder / "design.csv").write_text(DESIGN + "C1-C9,5,55,none\n", encoding="utf-8")
    cwd = os.getcwd()
    os.chdir(folder)
    try:
        code = main(["audit", BOM_NAME, "--design", "design.csv", "--no-config", "--quiet",
                     "--json", "a.json", "--junit", "a.xml", "--markdown", "a.md", "--csv",
                     "a.csv", "--xlsx", "a.xlsx", "--html", "a.html", "--sarif", "a.sarif"])
    finally:
        os.chdir(cwd)
    assert code in (0, 1)
    return folder


def test_json_and_sarif_are_strict_json(outputs):
    for name in ("a.json", "a.sarif"):
        text = (outputs / name).read_text(encoding="utf-8")
        # RFC 8259: no NaN/Infinity tokens (json.loads would accept them; the hook refuses)
        json.loads(text, parse_constant=lambda c: pytest.fail(f"{name}: {c}"))


def test_junit_parses_as_xml_and_keeps_no_forbidden_character(outputs):
    raw = (outputs / "a.xml").read_bytes()
    root = ET.fromstring(raw)  # XML 1.0 parser: a forbidden character would fail here
    assert root.tag == "testsuites"
    assert "\ufffe".encode() not in raw and b"\x01" not in raw


def test_every_xml_part_of_the_workbook_parses(outputs):
    with zipfile.ZipFile(outputs / "a.xlsx") as z:
        parts = [n for n in z.namelist() if n.endswith((".xml", ".rels"))]
        assert any(n.startswith("xl/worksheets/") for n in parts)
        for name in parts:
            data = z.read(name)
            ET.fromstring(data)  # ECMA-376 parts are XML 1.0
            assert "\ufffe".encode() not in data and "\uffff".encode() not in data, name


def test_workbook_keeps_formula_text_as_text(outputs):
    import openpyxl

    wb = openpyxl.load_workbook(outputs / "a.xlsx")
    values = [c for ws in wb.worksheets for row in ws.iter_rows() for c in row]
    texts = {c.value for c in values if isinstance(c.value, str)}
    assert "=1+1" in texts  # stored as text...
    assert all(c.data_type != "f" for c in values)  # ...and no cell is a formula


def test_csv_parses_and_no_formula_survives_any_separator(outputs):
    text = (outputs / "a.csv").read_text(encoding="utf-8")
    rows = list(csv.reader(io.StringIO(text, newline="")))
    assert len({len(r) for r in rows}) == 1  # RFC 4180: every record has the header's fields
    # OWASP CSV injection: opened with ',' or with ';' as the list separator (a ';' locale),
    # no field may start with a formula lead.
    for delimiter in (",", ";"):
        for row in csv.reader(io.StringIO(text, newline=""), delimiter=delimiter):
            for field in row:
                assert not field.startswith(("=", "+", "-", "@", "\t", "\r")) or \
                    _number(field), (delimiter, field)


def _number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def test_markdown_renders_without_raw_html_or_broken_tables(outputs):
    markdown_it = pytest.importorskip("markdown_it", reason="markdown-it-py (test extra) is "
                                      "the GFM renderer of this check")
    text = (outputs / "a.md").read_text(encoding="utf-8")
    # CommonMark with raw HTML on (as GitHub renders it, before its sanitiser) + GFM tables
    md = markdown_it.MarkdownIt("commonmark").enable(["table", "strikethrough"])
    html = md.render(text)
    assert "<script" not in html and "<img" not in html and "<!--" not in html
    assert "&lt;img src=x onerror=alert(2)&gt; &lt;!-- x|y" in html  # shown, escaped
    assert "\x01" not in html and "\ufffe" not in html
    # every table row has as many cells as its header (a '|' in a cell did not split it)
    tokens = md.parse(text)
    widths, row = [], 0
    for tok in tokens:
        if tok.type == "tr_open":
            row = 0
        elif tok.type in ("th_open", "td_open"):
            row += 1
        elif tok.type == "tr_close":
            widths.append(row)
        elif tok.type == "table_close":
            assert len(set(widths)) == 1, widths
            widths = []
    assert "x|y \ufffd *b*.csv" in html  # the pipe and stars survive literally


def test_html_report_has_no_active_input_text(outputs):
    from html.parser import HTMLParser

    text = (outputs / "a.html").read_text(encoding="utf-8")

    class Tags(HTMLParser):
        def __init__(self):
            super().__init__()
            self.tags, self.comments, self.handlers = [], 0, []

        def handle_starttag(self, tag, attrs):
            self.tags.append(tag)
            self.handlers += [k for k, _ in attrs if k.startswith("on")]

        def handle_comment(self, data):
            self.comments += 1

    parser = Tags()
    parser.feed(text)  # the HTML tokenizer of the standard library (WHATWG-like)
    assert parser.tags.count("script") == 1  # only the page's own sorting/filtering script
    assert "img" not in parser.tags and not parser.handlers and parser.comments == 0
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in text
    assert "\ufffe" not in text and "\x01" not in text


@pytest.mark.parametrize("text, expected", [
    ("a\ufffeb\uffffc", "a\ufffdb\ufffdc"),            # XML 1.0 section 2.2: not Chars
    ("a\x00b\x08c\x0bd", "a\ufffdb\ufffdc\ufffdd"),     # C0 controls but tab, LF, CR
    ("tab\tLF\nCR\r", "tab\tLF\nCR\r"),                # allowed
    ("lone \ud800 surrogate", "lone \ufffd surrogate"),
    ("astral \U0001f600", "astral \U0001f600"),
])
def test_xml_text(text, expected):
    assert xml_text(text) == expected


@pytest.mark.parametrize("text, expected", [
    ("x|y", "x\\|y"),
    ("<b>", "\\<b\\>"),
    ("<!-- x -->", "\\<!-- x --\\>"),
    ("a*b*_c_", "a\\*b\\*\\_c\\_"),
    ("[link](http://e.invalid)", "\\[link\\](http://e.invalid)"),
    ("`code`", "\\`code\\`"),
    ("&amp;", "\\&amp;"),
    ("# heading", "\\# heading"),
    ("1. item", "1\\. item"),
    ("1.0", "1.0"),
    ("two\nlines", "two lines"),
    ("bell\x07", "bell\ufffd"),
])
def test_md_text(text, expected):
    # CommonMark 0.30 section 2.4: any ASCII punctuation may be backslash-escaped
    assert md_text(text) == expected


@pytest.mark.parametrize("text, expected", [
    ("plain", "plain"),
    ("=1+1", "\"'=1+1\""),
    ("  =1+1", "\"'  =1+1\""),
    ("@SUM(A1)", "\"'@SUM(A1)\""),
    ("x;=1+1", '"x;\'=1+1"'),       # OWASP: a lead behind a separator is guarded too
    ("x, -1", '"x, \'-1"'),
    ('say "hi"', '"say ""hi"""'),  # RFC 4180 section 2.7
])
def test_csv_field(text, expected):
    assert csv_field(text) == expected


def test_natural_key_orders_designators():
    names = ["C10", "C7", "C1", "CN1", "C10A", "c2", "C" + "9" * 5000]
    assert sorted(names, key=natural_key)[:6] == ["C1", "c2", "C7", "C10", "C10A", "C" + "9" * 5000]


# ---- properties over any text (hypothesis) ---------------------------------------------------

ANY_TEXT = st.text(alphabet=st.characters(codec=None, min_codepoint=0, max_codepoint=0x10FFFF),
                   max_size=60)
NASTY = st.text(alphabet=st.sampled_from(list("<>&|\\`*_[]!#-=+@;,\t\r\n\"' x1.:")
                                         + ["\ufffe", "\uffff", "\x00", "\x1b", "\ud800"]),
                max_size=40)


@settings(max_examples=300, deadline=None)
@given(st.one_of(ANY_TEXT, NASTY))
def test_xml_text_always_parses(text):
    safe = xml_text(text)
    root = ET.fromstring(f"<a b=\"{html_escape(safe)}\">{html_escape(safe)}</a>".encode(
        "utf-8", "surrogatepass"))
    assert root.tag == "a"


@settings(max_examples=300, deadline=None)
@given(st.one_of(ANY_TEXT, NASTY))
def test_csv_field_is_one_field_and_never_a_formula(text):
    line = csv_field(text) + ",end\r\n"
    (row,) = list(csv.reader(io.StringIO(line, newline="")))
    assert len(row) == 2 and row[1] == "end"
    for delimiter in (",", ";", "\t"):
        for field in next(csv.reader(io.StringIO(line, newline=""), delimiter=delimiter)):
            assert not field.lstrip(" ").startswith(("=", "+", "-", "@")), (delimiter, field)


@settings(max_examples=200, deadline=None)
@given(st.one_of(ANY_TEXT, NASTY))
def test_md_text_is_one_cell_of_literal_text(text):
    markdown_it = pytest.importorskip("markdown_it", reason="markdown-it-py (test extra)")
    md = markdown_it.MarkdownIt("commonmark").enable("table")
    html = md.render(f"| a | b |\n|---|---|\n| {md_text(text)} | end |\n")
    assert html.count("<td>") == 2 and "<td>end</td>" in html
    assert "<script" not in html and "<!--" not in html and "<img" not in html


def html_escape(text: str) -> str:
    return html.escape(text, quote=True)


def test_spreadsheet_error_values_are_openpyxls():
    # The workbook guard's error values must be the ones openpyxl writes as error cells.
    from openpyxl.cell.cell import ERROR_CODES

    from bomcheck.render.textsafe import SPREADSHEET_ERRORS, spreadsheet_unsafe

    assert SPREADSHEET_ERRORS == set(ERROR_CODES)
    assert spreadsheet_unsafe("#N/A") and spreadsheet_unsafe(" =1+1")
    assert not spreadsheet_unsafe("C12") and not spreadsheet_unsafe("#N/A here")


@settings(max_examples=300, deadline=None)
@given(st.one_of(st.none(), st.text(alphabet=st.sampled_from(
    ["a", "µ", "&", "<", ">", '"', "'", "\x00", "\x0b", "\t", "\n", "\x7f", "\ud800",
     "\ufffe", "\uffff", "\U0001f600", ";"]), max_size=24)))
def test_html_text_is_the_standard_escape_of_xml_safe_text(text):
    # Reference: the standard library's html.escape(quote=True) (Python docs, html module),
    # applied after the XML 1.0 character guard; the fast path must never skip a change.
    assert html_text(text) == html.escape(xml_text(text), quote=True)
