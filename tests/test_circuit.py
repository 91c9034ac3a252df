"""Circuit-level stresses: the worked examples of the reference sheet, the stage on small tables,
and the sample board's series stack, bank and bleeder end to end."""

import json
import math
from importlib import resources
from pathlib import Path
from types import MappingProxyType

import jsonschema
import numpy as np
import pandas as pd
import pytest

from bomcheck.stress import circuit
from bomcheck.pipeline.audit import AuditOptions, run_audit
from bomcheck.parse.design import Group
from bomcheck.evaluate.rules import load_rules
from bomcheck.stress.placement import StressData, compute
from bomcheck.parse.units import to_si

ROOT = Path(__file__).resolve().parents[1]
BOM = ROOT / "sample_boms" / "bw7-controller-bom.csv"
DESIGN = ROOT / "sample_boms" / "bw7-design.csv"
PARTS = ROOT / "sample_boms" / "bw7-parts.csv"


# --- formulas: reference sheet section 4 (derived from the textbook formulas) -----------------


@pytest.mark.parametrize("c_f, v, energy, charge", [
    # Reference sheet section 4: 470 uF at 35 V: 0.287875 J, 16.45 mC.
    pytest.param(470e-6, 35.0, 0.287875, 16.45e-3, id="470uF-35V"),
    # Reference sheet section 4: 220 uF at 400 V: 17.6 J.
    pytest.param(220e-6, 400.0, 17.6, 88e-3, id="220uF-400V"),
    # Reference sheet section 4: 0.1 uF at 450 V: 10.125 mJ, 45 uC.
    pytest.param(0.1e-6, 450.0, 10.125e-3, 45e-6, id="100nF-450V"),
])
def test_stored_energy_and_charge(c_f, v, energy, charge):
    assert circuit.energy_j(c_f, v) == pytest.approx(energy, rel=1e-12)
    assert circuit.charge_c(c_f, v) == pytest.approx(charge, rel=1e-12)


def test_series_and_parallel_combination():
    # Reference sheet section 4: 10 uF + 22 uF in series: 6.875 uF; in parallel the sum.
    assert circuit.series_f([10e-6, 22e-6]) == pytest.approx(6.875e-6, rel=1e-12)
    assert circuit.parallel_f([10e-6, 22e-6]) == pytest.approx(32e-6, rel=1e-12)
    # Reference sheet section 4: 10 uF + 22 uF on 50 V: 34.375 V and 15.625 V.
    assert circuit.series_share(50.0, [10e-6, 22e-6]) == pytest.approx([34.375, 15.625])


@pytest.mark.parametrize("tol, worst", [
    # Reference sheet section 4: 2 x 100 uF +/-20 % on 400 V: worst 240 V on one (nominal 200 V).
    pytest.param(20.0, 240.0, id="20pct"),
    # Reference sheet section 4: +/-10 %: 220 V.
    pytest.param(10.0, 220.0, id="10pct"),
])
def test_series_capacitive_share_worst_case(tol, worst):
    v = circuit.series_share_worst_cap(400.0, [100e-6, 100e-6], [tol, tol], [tol, tol])
    assert v == pytest.approx([worst, worst], rel=1e-12)
    assert circuit.series_share(400.0, [100e-6, 100e-6]) == pytest.approx([200.0, 200.0])


def test_series_dc_share_from_balancing_resistors():
    # Reference sheet section 4: 2 x 100 kohm +/-1 % on 400 V: worst 202.0 V.
    v = circuit.series_share_worst_dc(400.0, [100e3, 100e3], 1.0)
    assert v == pytest.approx([202.0, 202.0], rel=1e-12)
    # Leakage through the other member's side raises the share (arithmetic of the divider
    # model: 101k x (400 V + 99k x 0.5 mA) / 200k = 227.0 V).
    v = circuit.series_share_worst_dc(400.0, [100e3, 100e3], 1.0, [0.5e-3, 0.5e-3])
    assert v == pytest.approx([101e3 * (400 + 99e3 * 0.5e-3) / 200e3] * 2, rel=1e-12)


