"""The commands (bomcheck.cli.commands) end to end through bomcheck.cli.main.main: exit codes,
outputs, colour, config, progress, baselines, diff."""

import csv
import io
import json
import re
import xml.etree.ElementTree as ET

import pytest

from conftest import ROOT
from diff_reports import NEW, OLD

from bomcheck.cli import commands
from bomcheck.cli.main import main
from bomcheck.render.markdown import diff_markdown
from bomcheck.report.diff import compare

HEADER = "Designator,Qty,Value,Description,Manufacturer Part Number\n"
# Invented parts. 3.3 V on a 50 V ceramic passes and 15 V on a 16 V ceramic fails every shipped
# ceramic voltage rule (common practice: class II ceramics are derated to well under 90 %).
LINES = {
    "pass": "C1,1,100nF,CAP CER 0.1UF 50V 10% X7R 0603,KV-0603-104-50\n",
    # Qty 1 for two designators: the audit's own quantity-mismatch warning
    "warn": '"C2,C3",1,100nF,CAP CER 0.1UF 50V 10% X7R 0603,KV-0603-104-50\n',
    "fail": "C4,1,1uF,CAP CER 1UF 16V 10% X7R 0603,KV-0603-105-16\n",
    # C5 has no design-sheet row: "no data", never a silent pass
    "nodata": "C5,1,1uF,CAP CER 1UF 50V 10% X7R 0603,KV-0603-105-50\n",
}
DESIGN_ROWS = {
    "pass": "C1,3.3,40,10 nF\n",
    "warn": "C2,3.3,40,10 nF\nC3,3.3,40,10 nF\n",
    "fail": "C4,15,40,10 nF\n",
    "nodata": "",
}
DESIGN_HEADER = "refdes,v_dc [V],t_ambient_c [°C],c_min_f\n"
COLOUR_SGR = re.compile(r"\x1b\[(?:\d+;)*(?:3[0-8]|9[0-7])(?:;\d+)*m")


@pytest.fixture
def board(tmp_path, monkeypatch):
    """A working directory with a design sheet and a BOM writer; no pyproject.toml above it
    is consulted (--no-config is not needed: tmp_path has none, and the tests that want one
    write it)."""
    monkeypatch.chdir(tmp_path)
    monkeypatch.delenv("NO_COLOR", raising=False)
    monkeypatch.delenv("FORCE_COLOR", raising=False)

    def bom(*kinds, name="bom.csv"):
        """Write the BOM lines of ``kinds`` and a design sheet for exactly those placements
        (a design row naming no BOM placement would itself be "no data")."""
        (tmp_path / name).write_text(HEADER + "".join(LINES[k] for k in kinds), encoding="utf-8")
        (tmp_path / "design.csv").write_text(
            DESIGN_HEADER + "".join(DESIGN_ROWS[k] for k in kinds), encoding="utf-8")
        return name

    return bom


def audit(*argv):
    return main(["audit", *argv, "--design", "design.csv", "--no-config"])


@pytest.mark.parametrize("kinds, level, code", [
    (("pass",), "fail", 0), (("pass",), "warn", 0),
    (("pass", "warn"), "fail", 0), (("pass", "warn"), "nodata", 0), (("pass", "warn"), "warn", 1),
    (("pass", "nodata"), "fail", 0), (("pass", "nodata"), "nodata", 1),
    (("pass", "nodata"), "warn", 1),   # order warn < nodata < fail
    (("pass", "fail"), "fail", 1), (("pass", "fail"), "warn", 1),
], ids=lambda x: "+".join(x) if isinstance(x, tuple) else str(x))
def test_exit_status_by_fail_on(board, capsys, kinds, level, code):
    assert audit(board(*kinds), "--fail-on", level, "--quiet") == code


def test_default_fail_on_is_nodata(board):
    # No data never passes, at the exit status too (it was "fail" before the gate was tightened).
    assert audit(board("pass", "warn"), "--quiet") == 0
    assert audit(board("pass", "warn", "nodata"), "--quiet") == 1
    assert audit(board("pass", "fail"), "--quiet") == 1
    assert audit(board("pass", "warn", "nodata"), "--quiet", "--fail-on", "fail") == 0


