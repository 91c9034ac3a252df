"""Markdown for a pull-request comment (bomcheck.render.markdown): an audit's summary, the
comparison with a baseline, a batch's per-board pieces; GitHub-flavoured Markdown tables."""

from types import SimpleNamespace

import pytest
from diff_reports import NEW, OLD
from tiny_reports import tiny_report

from bomcheck.render.markdown import (
    batch_markdown_head,
    board_markdown,
    diff_markdown,
    markdown_summary,
)
from bomcheck.report.diff import compare

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


def test_sample_markdown_renders_as_gfm_tables(sample_report_bare):
    sample = sample_report_bare
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


def test_markdown_lists_problems_first():
    md = diff_markdown(compare(OLD, NEW))
    table = [ln for ln in md.splitlines() if ln.startswith("| ") and "refdes" not in ln]
    assert table == [
        "| changed (new problem) | C1 | R-V | pass | fail |",
        "| new (new problem) | C3 | R-V |  | fail |",
        "| resolved | C2 | R-T | warn |  |",
        "| resolved | C5 | R-V | fail |  |",
    ]
    assert "Placements added: C3." in md and "Placements removed: C5." in md


def test_board_markdown_is_the_summary_under_the_product():
    report = tiny_report()
    text = board_markdown(report, "Widget 7")
    summary = markdown_summary(report)
    assert text.startswith(f"## Widget 7: {report.status.upper()}\n")
    assert text == f"## Widget 7: {report.status.upper()}\n" + summary.partition("\n")[2] + "\n"


def test_batch_markdown_head_has_one_row_per_board():
    boards = [SimpleNamespace(product="A|B", status="fail",
                              totals={"audited": 3, "pass": 1, "fail": 2}),
              SimpleNamespace(product="C", status="pass", totals={"audited": 1, "pass": 1})]
    text = "".join(batch_markdown_head(boards, "fail"))
    assert text.startswith("# bomcheck batch audit: FAIL\n\n")
    assert "| A\\|B | fail | 3 | 1 | 0 | 0 | 2 |\n" in text  # product escaped (GFM table)
    assert text.endswith("| C | pass | 1 | 1 | 0 | 0 | 0 |\n")
