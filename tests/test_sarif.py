"""Code-review outputs (bomcheck.render.sarif): SARIF 2.1.0 validated against a schema, and workflow
annotations with the workflow-command escaping."""

from __future__ import annotations

import json
import os
from pathlib import Path

import jsonschema
import pytest

from bomcheck.render.sarif import annotations, sarif_json, sarif_log

ROOT = Path(__file__).resolve().parents[1]
DATA = Path(__file__).resolve().parent / "data"


@pytest.fixture(scope="module")
def report(sample_report_bare):
    # the inputs are named by absolute paths; the outputs name them relative to the working
    # directory at render time (the checkout, as CI runs: ``in_checkout``)
    return sample_report_bare


@pytest.fixture(autouse=True)
def in_checkout(monkeypatch):
    monkeypatch.chdir(ROOT)


@pytest.fixture(scope="module")
def log(report):
    return json.loads(sarif_json(report))


def test_sarif_validates_against_the_derived_schema(log):
    schema = json.loads((DATA / "sarif-2.1.0-derived.schema.json").read_text(encoding="utf-8"))
    jsonschema.Draft7Validator(schema, format_checker=jsonschema.FormatChecker()).validate(log)


def test_sarif_validates_against_the_oasis_schema_when_given(log):
    # The OASIS SARIF 2.1.0 schema (sarif-schema-2.1.0.json) is not vendored: give a copy in
    # BOMCHECK_SARIF_SCHEMA to run this check.
    path = os.environ.get("BOMCHECK_SARIF_SCHEMA")
    if not path or not Path(path).is_file():
        pytest.skip("the OASIS SARIF 2.1.0 schema is not shipped with the tests; set "
                    "BOMCHECK_SARIF_SCHEMA to a copy of sarif-schema-2.1.0.json to validate "
                    "against it")
    schema = json.loads(Path(path).read_text(encoding="utf-8"))
    jsonschema.validators.validator_for(schema)(schema).validate(log)


def test_every_result_names_the_bom_line_rule_and_source(log, report):
    run = log["runs"][0]
    unmatched = [r for r in run["results"] if r["ruleId"] == "design.not_in_bom"]
    results = [r for r in run["results"] if r["ruleId"] != "design.not_in_bom"]
    bad = report.verdicts[report.verdicts["status"] != "pass"]
    assert len(results) == len(bad)  # one result per verdict that is not a pass
    # C99 is on row 17 of the sample design sheet and in no BOM line
    (c99,) = unmatched
    loc = c99["locations"][0]["physicalLocation"]
    assert loc["artifactLocation"]["uri"] == "sample_boms/bw7-design.csv"
    assert loc["region"]["startLine"] == 17
    rules = {r["id"]: r for r in run["tool"]["driver"]["rules"]}
    rows = dict(zip(report.table["refdes"], report.table["row"]))
    for r in results:
        loc = r["locations"][0]
        assert loc["physicalLocation"]["artifactLocation"]["uri"] == \
            "sample_boms/bw7-controller-bom.csv"
        refdes = loc["logicalLocations"][0]["name"]
        assert loc["physicalLocation"]["region"]["startLine"] == rows[refdes]
        assert r["ruleId"] in rules and r["properties"]["source"]
        assert r["level"] == {"fail": "error", "warn": "warning", "nodata": "warning",
                              "waived": "note"}[r["properties"]["status"]]
    # C43 is on BOM line 23 of the sample CSV (its Designator cell reads C43)
    c43 = next(r for r in results if r["locations"][0]["logicalLocations"][0]["name"] == "C43")
    assert c43["locations"][0]["physicalLocation"]["region"]["startLine"] == 23
    lines = (ROOT / "sample_boms" / "bw7-controller-bom.csv").read_text(
        encoding="utf-8").splitlines()
    assert ",C43," in lines[23 - 1]
    assert run["artifacts"][0]["hashes"]["sha-256"] == report.inputs[0]["sha256"]


def test_results_are_worst_first(log):
    levels = [r["level"] for r in log["runs"][0]["results"]]
    assert levels == sorted(levels, key=["error", "warning", "note"].index)


def test_annotations_one_line_per_problem_and_escaped(report):
    lines = annotations(report)
    v = report.verdicts
    assert len(lines) == int(v["status"].isin(["fail", "warn", "nodata"]).sum()) + len(
        report.design_unmatched)
    assert sum(line.startswith("::error ") for line in lines) == int((v["status"] == "fail").sum())
    first = lines[0]
    assert first.startswith("::error file=sample_boms/bw7-controller-bom.csv,line=23,title=")
    # workflow commands: '%' in a message is %25 (the messages carry "96 %")
    assert all("\n" not in line for line in lines)
    assert any("%25" in line for line in lines)


def test_annotation_escaping_of_properties_and_data():
    from bomcheck.render import sarif

    # workflow-command rules: data escapes % CR LF; property values also ':' and ','
    assert sarif._escape_data("a%b\r\nc") == "a%25b%0D%0Ac"
    assert sarif._escape_property("x:y,z%") == "x%3Ay%2Cz%25"


def test_sarif_uri_keeps_bytes_of_a_non_utf8_name():
    from bomcheck.render import sarif

    name = os.fsdecode(b"bom r\xe9v.csv")
    assert sarif._uri(name) == "bom%20r%E9v.csv"  # RFC 3986 percent-encoding of the bytes
    assert sarif_log.__doc__


def test_the_derived_schema_rejects_what_sarif_does_not_allow(log):
    import copy

    schema = json.loads((DATA / "sarif-2.1.0-derived.schema.json").read_text(encoding="utf-8"))
    validator = jsonschema.Draft7Validator(schema)
    for path, bad in ((("runs", 0, "results", 0), {"severity": "high"}),     # not a SARIF key
                      (("runs", 0, "results", 0), {"level": "fatal"}),       # not a level
                      (("runs", 0, "results", 0, "locations", 0, "physicalLocation", "region"),
                       {"startLine": 0})):                                   # lines start at 1
        broken = copy.deepcopy(log)
        node = broken
        for key in path:
            node = node[key]
        node.update(bad)
        assert not validator.is_valid(broken), bad
