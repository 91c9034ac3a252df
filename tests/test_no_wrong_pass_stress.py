"""No wrong pass on the stress, design and substitute side: small invented boards written by each
test, through the command line (fixtures of ``test_no_wrong_pass``); each expected verdict names
its source (a standard's clause, or common practice)."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from bomcheck.evaluate import engine
from bomcheck.evaluate import rules
from bomcheck.parse.design import design_from_table
from bomcheck.substitute import Alternate, run_direct
from conftest import verdicts


def _warnings(report: dict) -> list[str]:
    return [w["message"] for w in report.get("input_warnings", [])]


def test_a_rail_maximum_below_the_dc_value_never_lowers_the_stress(run):
    # common practice: the rail's upper bound is at least |v_dc|; 15 V on a 16 V ceramic is
    # 94 % of rated, above the reliability center sheet's 60 % (severe).
    code, report = run("C1,1,CAP CER 10uF 16V X7R 10%,ZZ-1\n",
                       "refdes,v_dc [V],v_dc_max [V],t_ambient_c [degC],c_min_f\n"
                       "C1,15,0,40,none\n")
    got, status = verdicts(report, "C1")
    assert got["IND-CER-V"]["status"] == "fail" and status == "fail" and code == 1
    assert any("v_dc_max is below v_dc" in w and "row 2" in w for w in _warnings(report))


@pytest.mark.parametrize("design_row, rule", [
    ("C1,300,253,,40", "IND-AC-PEAK"),  # DC plus sqrt(2) x AC: 657.8 V against 438.4 V peak
    ("C1,,253,6000,40", "IND-AC-TRANSIENT"),  # a 6 kV transient against the rated peak
])
def test_ac_rated_parts_are_held_to_their_rated_peak(run, design_row, rule):
    # common practice: an AC rating in rms is a peak of sqrt(2) x rated (NASA EEE-INST-002
    # Section C1 Table 4 note 1 for DC plus peak AC); a transient given is never ignored.
    code, report = run("C1,1,CAP FILM 0.47UF 310VAC X2 PP 10% 110C,ZZ-1\n",
                       "refdes,v_dc [V],v_ac_rms [V],v_transient_pk [V],t_ambient_c [degC],"
                       "c_min_f\n" + design_row + ",none\n")
    got, status = verdicts(report, "C1")
    assert got[rule]["status"] == "fail" and status == "fail" and code == 1


def test_ac_rated_part_within_its_peak_passes_the_peak_check(run):
    # 240 V rms on a 250 V AC film: 339 V peak of 353.6 V rated peak (common practice).
    code, report = run("C1,1,CAP FILM 0.1UF 250VAC PP 10% 110C,ZZ-3\n",
                       "refdes,v_ac_rms [V],t_ambient_c [degC],c_min_f\n"
                       "C1,240,40,none\n")
    got, _ = verdicts(report, "C1")
    assert got["IND-AC-PEAK"]["status"] == "pass"
    assert "IND-AC-TRANSIENT" not in got  # no transient given: nothing to check


@pytest.mark.parametrize("cells, reverse_v", [
    ("2,0,3,", 1.0),  # ripple 3 V peak on 2 V swings to -1 V
    ("2,0,,3", 3 * math.sqrt(2) - 2),  # 3 V rms AC on 2 V swings to -2.24 V
    ("2,,3,", 1.0),  # v_reverse_pk not given: the swing alone already fails (firm)
])
def test_a_swing_below_zero_reverse_biases_a_polarized_part(run, cells, reverse_v):
    # NASA EEE-INST-002 Section C1 Table 4: the peak AC must not reverse-bias a polarized part;
    # System Reliability Center sheet: tantalum reverse at most 2 % of rated.
    code, report = run("C1,1,CAP TANT 100uF 16V 10% 125C,ZZ-1\n",
                       "refdes,v_dc [V],v_reverse_pk [V],v_ripple_pk [V],v_ac_rms [V],"
                       "t_ambient_c [degC],c_min_f\nC1," + cells + ",40,none\n")
    got, status = verdicts(report, "C1")
    assert got["IND-TAN-REV"]["status"] == "fail" and status == "fail" and code == 1
    assert got["IND-TAN-REV"]["value"] == pytest.approx(reverse_v / 16.0)


def test_an_unknown_reverse_voltage_with_no_swing_below_zero_stays_no_data(run):
    _, report = run("C1,1,CAP TANT 100uF 16V 10% 125C,ZZ-1\n",
                    "refdes,v_dc [V],v_ripple_pk [V],t_ambient_c [degC],c_min_f\n"
                    "C1,5,1,40,none\n")
    got, status = verdicts(report, "C1")
    assert got["IND-TAN-REV"]["status"] == "nodata" and status == "nodata"
    assert "v_reverse_pk" in got["IND-TAN-REV"]["message"]


STACK_BOM = '"C1, C2",2,CAP ALU ELEC 100uF 350V 105C 20%,ZZ-1\n'
STACK = ("refdes,members,kind,v_dc [V],t_ambient_c [degC],c_min_f,v_reverse_pk [V],"
         "r_balance_ohm,r_balance_tol_pct [%]\n"
         "LINK1,\"C1, C2\",series,{v},40,none,0,250 kohm,1\n")


@pytest.mark.parametrize("v, expected", [
    # IEC 60384-4 leakage limit as common practice: 0.01 C V = 350 uA for 100 uF 350 V
    (400, "warn"),  # passes with no leakage (68.6 %), not at the limit: warn naming it
    (300, "pass"),  # passes even at the leakage limit (bound)
    (500, "fail"),  # fails with no leakage at all (firm)
])
def test_series_stack_unknown_leakage_is_bounded(run, v, expected):
    _, report = run(STACK_BOM, STACK.format(v=v))
    got, _ = verdicts(report, "C1")
    assert got["IND-ALE-V"]["status"] == expected
    if expected == "warn":
        assert "leakage not given" in got["IND-ALE-V"]["message"]
        assert "350 uA" in got["IND-ALE-V"]["message"]
    if expected == "pass":
        assert got["IND-ALE-V"]["basis"] == "bound"


def test_a_parts_dc_bias_curve_says_nothing_past_its_last_point(run, tmp_path):
    # common practice: a curve is data only over its range; at 9 V the part data ends at 1 V,
    # so the generic curve (and its bounds) is used, marked generic.
    (tmp_path / "parts.csv").write_text('mpn,dc_bias\nZZ-1,"0 V: 100 %; 1 V: 95 %"\n',
                                        encoding="utf-8")
    _, report = run("C1,1,CAP CER 10uF 16V X7R 10% 0603,ZZ-1\n",
                    "refdes,v_dc [V],t_ambient_c [degC],c_min_f\nC1,9,40,6 uF\n",
                    "--parts", "parts.csv")
    got, status = verdicts(report, "C1")
    assert got["IND-CMARGIN"]["status"] != "pass" and status != "pass"
    (p,) = report["placements"]
    assert p["metrics"]["c_margin_basis"] == "generic"


def test_a_stress_without_a_verdict_is_not_shown():
    # common practice of this tool: a stress shown is a stress checked. A ceramic has no surge
    # rule (no source gives one), so its surge current, computed from the slew rate, is hidden.
    ruleset = rules.load_rules(["industrial"])
    table = pd.DataFrame({"refdes": ["C1", "C2"], "surge_a": [24200.0, 5.0],
                          "surge_ratio": [np.nan, 0.5], "voltage_ratio": [0.24, 0.3]})
    verdict_table = pd.DataFrame({"pidx": [1, 0, 1], "rule_id": ["IND-SURGE", "IND-CER-V",
                                                                 "IND-ALE-V"]})
    out = engine.without_unverdicted(table, verdict_table, ruleset)
    assert math.isnan(out["surge_a"][0]) and out["surge_a"][1] == 5.0
    assert out["voltage_ratio"].tolist() == [0.24, 0.3]


@pytest.mark.parametrize("cells, expected", [
    ("30,", None),  # no coldest given: no check (the operating ambient is not the coldest)
    ("30,0", "fail"),  # Z5U rated from +10 degC (EIA-198) at a coldest of 0 degC
    ("5,", "fail"),  # the operating ambient is already below +10 degC: the coldest is colder
])
def test_the_coldest_check_needs_the_coldest(run, cells, expected):
    _, report = run("C1,1,CAP CER 22uF 50V Z5U 10%,ZZ-3\n",
                    "refdes,v_dc [V],t_ambient_c [degC],t_ambient_min_c [degC],c_min_f\n"
                    f"C1,12,{cells},none\n")
    got, _ = verdicts(report, "C1")
    assert (got.get("IND-TMIN") or {}).get("status") == expected


def test_a_parts_override_stays_a_finding_naming_both_values(run, tmp_path):
    # common practice: a BOM and parts data that contradict each other are a finding for review
    (tmp_path / "parts.csv").write_text("mpn,rated_voltage,override\nZZ-7,50 V,yes\n",
                                        encoding="utf-8")
    _, report = run("C7,1,CAP CER 10uF 10V X7R 10%,ZZ-7\n",
                    "refdes,v_dc [V],t_ambient_c [degC],c_min_f\nC7,8,40,none\n",
                    "--parts", "parts.csv")
    got, status = verdicts(report, "C7")
    finding = got["parts.conflict"]
    assert finding["status"] == "warn" and status == "warn"
    assert "50 V" in finding["message"] and "10 V" in finding["message"]


def test_a_substitute_with_no_data_on_either_side_is_never_a_drop_in():
    # common practice: without a verdict the two parts cannot be compared; no rule derates a
    # part of unknown technology, so both sides are no data.
    result = run_direct("CAP 10UF 16V 10%", [Alternate("original", cells={
        "description": "CAP 10UF 16V 10%"})], None, ["C1"],
        {"v_dc": "5 V", "t_ambient_c": "40", "c_min_f": "none"})
    assert result.results[0].verdict == "review"


def _sheet(*rows):
    return design_from_table(pd.DataFrame([list(r) for r in rows[1:]], columns=list(rows[0])))


def test_a_designator_row_overriding_its_group_is_a_warning_naming_both_rows():
    d = _sheet(["refdes", "members", "v_dc", "t_ambient_c"],
               ["+12V", "C1-C3", "12", "40"], ["C1", "", "5", ""])
    assert d.conditions.at["C1", "v_dc"] == 5.0  # the designator row wins, as documented
    (w,) = [w for w in d.warnings if w.column == "v_dc"]
    assert w.row == 3 and "row 3" in w.message and "row 2" in w.message
    assert "12" in w.message and "5" in w.message


def test_a_group_rail_maximum_below_its_dc_value_is_a_warning():
    d = _sheet(["refdes", "members", "kind", "v_dc", "v_dc_max"],
               ["LINK", "C1-C2", "series", "400", "40"])
    assert any(w.column == "v_dc_max" and w.row == 2 and "LINK" in w.message for w in d.warnings)


def test_a_coldest_above_the_operating_ambient_is_a_warning():
    d = _sheet(["refdes", "v_dc", "t_ambient_c", "t_ambient_min_c"], ["C1", "5", "20", "40"])
    assert any(w.column == "t_ambient_min_c" and w.row == 2 for w in d.warnings)


def test_series_members_inherit_the_reverse_voltage_and_the_stack_meets_the_need():
    d = _sheet(["refdes", "members", "kind", "v_dc", "v_reverse_pk", "c_min_f"],
               ["LINK", "C1-C2", "series", "400", "0", "20 uF"])
    c = d.conditions
    assert c.loc[["C1", "C2"], "v_reverse_pk"].tolist() == [0.0, 0.0]
    assert c.loc[["C1", "C2"], "c_min_f"].tolist() == [0.0, 0.0]  # the stack's need, not each's
    assert c.loc[["C1", "C2"], "v_dc"].isna().all()  # each member carries a share