def test_discharge_resistance_and_time():
    # Reference sheet section 4: V0 = 325.27 V (230 V rms peak), 1 uF, 60 V within 5 s:
    # R at most 2.958 Mohm.
    r = circuit.discharge_r_max(5.0, 1e-6, 325.27, 60.0)
    assert r == pytest.approx(2.958e6, rel=2e-4)
    assert circuit.discharge_time_s(r, 1e-6, 325.27, 60.0) == pytest.approx(5.0, rel=1e-12)
    assert circuit.voltage_after(5.0, r, 1e-6, 325.27) == pytest.approx(60.0, rel=1e-12)
    # Already at or below the safe voltage: no time needed; no resistance known: unknown.
    assert circuit.discharge_time_s(1e6, 1e-6, 48.0, 60.0) == 0.0
    assert math.isnan(circuit.discharge_time_s(np.nan, 1e-6, 400.0, 60.0))


def test_surge_current():
    # Reference sheet section 4: 100 uF ramped 0 -> 12 V in 1 ms: 1.2 A.
    slew = to_si("12 V/ms", "slew")
    assert slew == pytest.approx(12000.0)
    assert circuit.surge_current_a(100e-6, slew) == pytest.approx(1.2, rel=1e-12)
    # Without a slew rate, the step V / R at switch-on (arithmetic): 400 V / 47 ohm.
    assert circuit.surge_current_a(100e-6, np.nan, 400.0, 47.0) == pytest.approx(400 / 47)


@pytest.mark.parametrize("t_op, life", [
    # Reference sheet section 4 (10 degC rule, common practice): 2000 h at 105 degC.
    pytest.param(95.0, 4000.0, id="95C"),
    pytest.param(85.0, 8000.0, id="85C"),
    pytest.param(65.0, 32000.0, id="65C"),
])
def test_electrolytic_life_ten_degree_rule(t_op, life):
    assert circuit.electrolytic_life_h(2000.0, 105.0, t_op) == pytest.approx(life, rel=1e-12)


def test_electrolytic_life_ripple_factor():
    # Reference sheet 1.4 (common practice): ripple factor 2^(-dT/5) on the ripple rise. 2000 h at
    # 105 degC, 80 degC ambient + 5 degC rise: 2000 x 2^(25/10) x 2^(-1) (arithmetic).
    got = circuit.electrolytic_life_h(2000.0, 105.0, 85.0, 5.0, ripple_factor=True)
    assert got == pytest.approx(2000.0 * 2 ** 2.5 * 0.5, rel=1e-12)


def test_tantalum_series_resistance_top_grade():
    # Reference sheet 1.1 note 4, derived check value: solid tantalum at 5 V applied, top grade:
    # at least max(0.3 x 5, 1) = 1.5 ohm. (The per-volt reading itself is uncertain: not tested.)
    assert circuit.tantalum_min_series_r(5.0, ohm_per_v=0.3) == pytest.approx(1.5)
    rule = load_rules(["strict"]).rule("EEE-TAN-SERIES-R-TOP")
    assert rule.fail.at(np.array([5.0]), 1)[0] == pytest.approx(1.5, rel=1e-12)
    assert not rule.enabled  # optional, as the grade is the project's choice
    assert "uncertain" in rule.rationale.lower()


def test_ripple_heating():
    # P = I^2 x ESR (arithmetic): 1.5 A in 45 mohm = 0.10125 W; through 36.2 degC/W: 3.665 degC.
    p, rise = circuit.ripple_heating(1.5, 0.045, 36.2)
    assert p == pytest.approx(0.10125)
    assert rise == pytest.approx(0.10125 * 36.2)


@pytest.mark.parametrize("name", ["strict", "industrial"])
def test_typical_can_table_is_the_formula_it_cites(name):
    # Reference sheet 1.4 (common practice): dT = I^2 x ESR / (beta x can area); the shipped
    # table is that formula at its beta (value from memory), rounded to 0.1 degC/W.
    data = load_rules([name]).circuit
    assert data["label"].startswith("typical")
    for size, rth in data["thermal_resistance_c_per_w"].items():
        d, length = (float(x) for x in size.split("x"))
        expected = circuit.can_thermal_resistance(d, length, data["can_beta_w_per_cm2_k"])
        assert rth == pytest.approx(expected, abs=0.06), size


