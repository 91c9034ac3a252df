"""Golden files: the sample board's reports, frozen byte for byte, so a move or a speed-up of the
code cannot change what a reviewer reads without a visible change to a file under tests/golden.

Regenerate (after a change of output that is meant) with
``BOMCHECK_REGEN_GOLDEN=1 python -m pytest tests/test_golden.py`` and review the diff."""

from __future__ import annotations

import os
import re
from pathlib import Path

import pytest

from conftest import ROOT

GOLDEN = Path(__file__).resolve().parent / "golden"
REGEN = os.environ.get("BOMCHECK_REGEN_GOLDEN") == "1"

# Relative paths, run from the checkout root: the reports name their inputs as given.
AUDIT_ARGS = ["audit", "sample_boms/bw7-controller-bom.csv", "--design", "sample_boms/bw7-design.csv",
              "--parts", "sample_boms/bw7-parts.csv", "--no-config", "--quiet"]
AUDIT_FILES = {"--json": "audit.json", "--csv": "audit.csv", "--markdown": "audit.md",
               "--junit": "audit.junit.xml", "--sarif": "audit.sarif", "--html": "audit.html"}
SUBSTITUTE_ARGS = ["substitute", "sample_boms/bw7-controller-bom.csv",
                   "--alternates", "sample_boms/bw7-alternates.csv",
                   "--design", "sample_boms/bw7-design.csv", "--parts", "sample_boms/bw7-parts.csv"]
SUBSTITUTE_FILES = {"--json": "substitute.json", "--markdown": "substitute.md"}


# What legitimately differs from run to run or machine to machine: the HTML's table of the run's
# environment (versions, command line) and the workbook's generation time.
_VOLATILE = [(re.compile(rb"<h3>Environment</h3>\n<table>.*?</table>", re.S), b"<h3>Environment</h3>"),
             (re.compile(rb"datetime\.datetime\([^)]*\)"), b"<datetime>")]


def stable(data: bytes) -> bytes:
    """The output without what varies between runs and machines (see ``_VOLATILE``)."""
    for pattern, replacement in _VOLATILE:
        data = pattern.sub(replacement, data)
    return data


def workbook_cells(path: Path) -> str:
    """Every non-empty cell of every sheet as ``sheet!A1<TAB>repr(value)``, one per line: the
    workbook's content without the zip container's timestamps."""
    import openpyxl

    book = openpyxl.load_workbook(path)
    lines = []
    for sheet in book.worksheets:
        lines.append(f"# {sheet.title} {sheet.sheet_state} freeze={sheet.freeze_panes}")
        for row in sheet.iter_rows():
            lines.extend(f"{sheet.title}!{cell.coordinate}\t{cell.value!r}"
                         for cell in row if cell.value is not None)
    return "\n".join(lines) + "\n"


def _run(tmp_path, monkeypatch, args, files, xlsx_name):
    from bomcheck.cli.main import main

    monkeypatch.chdir(ROOT)
    out = {name: tmp_path / name for name in files.values()}
    argv = list(args)
    for option, name in files.items():
        argv += [option, str(out[name])]
    argv += ["--xlsx", str(tmp_path / "book.xlsx")]
    main(argv)
    produced = {name: stable(path.read_bytes()) for name, path in out.items()}
    produced[xlsx_name] = stable(workbook_cells(tmp_path / "book.xlsx").encode("utf-8"))
    return produced


def _compare(produced: dict[str, bytes]) -> None:
    if REGEN:
        GOLDEN.mkdir(exist_ok=True)
        for name, data in produced.items():
            (GOLDEN / name).write_bytes(data)
        pytest.skip("golden files regenerated")
    changed = [name for name, data in produced.items()
               if not (GOLDEN / name).exists() or (GOLDEN / name).read_bytes() != data]
    assert not changed, (f"output changed against tests/golden: {changed}; if meant, regenerate "
                         "with BOMCHECK_REGEN_GOLDEN=1 and review the diff")


def test_sample_audit_outputs_match_golden(tmp_path, monkeypatch, capsys):
    _compare(_run(tmp_path, monkeypatch, AUDIT_ARGS, AUDIT_FILES, "audit.xlsx-cells.txt"))


def test_sample_substitute_outputs_match_golden(tmp_path, monkeypatch, capsys):
    _compare(_run(tmp_path, monkeypatch, SUBSTITUTE_ARGS, SUBSTITUTE_FILES,
                  "substitute.xlsx-cells.txt"))
