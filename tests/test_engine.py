"""Tests of bomcheck.evaluate.engine: verdicts of rule sets on tables of placements."""

from __future__ import annotations

import time
import tracemalloc

import numpy as np
import pandas as pd
import pytest
from verdictcases import (industrial, placement, strict, strict_step,  # noqa: F401
                          synthetic, verdict)

from bomcheck.evaluate import engine
from bomcheck.evaluate.rules import load_rules
from bomcheck.evaluate.engine import CHECKS, VERDICT_COLUMNS, check_kind, evaluate


# ---- NASA EEE-INST-002 Section C1 Table 4 (reference sheet 1.1) ----------------------------------

@pytest.mark.parametrize("applied, status", [
    (15.0, "pass"),    # exactly 60 % of 25 V
    (15.09, "fail"),   # 60.36 %: 0.6 % relative above
    (15.25, "fail"),   # 61 %: one percentage point above
])
def test_ceramic_voltage_factor_060(strict, applied, status):
    # NASA EEE-INST-002 Section C1 Table 4: ceramic voltage factor 0.60
    v = verdict(strict, "EEE-CER-V", technology="ceramic", voltage_v=25.0, applied_peak_v=applied)
    assert v.status == status
    assert v.limit == 0.60


def test_ceramic_exactly_at_limit_in_other_units(strict):
    # NASA EEE-INST-002 Section C1 Table 4: 0.60; 30 V on a 50 V part is exactly 60 %
    assert verdict(strict, "EEE-CER-V", technology="ceramic", voltage_v=50.0,
                   applied_peak_v=30.0).status == "pass"
    assert verdict(strict, "EEE-CER-V", technology="ceramic", voltage_v=50.0,
                   applied_peak_v=30.5).status == "fail"


@pytest.mark.parametrize("applied, status", [(6.4, "pass"), (6.45, "fail"), (4.8, "pass")])
def test_solid_tantalum_16v_at_90c_linear(strict, applied, status):
    # NASA EEE-INST-002 Section C1 Table 4, linear reading (derived in reference sheet 1.1):
    # 0.50 - (20/40) x 0.20 = 0.40 at 90 degC; 16 V part -> at most 6.4 V
    v = verdict(strict, "EEE-TAN-V", technology="tantalum", voltage_v=16.0,
                applied_peak_v=applied, t_ambient_c=90.0)
    assert v.status == status
    assert v.limit * 16.0 == pytest.approx(6.4)


@pytest.mark.parametrize("applied, status", [(4.8, "pass"), (4.85, "fail"), (6.4, "fail")])
def test_solid_tantalum_16v_at_90c_step(strict_step, applied, status):
    # NASA EEE-INST-002 Section C1 Table 4, step reading (reference sheet 1.1): 0.30 above
    # 70 degC; 16 V part at 90 degC -> at most 4.8 V
    rule_ids = {r.id for r in strict_step.enabled_rules}
    assert "EEE-TAN-V-STEP" in rule_ids and "EEE-TAN-V" not in rule_ids
    v = verdict(strict_step, "EEE-TAN-V-STEP", technology="tantalum", voltage_v=16.0,
                applied_peak_v=applied, t_ambient_c=90.0)
    assert v.status == status
    assert v.limit * 16.0 == pytest.approx(4.8)


@pytest.mark.parametrize("applied, status", [(12.5, "pass"), (12.6, "fail")])
def test_wet_slug_25v_at_90c(strict, applied, status):
    # NASA EEE-INST-002 Section C1 Table 4 note 3 (derived in reference sheet 1.1): 0.60 to
    # 70 degC falling linearly to 0.40 at 110 degC -> 0.50 at 90 degC; 25 V part -> 12.5 V
    v = verdict(strict, "EEE-TAW-V", technology="tantalum-wet", voltage_v=25.0,
                applied_peak_v=applied, t_ambient_c=90.0)
    assert v.status == status
    assert v.limit * 25.0 == pytest.approx(12.5)


def test_film_above_85c_fails_the_strict_set(strict):
    # NASA EEE-INST-002 Section C1 Table 4: plastic film maximum ambient 85 degC
    table = pd.DataFrame([
        placement(refdes="C1", technology="film", voltage_v=100.0, applied_peak_v=40.0,
                  temp_max_c=105.0, t_ambient_c=85.0),
        placement(refdes="C2", technology="film", voltage_v=100.0, applied_peak_v=40.0,
                  temp_max_c=105.0, t_ambient_c=80.0, t_rise_c=6.0),
    ])
    v = evaluate(table, strict)
    flm_t = v[v.rule_id == "EEE-FLM-T"].set_index("refdes").status
    assert flm_t.to_dict() == {"C1": "pass", "C2": "fail"}
    worst = v[v.refdes == "C2"].status
    assert "fail" in set(worst)