# --- the stage on small tables ----------------------------------------------------------------

DATA = StressData()


def electrolytic(refdes, c_f=100e-6, v=250.0, tol=20.0, **more):
    return {"refdes": refdes, "row": 2, "technology": "aluminium-electrolytic", "polarized": True,
            "capacitance_f": c_f, "voltage_v": v, "tol_minus_pct": tol, "tol_plus_pct": tol,
            "temp_max_c": 105.0, "t_ambient_c": 40.0, "package": "", **more}


def group(name, members, kind, **conditions):
    return Group(name, tuple(members), 2, kind, MappingProxyType(conditions))


def run(rows, groups=None, ruleset=None):
    table = compute(pd.DataFrame(rows), DATA)
    return circuit.apply(table, DATA, ruleset, groups={g.name: g for g in groups or []})


def test_series_stack_feeds_each_member_its_worst_share():
    res = run([electrolytic("C1", r_balance_ohm=100e3, r_balance_tol_pct=1.0),
               electrolytic("C2", r_balance_ohm=100e3, r_balance_tol_pct=1.0)],
              [group("LINK", ["C1", "C2"], "series", v_dc=400.0)])
    t = res.table
    # Reference sheet section 4: 240 V capacitive (the worse), 202.0 V resistive.
    assert t["v_share_cap_v"].tolist() == pytest.approx([240.0, 240.0])
    assert t["v_share_dc_v"].tolist() == pytest.approx([202.0, 202.0])
    assert t["applied_peak_v"].tolist() == pytest.approx([240.0, 240.0])
    assert t["voltage_ratio"].tolist() == pytest.approx([240 / 250] * 2)
    assert t["v_dc"].tolist() == pytest.approx([200.0, 200.0])  # the nominal share
    # The stack is one node: 400 V on 120 uF / 2 = 60 uF (maximum capacitances): 4.8 J.
    assert t["node_energy_j"].tolist() == pytest.approx([0.5 * 60e-6 * 400 ** 2] * 2)
    (g,) = res.groups
    assert (g["kind"], g["members"], g["v_stack_v"]) == ("series", ["C1", "C2"], 400.0)
    assert g["c_eq_f"] == pytest.approx(50e-6)
    assert [s["v_share_cap_v"] for s in g["shares"]] == pytest.approx([240.0, 240.0])
    assert not len(res.verdicts)


def test_series_stack_resistive_share_can_govern():
    # Balancing resistors of 10 % tolerance on two 1 % capacitors: 110k/(110k+90k) x 400 V = 220 V
    # beats the capacitive 1.01/0.99 split (arithmetic).
    res = run([electrolytic("C1", tol=1.0, r_balance_ohm=100e3, r_balance_tol_pct=10.0),
               electrolytic("C2", tol=1.0, r_balance_ohm=100e3, r_balance_tol_pct=10.0)],
              [group("LINK", ["C1", "C2"], "series", v_dc=400.0)])
    assert res.table["v_share_dc_v"].tolist() == pytest.approx([220.0, 220.0])
    assert res.table["applied_peak_v"].tolist() == pytest.approx([220.0, 220.0])


def test_series_stack_without_balancing_resistors_is_no_data():
    res = run([electrolytic("C1"), electrolytic("C2")],
              [group("LINK", ["C1", "C2"], "series", v_dc=400.0)])
    v = res.verdicts
    assert v["rule_id"].tolist() == [circuit.SERIES_BALANCE] * 2
    assert v["status"].tolist() == ["nodata"] * 2
    assert "r_balance_ohm" in v["message"].iloc[0]
    assert res.table["v_share_dc_v"].isna().all()
    assert res.table["applied_peak_v"].tolist() == pytest.approx([240.0, 240.0])


