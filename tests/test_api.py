"""The public library: the README's example runs as written, and the API matches the CLI."""

from __future__ import annotations

import re
from pathlib import Path

import pandas as pd

import bomcheck

ROOT = Path(__file__).resolve().parents[1]


def test_readme_example_runs(tmp_path, monkeypatch, capsys):
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = text[text.index("## Use from Python"):]
    code = re.search(r"```python\n(.*?)```", section, re.S).group(1)
    monkeypatch.chdir(tmp_path)
    exec(compile(code, "README.md", "exec"), {})
    out = capsys.readouterr().out.splitlines()
    # System Reliability Center sheet, ceramic severe column: 60 %; 5 V / 6.3 V = 79 % fails.
    assert out[0] == "fail"
    assert out[1] == "[['C1', 'pass'], ['C2', 'fail']]"
    html = (tmp_path / "audit.html").read_text(encoding="utf-8")
    assert "<svg" in html and "C2" in html


def test_frames_and_files_give_the_same_verdicts(tmp_path):
    bom = pd.DataFrame({"Designator": ["C1", "C2-C3"], "Qty": ["1", "2"],
                        "Description": ["CAP CER 1UF 16V 10% X7R 0603",
                                        "CAP ALU 100UF 25V 20% 105C"]})
    design = pd.DataFrame({"refdes": ["C1", "C2-C3"], "v_dc [V]": ["12", "12"],
                           "t_ambient_c [degC]": ["40", "40"], "c_min_f": ["none", "none"],
                           "v_reverse_pk [V]": ["0", "0"]})
    bom.to_csv(tmp_path / "bom.csv", index=False)
    design.to_csv(tmp_path / "design.csv", index=False)
    from_files = bomcheck.audit_files(tmp_path / "bom.csv", tmp_path / "design.csv")
    from_frames = bomcheck.audit_frames(bom, design)
    cols = ["refdes", "rule_id", "status", "value", "limit", "message"]
    pd.testing.assert_frame_equal(from_files.verdicts[cols].reset_index(drop=True),
                                  from_frames.verdicts[cols].reset_index(drop=True))
    assert from_frames.status == from_files.status == "fail"


def test_public_names_are_exported():
    for name in bomcheck.__all__:
        assert getattr(bomcheck, name) is not None
    assert (ROOT / "bomcheck" / "py.typed").exists()
