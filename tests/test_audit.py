"""The whole pipeline on the shipped sample board and on small boards written by the tests."""

import json
from importlib import resources
from pathlib import Path

import jsonschema
import numpy as np
import pandas as pd
import pytest

from bomcheck.evaluate.rules import DEFAULT_RULESET
from bomcheck.pipeline.audit import AuditOptions, _positions_of, _verdict_order, run_audit
from bomcheck.errors import InputError

ROOT = Path(__file__).resolve().parents[1]
BOM = ROOT / "sample_boms" / "bw7-controller-bom.csv"
DESIGN = ROOT / "sample_boms" / "bw7-design.csv"


@pytest.fixture(scope="module")
def sample(sample_report_for):
    """The sample board under the default rule set, without its parts data (shared)."""
    return sample_report_for(DEFAULT_RULESET, parts=False)


def _verdicts(report, refdes):
    v = report.verdicts
    return {r: s for r, s in zip(v.loc[v.refdes == refdes, "rule_id"], v.loc[v.refdes == refdes, "status"])}


def test_passing_messages_are_rendered_where_printed(sample):
    # The report keeps rule verdicts without their message until an output prints them:
    # the governing verdict of every placement, the findings, and any verdicts an output asks
    # for.
    v = sample.verdicts
    passing = v[v.status == "pass"]
    assert len(passing) and passing.message.isna().all()
    problems = sample.verdicts_worst_first()
    assert len(problems) and problems.message.notna().all()
    assert sample.with_messages(v, passes=False)[v.status != "pass"].message.notna().all()
    gov = sample.governing()
    assert gov.message.notna().all() and len(gov) == len(sample.table)
    filled = sample.with_messages(passing)
    assert filled.message.notna().all()
    assert all(m.startswith(f"{r}: ") for m, r in zip(filled.message, filled.refdes))
    assert filled.drop(columns="message").equals(passing.drop(columns="message"))


def test_nothing_is_lost(sample):
    t = sample.totals
    assert t["rows_read"] == t["capacitor_rows"] + t["non_capacitor_rows"] + t["unreadable_rows"]
    assert t["placements"] == t["fitted"] + t["not_fitted"]
    assert t["audited"] == t["fitted"] == len(sample.table)
    assert sum(t[s] for s in ("pass", "waived", "warn", "nodata", "fail") if s in t) == t["audited"]
    # Every fitted placement has a verdict and a status; not-audited rows each carry a reason.
    assert set(sample.verdicts["pidx"]) == set(sample.table.index)
    assert all(d["reason"] for d in sample.not_audited())
    assert len(sample.not_audited()) == t["not_fitted"] + t["non_capacitor_rows"] + t["unreadable_rows"]


def test_sample_violations_are_found(sample):
    # SRC derating sheet (industrial set): ceramic at most 70 % of rated; 5 V +3 % + 50 mV on 6.3 V.
    assert _verdicts(sample, "C31")["IND-CER-V"] == "fail"
    # X5R is rated to +85 degC (EIA-198 '5'); the part sits at 95 degC.
    assert _verdicts(sample, "C43")["IND-CER-TM"] == "fail"
    # The value "TBD" cannot be read: no data, never a pass.
    assert _verdicts(sample, "C51")["IND-CER-V"] == "nodata"
    # C52 was added to the BOM but not to the design sheet.
    assert _verdicts(sample, "C52")["design.missing"] == "nodata"
    # Qty 3 against C53-C56.
    assert _verdicts(sample, "C53")["bom.qty_mismatch"] == "warn"
    # C99 is in the design sheet but not in the BOM.
    assert [d["refdes"] for d in sample.design_unmatched] == ["C99"]
    assert sample.status == "fail"


def test_generic_dc_bias_finding_is_at_most_a_warning(sample):
    # 10 uF 6.3 V X5R at 5.2 V with only the generic DC-bias curve: a warning that says so.
    v = sample.with_messages(sample.verdicts)
    row = v[(v.refdes == "C31") & (v.rule_id == "IND-CMARGIN")].iloc[0]
    assert row.status == "warn" and "generic typical data" in row.message


def test_strict_set_tantalum_curve_on_the_sample(sample_report_for):
    # NASA EEE-INST-002 C1 Table 4: solid tantalum 0.50 to 70 degC, linear to 0.30 at 110 degC;
    # at 85 degC the limit is 0.50 - (15/40) x 0.20 = 0.425 (derived). C14: 12.6 V + 0.15 V on 25 V.
    report = sample_report_for("strict", parts=False)
    v = report.verdicts
    row = v[(v.refdes == "C14") & (v.rule_id == "EEE-TAN-V")].iloc[0]
    assert row.status == "fail"
    assert row.limit == pytest.approx(0.425)
    assert row.value == pytest.approx(12.75 / 25)
    assert "EEE-INST-002" in row.source