def test_bank_meets_the_requirement_as_a_whole():
    # Three 100 uF -20 % parts: 240 uF worst case together, 80 uF each; need 200 uF.
    rows = [electrolytic(f"C{i}", v_dc=24.0) for i in (1, 2, 3)]
    res = run(rows, [group("BULK", ["C1", "C2", "C3"], "bank", c_min_f=200e-6)])
    t = res.table
    assert t["bank_c_worst_f"].tolist() == pytest.approx([240e-6] * 3)
    assert t["bank_c_margin"].tolist() == pytest.approx([1.2] * 3)
    assert t["c_margin"].isna().all()  # no member has to meet it alone
    (g,) = res.groups
    assert (g["kind"], g["c_eq_f"], g["c_min_f"]) == ("bank", pytest.approx(300e-6), 200e-6)
    assert g["c_margin"] == pytest.approx(1.2)
    # Energy of the bank: 360 uF (maximum) at 24 V (arithmetic, 1/2 C V^2).
    assert g["energy_j"] == pytest.approx(0.5 * 360e-6 * 24 ** 2)


def test_bank_shares_its_ripple_current_by_capacitance():
    rows = [electrolytic("C1", c_f=300e-6, v_dc=24.0), electrolytic("C2", c_f=100e-6, v_dc=24.0)]
    res = run(rows, [group("BULK", ["C1", "C2"], "bank", i_ripple_a=2.0)])
    assert res.table["i_ripple_a"].tolist() == pytest.approx([1.5, 0.5])


def test_bleeder_discharge_and_safety_metrics():
    # 100 uF (+20 %: 120 uF) at 400 V through 20 kohm (arithmetic of V0 exp(-t/RC)).
    res = run([electrolytic("C1", v_dc=400.0, voltage_v=450.0, r_bleeder_ohm=20e3,
                            t_discharge_max_s=10.0)])
    t = res.table.iloc[0]
    tau = 20e3 * 120e-6
    assert t["t_to_60v_s"] == pytest.approx(tau * math.log(400 / 60))
    assert t["discharge_s"] == pytest.approx(tau * math.log(400 / 60))  # default safe 60 V
    assert t["v_after_1s_v"] == pytest.approx(400 * math.exp(-1 / tau))
    assert t["charge_after_5s_uc"] == pytest.approx(120e-6 * 400 * math.exp(-5 / tau) * 1e6)
    assert t["discharge_ratio"] == pytest.approx(tau * math.log(400 / 60) / 10.0)
    assert t["shock_energy_j"] == pytest.approx(0.5 * 120e-6 * 400 ** 2)


def test_no_shock_energy_below_100_volts():
    res = run([electrolytic("C1", c_f=0.1, v_dc=48.0)])
    assert math.isnan(res.table["shock_energy_j"].iat[0])
    assert res.table["energy_j"].iat[0] == pytest.approx(0.5 * 0.12 * 48 ** 2)


def test_surge_from_slew_or_source_resistance_and_stack_current():
    res = run([electrolytic("C1", v_dc=12.0, slew_v_per_s=12000.0),
               electrolytic("C2", v_dc=12.0, r_source_ohm=2.0)])
    # 120 uF (maximum) x 12 V/ms = 1.44 A; 12 V / 2 ohm = 6 A (arithmetic).
    assert res.table["surge_a"].tolist() == pytest.approx([1.44, 6.0])
    res = run([electrolytic("C1", r_balance_ohm=1e5, r_balance_tol_pct=1.0),
               electrolytic("C2", r_balance_ohm=1e5, r_balance_tol_pct=1.0)],
              [group("LINK", ["C1", "C2"], "series", v_dc=400.0, slew_v_per_s=1000.0)])
    # The stack's current flows through both: 60 uF x 1 V/ms = 60 mA.
    assert res.table["surge_a"].tolist() == pytest.approx([0.06, 0.06])