def test_quiet_prints_the_overall_verdict_and_environment(board, capsys):
    audit(board("pass", "fail"), "--quiet")
    out = capsys.readouterr().out
    assert "Overall: FAIL (severe environment)" in out and "fail 1" in out


@pytest.mark.parametrize("argv", [
    ["audit", "missing.csv", "--no-config"],
    ["audit", "bom.csv", "--waivers", "missing-waivers.toml", "--no-config"],
    ["audit", "bom.csv", "--fail-on", "new", "--no-config"],
    ["audit", "bom.csv", "--json", "-", "--csv", "-", "--no-config"],
    ["audit", "bom.csv", "--json", "no-such-folder/out.json", "--no-config"],
    ["diff", "missing-old.json", "missing-new.json"],
], ids=["no-bom", "no-waivers", "new-without-baseline", "two-stdout", "unwritable", "diff"])
def test_bad_input_is_one_line_on_stderr(board, capsys, argv):
    board("pass")
    assert main(argv) == 2
    captured = capsys.readouterr()
    assert captured.err.startswith("bomcheck: error: ")
    assert captured.err.count("\n") == 1 and "Traceback" not in captured.err


def test_json_to_stdout_parses_and_nothing_else_is_printed(board, capsys):
    assert audit(board("pass", "fail"), "--json", "-") == 1
    data = json.loads(capsys.readouterr().out)
    assert data["status"] == "fail"
    assert [p["refdes"] for p in data["placements"]] == ["C1", "C4"]


def test_json_is_byte_identical_between_runs(board, tmp_path):
    bom = board("pass", "warn", "fail", "nodata")
    assert audit(bom, "--json", "a.json", "--quiet") == 1
    assert audit(bom, "--json", "b.json", "--quiet") == 1
    assert (tmp_path / "a.json").read_bytes() == (tmp_path / "b.json").read_bytes()


def test_every_ci_output_is_written(board, tmp_path, capsys):
    bom = board("pass", "warn", "fail", "nodata")
    code = audit(bom, "--junit", "out.xml", "--markdown", "out.md", "--csv", "out.csv",
                 "--json", "out.json", "--warn-as", "skipped", "--quiet")
    assert code == 1
    data = json.loads((tmp_path / "out.json").read_text(encoding="utf-8"))
    suite = ET.parse(tmp_path / "out.xml").getroot().find("testsuite")
    t = data["totals"]
    assert suite.get("tests") == str(t["audited"]) == "5"
    assert suite.get("failures") == str(t["fail"])
    assert suite.get("errors") == str(t["nodata"])
    assert suite.get("skipped") == str(t["warn"] + t["waived"])    # --warn-as skipped
    rows = list(csv.DictReader(io.StringIO((tmp_path / "out.csv").read_text(encoding="utf-8"))))
    assert [(r["refdes"], r["status"]) for r in rows] == [
        (p["refdes"], p["status"]) for p in data["placements"]]
    md = (tmp_path / "out.md").read_text(encoding="utf-8")
    assert md.startswith("## bomcheck audit: FAIL\n") and "| C4 | fail |" in md
    assert not list(tmp_path.glob(".*.tmp"))   # atomic writes leave no temporary file


def test_xlsx_is_wired_to_the_workbook_writer(board, tmp_path):
    openpyxl = pytest.importorskip("openpyxl")
    pytest.importorskip("bomcheck.render.xlsx")
    assert audit(board("pass", "fail"), "--xlsx", "out.xlsx", "--quiet") == 1
    book = openpyxl.load_workbook(tmp_path / "out.xlsx")
    assert book.sheetnames  # the sheets themselves are the workbook module's tests


