"""Extending bomcheck: a new metric and a new output format each reach every output through the
registries, touching at most three files. Each case runs in its own process, where the one-file
edits are made before the package is used (as editing the file would)."""

from __future__ import annotations

import json
import os
import subprocess
import sys
import textwrap

from conftest import ROOT, SAMPLE_BOM, SAMPLE_DESIGN

# The three edits of a new metric: (1) vocabulary.py, one Metric; (2) stress/placement.py, its
# column; (3) a rule file, one [[rule]] on it. Nothing in read/, parse/, evaluate/, report/ or
# render/ changes.
NEW_METRIC = textwrap.dedent('''
    import json, sys
    import numpy as np
    from bomcheck import vocabulary
    from bomcheck.vocabulary import Metric

    # (1) vocabulary.py
    vocabulary.METRICS["ripple_share"] = Metric(
        "ripple_share", "dimensionless", "", "ripple peak / applied peak voltage",
        ("v_ripple_pk", "applied_peak_v"), True, "{v_ripple_pk:V} ripple / {applied_peak_v:V} "
        "peak = ", family="ripple", label="ripple share")

    # (2) stress/placement.py
    from bomcheck.stress import placement
    _compute = placement.compute
    def compute(table, data):
        out = _compute(table, data)
        ripple = out["v_ripple_pk"].to_numpy(float) if "v_ripple_pk" in out else np.nan
        out["ripple_share"] = ripple / out["applied_peak_v"].to_numpy(float)
        return out
    placement.compute = compute

    import bomcheck
    from bomcheck import api
    bom, design, rules, out = sys.argv[1:5]
    report = bomcheck.audit_files(bom, design, rules=(rules,))
    for name, suffix in (("json", "json"), ("xlsx", "xlsx"), ("markdown", "md"), ("html", "html")):
        bomcheck.write(report, name, f"{out}/report.{suffix}")
''')

# (3) a rule file: one rule on the new metric (a user's file extends a shipped set; a shipped
# set would carry it in its own TOML).
RULE = textwrap.dedent('''
    [ruleset]
    name = "with-ripple-share"
    title = "Industrial set and a ripple-share rule"
    version = "1.0"
    extends = "industrial"

    [[rule]]
    id = "X-RIPPLE-SHARE"
    title = "ripple at most 2 % of the applied peak"
    applies = { technology = ["ceramic"] }
    metric = "ripple_share"
    check = "max"
    fail = "2 %"
    severity = "fail"
    source = "an invented limit for this test (not a published figure)"
    confidence = "uncertain"
    rationale = "demonstrates a new metric end to end"
    examples = [
      { given = { ripple_share = 0.01 }, expect = "pass" },
      { given = { ripple_share = 0.05 }, expect = "fail" },
    ]
''')


def test_a_new_metric_reaches_every_output_from_the_registry(tmp_path):
    (tmp_path / "rules.toml").write_text(RULE, encoding="utf-8")
    run = subprocess.run([sys.executable, "-c", NEW_METRIC, str(SAMPLE_BOM), str(SAMPLE_DESIGN),
                          str(tmp_path / "rules.toml"), str(tmp_path)],
                         capture_output=True, text=True, cwd=ROOT)
    assert run.returncode == 0, run.stderr[-2000:]
    report = json.loads((tmp_path / "report.json").read_text(encoding="utf-8"))
    ruled = [p for p in report["placements"] if "ripple_share" in (p.get("metrics") or {})]
    assert ruled, "the JSON report carries the new metric where its rule gave a verdict"
    verdict_rules = {v.get("rule") for p in ruled for v in p.get("verdicts", [])}
    assert "X-RIPPLE-SHARE" in verdict_rules
    import openpyxl

    sheet = openpyxl.load_workbook(tmp_path / "report.xlsx")["Placements"]
    headers = [c.value for c in next(sheet.iter_rows(max_row=1))]
    assert any(h and str(h).startswith("ripple share") for h in headers), headers
    html = (tmp_path / "report.html").read_text(encoding="utf-8")
    assert "X-RIPPLE-SHARE" in html


# The edits of a new output format: (1) its renderer module in render/ (here a module on the
# path, standing for render/tsv.py); (2) one Output entry in render/registry.py. The CLI option
# (`--tsv OUT`), the [tool.bomcheck] key and `bomcheck.write(report, "tsv", path)` follow.
RENDERER = textwrap.dedent('''
    """A TSV of each placement's designator and status (the test's new output)."""
    from bomcheck.render.outfiles import write_text

    def write_tsv(report, path, context):
        rows = [f"{r}\\t{s}" for r, s in zip(report.table["refdes"], report.table["status"])]
        write_text(path, "refdes\\tstatus\\n" + "\\n".join(rows) + "\\n")
''')
NEW_OUTPUT = textwrap.dedent('''
    import sys
    from bomcheck.render import registry

    # (2) render/registry.py: one entry
    registry.OUTPUTS["tsv"] = registry.Output("tsv", "file", "OUT", "write a TSV of statuses",
                                              "tsv_renderer:write_tsv")
    from bomcheck.cli.main import main
    sys.exit(main(sys.argv[1:]))
''')


def test_a_new_output_format_is_one_module_and_one_registry_entry(tmp_path):
    (tmp_path / "tsv_renderer.py").write_text(RENDERER, encoding="utf-8")  # (1) the renderer
    out = tmp_path / "statuses.tsv"
    run = subprocess.run([sys.executable, "-c", NEW_OUTPUT, "audit", str(SAMPLE_BOM), "--design",
                          str(SAMPLE_DESIGN), "--no-config", "--quiet", "--tsv", str(out)],
                         capture_output=True, text=True, cwd=ROOT,
                         env={**os.environ, "PYTHONPATH": str(tmp_path)})
    assert run.returncode == 1, run.stderr[-2000:]  # the sample has findings
    lines = out.read_text(encoding="utf-8").splitlines()
    assert lines[0] == "refdes\tstatus" and len(lines) > 60
    assert {line.split("\t")[1] for line in lines[1:]} >= {"pass", "fail"}
