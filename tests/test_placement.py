"""Stress stage: applied voltage, temperatures and worst-case capacitance against worked arithmetic."""

import math

import numpy as np
import pandas as pd
import pytest

from bomcheck.stress.columns import Columns, as_numbers, as_text, num_column, text_column
from bomcheck.stress.placement import StressData, applied_voltages, compute

AGING = StressData(aging_k={"class2": 2.5, "class3": 8.0, "class1": 0.0})


def one(**cols) -> pd.DataFrame:
    base = {"refdes": "C1", "polarized": False}
    base.update(cols)
    return pd.DataFrame({k: [v] for k, v in base.items()})


X7R_10U = dict(capacitance_f=10e-6, tol_minus_pct=10.0, dielectric="X7R", dielectric_class=2,
               cap_change_minus_pct=15.0, voltage_v=50.0, temp_max_c=125.0)


@pytest.mark.parametrize(
    "life_h, expected_f",
    [
        # Reference sheet section 3 (derived from the trade's aging law, k = 2.5 %/decade, t0 = 1 h):
        # 1000 h -> 9.25 uF; 10 years (87 600 h) -> 8.764 uF, before tolerance and temperature.
        pytest.param(1000.0, 9.25e-6, id="1000h"),
        pytest.param(87600.0, 8.764e-6, id="10years"),
    ],
)
def test_aging_matches_reference_arithmetic(life_h, expected_f):
    t = one(**{**X7R_10U, "tol_minus_pct": 0.0, "cap_change_minus_pct": 0.0}, life_h=life_h,
            v_dc=0.0, t_ambient_c=25.0)
    r = compute(t, AGING)
    assert r.at[0, "c_worst_f"] == pytest.approx(expected_f, rel=2e-4)


def test_worst_case_x7r_tolerance_temperature_aging():
    # Reference sheet 1.5 (practice) with EIA-198 X7R = +/-15 %, a 10 % tolerance and
    # 2.5 %/decade aging over 10 years (derived): 10 uF x 0.90 x 0.85 x (1 - 0.025 log10 87600).
    t = one(**X7R_10U, life_h=87600.0, v_dc=0.0, t_ambient_c=85.0, c_min_f=5e-6)
    r = compute(t, AGING)
    expected = 10e-6 * 0.90 * 0.85 * (1 - 0.025 * math.log10(87600))
    assert r.at[0, "c_worst_f"] == pytest.approx(expected, rel=1e-12)
    assert r.at[0, "c_worst_f"] == pytest.approx(6.7048e-6, rel=1e-4)
    assert r.at[0, "c_tol_factor"] == pytest.approx(0.90)
    assert r.at[0, "c_temp_factor"] == pytest.approx(0.85)
    assert r.at[0, "c_aging_factor"] == pytest.approx(0.87644, rel=1e-4)
    assert r.at[0, "c_margin"] == pytest.approx(expected / 5e-6)
    assert r.at[0, "c_margin_basis"] == ""


def test_class1_temperature_coefficient():
    # Reference sheet section 3 (derived): U2J (-750 ppm/degC) from 25 to 85 degC -> -4.5 %.
    t = one(capacitance_f=1e-9, tol_minus_pct=0.0, dielectric="U2J", dielectric_class=1,
            tc_ppm=-750.0, tc_tol_ppm=0.0, t_ambient_c=85.0, v_dc=1.0, voltage_v=50.0)
    r = compute(t, AGING)
    assert r.at[0, "c_temp_factor"] == pytest.approx(1 - 0.045)
    # With its +/-120 ppm tolerance the worst case is -870 ppm/degC x 60 degC = -5.22 %.
    r = compute(t.assign(tc_tol_ppm=120.0), AGING)
    assert r.at[0, "c_temp_factor"] == pytest.approx(1 - 0.0522)


def test_applied_voltage_upper_bound_and_ripple():
    # 12 V rail +10 % = 13.2 V (arithmetic); plus 0.5 V ripple peak.
    t = pd.DataFrame({"v_dc": [12.0, 12.0, 12.0, np.nan], "v_tol_pct": [10.0, np.nan, 10.0, 5.0],
                      "v_dc_max": [np.nan, 12.6, 14.0, np.nan],
                      "v_ripple_pk": [0.5, np.nan, 0.0, 1.0], "v_transient_pk": [np.nan, 20.0, 1.0, np.nan]})
    v = applied_voltages(t)
    assert v["v_upper_v"].tolist()[:3] == pytest.approx([13.2, 12.6, 14.0])
    assert v["applied_peak_v"].tolist()[:3] == pytest.approx([13.7, 12.6, 14.0])
    assert v["transient_peak_v"].tolist()[:3] == pytest.approx([13.7, 20.0, 14.0])
    assert math.isnan(v.at[3, "applied_peak_v"])  # no working voltage: no data, never zero


