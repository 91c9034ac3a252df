"""CI outputs of a report: JUnit XML, the Markdown summary and CSV rows (bomcheck.render.junit, markdown, csvrows)."""

import csv
import io
import math
import xml.etree.ElementTree as ET
from types import SimpleNamespace

import pandas as pd
import pytest

from bomcheck.quantity import format_metric
from bomcheck.render.csvrows import INJECTION_LEAD, csv_rows
from bomcheck.render.junit import junit_xml
from bomcheck.render.markdown import markdown_summary
from bomcheck.report.model import Report
from bomcheck.evaluate.waivers import WaiverFinding

NAN = math.nan


def tiny_report(texts=None) -> Report:
    """Five placements, one of each status; invented part numbers."""
    texts = texts or {}
    table = pd.DataFrame({
        "refdes": ["C1", "C2", "C3", "C4", "C5"],
        "row": [2, 3, 3, 4, 5],
        "text": [texts.get(r, f"KV-0603-104-{r} | CAP CER 100NF 50V X7R")
                 for r in ("C1", "C2", "C3", "C4", "C5")],
        "technology": ["ceramic", "ceramic", "ceramic", "tantalum", None],
        "capacitance_f": [1e-7, 1e-7, 1e-7, 2.2e-5, NAN],
        "voltage_v": [50.0, 16.0, 16.0, NAN, 25.0],
        "dielectric": ["X7R", "X7R", "X7R", None, None],
        "package": ["0603", "0603", "0603", "C", None],
        "status": ["pass", "fail", "warn", "nodata", "waived"],
    })
    verdicts = pd.DataFrame([
        (0, "C1", "R-V", "pass", 0.5, 0.7, 0.6, 0.2, "C1: ratio 50 % <= 70 % limit", "S1", None, None),
        (1, "C2", "R-T", "pass", 30.0, 10.0, NAN, 20.0, "C2: margin 30 degC >= 10 degC", "S2", None, None),
        (1, "C2", "R-V", "fail", 0.8, 0.7, 0.6, -0.1, "C2: ratio 80 % > 70 % limit", "S1", None, None),
        (2, "C3", "R-V", "warn", 0.65, 0.7, 0.6, 0.05, "C3: ratio 65 % > 60 % warn limit", "S1", None, None),
        (3, "C4", "R-V", "nodata", NAN, 0.5, NAN, NAN, "C4: no data: missing applied voltage", "S1", None, None),
        (4, "C5", "R-V", "waived", 0.9, 0.7, 0.6, -0.2,
         "C5: ratio 90 % > 70 % limit; waived (was fail) by R. Okafor until 2027-06-30: test report TR-9",
         "S1", "fail", "test report TR-9"),
    ], columns=["pidx", "refdes", "rule_id", "status", "value", "limit", "warn_limit", "margin",
                "message", "source", "waived_from", "waiver_reason"])
    rules = SimpleNamespace(rules=[SimpleNamespace(id="R-V", metric="voltage_ratio"),
                                   SimpleNamespace(id="R-T", metric="temp_margin_c")])
    not_fitted = pd.DataFrame({"refdes": ["C6"], "row": [6], "not_fitted_reason": ["DNP"],
                               "text": ["KV-0402-220-C0G | DNP"]})
    skipped = pd.DataFrame({"row": [7], "kind": ["not_capacitor"], "reason": ["resistor"],
                            "text": ["R1 | 4K7"]})
    finding = WaiverFinding(row=2, code="expired", refdes="C2", rule="R-V", placements=(),
                            message="waiver 2 (C2 R-V) expired on 2026-01-31; its verdicts stand",
                            reason="old", approved_by="R. Okafor", expires="2026-01-31")
    return Report(
        tool_version="0.0-test",
        rulesets=({"name": "tiny", "title": "Tiny rules", "version": "1"},),
        inputs=({"role": "bom", "path": "bom.csv", "sha256": "0" * 64},),
        table=table, verdicts=verdicts, not_fitted=not_fitted, skipped=skipped,
        design_unmatched=({"refdes": "C9", "row": 8, "status": "nodata",
                           "reason": "C9 (design sheet row 8) is not in the BOM"},),
        totals={"audited": 5, "pass": 1, "waived": 1, "warn": 1, "nodata": 1, "fail": 1},
        cautions=("Check it by hand.", "Mind the charge."),
        rules=rules, waiver_findings=(finding,),
    )


