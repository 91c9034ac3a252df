"""The combined outputs of a batch audit (bomcheck.render.batch_out): each board's piece, and the
JSON report, Markdown summary and CSV stitched from the pieces in manifest order."""

import csv
import io
import json
from importlib import resources
from types import SimpleNamespace

import jsonschema
import pytest
from batch_boards import boards  # noqa: F401 (a fixture)
from batch_boards import batch
from tiny_reports import tiny_report

from bomcheck.render.batch_out import COMBINERS, board_piece
from bomcheck.render.csvrows import batch_csv_header, board_csv
from bomcheck.render.markdown import board_markdown

SCHEMA = json.loads(resources.files("bomcheck.schemas").joinpath("report.schema.json")
                    .read_text("utf-8"))
BATCH_SCHEMA = json.loads(resources.files("bomcheck.schemas").joinpath("batch.schema.json")
                          .read_text("utf-8"))


# Moved from test_batch.py: the whole batch through the command line.
def test_batch_writes_one_combined_report_per_output(boards, capsys):
    assert batch("--json", "all.json", "--markdown", "all.md", "--csv", "all.csv") == 1
    shown = capsys.readouterr().out
    assert "Tarn-A" in shown and "Tarn-B" in shown  # the per-board summary table
    data = json.loads((boards / "all.json").read_text(encoding="utf-8"))
    jsonschema.validate(data, BATCH_SCHEMA)
    assert (data["kind"], data["status"]) == ("batch", "fail")  # the worst board's status
    assert [(b["product"], b["status"]) for b in data["boards"]] == [
        ("Tarn-A", "pass"), ("Tarn-B", "fail")]
    for b in data["boards"]:
        jsonschema.validate(b["report"], SCHEMA)
        assert b["totals"] == b["report"]["totals"]
    md = (boards / "all.md").read_text(encoding="utf-8")
    assert md.startswith("# bomcheck batch audit: FAIL")
    assert "| Tarn-A | pass | 2 |" in md and "## Tarn-B: FAIL" in md
    rows = list(csv.DictReader(io.StringIO((boards / "all.csv").read_text(encoding="utf-8"))))
    assert [(r["product"], r["refdes"]) for r in rows] == [
        ("Tarn-A", "C1"), ("Tarn-A", "C2"), ("Tarn-B", "C7"), ("Tarn-B", "C9")]


@pytest.fixture
def two_boards(tmp_path):
    """Two boards of the tiny report, each output's pieces written as a worker writes them."""
    results = []
    for product, status in (("Ash", "pass"), ("Birch", "fail")):
        report = tiny_report()
        pieces = {}
        for kind in COMBINERS:
            path = tmp_path / f"{product}.{kind}"
            path.write_text("".join(board_piece(kind, report, product)), encoding="utf-8",
                            newline="")
            pieces[kind] = str(path)
        results.append(SimpleNamespace(product=product, status=status, totals=report.totals,
                                       pieces=pieces))
    return results


def test_combined_json_holds_each_boards_whole_report(two_boards):
    data = json.loads("".join(COMBINERS["json"](two_boards, "0.0-test")))
    jsonschema.validate(data, BATCH_SCHEMA)
    assert (data["kind"], data["status"], data["tool"]["version"]) == ("batch", "fail",
                                                                       "0.0-test")
    assert [b["product"] for b in data["boards"]] == ["Ash", "Birch"]  # manifest order
    for b in data["boards"]:
        assert b["report"] == json.loads(tiny_report().to_json())
        assert b["totals"] == tiny_report().totals


def test_combined_markdown_is_the_head_then_each_boards_summary(two_boards):
    text = "".join(COMBINERS["markdown"](two_boards, "0.0-test"))
    assert text.startswith("# bomcheck batch audit: FAIL\n")
    ash, birch = (board_markdown(tiny_report(), p) for p in ("Ash", "Birch"))
    assert text.index(ash) < text.index(birch)


def test_combined_csv_is_one_header_and_every_boards_rows(two_boards):
    text = "".join(COMBINERS["csv"](two_boards, "0.0-test"))
    report = tiny_report()
    assert text == batch_csv_header() + board_csv(report, "Ash") + board_csv(report, "Birch")
    rows = list(csv.reader(io.StringIO(text, newline="")))  # RFC 4180: parses as one table
    assert len({len(r) for r in rows}) == 1