def test_ratios_and_temperatures():
    t = pd.DataFrame({
        "refdes": ["C1", "C2", "C3"], "voltage_v": [25.0, 275.0, 16.0],
        "voltage_kind": ["dc", "ac", "dc"], "polarized": [True, False, False],
        "v_dc": [14.2, np.nan, 5.0], "v_ac_rms": [np.nan, 253.0, np.nan],
        "v_reverse_pk": [0.5, np.nan, 0.5], "t_ambient_c": [80.0, 55.0, np.nan],
        "t_rise_c": [5.0, np.nan, 3.0], "temp_max_c": [125.0, 110.0, 85.0],
    })
    r = compute(t, AGING)
    assert r["voltage_ratio"].tolist()[:2] == pytest.approx([14.2 / 25, 253 / 275])
    assert r.at[0, "reverse_ratio"] == pytest.approx(0.02)
    assert math.isnan(r.at[2, "reverse_ratio"])  # not polarized: no reverse metric
    assert r["t_operating_c"].tolist()[:2] == [85.0, 55.0]
    assert r.at[0, "temp_margin_c"] == 40.0
    assert math.isnan(r.at[2, "t_operating_c"])  # rise without ambient is no data


def test_generic_dc_bias_and_assumed_tolerance_are_marked():
    data = StressData(dc_bias={"default": ((0.0, 1.0), (1.0, 0.3))}, aging_k={"class2": 2.5})
    t = one(capacitance_f=10e-6, dielectric="X5R", dielectric_class=2, cap_change_minus_pct=15.0,
            voltage_v=10.0, v_dc=5.0, t_ambient_c=25.0, life_h=1.0, c_min_f=1e-6, package="0603")
    r = compute(t, data)
    assert r.at[0, "c_bias_factor"] == pytest.approx(0.65)  # halfway down the generic curve
    assert r.at[0, "c_tol_factor"] == pytest.approx(0.80)  # 20 % assumed
    assert r.at[0, "c_margin_basis"] == "generic"
    assert "generic typical curve" in r.at[0, "c_margin_note"]
    assert "tolerance not given" in r.at[0, "c_margin_note"]
    # A per-part curve value wins over the generic curve.
    r = compute(t.assign(dc_bias_keep=0.9, tol_minus_pct=10.0), data)
    assert r.at[0, "c_bias_factor"] == pytest.approx(0.9)
    assert r.at[0, "c_margin_basis"] == "part"


def test_missing_requirement_leaves_margin_unknown():
    r = compute(one(**X7R_10U, v_dc=5.0, t_ambient_c=25.0, life_h=10.0), AGING)
    assert not math.isnan(r.at[0, "c_worst_f"])
    assert math.isnan(r.at[0, "c_margin"])


def test_columns_not_rows_large_table():
    n = 100_000
    row = one(**X7R_10U, v_dc=12.0, t_ambient_c=70.0, life_h=1e4, c_min_f=1e-6)
    t = row.loc[row.index.repeat(n)].reset_index(drop=True)
    r = compute(t, AGING)
    assert len(r) == n and r["voltage_ratio"].eq(12.0 / 50.0).all()


def test_ceramic_without_dielectric_is_not_lossless():
    # A ceramic whose text names no dielectric is taken as class II with the common +/-15 %
    # (EIA-198 letter R) and marked generic: never a firm pass on an unknown part.
    t = one(capacitance_f=10e-6, tol_minus_pct=10.0, technology="ceramic", voltage_v=16.0,
            v_dc=12.0, t_ambient_c=40.0, life_h=1.0, c_min_f=4.7e-6, package="0805")
    data = StressData(dc_bias={"default": ((0.0, 1.0), (1.0, 0.3))}, aging_k={"class2": 2.5})
    r = compute(t, data)
    assert r.at[0, "c_temp_factor"] == pytest.approx(0.85)
    assert r.at[0, "c_bias_factor"] < 1.0
    assert r.at[0, "c_margin_basis"] == "generic"
    assert "dielectric not given" in r.at[0, "c_margin_note"]