def test_waivers_and_today_through_the_cli(board, tmp_path, capsys):
    bom = board("pass", "fail")
    assert audit(bom, "--json", "plain.json", "--quiet") == 1
    plain = json.loads((tmp_path / "plain.json").read_text(encoding="utf-8"))
    c4 = next(p for p in plain["placements"] if p["refdes"] == "C4")
    lines = [f"C4,{f['rule']},qualified by test report TR-3,R. Okafor,2027-06-30"
             for f in c4["verdicts"] if f["status"] != "pass"]
    (tmp_path / "w.csv").write_text("refdes,rule,reason,approved_by,expires\n"
                                    + "\n".join(lines) + "\n", encoding="utf-8")
    assert audit(bom, "--waivers", "w.csv", "--today", "2027-06-30", "--json", "w.json") == 0
    out = capsys.readouterr().out
    assert "waiver applied" in out and "waived 1" in out
    data = json.loads((tmp_path / "w.json").read_text(encoding="utf-8"))
    assert data["totals"]["waived"] == 1 and data["status"] == "waived"
    # a day later the waivers have expired: the failure is back and each expiry is reported
    assert audit(bom, "--waivers", "w.csv", "--today", "2027-07-01") == 1
    assert capsys.readouterr().out.count("waiver expired") == len(lines)


def test_baseline_and_fail_on_new(board, tmp_path, capsys):
    bom = board("pass", "fail")
    assert audit(bom, "--json", "base.json", "--quiet") == 1
    # the same failure as in the baseline is no new problem
    assert audit(bom, "--baseline", "base.json", "--fail-on", "new", "--markdown", "m.md") == 0
    out = capsys.readouterr().out
    assert "Baseline: 0 new problems" in out
    assert "## bomcheck audit: FAIL" in (tmp_path / "m.md").read_text(encoding="utf-8")
    assert "### Changes since the baseline" in (tmp_path / "m.md").read_text(encoding="utf-8")
    # C6, a copy of the failing C4 line, is a new placement with new failing verdicts
    with open(tmp_path / "bom.csv", "a", encoding="utf-8") as f:
        f.write(LINES["fail"].replace("C4,", "C6,"))
    with open(tmp_path / "design.csv", "a", encoding="utf-8") as f:
        f.write(DESIGN_ROWS["fail"].replace("C4,", "C6,"))
    assert audit(bom, "--baseline", "base.json", "--fail-on", "new", "--quiet") == 1
    assert "Baseline: " in capsys.readouterr().out
    assert audit(bom, "--baseline", "base.json", "--quiet") == 1   # plain fail-on still applies


def test_config_gives_defaults_and_the_command_line_wins(board, tmp_path):
    bom = board("pass", "warn")
    (tmp_path / "pyproject.toml").write_text(
        '[tool.bomcheck]\ndesign = "design.csv"\nfail_on = "warn"\njunit = "cfg.xml"\n',
        encoding="utf-8")
    assert main(["audit", bom, "--quiet"]) == 1
    assert (tmp_path / "cfg.xml").exists()
    assert main(["audit", bom, "--quiet", "--fail-on", "fail"]) == 0
    assert main(["audit", bom, "--quiet", "--no-config", "--design", "design.csv"]) == 0


def test_no_colour_when_not_a_terminal_or_no_color(board, capsys, monkeypatch):
    bom = board("pass", "fail")
    audit(bom)
    assert "\x1b[" not in capsys.readouterr().out          # captured output is no terminal
    monkeypatch.setenv("FORCE_COLOR", "1")                  # rich: treat it as a terminal
    audit(bom)
    assert COLOUR_SGR.search(capsys.readouterr().out)
    monkeypatch.setenv("NO_COLOR", "1")                     # no-color.org
    audit(bom)
    assert not COLOUR_SGR.search(capsys.readouterr().out)


def test_output_order_is_deterministic(board, capsys):
    bom = board("pass", "warn", "fail", "nodata")
    audit(bom, "--all")
    first = capsys.readouterr().out
    audit(bom, "--all")
    assert capsys.readouterr().out == first


# --------------------------------------------------------------------------------------------
# Progress bar

class FakeTerminal(io.StringIO):
    def isatty(self):
        return True