def test_ripple_rise_feeds_the_operating_temperature_and_life():
    rules = load_rules(["industrial"])
    row = electrolytic("C1", v_dc=24.0, i_ripple_a=1.0, esr_ohm=0.2, rth_c_per_w=40.0,
                       life_l0_h=2000.0, life_t0_c=105.0, life_h=10000.0, t_rise_c=3.0)
    table = compute(pd.DataFrame([row]), DATA)
    t = circuit.apply(table, DATA, rules).table.iloc[0]
    # 1 A^2 x 0.2 ohm x 40 degC/W = 8 degC > the stated 3 degC: operating 48 degC (arithmetic).
    assert t["ripple_rise_c"] == pytest.approx(8.0)
    assert t["t_operating_c"] == pytest.approx(48.0)
    assert t["t_rise_c"] == 3.0  # the condition as given stays
    assert t["life_est_h"] == pytest.approx(2000.0 * 2 ** ((105 - 48) / 10))
    assert t["life_ratio"] == pytest.approx(t["life_est_h"] / 10000.0)
    assert t["t_operating_c_basis"] == ""  # the part's own thermal resistance


def test_generic_thermal_resistance_marks_the_verdicts_generic():
    rules = load_rules(["industrial"])
    row = electrolytic("C1", v_dc=24.0, i_ripple_a=1.0, esr_ohm=0.2, package="12.5x25",
                       life_l0_h=2000.0, life_h=10000.0)
    table = compute(pd.DataFrame([row]), DATA)
    t = circuit.apply(table, DATA, rules).table.iloc[0]
    assert t["ripple_rise_c"] == pytest.approx(0.2 * 36.2)
    assert t["t_operating_c_basis"] == "generic" and t["life_ratio_basis"] == "generic"


# --- the sample board -------------------------------------------------------------------------


@pytest.fixture(scope="module")
def sample():
    return run_audit(str(BOM), str(DESIGN), AuditOptions(parts=str(PARTS)))


def _verdict(report, refdes, rule_id):
    v = report.verdicts
    return v[(v.refdes == refdes) & (v.rule_id == rule_id)].iloc[0]


def test_sample_series_stack_shows_the_240_volt_member_failure(sample):
    # Reference sheet section 4: 2 x 100 uF +/-20 % on 400 V gives 240 V; the DC link pair is
    # 220 uF +/-20 % on 400 V, so the same 240 V: 96 % of 250 V against the SRC sheet's 80 %
    # (benign). Split evenly the member would see 200 V = 80 % and pass.
    for refdes in ("C4", "C5"):
        row = _verdict(sample, refdes, "IND-ALE-V")
        assert row.status == "fail"
        assert row.value == pytest.approx(240 / 250)
        assert "240 V peak" in row.message
    g = next(g for g in sample.groups if g["name"] == "DC_LINK")
    assert g["kind"] == "series" and g["members"] == ["C4", "C5"]
    assert [s["v_share_cap_v"] for s in g["shares"]] == pytest.approx([240.0, 240.0])
    # R12, R13: 100 kohm 1 % with 0.55 mA leakage (parts data) on the other side (divider model).
    assert [s["v_share_dc_v"] for s in g["shares"]] == pytest.approx(
        [101e3 * (400 + 99e3 * 0.55e-3) / 200e3] * 2)


def test_sample_bleeder_and_energy_cautions(sample):
    # 47 kohm bleeder parallel to the 200 kohm balancing string, 132 uF (two 264 uF in series)
    # from 400 V to 60 V (arithmetic): IEC 60204-1 asks for 5 s; DOE practice: 10 J at >= 100 V.
    r = 47e3 * 200e3 / 247e3
    row = _verdict(sample, "C4", "IND-SAFE-60204")
    assert row.status == "warn"
    assert row.value == pytest.approx(r * 132e-6 * math.log(400 / 60))
    assert _verdict(sample, "C4", "IND-SAFE-DOE").value == pytest.approx(0.5 * 132e-6 * 400 ** 2)
    cautions = [c for c in sample.cautions if c.startswith("IEC 60204-1")]
    assert len(cautions) == 1 and "C4, C5" in cautions[0]
    assert "local electrical codes" in cautions[0] and "licensed practice" in cautions[0]
    assert any(c.startswith("DOE electrical safety practice") for c in sample.cautions)


