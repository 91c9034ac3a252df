"""Output integrity (bomcheck.render.textsafe, bomcheck.render.outfiles): hostile cells through every writer,
checked with real parsers; atomic writes, stale temporary files, the output lock."""

from __future__ import annotations

import csv
import html
import io
import json
import os
import subprocess
import sys
import xml.etree.ElementTree as ET
import zipfile
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bomcheck.cli.main import main
from bomcheck.render.outfiles import atomic_path, clean_stale, write_text
from bomcheck.render.textsafe import csv_field, md_text, natural_key, xml_text

# Hostile cell texts: characters XML 1.0 forbids (U+FFFE, U+FFFF, C0 controls), markup, a
# Markdown table break, formula leads and a formula hidden behind a separator.
HOSTILE = {
    "ffffe": "CAP\ufffe 100nF\uffff",
    "script": "<script>alert(1)</script><img src=x onerror=alert(2)><!-- c",
    "pipe": "x\\|y | z",
    "formula": "=1+1",
    "hidden": "x;=1+1",
    "controls": "a\x01b\x07c\x1bd\x7f",
}
# The BOM's file name is input text too: it heads the Markdown, HTML and SARIF outputs.
BOM_NAME = "bom <img src=x onerror=alert(2)> <!-- x|y \x01 *b*.csv"
HEADER = "Designator,Qty,Value,Description,Manufacturer Part Number,Fitted\n"
DESIGN = "refdes,v_dc [V],t_ambient_c [°C],c_min_f\n*,5,55,none\n"


def _bom_lines() -> str:
    lines = []
    for i, text in enumerate(HOSTILE.values(), 1):
        cell = '"' + text.replace('"', '""') + '"'
        lines.append(f"C{i},1,100nF 16V X7R,{cell},{cell},Yes\n")
    # a placement whose numbers the audit cannot use gives a nodata verdict with a message
    lines.append("C9,1,TBD,=HYPERLINK(\"x\"),-2+3,Yes\n")
    return "".join(lines)


@pytest.fixture(scope="module")
def outputs(tmp_path_factory):
    """Every output of one audit of a BOM built from hostile cells."""
    folder = tmp_path_factory.mktemp("hostile")
    (folder / BOM_NAME).write_text(HEADER + _bom_lines(), encoding="utf-8")
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


# ---- files ----------------------------------------------------------------------------------

def test_atomic_write_leaves_nothing_on_error(tmp_path):
    target = tmp_path / "out.json"
    target.write_text("old", encoding="utf-8")

    def pieces():
        yield "new"
        raise RuntimeError("renderer failed")

    with pytest.raises(RuntimeError):
        write_text(str(target), pieces())
    assert target.read_text(encoding="utf-8") == "old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.json"]


def test_stale_temporary_files_of_dead_runs_are_removed(tmp_path):
    target = tmp_path / "audit.xlsx"
    dead = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"],
                          capture_output=True, text=True, check=True).stdout.strip()
    stale = tmp_path / f".audit.xlsx.bomcheck-{dead}-0123abcd.tmp"
    stale_dir = tmp_path / f".audit.xlsx.bomcheck-{dead}-0123abcd.d"
    alive = tmp_path / f".audit.xlsx.bomcheck-{os.getpid()}-0123abcd.tmp"
    other = tmp_path / ".other.tmp"
    for p in (stale, alive, other):
        p.write_text("x", encoding="utf-8")
    stale_dir.mkdir()
    (stale_dir / "openpyxl.abc").write_text("x", encoding="utf-8")
    removed = clean_stale(target)
    assert set(removed) == {stale, stale_dir}
    assert alive.exists() and other.exists()