def test_json_report_validates_and_is_byte_identical(sample):
    schema = json.loads(resources.files("bomcheck.schemas").joinpath("report.schema.json").read_text())
    data = json.loads(sample.to_json())
    jsonschema.validate(data, schema)
    assert sample.to_json() == run_audit(str(BOM), str(DESIGN)).to_json()
    assert [i["role"] for i in data["inputs"]] == ["bom", "design"]
    c31 = next(p for p in data["placements"] if p["refdes"] == "C31")
    assert c31["status"] == "fail"
    assert {"voltage_ratio", "applied_peak_v", "t_operating_c", "temp_margin_c", "c_worst_f",
            "c_margin"} <= set(c31["metrics"])
    problems = [v for v in c31["verdicts"] if v["status"] != "pass"]
    assert {v["rule"] for v in problems} >= {"IND-CER-V", "IND-CMARGIN"}
    assert all(v["message"].startswith("C31: ") for v in problems)
    # Schema 2: a passing verdict has no message, and its source is the rule's in "rules".
    passes = [v for v in c31["verdicts"] if v["status"] == "pass"]
    assert passes and all("message" not in v and "source" not in v for v in passes)
    assert all(data["rules"][v["rule"]]["source"] for v in c31["verdicts"])


def write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return str(p)


def test_small_board_end_to_end(tmp_path):
    bom = write(tmp_path, "bom.csv", "Designator,Qty,Value,Description\n"
                "C1,1,100nF,CAP CER 0.1UF 50V 10% X7R 0603\n"
                "C2 C3,2,10uF,CAP CER 10UF 16V 10% X5R 0805\n"
                "R1,1,4K7,RES 4K7 1% 0402\n")
    design = write(tmp_path, "design.csv", "refdes,v_dc,t_ambient_c,c_min_f\n"
                   "*,,40 degC,none\nC1,30 V,,\nC2-C3,12000 mV,,\n")
    report = run_audit(bom, design)
    status = dict(zip(report.table.refdes, report.table.status))
    # SRC sheet, ceramic 70 %: 30 V on 50 V = 60 % passes; 12 V on 16 V = 75 % fails.
    assert status == {"C1": "pass", "C2": "fail", "C3": "fail"}
    assert report.totals["non_capacitor_rows"] == 1


def test_wrong_dimension_in_design_is_an_input_error(tmp_path):
    bom = write(tmp_path, "bom.csv", "Designator,Value,Description\nC1,100nF,CAP CER 50V X7R\n")
    design = write(tmp_path, "design.csv", "refdes,v_dc,t_ambient_c\nC1,5 A,40\n")
    with pytest.raises(InputError) as e:
        run_audit(bom, design)
    text = str(e.value)
    assert "design.csv" in text and "row 2" in text and "v_dc" in text


def test_no_design_sheet_is_no_data_everywhere(tmp_path):
    bom = write(tmp_path, "bom.csv", "Designator,Value,Description\nC1,100nF,CAP CER 50V X7R\n")
    report = run_audit(bom, None)
    assert report.table.status.tolist() == ["nodata"]
    assert report.status == "nodata"


def test_series_stack_need_is_met_by_the_stack_not_each_member(sample):
    # Series combination (textbook): two 220 uF -20 % members give 176 uF / 2 = 88 uF, against
    # the DC link's stated 150 uF need; each member alone (176 uF) would have passed.
    v = sample.verdicts
    row = v[(v.refdes == "C4") & (v.rule_id == "IND-BANK-C")].iloc[0]
    assert row.status == "fail"
    assert row.value == pytest.approx(88e-6 / 150e-6)
    assert "IND-CMARGIN" not in set(v.loc[v.refdes == "C4", "rule_id"])


def test_high_voltage_node_without_discharge_path_is_no_data(sample):
    # IEC 60204-1 (secondary): above 60 V a discharge path must be shown; C6 sits on 400 V with
    # no bleeder stated, so the caution rule cannot be judged: no data, never silence.
    v = sample.with_messages(sample.verdicts)
    row = v[(v.refdes == "C6") & (v.rule_id == "IND-SAFE-60204")].iloc[0]
    assert row.status == "nodata" and "discharge resistance" in row.message
    # The 3.3 V rail is below 60 V: the rule does not apply there.
    assert not ((v.refdes == "C21") & (v.rule_id == "IND-SAFE-60204")).any()