# ---- warn limits and severity --------------------------------------------------------------------

def test_warn_limit_between_severe_and_benign(industrial):
    # System Reliability Center derating sheet, ceramic: 60 % severe (warn), 70 % benign (fail)
    v = verdict(industrial, "IND-CER-V", refdes="C5", technology="ceramic", voltage_v=50.0,
                applied_peak_v=33.0)
    assert v.status == "warn"
    assert v.warn_limit == 0.60 and v.limit == 0.70
    assert v.message.startswith(
        "C5: 33 V peak / 50 V rated = 66 % > 60 % warn limit, <= 70 % limit")
    assert verdict(industrial, "IND-CER-V", technology="ceramic", voltage_v=50.0,
                   applied_peak_v=36.0).status == "fail"


def test_severity_warn_caps_at_warn(industrial):
    # makers' practice (common practice): MnO2 solid tantalum at most 50 %; advisory here
    v = verdict(industrial, "IND-TAN-HALF", technology="tantalum", voltage_v=16.0,
                applied_peak_v=10.0)
    assert v.status == "warn"
    assert v.message.endswith("; advisory rule: at most a warning")
    assert v.margin < 0


# ---- generic basis -------------------------------------------------------------------------------

def test_generic_basis_caps_at_warn_and_says_so(strict):
    given = dict(refdes="C7", capacitance_f=10e-6, c_worst_f=4.0e-6, c_min_f=4.7e-6,
                 c_margin=4.0 / 4.7)
    generic = verdict(strict, "STRICT-CMARGIN", c_margin_basis="generic", **given)
    part = verdict(strict, "STRICT-CMARGIN", c_margin_basis="part", **given)
    assert (generic.status, part.status) == ("warn", "fail")
    # a verdict's basis is firm, bound, generic or missing; part data make it firm
    assert generic.basis == "generic" and part.basis == "firm"
    assert "rests on generic typical data (common practice)" in generic.message
    assert "part data" in generic.message
    assert "generic" not in part.message
    # A pass on typical data with no worst bound is no pass: it depends on the data (no wrong
    # pass; it was "pass" before bounds were evaluated).
    passing = verdict(strict, "STRICT-CMARGIN", c_margin_basis="generic",
                      **{**given, "c_worst_f": 6e-6, "c_margin": 6 / 4.7})
    assert passing.status == "warn" and "generic typical data" in passing.message


# Bounds of the unknowns (common practice of worst-case analysis: an unknown that can only make
# things worse is taken at its most favourable value; a failure there is a failure).
@pytest.mark.parametrize("best, worst, status, basis", [
    (4.4 / 4.7, None, "fail", "bound"),     # fails even at the favourable bound: firm failure
    (5.0 / 4.7, None, "warn", "generic"),   # flips within the bounds: depends on the data
    (6.0 / 4.7, 4.8 / 4.7, "pass", "bound"),  # passes even at the worst plausible bound
    (6.0 / 4.7, 4.6 / 4.7, "warn", "generic"),
])
def test_bounds_decide_a_verdict_resting_on_unknowns(strict, best, worst, status, basis):
    given = dict(refdes="C7", capacitance_f=10e-6, c_worst_f=4.5e-6, c_min_f=4.7e-6,
                 c_margin=4.5 / 4.7, c_margin_basis="generic", c_margin_best=best)
    if worst is not None:
        given["c_margin_worst"] = worst
    v = verdict(strict, "STRICT-CMARGIN", **given)
    assert (v.status, v.basis) == (status, basis)
    if status == "fail":
        assert "most favourable" in v.message


def test_generic_basis_of_the_curve_axis_caps_too(strict):
    v = verdict(strict, "EEE-TAN-V", technology="tantalum", voltage_v=16.0, applied_peak_v=8.0,
                t_ambient_c=90.0, t_operating_c_basis="generic")
    assert v.status == "warn" and v.basis == "generic"


# ---- no data -------------------------------------------------------------------------------------


def test_bound_on_unknown_rated_voltage_gives_nodata(industrial):
    # Polymer tantalum 90 % up to 10 V rated, 80 % above (common practice): unknown rating ->
    # both rules give "no data", never silence
    table = pd.DataFrame([placement(technology="tantalum-polymer", applied_peak_v=5.0)])
    v = evaluate(table, industrial.with_rules([industrial.rule("IND-TPO-V-LOW"),
                                               industrial.rule("IND-TPO-V-HIGH")]))
    assert v.status.tolist() == ["nodata", "nodata"]


# ---- what a rule applies to ----------------------------------------------------------------------