def test_workbook_temp_files_stay_beside_the_target_and_go(tmp_path, monkeypatch):
    """openpyxl's write-only temporary files go to a private folder beside the target."""
    import tempfile

    import openpyxl.worksheet._writer as sheet_writer

    seen = []
    real = tempfile.NamedTemporaryFile

    def spy(*args, **kw):
        f = real(*args, **kw)
        seen.append(f.name)
        return f

    monkeypatch.setattr(sheet_writer, "NamedTemporaryFile", spy)
    (tmp_path / "bom.csv").write_text(HEADER + _bom_lines(), encoding="utf-8")
    (tmp_path / "design.csv").write_text(DESIGN, encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    main(["audit", "bom.csv", "--design", "design.csv", "--no-config", "--quiet",
          "--xlsx", "a.xlsx"])
    assert seen and all(Path(n).parent.parent == tmp_path for n in seen)
    assert all(not Path(n).exists() for n in seen)
    assert sorted(p.name for p in tmp_path.iterdir() if p.name.startswith(".a.xlsx")) == []


def test_atomic_path_renames_only_complete_files(tmp_path):
    target = tmp_path / "x.bin"
    with atomic_path(target) as tmp:
        tmp.write_bytes(b"done")
        assert not target.exists()
    assert target.read_bytes() == b"done"


def test_output_lock_serialises_two_runs(tmp_path):
    """Two processes holding the lock of one output folder never overlap (fcntl.flock)."""
    pytest.importorskip("fcntl")
    log = tmp_path / "log"
    script = (
        "import sys, time; from bomcheck.render.outfiles import output_lock\n"
        f"with output_lock([{str(tmp_path / 'a.json')!r}]):\n"
        f"    open({str(log)!r}, 'a').write('start ' + sys.argv[1] + '\\n'); time.sleep(0.4)\n"
        f"    open({str(log)!r}, 'a').write('end ' + sys.argv[1] + '\\n')\n")
    procs = [subprocess.Popen([sys.executable, "-c", script, str(i)]) for i in (1, 2)]
    assert all(p.wait(timeout=30) == 0 for p in procs)
    lines = log.read_text().split("\n")[:4]
    assert lines[0].split()[0] == "start" and lines[1].split()[0] == "end"
    assert lines[0].split()[1] == lines[1].split()[1]  # one run's writes, then the other's


def test_non_utf8_output_file_name(tmp_path, capsys):
    """A file name that is not UTF-8 (bytes from the command line as surrogate escapes) is
    written byte for byte, and messages print it without an encoding error."""
    if sys.platform.startswith("win"):
        pytest.skip("file names are Unicode on Windows")
    (tmp_path / "bom.csv").write_text(HEADER + _bom_lines(), encoding="utf-8")
    (tmp_path / "design.csv").write_text(DESIGN, encoding="utf-8")
    name = os.fsdecode(b"r\xe9sultat.json")  # Latin-1 bytes, not UTF-8
    html = os.fsdecode(b"r\xe9sultat.html")
    cwd = os.getcwd()
    os.chdir(tmp_path)
    try:
        code = main(["audit", "bom.csv", "--design", "design.csv", "--no-config", "--quiet",
                     "--json", name, "--html", html, "--markdown",
                     os.fsdecode(b"missing\xff/x.md")])
    finally:
        os.chdir(cwd)
    assert code == 2  # the unwritable one is an input error naming the file...
    err = capsys.readouterr().err
    assert "missing\\xff/x.md" in err and "Traceback" not in err
    assert (tmp_path / os.fsdecode(b"r\xe9sultat.json")).exists()  # ...the others were written
    json.loads((tmp_path / name).read_bytes())


def test_json_dumps_writes_non_finite_numbers_as_null():
    from bomcheck.report.jsontext import json_dumps

    value = {"a": float("inf"), "b": [float("nan"), -float("inf"), 1.5], "c": ("x", 2)}
    text = json_dumps(value)
    # RFC 8259 section 6: Infinity and NaN are not permitted
    assert json.loads(text, parse_constant=lambda c: pytest.fail(c)) == {
        "a": None, "b": [None, None, 1.5], "c": ["x", 2]}


def test_report_json_survives_an_infinite_metric(tmp_path):
    """A 0 V rating gives an infinite stress ratio: the JSON report stays strict JSON."""
    import numpy as np

    from bomcheck.pipeline.audit import run_audit

    (tmp_path / "bom.csv").write_text(HEADER + "C1,1,100nF 16V X7R,x,y,Yes\n", encoding="utf-8")
    (tmp_path / "design.csv").write_text(DESIGN + "C1,5,55,none\n", encoding="utf-8")
    report = run_audit(str(tmp_path / "bom.csv"), str(tmp_path / "design.csv"))
    report.table.loc[:, "voltage_ratio"] = np.inf
    report.verdicts.loc[:, "value"] = np.inf
    text = report.to_json()
    data = json.loads(text, parse_constant=lambda c: pytest.fail(c))
    assert data["placements"][0]["metrics"].get("voltage_ratio") is None  # left out, or null


def test_substitute_markdown_escapes_hostile_part_text(tmp_path, capsys, monkeypatch):
    markdown_it = pytest.importorskip("markdown_it", reason="markdown-it-py (test extra)")
    monkeypatch.chdir(tmp_path)
    code = main(["substitute", "--original", "<script>x|y 100nF 16V X7R", "--proposed",
                 "<!-- 100nF 25V X7R `a` <img src=x onerror=alert(1)>", "--v-dc", "5",
                 "--t-ambient", "25", "--markdown", "-"])
    assert code in (0, 1)
    text = capsys.readouterr().out
    html = markdown_it.MarkdownIt("commonmark").enable("table").render(text)
    assert "<script" not in html and "<img" not in html and "<!--" not in html
    assert "&lt;script&gt;x|y" in html  # one cell: the pipe did not split it


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


def test_concurrent_runs_leave_one_runs_set_of_outputs(tmp_path):
    """Two audits writing the same outputs at once: the JSON and the CSV on disk afterwards
    come from the same run (the output lock makes each run write its set whole)."""
    sample = Path(__file__).resolve().parents[1] / "sample_boms"
    small = tmp_path / "small.csv"
    small.write_text(HEADER + "C1,1,100nF 16V X7R,x,y,Yes\n", encoding="utf-8")
    (tmp_path / "design.csv").write_text(DESIGN + "C1,5,55,none\n", encoding="utf-8")
    runs = [(str(sample / "bw7-controller-bom.csv"), str(sample / "bw7-design.csv")),
            (str(small), str(tmp_path / "design.csv"))]
    for _ in range(2):
        procs = [subprocess.Popen([sys.executable, "-m", "bomcheck", "audit", bom, "--design",
                                   design, "--no-config", "--quiet", "--json", "out.json",
                                   "--csv", "out.csv", "--xlsx", "out.xlsx"],
                                  cwd=tmp_path, stdout=subprocess.DEVNULL)
                 for bom, design in runs]
        assert all(p.wait(timeout=120) in (0, 1) for p in procs)
        data = json.loads((tmp_path / "out.json").read_text(encoding="utf-8"))
        rows = (tmp_path / "out.csv").read_bytes().count(b"\r\n") - 1
        assert rows == len(data["placements"])  # the CSV belongs to the JSON's run
        assert not [p for p in tmp_path.iterdir() if ".bomcheck-" in p.name]


def test_sigterm_during_a_write_leaves_no_temporary_file(tmp_path):
    import signal
    import time

    lines = "".join(f"C{i},1,100nF 50V X7R 0402,x,y,Yes\n" for i in range(1, 4001))
    (tmp_path / "bom.csv").write_text(HEADER + lines, encoding="utf-8")
    (tmp_path / "design.csv").write_text(DESIGN, encoding="utf-8")
    proc = subprocess.Popen([sys.executable, "-m", "bomcheck", "audit", "bom.csv", "--design",
                             "design.csv", "--no-config", "--quiet", "--xlsx", "out.xlsx"],
                            cwd=tmp_path, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline and proc.poll() is None:
        if any(".bomcheck-" in p.name for p in tmp_path.iterdir()):
            break
        time.sleep(0.02)
    if proc.poll() is not None:
        pytest.fail("the workbook was written before a temporary file was seen")
    proc.send_signal(signal.SIGTERM)
    assert proc.wait(timeout=60) == 128 + signal.SIGTERM
    assert not (tmp_path / "out.xlsx").exists()
    assert not [p.name for p in tmp_path.iterdir() if ".bomcheck-" in p.name]


def test_spreadsheet_error_values_are_openpyxls():
    # The workbook guard's error values must be the ones openpyxl writes as error cells.
    from openpyxl.cell.cell import ERROR_CODES

    from bomcheck.render.textsafe import SPREADSHEET_ERRORS, spreadsheet_unsafe

    assert SPREADSHEET_ERRORS == set(ERROR_CODES)
    assert spreadsheet_unsafe("#N/A") and spreadsheet_unsafe(" =1+1")
    assert not spreadsheet_unsafe("C12") and not spreadsheet_unsafe("#N/A here")
