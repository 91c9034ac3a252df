"""Parts data: reading CSV and TOML with units, curves, and laying the data over placements."""

import math

import numpy as np
import pandas as pd
import pytest

from bomcheck.errors import InputError
from bomcheck.parse.parts import PARTS_FINDING, parts_from_table, read_parts
from bomcheck.parse.parts_apply import apply_parts, curve_values
from bomcheck.stress.placement import StressData, compute

CSV = ("mpn,rated_voltage,temp_max,esr [mohm],ripple_current,ripple_freq,ripple_freq_mult,"
       "life,life_temp,leakage,dc_bias\n"
       "KV-1006-X5R,6.3 V,85 degC,,,,,,,,\"0 V: 100 %; 2 V: 70 %; 5 V: 30 %\"\n"
       "RX-108-35,35,105,45,1.6 A,100 kHz,\"120 Hz: 0.5; 1 kHz: 0.7; 100 kHz: 1\",5000 h,"
       "105 degC,350 uA,\n")

TOML = '''
[parts."KV-1006-X5R"]
rated_voltage = "6.3 V"
temp_max = "85 degC"
dc_bias = [["0 V", "100 %"], ["2 V", "70 %"], ["5 V", "30 %"]]

[parts.RX-108-35]
rated_voltage = 35
temp_max = 105
"esr [mohm]" = 45
ripple_current = "1.6 A"
ripple_freq = "100 kHz"
ripple_freq_mult = "120 Hz: 0.5; 1 kHz: 0.7; 100 kHz: 1"
life = "5000 h"
life_temp = "105 degC"
leakage = "350 uA"
'''


def write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return str(p)


@pytest.fixture(params=["csv", "toml"])
def parts(request, tmp_path):
    name, text = ("parts.csv", CSV) if request.param == "csv" else ("parts.toml", TOML)
    return read_parts(write(tmp_path, name, text))


def test_values_in_si_from_csv_and_toml(parts):
    v = parts.values
    assert list(v.index) == ["KV-1006-X5R", "RX-108-35"]
    assert v.at["KV-1006-X5R", "rated_voltage"] == 6.3
    assert v.at["RX-108-35", "esr"] == pytest.approx(0.045)  # header unit [mohm]
    assert v.at["RX-108-35", "ripple_freq"] == pytest.approx(100e3)
    assert v.at["RX-108-35", "life"] == 5000.0
    assert v.at["RX-108-35", "leakage"] == pytest.approx(350e-6)
    assert v.at["RX-108-35", "temp_max"] == 105.0  # a bare number takes degC
    assert math.isnan(v.at["KV-1006-X5R", "esr"])
    assert len(parts.sha256) == 64


def test_curves(parts):
    bias = parts.curves["dc_bias"]["KV-1006-X5R"]
    assert bias.xs == (0.0, 2.0, 5.0) and bias.ys == pytest.approx((1.0, 0.7, 0.3))
    assert bias.at(np.array([3.5]))[0] == pytest.approx(0.5)  # linear between points
    f = parts.curves["ripple_freq_mult"]["RX-108-35"]
    # Interpolated in log frequency (common practice for multiplier tables): 10 kHz is half way
    # in decades from 1 kHz to 100 kHz, so 0.7 + 0.3 / 2 (arithmetic).
    assert f.at(np.array([10e3]), log_x=True)[0] == pytest.approx(0.85)
    assert f.at(np.array([50.0]), log_x=True)[0] == pytest.approx(0.5)  # flat beyond the ends


def test_dc_bias_curve_as_capacitance_becomes_a_fraction(tmp_path):
    parts = read_parts(write(tmp_path, "p.csv", "mpn,dc_bias\nKV-1,\"0 V: 10 uF; 4 V: 4.5 uF\"\n"))
    table = pd.DataFrame({"refdes": ["C1"], "mpn": ["kv-1 "], "capacitance_f": [10e-6]})
    got = curve_values(table, parts, "dc_bias", pd.Series([4.0]))
    assert got.tolist() == pytest.approx([0.45])


def _placements():
    return pd.DataFrame({
        "refdes": ["C1", "C2", "C3"], "row": [2, 3, 4],
        "mpn": ["KV-1006-X5R", "rx-108-35", "OTHER"],
        "capacitance_f": [10e-6, 1e-3, 1e-6], "voltage_v": [6.3, 25.0, 50.0],
        "voltage_kind": [None, "dc", None], "temp_min_c": [-55.0, np.nan, np.nan],
        "temp_max_c": [85.0, 85.0, 125.0],
    })


