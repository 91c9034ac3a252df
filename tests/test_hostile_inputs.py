"""Hostile and broken inputs end in a one-line message and a documented exit status, never a
traceback or a hang (issue 10): every case of ``tests/hostile_corpus.py``, in process."""

from __future__ import annotations

import sys
import time
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))

from hostile_corpus import Case, cases  # noqa: E402

from bomcheck.cli.main import main  # noqa: E402

CASE_SECONDS = 10.0  # no case may take longer (issue 10: "0 hangs over 10 s")


@pytest.mark.parametrize("case", cases(), ids=lambda c: c.name)
def test_hostile_input(case: Case, tmp_path, capsys):
    args = case.build(tmp_path)
    for command in case.commands:
        out = tmp_path / f"{command}-out"
        extra = ["--json", str(out)]
        t0 = time.perf_counter()
        status = main([command, *args, *extra])
        elapsed = time.perf_counter() - t0
        err = capsys.readouterr().err
        assert "Traceback" not in err
        assert status in case.expect, f"{command}: exit {status}: {err}"
        assert elapsed < CASE_SECONDS, f"{command} took {elapsed:.1f} s"
        if status == 2:
            lines = [ln for ln in err.splitlines() if ln.strip()]
            assert lines[0].startswith("bomcheck: error: "), err
            # One line; rule data lists each problem on its own line under one heading.
            assert len(lines) == 1 or "in rule data" in lines[0], err
            assert case.names in err, err


def test_pyproject_nested_thousands_deep_is_one_line(tmp_path, monkeypatch, capsys):
    from hostile_corpus import DEEP, GOOD_BOM

    monkeypatch.chdir(tmp_path)
    (tmp_path / "pyproject.toml").write_text("[tool.bomcheck]\n" + DEEP, encoding="utf-8")
    (tmp_path / "bom.csv").write_text(GOOD_BOM, encoding="utf-8")
    assert main(["audit", "bom.csv"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "pyproject.toml" in err and "nested" in err