def test_sample_bank_and_parts_findings(sample):
    g = next(g for g in sample.groups if g["name"] == "+24V_BULK")
    assert g["kind"] == "bank" and g["members"] == ["C11", "C12", "C13", "C38"]
    assert _verdict(sample, "C38", "IND-BANK-C").status == "pass"
    # C38 alone (1000 uF -20 % = 800 uF) would not meet the 820 uF need; the bank does.
    assert g["c_margin"] > 1.0 > 800e-6 / 820e-6
    # Surge 1.2 mF x 12 V/ms = 14.4 A against the 10 A rating of the parts data (arithmetic).
    assert _verdict(sample, "C38", "IND-SURGE").value == pytest.approx(1.44)
    # The parts data says 105 degC where the BOM text says 85C: a warning naming both.
    row = _verdict(sample, "C63", "parts.conflict")
    assert row.status == "warn" and "105 degC" in row.message and "85 degC" in row.message


def test_sample_json_report_carries_the_circuit_keys(sample):
    schema = json.loads(resources.files("bomcheck.schemas").joinpath("report.schema.json")
                        .read_text("utf-8"))
    data = json.loads(sample.to_json())
    jsonschema.validate(data, schema)
    assert [i["role"] for i in data["inputs"]] == ["bom", "design", "parts"]
    by = {p["refdes"]: p for p in data["placements"]}
    assert {"energy_j", "discharge_s", "surge_a", "life_est_h", "life_ratio", "v_share_cap_v",
            "v_share_dc_v"} <= set(by["C4"]["metrics"])
    assert {"ripple_rise_c", "surge_a", "life_ratio"} <= set(by["C38"]["metrics"])
    assert "v_share_cap_v" not in by["C38"]["metrics"]  # series members only
    assert {g["name"] for g in data["groups"]} == {"DC_LINK", "+24V_BULK"}
    assert sample.to_json() == run_audit(str(BOM), str(DESIGN),
                                         AuditOptions(parts=str(PARTS))).to_json()


def test_sample_without_parts_still_audits():
    report = run_audit(str(BOM), str(DESIGN))
    assert _verdict(report, "C4", "IND-ALE-V").status == "fail"
    assert _verdict(report, "C4", "IND-LIFE").status == "nodata"  # no rated life without parts


def test_strict_set_asks_solid_tantalum_for_its_series_resistance(sample):
    report = run_audit(str(BOM), str(DESIGN), AuditOptions(rules=("strict",), parts=str(PARTS)))
    row = _verdict(report, "C14", "EEE-TAN-SERIES-R")
    assert row.status == "nodata" and "r_source_ohm" in row.message


# --- the design-sheet columns the stage reads -------------------------------------------------


def test_design_sheet_circuit_columns_csv_and_toml(tmp_path):
    from bomcheck.parse.design import read_design

    csv = tmp_path / "d.csv"
    csv.write_text(
        "refdes,members,kind,v_dc,r_balance_ohm,r_balance_tol_pct,r_bleeder_ohm,"
        "t_discharge_max_s,slew_v_per_s,r_source_ohm,i_ripple_a,f_ripple_hz\n"
        "LINK,C1-C2,series,400 V,100 kohm,1,47 kohm,10 s,,47 ohm,0.9 A,100 Hz\n"
        "BULK,C3-C4,bank,24,,,10 kohm,,12 V/ms,,1.5 A,50 kHz\n", encoding="utf-8")
    toml = tmp_path / "d.toml"
    toml.write_text(
        '[groups.LINK]\nmembers = "C1-C2"\nkind = "series"\nv_dc = "400 V"\n'
        'r_balance_ohm = "100 kohm"\nr_balance_tol_pct = "±1 %"\nr_bleeder_ohm = "47 kohm"\n'
        't_discharge_max_s = "10 s"\nr_source_ohm = 47\ni_ripple_a = "900 mA"\n'
        'f_ripple_hz = "100 Hz"\n'
        '[groups.BULK]\nmembers = "C3-C4"\nkind = "bank"\nv_dc = 24\nr_bleeder_ohm = "10 kohm"\n'
        'slew_v_per_s = "12 V/ms"\ni_ripple_a = "1.5 A"\nf_ripple_hz = "50 kHz"\n',
        encoding="utf-8")
    for path in (csv, toml):
        d = read_design(str(path))
        c = d.conditions
        # Per-member values reach the members; whole-group values stay on the group.
        assert c.loc[["C1", "C2"], "r_balance_ohm"].tolist() == [100e3, 100e3]
        assert c.loc[["C1", "C2"], "r_balance_tol_pct"].tolist() == pytest.approx([1.0, 1.0])
        assert c.loc[["C1", "C2"], "i_ripple_a"].tolist() == pytest.approx([0.9, 0.9])
        assert c.loc[["C1", "C2"], "r_bleeder_ohm"].isna().all()
        assert c.loc[["C3", "C4"], "slew_v_per_s"].tolist() == pytest.approx([12000.0] * 2)
        assert c.loc[["C3", "C4"], "i_ripple_a"].isna().all()  # shared by the stage
        link, bulk = d.groups["LINK"], d.groups["BULK"]
        assert (link.kind, link.conditions["r_bleeder_ohm"]) == ("series", 47e3)
        assert link.conditions["r_source_ohm"] == 47.0
        assert link.conditions["t_discharge_max_s"] == 10.0
        assert (bulk.kind, bulk.conditions["i_ripple_a"]) == ("bank", 1.5)
        assert bulk.conditions["f_ripple_hz"] == pytest.approx(50e3)


