"""Where-used queries (bomcheck.report.whereused, `bomcheck where-used`): every placement of one
part number in a single or combined JSON report."""

import csv
import io
import json

import pytest
from batch_boards import boards  # noqa: F401 (a fixture)
from batch_boards import batch

from bomcheck.cli.main import main
from bomcheck.errors import InputError
from bomcheck.report.whereused import Use, normalise_mpn, where_used


# Moved from test_batch.py.
def test_where_used_lists_every_product_and_placement(boards, capsys):
    assert batch("--json", "all.json", "--quiet") == 1
    uses = where_used(json.loads((boards / "all.json").read_text(encoding="utf-8")),
                      "kv-0603-105-16")
    assert [(u.product, u.refdes) for u in uses] == [
        ("Tarn-A", "C2"), ("Tarn-B", "C7"), ("Tarn-B", "C9")]
    c7 = uses[1]
    # voltage ratio = applied peak / rated voltage (DEVELOPERS.md vocabulary): 15 V / 16 V
    assert c7.voltage_ratio == pytest.approx(15 / 16)
    # EIA-198 class II: X7R upper category temperature +125 degC; ambient 40 degC, no rise
    assert c7.temp_margin_c == pytest.approx(125 - 40)
    assert c7.status == "fail" and c7.problems
    assert (uses[0].status, uses[0].problems) == ("pass", ())
    capsys.readouterr()
    assert main(["where-used", "all.json", "KV-0603-105-16", "--json", "uses.json"]) == 0
    assert "Tarn-B" in capsys.readouterr().out
    listed = json.loads((boards / "uses.json").read_text(encoding="utf-8"))
    assert [u["refdes"] for u in listed] == ["C2", "C7", "C9"]
    assert main(["where-used", "all.json", "NO-SUCH-PART"]) == 1


def test_where_used_on_a_single_report_and_an_old_one(boards, capsys):
    assert main(["audit", "Tarn-B.csv", "--design", "Tarn-B-design.csv", "--json", "b.json",
                 "--quiet", "--no-config"]) == 1
    capsys.readouterr()
    assert main(["where-used", "b.json", " kv-0603-105-16 ", "--csv", "-"]) == 0
    rows = list(csv.DictReader(io.StringIO(capsys.readouterr().out)))
    assert [(r["product"], r["refdes"], r["status"]) for r in rows] == [
        ("", "C7", "fail"), ("", "C9", "pass")]
    old = {"placements": [{"refdes": "C1", "findings": [], "checks": []}]}
    (boards / "old.json").write_text(json.dumps(old), encoding="utf-8")
    assert main(["where-used", "old.json", "X"]) == 2
    assert "schema version 2" in capsys.readouterr().err


def test_mpns_compare_without_case_and_spaces():
    assert normalise_mpn(" kv-0603 105 ") == normalise_mpn("KV-0603105")


def _placement(refdes, mpn, status="pass", **metrics):
    verdicts = [{"rule": "R-V", "status": status}]
    return {"refdes": refdes, "row": 2, "mpn": mpn, "text": f"{mpn} | CAP", "status": status,
            "metrics": metrics, "verdicts": verdicts}


def test_designators_come_in_natural_order_and_other_parts_are_left_out():
    # natural order (common practice for designators): C2 before C10
    report = {"schema_version": 2, "placements": [
        _placement("C10", "KV-1"), _placement("C2", "kv-1", voltage_ratio=0.5),
        _placement("C3", "KV-2")]}
    uses = where_used(report, "KV-1")
    assert [u.refdes for u in uses] == ["C2", "C10"]
    assert (uses[0].product, uses[0].voltage_ratio, uses[0].temp_margin_c) == (None, 0.5, None)


def test_problems_are_the_rules_not_passing_and_to_dict_is_json_ready():
    report = {"schema_version": 2, "placements": [_placement("C1", "KV-1", "warn")]}
    (use,) = where_used(report, "KV-1")
    assert use.problems == ("R-V",) and use.status == "warn"
    d = use.to_dict()
    assert d["problems"] == ["R-V"] and json.loads(json.dumps(d)) == d
    assert set(d) == {f for f in Use.__dataclass_fields__}


def test_not_a_report_is_an_input_error():
    with pytest.raises(InputError, match="not a bomcheck JSON report"):
        where_used(["not", "a", "report"], "KV-1")
