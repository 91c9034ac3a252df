"""Tests of bomcheck.stress.circuit: the registry of circuit stresses and the stage end to end on
the sample board (series stack, bank, bleeder, parts data, JSON keys)."""

import json
import math
from importlib import resources
from pathlib import Path

import jsonschema
import pandas as pd
import pytest
from circuitcases import DATA, electrolytic, group, run

from bomcheck.evaluate.rules import DEFAULT_RULESET
from bomcheck.pipeline.audit import AuditOptions, run_audit
from bomcheck.stress import circuit
from bomcheck.stress.placement import compute

ROOT = Path(__file__).resolve().parents[1]
BOM = ROOT / "sample_boms" / "bw7-controller-bom.csv"
DESIGN = ROOT / "sample_boms" / "bw7-design.csv"
PARTS = ROOT / "sample_boms" / "bw7-parts.csv"


# --- the sample board -------------------------------------------------------------------------


@pytest.fixture(scope="module")
def sample(sample_report_for):
    """The sample board under the default rule set, with its parts data (shared)."""
    return sample_report_for(DEFAULT_RULESET)


def _verdict(report, refdes, rule_id):
    v = report.with_messages(report.verdicts)
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


def test_sample_without_parts_still_audits(sample_report_for):
    report = sample_report_for(DEFAULT_RULESET, parts=False)
    assert _verdict(report, "C4", "IND-ALE-V").status == "fail"
    assert _verdict(report, "C4", "IND-LIFE").status == "nodata"  # no rated life without parts


def test_strict_set_asks_solid_tantalum_for_its_series_resistance(sample_report_for):
    report = sample_report_for("strict")
    row = _verdict(report, "C14", "EEE-TAN-SERIES-R")
    assert row.status == "nodata" and "r_source_ohm" in row.message


# --- the driver ------------------------------------------------------------------------------


def test_registry_names_each_circuit_stress_once_and_every_added_column_is_listed():
    names = [s.name for s in circuit.STRESSES]
    assert len(names) == len(set(names))
    assert all(s.inputs or s.metrics for s in circuit.STRESSES)
    res = run([electrolytic("C1", v_dc=24.0, i_ripple_a=1.0, esr_ohm=0.2)])
    table = compute(pd.DataFrame([electrolytic("C1", v_dc=24.0, i_ripple_a=1.0, esr_ohm=0.2)]),
                    DATA)
    added = [c for c in res.table.columns if c not in table.columns]
    # The stage's own columns come last, in the listed order (the parts columns before them).
    assert [c for c in added if c in circuit.ADDED_COLUMNS] == [
        c for c in circuit.ADDED_COLUMNS if c in res.table.columns]
    assert list(res.table.columns[-len(circuit.ADDED_COLUMNS):]) == list(circuit.ADDED_COLUMNS)


def test_the_stage_joins_its_columns_once_without_fragmenting_the_table():
    import warnings

    rows = [electrolytic(f"C{i}", v_dc=24.0, i_ripple_a=0.5) for i in range(1, 5)]
    table = compute(pd.DataFrame(rows), DATA)
    with warnings.catch_warnings():
        warnings.simplefilter("error", pd.errors.PerformanceWarning)
        res = circuit.apply(table, DATA, groups={"B": group("B", ["C1", "C2"], "bank")})
    assert res.table["i_ripple_a"].tolist() == pytest.approx([0.5] * 4)


def test_only_placements_whose_inputs_changed_are_stressed_again(monkeypatch):
    calls = []
    real = circuit.stresses.metric_arrays

    def spy(cols, data):
        calls.append(cols.n)
        return real(cols, data)

    rows = [electrolytic("C1", v_dc=24.0), electrolytic("C2", v_dc=24.0, i_ripple_a=1.0,
                                                        esr_ohm=0.2, rth_c_per_w=40.0)]
    table = compute(pd.DataFrame(rows), DATA)
    monkeypatch.setattr(circuit.stresses, "metric_arrays", spy)
    res = circuit.apply(table, DATA)
    # Only C2 heats (1 A^2 x 0.2 ohm x 40 degC/W = 8 degC, arithmetic): one placement again.
    assert calls == [1]
    assert res.table["t_operating_c"].tolist() == pytest.approx([40.0, 48.0])