def test_applies_rated_voltage_bounds(industrial):
    rs = industrial.with_rules([industrial.rule("IND-TPO-V-LOW"),
                                industrial.rule("IND-TPO-V-HIGH")])
    table = pd.DataFrame([
        placement(refdes="C1", technology="tantalum-polymer", voltage_v=10.0, applied_peak_v=8.5),
        placement(refdes="C2", technology="tantalum-polymer", voltage_v=16.0, applied_peak_v=13.5),
    ])
    v = evaluate(table, rs)
    # makers' practice (common practice): <= 10 V rated at most 90 %, > 10 V at most 80 %
    assert list(zip(v.refdes, v.rule_id, v.status)) == [
        ("C1", "IND-TPO-V-LOW", "pass"), ("C2", "IND-TPO-V-HIGH", "fail")]


def test_applies_voltage_kind_polarized_emi(strict):
    table = pd.DataFrame([
        placement(refdes="C1", technology="film", voltage_kind="ac", voltage_v=275.0,
                  applied_peak_v=230.0),
        placement(refdes="C2", technology="film", voltage_v=100.0, applied_peak_v=50.0),
        placement(refdes="C3", technology="aluminium-electrolytic", polarized=False,
                  voltage_v=50.0, v_reverse_pk=10.0, reverse_ratio=0.2),
        placement(refdes="C4", technology="aluminium-electrolytic", polarized=True,
                  voltage_v=50.0, v_reverse_pk=10.0, reverse_ratio=0.2),
        placement(refdes="FL1", technology="ceramic", emi_filter=True, voltage_v=100.0,
                  applied_peak_v=40.0),
    ])
    v = evaluate(table, strict)
    ids = v.groupby("refdes").rule_id.apply(set).to_dict()
    assert "EEE-FLM-V" not in ids["C1"] and "STRICT-V-RATED" in ids["C1"]  # AC-rated
    assert "EEE-FLM-V" in ids["C2"]  # a rating that says neither DC nor AC counts as DC
    assert "STRICT-POL-REV" not in ids["C3"]  # bipolar electrolytic
    assert "STRICT-POL-REV" in ids["C4"]
    assert {"EEE-EMI-V", "EEE-CER-V"} <= ids["FL1"]
    assert not any(i.startswith("EEE-EMI") for i in ids["C2"])


def test_disabled_rules_are_not_evaluated(strict):
    table = pd.DataFrame([placement(technology="ceramic", voltage_v=25.0, applied_peak_v=5.0,
                                    rated_voltage_v=25.0)])
    assert "EEE-CER-LV" not in set(evaluate(table, strict).rule_id)
    # NASA EEE-INST-002 Section C1 Table 4 note 2 (dated): under 10 V, ceramic rated >= 100 V
    assert verdict(strict, "EEE-CER-LV", technology="ceramic", voltage_v=25.0,
                   applied_peak_v=5.0, rated_voltage_v=25.0).status == "fail"


# ---- output shape --------------------------------------------------------------------------------

def test_verdict_columns_order_and_margins(strict):
    table = pd.DataFrame([
        placement(refdes="C2", technology="ceramic", voltage_v=25.0, applied_peak_v=10.0,
                  temp_max_c=125.0, t_ambient_c=60.0),
        placement(refdes="C1", technology="tantalum", voltage_v=16.0, applied_peak_v=6.0,
                  temp_max_c=125.0, t_ambient_c=60.0),
    ])
    v = evaluate(table, strict)
    assert tuple(v.columns) == VERDICT_COLUMNS
    assert v.pidx.tolist() == sorted(v.pidx.tolist())
    for _, group in v.groupby("pidx"):
        assert group.rule_id.tolist() == sorted(group.rule_id.tolist())
    cer = v[(v.refdes == "C2") & (v.rule_id == "EEE-CER-V")].iloc[0]
    assert cer.margin == pytest.approx(0.60 - 0.40)  # max check: limit - value
    tmax = v[(v.refdes == "C2") & (v.rule_id == "STRICT-TMAX")].iloc[0]
    assert tmax.margin == pytest.approx(65.0)  # min check: value - limit
    assert v.pidx.dtype == np.int64


def test_missing_columns_and_empty_tables(strict):
    v = evaluate(pd.DataFrame({"refdes": ["C1"], "technology": ["ceramic"]}), strict)
    assert set(v.status) == {"nodata"}
    empty = evaluate(pd.DataFrame({"refdes": []}), strict)
    assert tuple(empty.columns) == VERDICT_COLUMNS and len(empty) == 0