# --------------------------------------------------------------------------------------------
# JUnit

def _parse(xml_text: str) -> ET.Element:
    return ET.fromstring(xml_text.encode("utf-8"))


@pytest.mark.parametrize("warn_as, failures, skipped", [
    ("failure", 2, 1),   # fail + warn as failures; the waived one skipped
    ("skipped", 1, 2),   # warn joins the skipped
    ("pass", 1, 1),      # warn passes
])
def test_junit_counts_match_the_report(warn_as, failures, skipped):
    report = tiny_report()
    root = _parse(junit_xml(report, warn_as=warn_as))
    suites = root.findall("testsuite")
    assert len(suites) == 1
    suite = suites[0]
    cases = suite.findall("testcase")
    assert [c.get("name") for c in cases] == list(report.table["refdes"])
    assert len(suite.findall("testcase/failure")) == failures
    assert len(suite.findall("testcase/error")) == 1
    assert len(suite.findall("testcase/skipped")) == skipped
    for node in (root, suite):
        assert node.get("tests") == str(len(report.table))
        assert node.get("failures") == str(failures)
        assert node.get("errors") == "1"  # nodata is an error: the check could not run
    assert suite.get("skipped") == str(skipped)
    # junit-10.xsd (Jenkins xunit) allows no "skipped" attribute on <testsuites>
    assert root.get("skipped") is None


def test_junit_carries_explanations_classnames_and_waiver_reason():
    root = _parse(junit_xml(tiny_report()))
    cases = {c.get("name"): c for c in root.iter("testcase")}
    assert cases["C2"].get("classname") == "bomcheck.ceramic"
    assert cases["C5"].get("classname") == "bomcheck.unknown"
    failure = cases["C2"].find("failure")
    assert failure.get("type") == "fail"
    assert failure.get("message") == "C2: ratio 80 % > 70 % limit"
    assert "FAIL R-V: C2: ratio 80 % > 70 % limit" in failure.text
    assert "R-T" not in failure.text  # passing verdicts are not listed
    assert cases["C3"].find("failure").get("type") == "warn"
    assert cases["C4"].find("error").get("message") == "C4: no data: missing applied voltage"
    skipped = cases["C5"].find("skipped")
    assert skipped.get("type") == "waived" and "test report TR-9" in skipped.get("message")
    assert list(cases["C1"]) == []
    out = root.find("testsuite/system-out").text
    assert "C9 (design sheet row 8) is not in the BOM" in out and "expired" in out


def test_junit_warn_as_pass_keeps_the_warning_text():
    root = _parse(junit_xml(tiny_report(), warn_as="pass"))
    c3 = next(c for c in root.iter("testcase") if c.get("name") == "C3")
    assert [child.tag for child in c3] == ["system-out"]
    assert "WARN R-V" in c3.find("system-out").text


def test_junit_survives_control_characters_and_markup():
    report = tiny_report()
    report.verdicts.loc[2, "message"] = "C2: <b>ratio</b> & \x01 bell\x07"
    root = _parse(junit_xml(report))
    msg = next(c for c in root.iter("testcase") if c.get("name") == "C2").find("failure")
    assert msg.get("message") == "C2: <b>ratio</b> & \ufffd bell\ufffd"


def test_junit_rejects_unknown_warn_as():
    with pytest.raises(ValueError):
        junit_xml(tiny_report(), warn_as="error")


def test_junit_is_deterministic():
    assert junit_xml(tiny_report()) == junit_xml(tiny_report())


# --------------------------------------------------------------------------------------------
# Markdown

EXPECTED_MARKDOWN = """\
## bomcheck audit: FAIL

Inputs: bom bom.csv (SHA-256 `0000000000000000000000000000000000000000000000000000000000000000`).

| status | placements |
|:--|--:|
| fail | 1 |
| nodata | 1 |
| warn | 1 |
| waived | 1 |
| pass | 1 |
| **audited** | **5** |

Not audited: not fitted 1, not capacitor 1. Design-sheet rows not in the BOM: C9 (row 8).

### Verdicts not passing: 4 on 4 placements, the worst 3 shown (all in the JSON report)

| refdes | status | rule | stress | limit | message |
|:--|:--|:--|--:|--:|:--|
| C2 | fail | R-V | 80 % | 70 % | C2: ratio 80 % \\> 70 % limit |
| C4 | nodata | R-V |  | 50 % | C4: no data: missing applied voltage |
| C3 | warn | R-V | 65 % | 70 % | C3: ratio 65 % \\> 60 % warn limit |

**Waivers:** 0 applied, 1 not applied.

- expired: waiver 2 (C2 R-V) expired on 2026-01-31; its verdicts stand

Rule sets: tiny 1; environment: severe.

### Cautions

- Check it by hand.
- Mind the charge.
"""