def test_ripple_rating_at_another_frequency_is_not_a_firm_pass(tmp_path):
    # Common practice: an electrolytic's rated ripple current holds at its rated frequency only;
    # with no frequency multiplier in the parts data the verdict rests on an assumption.
    bom = write(tmp_path, "bom.csv", "Designator,Value,Description,MPN\n"
                "C1,470uF,CAP ALU ELEC 470UF 35V 105C 10x16,RV-AE-477-35\n")
    parts = write(tmp_path, "parts.csv", "mpn,ripple_current,ripple_freq,esr,life,life_temp\n"
                  "RV-AE-477-35,1.0 A,100 kHz,0.05 ohm,5000 h,105 degC\n")
    design = write(tmp_path, "design.csv", "refdes,v_dc,t_ambient_c,c_min_f,i_ripple_a,f_ripple_hz\n"
                   "C1,24 V,40 degC,none,0.9 A,120 Hz\n")
    report = run_audit(bom, design, AuditOptions(parts=parts))
    v = report.with_messages(report.verdicts)
    row = v[v.rule_id == "IND-RIPPLE"].iloc[0]
    assert row.value == pytest.approx(0.9)
    assert "generic typical data" in row.message


def test_series_member_of_unknown_capacitance_gives_no_data(tmp_path):
    # Capacitive division needs every member's capacitance; one unknown leaves every share
    # unknown, so the voltage verdicts are no data rather than the DC share alone.
    bom = write(tmp_path, "bom.csv", "Designator,Value,Description\n"
                "C1,220uF,CAP ALU ELEC 220UF 250V 105C\nC2,TBD,CAP ALU ELEC 250V 105C\n")
    design = write(tmp_path, "design.csv",
                   "refdes,members,kind,v_dc,t_ambient_c,c_min_f,r_balance_ohm,r_balance_tol_pct\n"
                   "*,,,,40 degC,none,,\nLINK,\"C1, C2\",series,400 V,,,,\nC1-C2,,,,,,100 kohm,1\n")
    report = run_audit(bom, design)
    v = report.verdicts
    c1 = v[(v.refdes == "C1") & (v.rule_id == "IND-ALE-V")].iloc[0]
    assert c1.status == "nodata"


def test_series_stack_takes_the_board_wide_rail_tolerance(tmp_path):
    # 400 V +5 % = 420 V across 2 x 220 uF +/-20 %: the worst member takes 420 x 264/440 = 252 V
    # (capacitive division, arithmetic); the tolerance comes from the board-wide '*' row.
    bom = write(tmp_path, "bom.csv", "Designator,Value,Description\n"
                "C1,220uF,CAP ALU ELEC 220UF 250V 20% 105C\nC2,220uF,CAP ALU ELEC 220UF 250V 20% 105C\n")
    design = write(tmp_path, "design.csv",
                   "refdes,members,kind,v_dc,v_tol_pct,t_ambient_c,c_min_f\n"
                   "*,,,,5,40 degC,none\nLINK,\"C1, C2\",series,400 V,,,\n")
    report = run_audit(bom, design)
    assert report.table["v_share_cap_v"].tolist() == pytest.approx([252.0, 252.0])


# The audit's verdict merge and finding look-ups are checked against pandas' own stable sort and
# a plain search of every placement (common practice: the same order and rows, found faster).

def test_verdict_order_is_the_stable_sort_by_placement_and_rule_id():
    rng = np.random.default_rng(3)
    ids = np.array(["v.b", "design.missing", "t.a", "v.a", "bom.qty_mismatch"], dtype=object)
    n = 2000
    verdicts = pd.DataFrame({"pidx": rng.integers(0, 300, n),
                             "rule_id": ids[rng.integers(0, len(ids), n)],
                             "status": "pass", "seq": np.arange(n)})
    verdicts.loc[7, "rule_id"] = "".join(["t.", "a"])  # equal text, another object
    want = verdicts.sort_values(["pidx", "rule_id"], kind="stable")
    got = verdicts.take(_verdict_order(verdicts))
    assert got["seq"].tolist() == want["seq"].tolist()


def test_finding_positions_are_every_placement_holding_the_value():
    refdes = np.array(["C1", "C2", "C1", None, "C10", "C1"], dtype=object)
    positions = _positions_of(refdes)
    assert positions("C1").tolist() == [0, 2, 5]
    assert positions("C10").tolist() == [4]
    assert positions("C3").tolist() == []
    rows = _positions_of(np.array([4, 4, 5, 7, 7, 7]))
    assert rows(7).tolist() == [3, 4, 5] and rows(6).tolist() == [] and rows(None).tolist() == []