def test_progress_only_on_a_terminal_for_a_large_bom(tmp_path, monkeypatch):
    small = tmp_path / "small.csv"
    small.write_text(HEADER + LINES["pass"], encoding="utf-8")
    large = tmp_path / "large.csv"
    large.write_text(HEADER + LINES["pass"] * (commands.LARGE_BOM_LINES + 1), encoding="utf-8")
    assert not commands._large_bom(str(small)) and commands._large_bom(str(large))

    def run(path, tty, quiet=False):
        err = FakeTerminal() if tty else io.StringIO()
        monkeypatch.setattr("sys.stderr", err)
        args = type("Args", (), {"bom": str(path), "quiet": quiet})()
        with commands._progress(args, 2) as stage:
            stage("audit: read, parse, evaluate")
            stage("write json: out[/x].json")  # a path is the user's text, never markup
        return err.getvalue()

    assert run(small, tty=True) == ""
    assert run(large, tty=False) == ""
    assert run(large, tty=True, quiet=True) == ""
    assert "write json" in run(large, tty=True)


# --------------------------------------------------------------------------------------------
# Standard input and input limits (issue 10).

def test_bom_from_standard_input(board, capsys, monkeypatch):
    data = (HEADER + LINES["pass"] + LINES["fail"]).encode("utf-8")
    board("pass", "fail")  # the design sheet
    for argv, code in ((["import", "-", "--json", "-"], 0),
                       (["audit", "-", "--design", "design.csv", "--json", "-"], 1)):
        monkeypatch.setattr("sys.stdin", io.TextIOWrapper(io.BytesIO(data)))
        assert main(argv) == code
        out = json.loads(capsys.readouterr().out)
        text = json.dumps(out)
        assert "C1" in text and "C4" in text


def test_placement_limit_refuses_with_its_option_and_the_option_raises_it(board, capsys):
    lines = "".join(f'"C{p}1-C{p}9999",1,100nF,CAP CER 0.1UF 50V X7R 0603,KV-1\n'
                    for p in "ABCDEF")  # 6 x 9,999 placements from 330 bytes
    open("big.csv", "w", encoding="utf-8").write(HEADER + lines)
    assert main(["import", "big.csv"]) == 2
    err = capsys.readouterr().err
    assert "more than 50,000 placements" in err and "--max-placements" in err
    assert main(["import", "big.csv", "--max-placements", "60000", "--json", "-"]) == 0
    capsys.readouterr()


# Libraries and modules a CSV audit with a JSON report does not use (issue 13, start-up): units
# come from bomcheck's own parser, the shipped rules need no schema validator, workbooks and the
# HTML page are not read or written, one board needs no process pool.
NOT_ON_THE_AUDIT_PATH = (
    "pint", "jsonschema", "openpyxl", "python_calamine", "xlsxwriter", "multiprocessing",
    "html", "bomcheck.render.xlsx", "bomcheck.render.html", "rich.progress",
)


def test_the_sample_audit_imports_only_what_it_needs(tmp_path):
    import subprocess
    import sys
    from pathlib import Path

    sample = Path(__file__).resolve().parents[1] / "sample_boms"
    code = (
        "import sys, io, contextlib\n"
        "from bomcheck.cli.main import main\n"
        "with contextlib.redirect_stdout(io.StringIO()):\n"
        f"    code = main(['audit', {str(sample / 'bw7-controller-bom.csv')!r}, '--design', "
        f"{str(sample / 'bw7-design.csv')!r}, '--parts', {str(sample / 'bw7-parts.csv')!r}, "
        f"'--json', {str(tmp_path / 'r.json')!r}, '--quiet', '--no-config'])\n"
        f"print(code, sorted(m for m in {NOT_ON_THE_AUDIT_PATH!r} if m in sys.modules))\n")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True, cwd=tmp_path)
    assert out.stdout.split(" ", 1) == ["1", "[]\n"]  # the sample board has failures: 1
    assert json.loads((tmp_path / "r.json").read_text(encoding="utf-8"))["placements"]


# --------------------------------------------------------------------------------------------
# bomcheck diff (the comparison itself: test_diff.py)

