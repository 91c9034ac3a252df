"""Approved deviations: reading waiver files and applying them to verdicts (bomcheck.evaluate.waivers)."""

import datetime as dt
import json
from importlib.resources import files

import jsonschema
import pandas as pd
import pytest

from bomcheck.pipeline.audit import AuditOptions, run_audit
from bomcheck.errors import InputError
from bomcheck.evaluate.waivers import Waiver, WaiverFinding, apply_waivers, load_waivers, waive_verdicts

TODAY = dt.date(2026, 12, 1)
TEXT = "KV-0603-105-16 | CAP CER 1UF 16V X7R"


def placements():
    return pd.DataFrame({"refdes": ["C1", "C2", "C3"], "text": [TEXT, TEXT, "KV-0603-104-50"]})


def verdicts():
    rows = [
        (0, "C1", "R-V", "fail", "C1: ratio 94 % > 70 % limit"),
        (0, "C1", "R-T", "fail", "C1: margin -5 degC < 10 degC limit"),
        (1, "C2", "R-V", "fail", "C2: ratio 94 % > 70 % limit"),
        (2, "C3", "R-V", "pass", "C3: ratio 7 % <= 70 % limit"),
    ]
    return pd.DataFrame(rows, columns=["pidx", "refdes", "rule_id", "status", "message"])


def waiver(**kw) -> Waiver:
    base = dict(row=1, refdes="C1", rule="R-V", reason="qualified by test report TR-7",
                approved_by="R. Okafor", expires=dt.date(2027, 6, 30))
    return Waiver(**{**base, **kw})


def statuses(v) -> dict:
    return {(r, rule): s for r, rule, s in zip(v["refdes"], v["rule_id"], v["status"])}


def test_valid_waiver_waives_only_its_rule_and_designator():
    v, found = waive_verdicts(verdicts(), placements(), [waiver()], TODAY)
    assert statuses(v) == {
        ("C1", "R-V"): "waived",
        ("C1", "R-T"): "fail",   # the other rule on the same part still fails
        ("C2", "R-V"): "fail",   # the other designator still fails
        ("C3", "R-V"): "pass",
    }
    assert v.loc[0, "waived_from"] == "fail"
    assert v.loc[0, "message"] == ("C1: ratio 94 % > 70 % limit; waived (was fail) by R. Okafor "
                                   "until 2027-06-30: qualified by test report TR-7")
    assert v["waived_from"].isna().sum() == 3
    assert found == (WaiverFinding(
        row=1, code="applied", refdes="C1", rule="R-V", placements=("C1",),
        message="waiver 1 (C1 R-V) waives 1 verdict on C1: qualified by test report TR-7 "
                "(approved by R. Okafor, expires 2027-06-30)",
        reason="qualified by test report TR-7", approved_by="R. Okafor", expires="2027-06-30"),)


@pytest.mark.parametrize("today, code, status", [
    (dt.date(2027, 6, 30), "applied", "waived"),   # valid through its expiry day
    (dt.date(2027, 7, 1), "expired", "fail"),
])
def test_expiry_with_a_fixed_today(today, code, status):
    v, found = waive_verdicts(verdicts(), placements(), [waiver()], today)
    assert [f.code for f in found] == [code]
    assert statuses(v)[("C1", "R-V")] == status
    if code == "expired":
        assert found[0].message == "waiver 1 (C1 R-V) expired on 2027-06-30; its verdicts stand"


@pytest.mark.parametrize("kw, message", [
    ({"refdes": "C99"}, "waiver 1 (C99 R-V) matches no fitted placement of the BOM"),
    ({"rule": "R-X"}, "waiver 1 (C1 R-X) rule R-X gave no verdict on C1"),
    ({"refdes": "C3"}, "waiver 1 (C3 R-V): no warn, nodata or fail verdict to waive; the "
                       "waiver is no longer needed"),
], ids=["no-placement", "no-such-rule", "passes-anyway"])
def test_unused_waivers_are_reported(kw, message):
    v, found = waive_verdicts(verdicts(), placements(), [waiver(**kw)], TODAY)
    assert [(f.code, f.message) for f in found] == [("unused", message)]
    assert statuses(v) == statuses(verdicts())


def test_changed_part_is_not_waived():
    w = waiver(refdes="C1-C2", bom_text="KV-0603-105-25 | CAP CER 1UF 25V X7R")
    v, found = waive_verdicts(verdicts(), placements(), [w], TODAY)
    assert statuses(v) == statuses(verdicts())
    assert [(f.code, f.placements) for f in found] == [("bom_changed", ("C1", "C2"))]
    assert "not waived (the part changed)" in found[0].message


def test_bom_text_compared_without_case_and_spacing():
    w = waiver(bom_text="  kv-0603-105-16 |  CAP CER 1uF 16V  X7R ")
    v, found = waive_verdicts(verdicts(), placements(), [w], TODAY)
    assert statuses(v)[("C1", "R-V")] == "waived" and found[0].code == "applied"