def test_design_sheet_circuit_column_of_the_wrong_dimension(tmp_path):
    from bomcheck.parse.design import read_design
    from bomcheck.errors import InputError

    path = tmp_path / "d.csv"
    path.write_text("refdes,v_dc,r_bleeder_ohm\nC1,400,47 uF\n", encoding="utf-8")
    with pytest.raises(InputError) as info:
        read_design(str(path))
    assert info.value.row == 2 and info.value.column == "r_bleeder_ohm"


def test_bank_discharges_through_every_bleeder_on_its_node():
    # Two 100 uF members (120 uF maximum each) with 20 kohm each and 10 kohm on the bank's row:
    # 5 kohm across 240 uF (arithmetic of parallel resistances).
    rows = [electrolytic("C1", v_dc=400.0, voltage_v=450.0, r_bleeder_ohm=20e3),
            electrolytic("C2", v_dc=400.0, voltage_v=450.0, r_bleeder_ohm=20e3)]
    res = run(rows, [group("BULK", ["C1", "C2"], "bank", r_bleeder_ohm=10e3)])
    assert res.table["r_discharge_ohm"].tolist() == pytest.approx([5e3, 5e3])
    assert res.table["t_to_60v_s"].tolist() == pytest.approx(
        [5e3 * 240e-6 * math.log(400 / 60)] * 2)
    assert res.groups[0]["discharge_s"] == pytest.approx(5e3 * 240e-6 * math.log(400 / 60))


@pytest.mark.parametrize("design", [
    "refdes,v_dc,t_ambient_c,r_bleeder_ohm\nC1,12,40,0\n",
    "refdes,members,kind,v_dc,r_bleeder_ohm\nBANK,C1,bank,12,0\n",
])
def test_a_0_ohm_bleeder_is_an_input_error_without_numpy_warnings(tmp_path, design, recwarn):
    # A 0 ohm bleeder would short the capacitor: an entry error (an empty cell means "none"),
    # never a 0 s discharge that passes.
    from bomcheck.errors import InputError

    (tmp_path / "b.csv").write_text("Designator,Value\nC1,10uF 50V X7R 1206\n", encoding="utf-8")
    (tmp_path / "d.csv").write_text(design, encoding="utf-8")
    with pytest.raises(InputError, match="r_bleeder_ohm"):
        run_audit(str(tmp_path / "b.csv"), str(tmp_path / "d.csv"))
    assert not [w for w in recwarn if issubclass(w.category, RuntimeWarning)]


def test_voltage_after_a_zero_resistance_warns_nothing(recwarn):
    assert circuit.voltage_after(1.0, 0.0, 1e-6, 10.0) == 0.0
    assert not recwarn.list