@pytest.fixture
def pair(tmp_path):
    old, new = tmp_path / "old.json", tmp_path / "new.json"
    old.write_text(json.dumps(OLD), encoding="utf-8")
    new.write_text(json.dumps(NEW), encoding="utf-8")
    return str(old), str(new)


def test_cli_diff_exit_status_with_fail_on_new(pair, capsys):
    old, new = pair
    assert main(["diff", old, new]) == 0                    # a comparison alone never fails
    assert main(["diff", old, new, "--fail-on", "new"]) == 1
    assert main(["diff", new, new, "--fail-on", "new"]) == 0
    # the way back resolves C3 and improves C1, but C5 comes back as a new failure
    assert main(["diff", new, old, "--fail-on", "new"]) == 1
    out = capsys.readouterr().out
    assert "Changes since the baseline" in out and "new problem" in out


def test_cli_diff_json_and_markdown(pair, tmp_path, capsys):
    old, new = pair
    out_json, out_md = tmp_path / "d.json", tmp_path / "d.md"
    assert main(["diff", old, new, "--json", str(out_json), "--markdown", str(out_md)]) == 0
    data = json.loads(out_json.read_text(encoding="utf-8"))
    assert data["counts"]["new_problems"] == 2
    assert data["changed"] == [{"refdes": "C1", "rule": "R-V", "old_status": "pass",
                                "new_status": "fail", "old_message": None,
                                "new_message": "C1: R-V fail"}]
    assert (data["old"]["label"], data["new"]["label"]) == (old, new)
    assert out_md.read_text(encoding="utf-8") == diff_markdown(compare(OLD, NEW, old_label=old,
                                                                       new_label=new))
    capsys.readouterr()
    assert main(["diff", old, new, "--json", "-"]) == 0
    assert json.loads(capsys.readouterr().out)["counts"]["changed"] == 1


def test_cli_diff_bad_file_is_one_line_error(tmp_path, capsys):
    bad = tmp_path / "bad.json"
    bad.write_text("{not json", encoding="utf-8")
    assert main(["diff", str(bad), str(bad)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("bomcheck: error: ") and err.count("\n") == 1
    assert "Traceback" not in err


# --------------------------------------------------------------------------------------------
# The sample board through the command line: outputs from the registry and [tool.bomcheck]

def test_config_turns_on_html_sarif_and_annotations(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    sample = ROOT / "sample_boms"
    (tmp_path / "pyproject.toml").write_text(
        "[tool.bomcheck]\n"
        f'design = "{(sample / "bw7-design.csv").as_posix()}"\n'
        'html = "out/report.html"\nsarif = "out/report.sarif"\nannotations = true\n',
        encoding="utf-8")
    (tmp_path / "out").mkdir()
    code = main(["audit", str(sample / "bw7-controller-bom.csv"), "--quiet"])
    assert code == 1
    assert (tmp_path / "out" / "report.html").stat().st_size > 10_000
    assert (tmp_path / "out" / "report.sarif").exists()
    out = capsys.readouterr().out
    assert "::error file=" in out and "::warning file=" in out
    assert out.rstrip().endswith("Overall: FAIL (severe environment)")


def test_two_outputs_on_stdout_are_refused(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    sample = ROOT / "sample_boms"
    code = main(["audit", str(sample / "bw7-controller-bom.csv"), "--design",
                 str(sample / "bw7-design.csv"), "--no-config", "--json", "-", "--annotations"])
    assert code == 2
    assert "only one report can go to standard output" in capsys.readouterr().err


def test_piped_output_is_80_columns_wide(tmp_path, monkeypatch, capsys):
    """Not a terminal (a pipe, a CI log): 80 columns, so the list layout, no line longer."""
    monkeypatch.chdir(tmp_path)
    monkeypatch.delenv("COLUMNS", raising=False)
    sample = ROOT / "sample_boms"
    main(["audit", str(sample / "bw7-controller-bom.csv"), "--design",
          str(sample / "bw7-design.csv"), "--no-config"])
    out = capsys.readouterr().out
    assert max(len(line) for line in out.splitlines()) <= 80
    assert out.startswith("Capacitor derating audit (worst first)\nFAIL C43 row 23")