def test_conflicts_use_the_conservative_value_and_are_warnings(parts):
    # Issue 9 class 6 (changed: the parts data used to win silently over the BOM text):
    # common practice, the lower rating of two contradicting sources governs.
    out, verdicts = apply_parts(_placements(), parts)
    assert out["voltage_v"].tolist() == [6.3, 25.0, 50.0]
    assert out["temp_max_c"].tolist() == [85.0, 85.0, 125.0]
    assert out["esr_ohm"].iloc[1] == pytest.approx(0.045) and math.isnan(out["esr_ohm"].iloc[0])
    assert out["life_l0_h"].tolist()[1] == 5000.0
    assert verdicts["rule_id"].unique().tolist() == [PARTS_FINDING]
    assert verdicts["refdes"].tolist() == ["C2", "C2"]
    assert set(verdicts["status"]) == {"warn"}
    voltage = verdicts[verdicts.message.str.contains("rated voltage")].iloc[0]
    assert "35 V" in voltage.message and "25 V" in voltage.message
    assert "RX-108-35" in voltage.message
    assert "the verdict uses the lower value, 25 V" in voltage.message


@pytest.mark.parametrize("how", ["column", "option"])
def test_parts_data_overrides_only_when_asked(tmp_path, how):
    # Issue 9 class 6: an explicit override (a column per part, or the file-wide option).
    rows = ["mpn,override,rated_voltage,temp_max", "KV-1006-X5R,,6.3 V,85 degC",
            f"RX-108-35,{'true' if how == 'column' else ''},35,105"]
    parts = read_parts(write(tmp_path, "p.csv", "\n".join(rows) + "\n"),
                       override=how == "option")
    out, verdicts = apply_parts(_placements(), parts)
    assert out["voltage_v"].tolist() == [6.3, 35.0, 50.0]
    assert out["temp_max_c"].tolist() == [85.0, 105.0, 125.0]
    # still listed, never silent: a warning naming both values (the override is the user's
    # choice, the contradiction between BOM and parts data stays a finding)
    assert set(verdicts["status"]) == {"warn"}
    assert verdicts["message"].str.contains("gives rated voltage 35 V; the BOM text says 25 V").any()
    assert verdicts["message"].str.contains("parts data is used \\(override\\)").all()


def test_the_worse_value_wins_whichever_source_gives_it(tmp_path):
    # common practice: lower rated max, higher rated min, smaller C, wider tolerance.
    parts = read_parts(write(tmp_path, "p.csv", "mpn,capacitance,rated_voltage,temp_min,temp_max,"
                             "tolerance\nP1,22 uF,50 V,-25 degC,125 degC,\u00b120 %\n"))
    table = pd.DataFrame({"refdes": ["C1"], "mpn": ["P1"], "capacitance_f": [10e-6],
                          "voltage_v": [16.0], "temp_min_c": [-55.0], "temp_max_c": [105.0],
                          "tol_minus_pct": [10.0], "tol_plus_pct": [10.0]})
    out, verdicts = apply_parts(table, parts)
    row = out.iloc[0]
    assert (row.capacitance_f, row.voltage_v, row.temp_min_c, row.temp_max_c) == (
        10e-6, 16.0, -25.0, 105.0)
    assert (row.tol_minus_pct, row.tol_plus_pct) == (20.0, 20.0)
    assert len(verdicts) == 5 and set(verdicts["status"]) == {"warn"}  # one per quantity


def test_dielectric_conflict_takes_the_less_favourable_code(tmp_path):
    # EIA-198: X5R is rated to 85 degC, X7R to 125 degC; both change 15 %.
    parts = read_parts(write(tmp_path, "p.csv", "mpn,dielectric\nP1,X5R\nP2,x7r\n"))
    table = pd.DataFrame({"refdes": ["C1", "C2", "C3"], "mpn": ["P1", "P2", "P2"],
                          "dielectric": ["X7R", "X5R", None], "dielectric_class": [2, 2, np.nan],
                          "temp_min_c": [-55.0, -55.0, np.nan],
                          "temp_max_c": [125.0, 85.0, np.nan]})
    out, verdicts = apply_parts(table, parts)
    assert out["dielectric"].tolist() == ["X5R", "X5R", "X7R"]  # C3: the BOM named none
    assert out["temp_max_c"].tolist() == [85.0, 85.0, 125.0]
    assert verdicts["refdes"].tolist() == ["C1", "C2"]
    assert verdicts["message"].str.contains("dielectric").all()


def test_header_only_parts_file_is_clean(tmp_path):
    # Issue 10: a parts file with a header only raised IndexError when laid over placements.
    parts = read_parts(write(tmp_path, "p.csv", "mpn,rated_voltage\n"))
    assert [w.message for w in parts.warnings] == ["no parts entries"]
    out, verdicts = apply_parts(_placements(), parts)
    assert out["voltage_v"].tolist() == [6.3, 25.0, 50.0] and not len(verdicts)