def test_part_changed_on_one_designator_only():
    table = placements()
    table.loc[1, "text"] = "KV-0603-105-25 | CAP CER 1UF 25V X7R"
    v, found = waive_verdicts(verdicts(), table, [waiver(refdes="C1, C2", bom_text=TEXT)], TODAY)
    assert statuses(v)[("C1", "R-V")] == "waived" and statuses(v)[("C2", "R-V")] == "fail"
    assert sorted((f.code, f.placements) for f in found) == [("applied", ("C1",)),
                                                             ("bom_changed", ("C2",))]


@pytest.mark.parametrize("refdes", ["C1-C2", "C*", "c?", "C1, C2", "C1 C2*"])
def test_ranges_and_patterns(refdes):
    v, _ = waive_verdicts(verdicts(), placements(), [waiver(refdes=refdes)], TODAY)
    assert statuses(v)[("C1", "R-V")] == statuses(v)[("C2", "R-V")] == "waived"
    assert statuses(v)[("C1", "R-T")] == "fail"
    assert statuses(v)[("C3", "R-V")] == "pass"  # a pass is never turned into waived


def test_pattern_does_not_reach_other_prefixes():
    v = pd.DataFrame([(0, "C1", "R-V", "fail", "m"), (1, "CR1", "R-V", "fail", "m")],
                     columns=["pidx", "refdes", "rule_id", "status", "message"])
    table = pd.DataFrame({"refdes": ["C1", "CR1"], "text": ["a", "b"]})
    out, _ = waive_verdicts(v, table, [waiver(refdes="C1*")], TODAY)
    assert list(out["status"]) == ["waived", "fail"]


# --------------------------------------------------------------------------------------------
# Files

TOML = """
[[waiver]]
refdes = "C1"
rule = "R-V"
reason = "qualified by test report TR-7"
approved_by = "R. Okafor"
expires = 2027-06-30

[[waiver]]
designator = "C10-C12"
rule_id = "R-T"
reason = "hot spot measured at 71 degC"
approved-by = "J. Brannock"
expires = "2027-01-15"
bom_text = "KV-1206-106-25"
"""

CSV = """# approved deviations for board rev C
refdes,rule,reason,approved_by,expires,bom_text
C1,R-V,qualified by test report TR-7,R. Okafor,2027-06-30,
C10-C12,R-T,hot spot measured at 71 degC,J. Brannock,2027-01-15,KV-1206-106-25
"""


def test_toml_and_csv_files_read_alike(tmp_path):
    (tmp_path / "w.toml").write_text(TOML, encoding="utf-8")
    (tmp_path / "w.csv").write_text(CSV, encoding="utf-8")
    toml_w = load_waivers(tmp_path / "w.toml").waivers
    csv_w = load_waivers(tmp_path / "w.csv").waivers
    strip = [(w.refdes, w.rule, w.reason, w.approved_by, w.expires, w.bom_text) for w in toml_w]
    assert strip == [(w.refdes, w.rule, w.reason, w.approved_by, w.expires, w.bom_text)
                     for w in csv_w]
    assert strip[1] == ("C10-C12", "R-T", "hot spot measured at 71 degC", "J. Brannock",
                        dt.date(2027, 1, 15), "KV-1206-106-25")
    assert [w.row for w in toml_w] == [1, 2] and [w.row for w in csv_w] == [3, 4]  # CSV lines


@pytest.mark.parametrize("line, needle", [
    ("C1,R-V,reason,,2027-06-30", "waiver without approved_by"),
    ("C1,R-V,reason,R. Okafor,30/06/2027", "expiry is not a date"),
    ("C5-C2,R-V,reason,R. Okafor,2027-06-30", "runs backwards"),
    ("see note,R-V,reason,R. Okafor,2027-06-30", "not a designator"),
])
def test_bad_csv_entries_name_file_row_and_column(tmp_path, line, needle):
    path = tmp_path / "w.csv"
    path.write_text("refdes,rule,reason,approved_by,expires\n" + line + "\n", encoding="utf-8")
    with pytest.raises(InputError) as info:
        load_waivers(path)
    text = str(info.value)
    assert needle in text and str(path) in text and "row 2" in text


def test_unknown_toml_key_is_an_error(tmp_path):
    path = tmp_path / "w.toml"
    path.write_text(TOML.replace("expires = 2027-06-30", "expiry = 2027-06-30"), encoding="utf-8")
    with pytest.raises(InputError, match="unknown waiver key"):
        load_waivers(path)


# --------------------------------------------------------------------------------------------
# Through the audit

BOM = """Designator,Qty,Value,Description,Manufacturer Part Number
C1,1,1uF,CAP CER 1UF 16V 10% X7R 0603,KV-0603-105-16
C2,1,1uF,CAP CER 1UF 16V 10% X7R 0603,KV-0603-105-16
C3,1,100nF,CAP CER 0.1UF 50V 10% X7R 0603,KV-0603-104-50
"""
DESIGN = """refdes,v_dc [V],t_ambient_c [°C],c_min_f
C1,15,40,10 nF
C2,15,40,10 nF
C3,3.3,40,10 nF
"""