def test_check_kinds_registry():
    assert set(CHECKS) == {"max", "min"}
    assert CHECKS["max"].margin(np.array([1.0]), np.array([3.0])).tolist() == [2.0]
    assert CHECKS["min"].margin(np.array([1.0]), np.array([3.0])).tolist() == [-2.0]
    with pytest.raises(ValueError, match="expected one of: max, min"):
        check_kind("between")


# ---- vectorised evaluation -----------------------------------------------------------------------


def test_vectorised_evaluation_of_100k_placements(strict):
    table = synthetic(100_000)
    start = time.perf_counter()
    v = evaluate(table, strict)
    elapsed = time.perf_counter() - start
    print(f"\nevaluate: {len(table)} placements x {len(strict.enabled_rules)} rules -> "
          f"{len(v)} verdicts in {elapsed:.3f} s")
    assert elapsed < 30.0  # loose: a guard against a per-row loop, not a benchmark
    # Cross-check one curve rule against the same arithmetic done directly with numpy
    # (NASA EEE-INST-002 Section C1 Table 4, linear reading).
    tan = table.technology.to_numpy() == "tantalum"
    expect_limit = np.interp(table.t_operating_c.to_numpy()[tan], [70, 110], [0.5, 0.3])
    expect_fail = table.voltage_ratio.to_numpy()[tan] > expect_limit * (1 + 1e-9)
    got = v[v.rule_id == "EEE-TAN-V"]
    assert got.pidx.tolist() == np.flatnonzero(tan).tolist()
    np.testing.assert_allclose(got.limit.to_numpy(), expect_limit)
    assert (got.status.to_numpy() == "fail").tolist() == expect_fail.tolist()
    # Rows evaluated alone give the same verdicts as in the big table.
    sample = table.iloc[[0, 17, 4242, 99_999]].reset_index(drop=True)
    alone = evaluate(sample, strict)
    big = v[v.pidx.isin([0, 17, 4242, 99_999])]
    assert alone.message.tolist() == big.message.tolist()
    assert alone.status.tolist() == big.status.tolist()


def test_capacitance_margin_needs_a_stated_need_or_an_explicit_none(strict):
    # Never a silent pass: no c_min_f at all is "no data"; c_min_f = 0 (the design sheet's
    # "none") says the circuit has no minimum, and then the rule does not apply.
    table = pd.DataFrame([
        placement(refdes="C1", capacitance_f=10e-6, c_worst_f=5e-6, c_min_f=4.7e-6,
                  c_margin=5 / 4.7),
        placement(refdes="C2", capacitance_f=10e-6, c_worst_f=5e-6),
        placement(refdes="C3", capacitance_f=10e-6, c_worst_f=5e-6, c_min_f=0.0),
    ])
    v = evaluate(table, strict.with_rules([strict.rule("STRICT-CMARGIN")]))
    assert v.refdes.tolist() == ["C1", "C2"] and v.status.tolist() == ["pass", "nodata"]
    assert "required capacitance" in v.message.iloc[1]


def test_unverdicted_metrics_are_blanked_without_copying_the_others():
    table = pd.DataFrame({
        "refdes": ["C1", "C2"], "voltage_ratio": [0.5, 0.9], "rated_voltage_v": [10.0, 16.0],
        "life_ratio": [2.0, 3.0], "other": [1.0, 2.0],
    })
    verdicts = pd.DataFrame({"pidx": np.array([], dtype=np.int64),
                             "rule_id": np.array([], dtype=object)})
    out = engine.without_unverdicted(table, verdicts, load_rules(("industrial",)))
    # No rule gave a verdict: every metric is blank, every other column is the input's own.
    assert out["voltage_ratio"].isna().all() and out["life_ratio"].isna().all()
    assert list(out.columns) == list(table.columns)
    assert np.shares_memory(out["other"].to_numpy(), table["other"].to_numpy())
    assert out["refdes"].tolist() == ["C1", "C2"]


def test_blanking_metrics_holds_one_new_copy_of_each_blanked_column():
    # Memory at scale (issue 13): the blanked columns are made once and form the new table; a
    # concatenation in column order copied them a second time.
    n = 200_000
    metrics = ("voltage_ratio", "rated_voltage_v", "life_ratio", "ripple_ratio")
    table = pd.DataFrame({m: np.linspace(0.1, 1.0, n) for m in metrics})
    table["refdes"] = "C1"
    verdicts = pd.DataFrame({"pidx": np.array([], dtype=np.int64),
                             "rule_id": np.array([], dtype=object)})
    rules = load_rules(("industrial",))
    tracemalloc.start()
    try:
        out = engine.without_unverdicted(table, verdicts, rules)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    blanked = len(metrics) * n * 8
    assert out[list(metrics)].isna().all().all()
    assert peak < 1.5 * blanked, (peak, blanked)