@pytest.mark.parametrize("header, cell, problem", [
    ("rated_voltage", "0 V", "zero voltage"),  # would give an infinite ratio
    ("rated_voltage", "-16 V", "negative voltage"),
    ("rated_voltage", "inf V", "not a finite number"),
    ("rated_voltage", "1e400 mV", "out of range"),
    ("rated_voltage", "9" * 400, "too many digits"),
    ("rated_voltage", "5 V * 0", "not a quantity"),
    ("capacitance", "20 kF", "implausible capacitance"),
    ("temp_max", "500 degC", "implausible temperature"),
    ("esr", "0 ohm", "zero resistance"),
    ("tolerance", "150 %", "not a valid tolerance value"),
    ("dielectric", "Q9Q", "not a valid dielectric value"),
    ("override", "maybe", "not a valid override value"),
])
def test_implausible_parts_cells_are_input_errors(tmp_path, header, cell, problem):
    # common practice: the ranges of bomcheck.parse.units.PLAUSIBLE; issue 10 for inf and huge numbers.
    with pytest.raises(InputError) as info:
        read_parts(write(tmp_path, "p.csv", f"mpn,{header}\nP0,\nP1,{cell}\n"))
    e = info.value
    assert (e.row, e.column, e.text) == (3, header, cell)
    assert problem in e.problem


def test_rated_range_must_be_ordered(tmp_path):
    with pytest.raises(InputError, match="temp_min is not below temp_max"):
        read_parts(write(tmp_path, "p.csv", "mpn,temp_min,temp_max\nP1,105,-40\n"))


def test_rated_minimum_temperature_reaches_the_table(tmp_path):
    # The parts file's temp_min fills the placement's temp_min_c (the rule set limits it).
    parts = read_parts(write(tmp_path, "p.csv", "mpn,temp_min\nP1,-25 degC\n"))
    out, _ = apply_parts(pd.DataFrame({"refdes": ["C1"], "mpn": ["P1"]}), parts)
    assert out["temp_min_c"].tolist() == [-25.0]


def test_ac_rating_goes_to_an_ac_rated_part(tmp_path):
    parts = read_parts(write(tmp_path, "p.csv", "mpn,rated_voltage,rated_voltage_ac\n"
                             "X2-474,630 V,310 V\nX2-ONLY,,275 V\n"))
    table = pd.DataFrame({"refdes": ["C1", "C2"], "mpn": ["X2-474", "X2-ONLY"],
                          "voltage_v": [310.0, np.nan], "voltage_kind": ["ac", None]})
    out, verdicts = apply_parts(table, parts)
    assert out["voltage_v"].tolist() == [310.0, 275.0]
    assert out["voltage_kind"].tolist() == ["ac", "ac"]
    assert not len(verdicts)


def test_part_dc_bias_curve_feeds_the_worst_case_capacitance(parts):
    # The part's curve (0.3 left at 5 V) replaces the generic curve; the margin rests on part data.
    table, _ = apply_parts(_placements().iloc[[0]].assign(
        polarized=False, dielectric_class=2, cap_change_minus_pct=15.0, tol_minus_pct=20.0,
        v_dc=5.0, t_ambient_c=25.0, c_min_f=1e-6), parts)
    table["dc_bias_keep"] = curve_values(table, parts, "dc_bias", pd.Series([5.0]))
    r = compute(table, StressData())
    assert r.at[0, "c_bias_factor"] == pytest.approx(0.3)
    assert r.at[0, "c_worst_f"] == pytest.approx(10e-6 * 0.8 * 0.85 * 0.3)
    assert r.at[0, "c_margin_basis"] == "part"


@pytest.mark.parametrize("text, problem, row, column", [
    pytest.param("mpn,esr\nA,5 V\n", "wrong dimension", 2, "esr", id="wrong-dimension"),
    pytest.param("mpn,life\nA,5000 h\nB,\na,1 h\n", "given by rows 2 and 4", 4, "mpn",
                 id="mpn-twice"),
    pytest.param("mpn,dc_bias\nA,0 V 100 %\n", "curve point without", 2, "dc_bias",
                 id="curve-without-colon"),
    pytest.param("mpn,dc_bias\nA,\"0 V: 100 %; 5 V: 130 %\"\n", "outside", 2, "dc_bias",
                 id="fraction-above-one"),
    pytest.param("mpn,esr\n,0.1\n", "no MPN", 2, "mpn", id="data-without-mpn"),
])
def test_bad_cells_name_file_row_and_column(tmp_path, text, problem, row, column):
    path = write(tmp_path, "parts.csv", text)
    with pytest.raises(InputError) as info:
        read_parts(path)
    e = info.value
    assert problem in str(e) and e.row == row and e.column == column and e.path == path


def test_missing_file_and_missing_mpn_column(tmp_path):
    with pytest.raises(InputError, match="not found"):
        read_parts(str(tmp_path / "nope.csv"))
    with pytest.raises(InputError, match="no MPN column"):
        parts_from_table(pd.DataFrame({"esr": ["0.1"]}))