def audit_files(tmp_path):
    (tmp_path / "bom.csv").write_text(BOM, encoding="utf-8")
    (tmp_path / "design.csv").write_text(DESIGN, encoding="utf-8")
    return str(tmp_path / "bom.csv"), str(tmp_path / "design.csv")


def test_audit_applies_waivers_and_reports_them(tmp_path):
    bom, design = audit_files(tmp_path)
    plain = run_audit(bom, design, AuditOptions())
    v = plain.verdicts
    # 15 V on a 16 V ceramic fails every shipped ceramic voltage rule (common practice)
    problems = v[(v["refdes"] == "C1") & (v["status"] != "pass")]
    assert "fail" in set(problems["status"])
    rule = problems.loc[problems["status"] == "fail", "rule_id"].iloc[0]
    lines = [f"C1,{r},qualified by test,R. Okafor,2027-06-30" for r in problems["rule_id"]]
    lines.append(f"C1,{rule},old approval,R. Okafor,2025-01-01")
    path = tmp_path / "w.csv"
    path.write_text("refdes,rule,reason,approved_by,expires\n" + "\n".join(lines) + "\n",
                    encoding="utf-8")
    report = run_audit(bom, design, AuditOptions(waivers=str(path), today=TODAY))
    v = report.verdicts
    assert set(v.loc[v["status"] == "waived", "refdes"]) == {"C1"}
    assert statuses(v)[("C2", rule)] == "fail"   # the other designator still fails
    status = report.table.set_index("refdes")["status"]
    assert (status["C1"], status["C2"]) == ("waived", "fail")
    assert (report.totals["waived"], report.totals["fail"]) == (1, plain.totals["fail"] - 1)
    assert [f.code for f in report.waiver_findings] == ["applied"] * len(problems) + ["expired"]
    assert report.inputs[-1]["role"] == "waivers"
    data = json.loads(report.to_json())
    assert [w["code"] for w in data["waivers"]][-1] == "expired"
    c1 = next(p for p in data["placements"] if p["refdes"] == "C1")
    finding = next(f for f in c1["verdicts"] if f["rule"] == rule)
    assert finding["status"] == "waived" and finding["waived_from"] == "fail"
    assert "qualified by test" in finding["message"]
    # The parts of the report schema that waivers add (the whole report is validated where the
    # report's own tests live).
    schema = json.loads(files("bomcheck.schemas").joinpath("report.schema.json").read_text())
    for part, value in (("waivers", data["waivers"]), ("totals", data["totals"])):
        jsonschema.validate(value, {**schema["properties"][part], "$defs": schema["$defs"]})
    jsonschema.validate(finding, {"$ref": "#/$defs/verdict", "$defs": schema["$defs"]})


def test_apply_waivers_recomputes_placement_status_and_totals(tmp_path):
    bom, design = audit_files(tmp_path)
    report = run_audit(bom, design, AuditOptions())
    v = report.verdicts
    problems = v[(v["refdes"] == "C2") & v["status"].isin(["warn", "nodata", "fail"])]
    waivers = [waiver(row=i + 1, refdes="C2", rule=r) for i, r in enumerate(problems["rule_id"])]
    out = apply_waivers(report, waivers, TODAY)
    assert out.table.set_index("refdes").at["C2", "status"] == "waived"
    assert out.totals["waived"] == report.totals["waived"] + 1
    assert out.totals["fail"] == report.totals["fail"] - 1
    assert report.table.set_index("refdes").at["C2", "status"] == "fail"  # the input is untouched


def test_csv_waivers_go_through_the_shared_table_reader(tmp_path):
    # Lone CR line ends, a 200 KB reason and a semicolon export: what the BOM reader reads, the
    # waiver reader reads (issue 10).
    reason = "measured " + "r" * 200_000
    path = tmp_path / "w.csv"
    path.write_bytes((f"# comment\rrefdes;rule;reason;approved_by;expires\r"
                      f"C1;R-V;\"{reason}\";R. Okafor;2027-06-30\r# done\r").encode("utf-8"))
    (w,) = load_waivers(path).waivers
    assert (w.row, w.refdes, w.rule, w.reason) == (3, "C1", "R-V", reason)


def test_waiver_with_a_100_kb_garbage_designator_fails_fast(tmp_path):
    import time

    path = tmp_path / "w.csv"
    path.write_text("refdes,rule,reason,approved_by,expires\n\"" + ("C1" + "x" * 9 + "-") * 9000
                    + "\",R-V,why,R. Okafor,2027-06-30\n", encoding="utf-8")
    t0 = time.perf_counter()
    with pytest.raises(InputError, match="row 2"):
        load_waivers(path)
    assert time.perf_counter() - t0 < 2.0  # quadratic patterns took minutes (issue 10)