def test_markdown_summary_is_exact():
    assert markdown_summary(tiny_report(), limit=3) == EXPECTED_MARKDOWN


def test_markdown_escapes_table_breaking_text():
    report = tiny_report()
    report.table.loc[1, "refdes"] = "C2|<x>"
    out = markdown_summary(report)
    assert "| C2\\|\\<x\\> | fail |" in out


def test_markdown_when_everything_passes():
    report = tiny_report()
    report.table["status"] = "pass"
    report.verdicts["status"] = "pass"
    out = markdown_summary(report)
    assert "Every one of the 5 audited placements passes." in out
    assert "### Placements" not in out


# --------------------------------------------------------------------------------------------
# CSV

EXPECTED_CSV = (
    "refdes,row,status,waived_from,rule,metric,value,limit,margin,technology,capacitance_f,"
    "voltage_v,dielectric,package,text,explanation,source,waived\r\n"
    "C1,2,pass,,R-V,voltage_ratio,0.5,0.7,0.2,ceramic,1e-07,50,X7R,0603,"
    "KV-0603-104-C1 | CAP CER 100NF 50V X7R,C1: ratio 50 % <= 70 % limit,S1,\r\n"
    "C2,3,fail,,R-V,voltage_ratio,0.8,0.7,-0.1,ceramic,1e-07,16,X7R,0603,"
    "\"'=HYPERLINK(\"\"http://example.invalid\"\")\",C2: ratio 80 % > 70 % limit,S1,\r\n"
    "C3,3,warn,,R-V,voltage_ratio,0.65,0.7,0.05,ceramic,1e-07,16,X7R,0603,"
    "\"'+1+1\",C3: ratio 65 % > 60 % warn limit,S1,\r\n"
    "C4,4,nodata,,R-V,voltage_ratio,,0.5,,tantalum,2.2e-05,,,C,"
    "\"'@SUM(A1:A2)\",C4: no data: missing applied voltage,S1,\r\n"
    "C5,5,waived,fail,R-V,voltage_ratio,0.9,0.7,-0.2,,,25,,,"
    "KV-0603-104-C5 | CAP CER 100NF 50V X7R,"
    "\"C5: ratio 90 % > 70 % limit; waived (was fail) by R. Okafor until 2027-06-30: test report "
    "TR-9\",S1,R-V (was fail): test report TR-9\r\n"
)


def test_csv_is_exact_and_guards_formula_cells():
    # CSV injection: cells led by = + - @ tab CR are prefixed with a quote and quoted (OWASP).
    report = tiny_report({"C2": '=HYPERLINK("http://example.invalid")', "C3": "+1+1",
                          "C4": "@SUM(A1:A2)"})
    assert csv_rows(report) == EXPECTED_CSV


@pytest.mark.parametrize("lead", INJECTION_LEAD, ids=repr)
def test_csv_quotes_every_formula_lead(lead):
    report = tiny_report({"C1": f"{lead}cmd|' /C calc'!A0"})
    rows = list(csv.reader(io.StringIO(csv_rows(report), newline="")))
    assert rows[1][14] == f"'{lead}cmd|' /C calc'!A0"


def test_csv_keeps_negative_numbers_numeric():
    rows = list(csv.DictReader(io.StringIO(csv_rows(tiny_report()))))
    assert rows[1]["margin"] == "-0.1" and float(rows[1]["margin"]) == -0.1


# --------------------------------------------------------------------------------------------
# Formatting

@pytest.mark.parametrize("value, metric, text", [
    (0.5625, "voltage_ratio", "56.25 %"),
    (-10.0, "temp_margin_c", "-10 degC"),
    (2.2e-6, "c_worst_f", "2.2 uF"),
    (NAN, "voltage_ratio", ""),
    (3.0, None, "3"),
])
def test_format_metric(value, metric, text):
    assert format_metric(value, metric) == text


# --------------------------------------------------------------------------------------------
# The sample board's outputs opened by their consumers' parsers

