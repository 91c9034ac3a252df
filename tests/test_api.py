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
    # The 16 V alternate runs C2 at 5 V / 16 V = 31 % (under the 60 % limit) where the 6.3 V part
    # failed: a drop-in.
    assert out[2] == "drop-in"
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
    import bomcheck.cli.commands  # noqa: F401 - every stage package loaded, as after a run
    import types

    for name in bomcheck.__all__:
        value = getattr(bomcheck, name)
        # A stage package of the same name (bomcheck.parse) would shadow the call once imported.
        assert value is not None and not isinstance(value, types.ModuleType), name
    assert (ROOT / "bomcheck" / "py.typed").exists()


def test_substitute_from_frames_matches_files(tmp_path):
    # Invented parts. 12 V on a 16 V ceramic is 75 % of its rating, over every shipped ceramic
    # derating limit (common practice: class II ceramics well under 90 %); a 50 V part is 24 %.
    bom = pd.DataFrame({"Designator": ["C1", "C2"], "Qty": ["1", "1"],
                        "Description": ["CAP CER 1UF 50V 10% X7R 0603",
                                        "CAP CER 1UF 50V 10% X7R 0603"],
                        "Manufacturer Part Number": ["KV-0603-105-50", "KV-0603-105-50"]})
    design = pd.DataFrame({"refdes": ["C1", "C2"], "v_dc [V]": ["12", "12"],
                           "t_ambient_c [degC]": ["40", "40"], "c_min_f": ["none", "none"]})
    bom.to_csv(tmp_path / "bom.csv", index=False)
    design.to_csv(tmp_path / "design.csv", index=False)
    alternates = [
        bomcheck.Alternate(original="KV-0603-105-50", mpn="KV-0603-105-16",
                           cells={"description": "CAP CER 1UF 16V 10% X7R 0603"}),
        bomcheck.Alternate(original="KV-0603-105-50", mpn="KV-0603-105-50B",
                           cells={"description": "CAP CER 1UF 50V 10% X7R 0603"}),
    ]
    from_files = bomcheck.substitute_files(tmp_path / "bom.csv", tmp_path / "design.csv",
                                           alternates)
    from_frames = bomcheck.substitute_frames(bom, design, alternates)
    verdicts = [(r.alternate.mpn, r.verdict) for r in from_frames.results]
    assert verdicts == [("KV-0603-105-16", "rejected"), ("KV-0603-105-50B", "drop-in")]
    assert verdicts == [(r.alternate.mpn, r.verdict) for r in from_files.results]
    assert from_frames.rejected and from_files.rejected
    # Every field agrees but the input paths and hashes (a table has no file).
    strip = ("inputs",)
    assert ({k: v for k, v in from_frames.to_dict().items() if k not in strip}
            == {k: v for k, v in from_files.to_dict().items() if k not in strip})
    assert [i["role"] for i in from_frames.inputs] == ["bom", "design"]


def test_the_cli_calls_only_the_public_api():
    """Issue 12: the command line reaches the stages through ``bomcheck.api`` only; besides it
    the terminal renderer (the CLI is the terminal's edge), the output registry (option names),
    the errors and the CLI's own modules."""
    import ast

    allowed = {"bomcheck", "bomcheck.api", "bomcheck.errors", "bomcheck.render",
               "bomcheck.render.terminal", "bomcheck.render.registry", "bomcheck.cli",
               # the terminal's plain-text pieces: --quiet into a log prints them without rich
               "bomcheck.render.textparts",
               "bomcheck.cli.commands", "bomcheck.cli.config", "bomcheck.cli.options",
               # pyproject.toml is read as every input is: the one reader, within the limits
               "bomcheck.read.reader"}
    for path in sorted((ROOT / "bomcheck" / "cli").glob("*.py")):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom) and node.module == "bomcheck":
                assert all(f"bomcheck.{a.name}" in allowed or a.name == "__version__"
                           for a in node.names), f"{path.name}:{node.lineno}"
            elif isinstance(node, ast.ImportFrom) and node.module.startswith("bomcheck"):
                assert node.module in allowed, f"{path.name}:{node.lineno} imports {node.module}"
            elif isinstance(node, ast.Import):
                assert all(not a.name.startswith("bomcheck") or a.name in allowed
                           for a in node.names), f"{path.name}:{node.lineno}"


def test_api_names_are_the_package_names():
    import bomcheck.api as api

    assert set(api.__all__) <= set(bomcheck.__all__)
    assert set(bomcheck.__all__) - set(api.__all__) == {
        "BomcheckError", "InputError", "STATUS_ORDER", "__version__"}
