"""Shared fixtures: the sample board audited once per session and rule set."""

from __future__ import annotations

import functools
import json
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SAMPLE_BOM = ROOT / "sample_boms" / "bw7-controller-bom.csv"
SAMPLE_DESIGN = ROOT / "sample_boms" / "bw7-design.csv"
SAMPLE_PARTS = ROOT / "sample_boms" / "bw7-parts.csv"


@functools.lru_cache(maxsize=None)
def _sample_report(ruleset: str, environment: str = "severe", parts: bool = True):
    from bomcheck.pipeline.audit import AuditOptions, run_audit

    return run_audit(str(SAMPLE_BOM), str(SAMPLE_DESIGN),
                     AuditOptions(rules=(ruleset,), parts=str(SAMPLE_PARTS) if parts else None,
                                  environment=environment))


@pytest.fixture(scope="session")
def sample_report_for():
    """``sample_report_for(name, environment="severe", parts=True)``: the sample board's report
    under a shipped rule set (the default set is ``bomcheck.evaluate.rules.DEFAULT_RULESET``),
    with its parts data unless ``parts=False``, audited once per session per combination. The
    report is shared: read it, never change it."""
    return _sample_report


# A small board of one's own: the BOM header every regression board uses.
BOARD_HEADER = "Designator,Qty,Description,Manufacturer Part Number\n"


@pytest.fixture
def run(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)

    from bomcheck.cli.main import main

    def audit(bom_lines: str, design: str | None, *argv: str) -> tuple[int, dict]:
        (tmp_path / "bom.csv").write_text(BOARD_HEADER + bom_lines, encoding="utf-8")
        args = ["audit", "bom.csv", "--json", "out.json", "--no-config", *argv]
        if design is not None:
            (tmp_path / "design.csv").write_text(design, encoding="utf-8")
            args[2:2] = ["--design", "design.csv"]
        code = main(args)
        capsys.readouterr()
        report = json.loads((tmp_path / "out.json").read_text(encoding="utf-8"))
        return code, report

    return audit


def verdicts(report: dict, refdes: str) -> tuple[dict[str, dict], str]:
    """The placement's verdicts by rule, each with its value and basis filled in from the
    report's defaults (schema 2 leaves out what a verdict shares with its rule)."""
    (p,) = [p for p in report["placements"] if p["refdes"] == refdes]
    out = {}
    for v in p["verdicts"]:
        metric = report["rules"].get(v["rule"], {}).get("metric")
        out[v["rule"]] = {"value": p.get("metrics", {}).get(metric), "basis": "firm", **v}
    return out, p["status"]


# ---- the sample board's plain audit and workbook, shared by the render tests ----------------

SAMPLE_WORKBOOK_TIME = __import__("datetime").datetime(2031, 1, 2, 3, 4, 5)


@pytest.fixture(scope="session")
def sample_report_bare():
    """The sample board as ``bomcheck audit BOM --design SHEET`` audits it (the default rule set,
    severe environment, no parts data), audited once per session. Tests that change a report
    change a copy (``dataclasses.replace``, ``DataFrame.assign``)."""
    from bomcheck.pipeline.audit import run_audit

    return run_audit(str(SAMPLE_BOM), str(SAMPLE_DESIGN))


@pytest.fixture(scope="session")
def sample_workbook(sample_report_bare, tmp_path_factory):
    """(report, opened workbook) of ``sample_report_bare`` written once per session with a fixed
    generation time (``SAMPLE_WORKBOOK_TIME``)."""
    import openpyxl

    from bomcheck.render.xlsx import write_workbook

    path = tmp_path_factory.mktemp("xlsx") / "audit.xlsx"
    write_workbook(sample_report_bare, path, generated=SAMPLE_WORKBOOK_TIME)
    return sample_report_bare, openpyxl.load_workbook(path)


@pytest.fixture(scope="session")
def sample_parts_outputs(sample_report_for, tmp_path_factory):
    """(JSON report as data, opened workbook, workbook path) of the sample board with its parts
    data (``sample_report_for("industrial")``, the command line's defaults), written once."""
    import openpyxl

    from bomcheck.render.xlsx import write_workbook

    report = sample_report_for("industrial")
    path = tmp_path_factory.mktemp("parts") / "a.xlsx"
    write_workbook(report, path)
    return json.loads(report.to_json()), openpyxl.load_workbook(path), path