ROOT = __import__("pathlib").Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def sample():
    from bomcheck.pipeline.audit import run_audit

    return run_audit(str(ROOT / "sample_boms" / "bw7-controller-bom.csv"),
                     str(ROOT / "sample_boms" / "bw7-design.csv"))


@pytest.mark.parametrize("warn_as", ["failure", "skipped", "pass"])
def test_junit_validates_against_the_junit_schema(sample, warn_as):
    xmlschema = pytest.importorskip("xmlschema", reason="xmlschema (test extra) validates XSD")
    # tests/data/junit-derived.xsd: derived from the structure of the Jenkins xunit
    # junit-10.xsd (see its header); the tiny report has every status, the sample board a FAIL
    schema = xmlschema.XMLSchema(str(ROOT / "tests" / "data" / "junit-derived.xsd"))
    for report in (tiny_report({"C2": "\ufffe<x>"}), sample):
        schema.validate(junit_xml(report, warn_as=warn_as))


def test_sample_markdown_renders_as_gfm_tables(sample):
    markdown_it = pytest.importorskip("markdown_it", reason="markdown-it-py (test extra)")
    text = markdown_summary(sample)
    html = markdown_it.MarkdownIt("commonmark").enable("table").render(text)
    assert html.count("<table>") == 2  # totals, and the verdicts not passing
    assert "bw7-controller-bom.csv" in text and sample.inputs[0]["sha256"] in text
    # every non-passing verdict, not one per placement: C4 has a FAIL and nodata verdicts
    bad = sample.verdicts[sample.verdicts["status"] != "pass"]
    assert f"Verdicts not passing: {len(bad)} on {bad['pidx'].nunique()} placements" in text
    c4 = [line for line in text.splitlines() if line.startswith("| C4 |")]
    assert any("| fail |" in line for line in c4) and any("| nodata |" in line for line in c4)
    # the nodata rows say what is missing
    assert any("missing" in line for line in c4 if "| nodata |" in line)
    # cautions are a list, one item each
    assert html.count("<li>") >= len(sample.cautions)


def test_junit_schema_rejects_skipped_on_testsuites():
    xmlschema = pytest.importorskip("xmlschema", reason="xmlschema (test extra) validates XSD")
    schema = xmlschema.XMLSchema(str(ROOT / "tests" / "data" / "junit-derived.xsd"))
    text = junit_xml(tiny_report())
    assert schema.is_valid(text)
    # the output before the fix: <testsuites ... skipped="1">, refused by junit-10.xsd
    assert not schema.is_valid(text.replace("<testsuites ", '<testsuites skipped="1" ', 1))


# --------------------------------------------------------------------------------------------
# A batch's pieces (render.markdown.board_markdown / batch_markdown_head, render.csvrows)

def test_board_markdown_is_the_summary_under_the_product():
    from bomcheck.render.markdown import board_markdown

    report = tiny_report()
    text = board_markdown(report, "Widget 7")
    summary = markdown_summary(report)
    assert text.startswith(f"## Widget 7: {report.status.upper()}\n")
    assert text == f"## Widget 7: {report.status.upper()}\n" + summary.partition("\n")[2] + "\n"


def test_board_csv_prefixes_each_row_with_the_product():
    import csv
    import io

    from bomcheck.render.csvrows import CSV_COLUMNS, batch_csv_header, board_csv

    report = tiny_report()
    rows = list(csv.reader(io.StringIO(board_csv(report, "Widget, 7"), newline="")))
    plain = list(csv.reader(io.StringIO(csv_rows(report), newline="")))[1:]
    assert [r[0] for r in rows] == ["Widget, 7"] * len(plain) and [r[1:] for r in rows] == plain
    assert batch_csv_header() == "product," + ",".join(CSV_COLUMNS) + "\r\n"


def test_batch_markdown_head_has_one_row_per_board():
    from types import SimpleNamespace

    from bomcheck.render.markdown import batch_markdown_head

    boards = [SimpleNamespace(product="A|B", status="fail",
                              totals={"audited": 3, "pass": 1, "fail": 2}),
              SimpleNamespace(product="C", status="pass", totals={"audited": 1, "pass": 1})]
    text = "".join(batch_markdown_head(boards, "fail"))
    assert text.startswith("# bomcheck batch audit: FAIL\n\n")
    assert "| A\\|B | fail | 3 | 1 | 0 | 0 | 2 |\n" in text  # product escaped (GFM table)
    assert text.endswith("| C | pass | 1 | 1 | 0 | 0 | 0 |\n")