def test_compute_reads_only_its_listed_inputs():
    # The circuit stage runs the stresses again only where a column of INPUTS changed: compute
    # must read nothing else (a table cut to INPUTS gives the same metrics).
    from bomcheck.stress.placement import INPUTS

    rows = pd.DataFrame([
        {"refdes": "C1", "technology": "ceramic", "dielectric": "X7R", "dielectric_class": 2,
         "cap_change_minus_pct": 15.0, "capacitance_f": 1e-6, "voltage_v": 50.0,
         "tol_minus_pct": 10.0, "package": "0805", "v_dc": 24.0, "v_ripple_pk": 1.0,
         "t_ambient_c": 60.0, "t_rise_c": 5.0, "c_min_f": 0.5e-6, "life_h": 1e4,
         "temp_max_c": 125.0, "temp_min_c": -55.0, "polarized": False, "notes": "x",
         "esr_ohm": 0.01},
        {"refdes": "C2", "technology": "tantalum", "capacitance_f": 10e-6, "voltage_v": 16.0,
         "tol_abs_f": 1e-6, "v_dc": -5.0, "v_ac_rms": 1.0, "v_tol_pct": 5.0,
         "v_transient_pk": 20.0, "v_reverse_pk": 1.0, "t_ambient_c": 85.0,
         "t_ambient_min_c": -40.0, "polarized": True, "voltage_kind": "ac", "tc_ppm": 0.0},
    ])
    data = StressData(typical_temp_max_c={"tantalum": 125.0}, aging_k={"X7R": 2.5})
    whole = compute(rows, data)
    cut = compute(rows[[c for c in INPUTS if c in rows]], data)
    for c in cut.columns:
        pd.testing.assert_series_equal(cut[c], whole[c], check_dtype=False)


@pytest.mark.parametrize("values", [
    pytest.param([1.5, None, "2.5", "x", True], id="mixed-object"),
    pytest.param([1, 2, 3], id="integers"),
    pytest.param([np.nan, 4.0, -0.0], id="floats"),
    pytest.param(["X7R", None, np.nan, "c0g"], id="text"),
])
def test_array_conversions_match_the_column_conversions(values):
    # The stresses convert each column once to an array; the values are those of the column
    # conversions (NaN where not a number, "" where missing), so a result cannot depend on
    # which form a stage passes (arithmetic, no outside source needed).
    table = pd.DataFrame({"c": pd.Series(values, dtype=object)})
    expected = num_column(table, "c").to_numpy()
    np.testing.assert_array_equal(as_numbers(table["c"]), expected)
    np.testing.assert_array_equal(as_numbers(table["c"].to_numpy()), expected)
    assert as_text(table["c"]).tolist() == text_column(table, "c").tolist()
    cols = Columns.of(table)
    assert np.isnan(cols.num("absent")).all() and cols.text("absent").tolist() == [""] * len(values)


def test_an_unnamed_dielectric_ages_at_its_worst_plausible_rate():
    # An unnamed class II/III ceramic may be the fastest-aging code as well as the widest-changing
    # one: its worst bound takes both (aging law C(t) = C(t0) x (1 - k/100 x log10(t/t0)), makers'
    # published rates, common practice; class III's EIA-198 change -82 %, letter V). A Y5V part
    # that fails its need must never pass once its dielectric code is left out.
    need = dict(capacitance_f=10e-6, tol_minus_pct=20.0, technology="ceramic", voltage_v=100.0,
                v_dc=0.0, t_ambient_c=25.0, life_h=100_000.0, c_min_f=1e-6)
    y5v = compute(one(**need, dielectric="Y5V", dielectric_class=3, cap_change_minus_pct=82.0),
                  AGING)
    unnamed = compute(one(**need), AGING)
    decades = math.log10(100_000.0)
    assert y5v.at[0, "c_worst_f"] == pytest.approx(10e-6 * 0.8 * 0.18 * (1 - 0.08 * decades))
    assert unnamed.at[0, "c_worst_f_worst"] == pytest.approx(y5v.at[0, "c_worst_f"])
    assert unnamed.at[0, "c_margin_worst"] < 1.0 < unnamed.at[0, "c_margin_best"]
