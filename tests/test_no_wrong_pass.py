"""No wrong pass: small invented boards, one per class of mistake, through the command line.

Each board is a BOM and a design sheet written by the test; the expected verdict names its source
(a standard's clause, or common practice)."""

from __future__ import annotations

import json
import pathlib

import pytest

from bomcheck.cli.main import main
from conftest import verdicts



def test_negative_rail_on_a_polarized_part_is_a_reverse_voltage(run):
    # v_dc is the voltage across the part, + terminal to -: negative on an electrolytic is
    # reverse bias (System Reliability Center sheet; makers' practice: no repeated reverse).
    code, report = run("C1,1,CAP ALU 100UF 25V 20% 105C,AE-100-25\n",
                       "refdes,v_dc [V],t_ambient_c [degC],c_min_f,v_reverse_pk [V]\n"
                       "C1,-12,40,none,0\n")
    got, status = verdicts(report, "C1")
    assert got["IND-POL-REV"]["status"] == "fail" and status == "fail" and code == 1


def test_transient_above_the_rating_fails(run):
    # common practice: a transient above the rated voltage is outside the rating
    code, report = run("C1,1,CAP CER 0.1UF 50V 10% X7R 0603,KC-104-50\n",
                       "refdes,v_dc [V],v_transient_pk [V],t_ambient_c [degC],c_min_f\n"
                       "C1,5,60,40,none\n")
    got, status = verdicts(report, "C1")
    assert got["IND-TRANSIENT"]["status"] == "fail" and status == "fail" and code == 1


def test_ac_on_a_dc_rated_part_adds_its_peak(run):
    # NASA EEE-INST-002 Section C1 Table 4 note 1: DC plus peak AC. 40 V + sqrt(2) x 30 V =
    # 82.4 V on 100 V: 82 % against the film limit of 60 % (severe environment).
    code, report = run("C1,1,CAP FILM 1UF 100V 10% PET 85C,KF-105-100\n",
                       "refdes,v_dc [V],v_ac_rms [V],t_ambient_c [degC],c_min_f\n"
                       "C1,40,30,40,none\n")
    got, _ = verdicts(report, "C1")
    v = got["IND-FLM-V"]
    assert v["status"] == "fail" and v["value"] == pytest.approx((40 + 2 ** 0.5 * 30) / 100)


def test_dc_rated_part_on_an_ac_node_is_judged_on_the_ac_peak(run):
    # No DC given: the AC peak alone, sqrt(2) x 25 V = 35.4 V on 50 V = 71 % > 60 %: a firm fail,
    # not "missing v_dc".
    code, report = run("C1,1,CAP CER 0.1UF 50V 10% X7R 0603,KC-104-50\n",
                       "refdes,v_ac_rms [V],t_ambient_c [degC],c_min_f\n"
                       "C1,25,40,none\n")
    got, status = verdicts(report, "C1")
    assert got["IND-CER-V"]["status"] == "fail" and got["IND-CER-V"]["basis"] == "firm"


def test_unknown_technology_is_no_data_not_a_pass(run):
    # 33 V on a 35 V part of unknown technology: within the rating (backstop) but no derating
    # rule applies, so the voltage family has no verdict.
    code, report = run("C1,1,470uF 35V 105C,XX-470-35\n",
                       "refdes,v_dc [V],t_ambient_c [degC],c_min_f\n"
                       "C1,33,40,none\n")
    got, status = verdicts(report, "C1")
    assert status == "nodata" and "rules.no-voltage-rule" in got and code == 1


def test_ripple_heating_with_no_esr_on_a_part_already_too_hot_is_a_firm_failure(run):
    # Ripple heating is never negative: 110 degC ambient on a 105 degC part fails whatever the
    # ESR (common practice: never above the rated maximum temperature).
    code, report = run("C1,1,CAP ALU 100UF 25V 20% 105C,AE-100-25\n",
                       "refdes,v_dc [V],t_ambient_c [degC],c_min_f,v_reverse_pk [V],i_ripple_a [A]\n"
                       "C1,12,110,none,0,0.5\n")
    got, status = verdicts(report, "C1")
    assert got["IND-TMAX"]["status"] == "fail" and got["IND-TMAX"]["basis"] in ("firm", "bound")
    assert status == "fail"


def test_colder_than_the_rated_minimum_fails(run):
    # EIA-198: Y5V is rated -30..+85 degC; a -40 degC cold start is outside it (common practice).
    code, report = run("C1,1,CAP CER 1UF 16V 20% Y5V 0603,KC-105-16\n",
                       "refdes,v_dc [V],t_ambient_c [degC],t_ambient_min_c [degC],c_min_f\n"
                       "C1,3.3,40,-40,none\n")
    got, status = verdicts(report, "C1")
    assert got["IND-TMIN"]["status"] == "fail" and status == "fail"


def test_no_design_sheet_fails_the_default_gate(run):
    code, report = run("C1,1,CAP CER 0.1UF 50V 10% X7R 0603,KC-104-50\n", None)
    assert report["status"] == "nodata" and code == 1


@pytest.mark.parametrize("environment, status", [("severe", "fail"), ("benign", "warn")])
def test_environment_is_explicit_and_severe_by_default(run, environment, status):
    # System Reliability Center sheet, ceramic: 60 % severe, 70 % benign; 32.5 V on 50 V = 65 %.
    argv = () if environment == "severe" else ("--environment", "benign")
    code, report = run("C1,1,CAP CER 0.1UF 50V 10% X7R 0603,KC-104-50\n",
                       "refdes,v_dc [V],t_ambient_c [degC],c_min_f\nC1,32.5,40,none\n", *argv)
    got, _ = verdicts(report, "C1")
    assert got["IND-CER-V"]["status"] == status and report["environment"] == environment


def test_a_failing_value_never_prints_as_equal_to_its_limit(run):
    # 35.002 V on 50 V = 70.004 % against the benign 70 % limit: the message must show it.
    code, report = run("C1,1,CAP CER 0.1UF 50V 10% X7R 0603,KC-104-50\n",
                       "refdes,v_dc [V],t_ambient_c [degC],c_min_f\nC1,35.002,40,none\n",
                       "--environment", "benign")
    got, _ = verdicts(report, "C1")
    v = got["IND-CER-V"]
    assert v["status"] == "fail"
    assert "70.004 % > 70 % limit" in v["message"] or "70.004 % > 70.000 % limit" in v["message"]


def test_series_stack_share_with_unknown_leakage_fails_firmly(run, tmp_path):
    # Series sharing, DC steady state (textbook divider V1 = V R1 / (R1 + R2)): two 100 kohm
    # +/-5 % balancing resistors on 400 V give at worst 400 x 1.05 / 2 = 210 V on one member,
    # leakage taken at none (its kindest value); the capacitive share at +/-1 % is 202 V, so the
    # DC share governs. 210 V on 250 V = 84 % > 70 % (severe, aluminium electrolytic): a failure
    # whatever the leakage, so decided at the bound, not capped as "generic".
    bom = ("C1,1,CAP ALU 100UF 250V 1% 105C,AE-101-250\n"
           "C2,1,CAP ALU 100UF 250V 1% 105C,AE-101-250\n")
    design = ("refdes,group,kind,v_dc [V],t_ambient_c [degC],c_min_f,v_reverse_pk [V],"
              "r_balance_ohm [ohm],r_balance_tol_pct [%],r_bleeder_ohm [ohm]\n"
              "LINK,LINK,series,400,40,none,0,100000,5,\n"
              "C1,LINK,,,40,none,0,,,\n"
              "C2,LINK,,,40,none,0,,,\n")
    code, report = run(bom, design)
    got, status = verdicts(report, "C1")
    v = got["IND-ALE-V"]
    assert v["status"] == "fail" and v["basis"] == "bound"
    assert v["value"] == pytest.approx(210 / 250, rel=1e-3)


def test_an_unreadable_row_keeps_the_board_from_passing(run):
    # A capacitor row with no designator was not audited: the board is not shown to pass.
    code, report = run("C1,1,CAP CER 0.1UF 50V 10% X7R 0603,KC-104-50\n"
                       ",1,CAP CER 10UF 6.3V 10% X5R 0805,KC-106-6\n",
                       "refdes,v_dc [V],t_ambient_c [degC],c_min_f\nC1,5,40,none\n")
    got, status = verdicts(report, "C1")
    assert status == "pass" and report["totals"]["unreadable_rows"] == 1
    assert report["status"] == "nodata" and code == 1


def test_nothing_audited_is_not_a_pass(run):
    code, report = run("R1,1,RES 10K 1% 0402,KR-103\n", "refdes,v_dc [V]\n")
    assert report["totals"]["audited"] == 0
    assert report["status"] == "nodata" and code == 1


def test_hidden_rows_are_counted_and_warned_not_lost(tmp_path, monkeypatch, capsys):
    # Hidden rows are not BOM data unless --include-hidden; every output says how many were
    # skipped (the totals, the accounting line and the input warnings).
    import openpyxl

    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["Designator", "Description"])
    ws.append(["C1", "CAP CER 0.1UF 50V 10% X7R 0603"])
    ws.append(["C2", "CAP CER 10UF 6.3V 10% X5R 0805"])
    ws.row_dimensions[3].hidden = True
    wb.save(tmp_path / "bom.xlsx")
    (tmp_path / "design.csv").write_text("refdes,v_dc [V],t_ambient_c [degC],c_min_f\n"
                                         "C1,5,40,none\nC2,5,40,none\n", encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    main(["audit", "bom.xlsx", "--design", "design.csv", "--json", "out.json", "--quiet",
          "--no-config"])
    out = capsys.readouterr().out
    report = json.loads((tmp_path / "out.json").read_text(encoding="utf-8"))
    assert report["totals"]["hidden_rows"] == 1 and "hidden rows not read 1" in out
    assert any("hidden-rows" in w["message"] for w in report["input_warnings"])
    # Asked for, the hidden row is read, and C2 (5 V on 6.3 V) fails.
    assert main(["audit", "bom.xlsx", "--design", "design.csv", "--include-hidden", "--quiet",
                 "--no-config"]) == 1


@pytest.mark.parametrize("header, cell, rated", [
    ("Temp (K)", "358", 84.85),     # 358 K = 84.85 degC (SI: T/degC = T/K - 273.15)
    ("Temp", "358 K", 84.85),
    ("Temp (degF)", "221", 105.0),  # (221 - 32) x 5/9 = 105 degC
    ("Temp (°C)", "105", 105.0),
])
def test_a_rated_temperature_in_kelvin_or_fahrenheit_is_converted(tmp_path, header, cell, rated):
    from bomcheck.parse.importer import read_bom

    (tmp_path / "bom.csv").write_text(f"Designator,Description,{header}\n"
                                      f"C1,CAP ALU 100UF 35V 20%,{cell}\n", encoding="utf-8")
    placements = read_bom(str(tmp_path / "bom.csv")).placements
    assert placements["temp_max_c"].iat[0] == pytest.approx(rated)


def test_design_warnings_reach_every_report(tmp_path, monkeypatch):
    # A design warning (a coldest ambient above the operating one) is in every output a reviewer
    # reads: terminal, JSON, Markdown, HTML, workbook, JUnit and SARIF.
    import zipfile

    (tmp_path / "bom.csv").write_text("Designator,Description\nC1,CAP CER 0.1UF 50V 10% X7R 0603\n",
                                      encoding="utf-8")
    (tmp_path / "design.csv").write_text(
        "refdes,v_dc [V],t_ambient_c [degC],t_ambient_min_c [degC],c_min_f\nC1,5,40,50,none\n",
        encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    main(["audit", "bom.csv", "--design", "design.csv", "--no-config", "--quiet",
          "--json", "r.json", "--markdown", "r.md", "--html", "r.html", "--xlsx", "r.xlsx",
          "--junit", "r.xml", "--sarif", "r.sarif"])
    warning = json.loads((tmp_path / "r.json").read_text())["input_warnings"][0]["message"]
    key = "the coldest ambient cannot be above the operating ambient"
    assert key in warning
    for name in ("r.md", "r.html", "r.xml", "r.sarif"):
        assert key in (tmp_path / name).read_text(encoding="utf-8"), name
    with zipfile.ZipFile(tmp_path / "r.xlsx") as z:
        strings = z.read("xl/sharedStrings.xml").decode("utf-8") if "xl/sharedStrings.xml" in \
            z.namelist() else "".join(z.read(n).decode("utf-8") for n in z.namelist()
                                      if n.startswith("xl/worksheets/"))
    assert key in strings


# --- the design sheet read as numbers, the line merge and the circuit re-run (review) ----------

_CER50 = "C1,1,CAP CER 0.1UF 50V 10% X7R 0603,KC-104-50\n"


@pytest.mark.parametrize("cell", ["45", " 45 ", "45.", "+45", "-45", "045", "4.5e1", "45e0",
                                  "45,0", "\uff14\uff15", "\u0664\u0665", "45000 mV"])
def test_every_spelling_of_a_stressed_rail_fails(run, cell):
    # 45 V on a 50 V ceramic is 90 % > 60 % (System Reliability Center derating sheet, ceramic):
    # the bare-number fast path and the strict parser read each spelling alike (full-width and
    # Arabic-Indic digits, a decimal comma, a negative rail on a non-polarized part as its
    # magnitude), never as a smaller number.
    code, report = run(_CER50, f'refdes,v_dc [V],t_ambient_c [degC],c_min_f\nC1,"{cell}",40,none\n')
    got, status = verdicts(report, "C1")
    assert got["IND-CER-V"]["status"] == "fail" and status == "fail" and code == 1


@pytest.mark.parametrize("cell", ["1e400", "-1e400", "NaN", "inf", "0x10", "1_000", "1,500"])
def test_an_unreadable_design_number_is_an_input_error(run, cell, capsys):
    # common practice: a cell that is not one plain number is refused (exit 2), never read as 0
    # or as a partial number that could pass.
    pathlib.Path("bom.csv").write_text("Designator,Qty,Description,Manufacturer Part Number\n"
                                       + _CER50, encoding="utf-8")
    pathlib.Path("design.csv").write_text(
        f'refdes,v_dc [V],t_ambient_c [degC],c_min_f\nC1,"{cell}",40,none\n', encoding="utf-8")
    assert main(["audit", "bom.csv", "--design", "design.csv", "--no-config", "--quiet"]) == 2
    err = capsys.readouterr().err
    assert "design.csv, row 2, column 'v_dc [V]'" in err and "Traceback" not in err


@pytest.mark.parametrize("header,cell", [("v_dc [mV]", "45000"), ("v_dc [kV]", "0.045"),
                                         ("v_dc (V)", "45"), ("v_dc [V pk]", "45")])
def test_a_bare_number_takes_the_header_unit(run, header, cell):
    # common practice: a bare number is in the header's unit; 45 V on 50 V ceramic fails.
    code, report = run(_CER50, f"refdes,{header},t_ambient_c [degC],c_min_f\nC1,{cell},40,none\n")
    assert verdicts(report, "C1")[0]["IND-CER-V"]["status"] == "fail" and code == 1


def test_a_designator_row_that_names_no_placement_leaves_it_without_data(run):
    # "c01" is not C1 (leading zero): C1 has no conditions, so no data, not a pass.
    code, report = run(_CER50, "refdes,v_dc [V],t_ambient_c [degC],c_min_f\nc01,5,40,none\n")
    got, status = verdicts(report, "C1")
    assert status == "nodata" and got["design.missing"]["status"] == "nodata" and code == 1


def test_two_rows_for_one_designator_are_an_input_error(run, capsys):
    # common practice: two rows giving conditions for C1 (any case) contradict; refused.
    pathlib.Path("bom.csv").write_text("Designator,Qty,Description,Manufacturer Part Number\n"
                                       + _CER50, encoding="utf-8")
    pathlib.Path("design.csv").write_text("refdes,v_dc [V],t_ambient_c [degC],c_min_f\n"
                                          "C1,5,40,none\nc1,45,40,none\n", encoding="utf-8")
    assert main(["audit", "bom.csv", "--design", "design.csv", "--no-config", "--quiet"]) == 2
    assert "row 3" in capsys.readouterr().err


def test_a_group_and_its_member_row_each_rule_their_own_placements(run):
    # The designator row wins over the rail for C1 (README, design sheet); C2 keeps the rail's
    # 45 V on 50 V ceramic and fails.
    code, report = run(_CER50 + "C2,1,CAP CER 0.1UF 50V 10% X7R 0603,KC-104-50\n",
                       "refdes,kind,members,v_dc [V],t_ambient_c [degC],c_min_f\n"
                       "RAIL,rail,C1 C2,45,40,none\nC1,,,5,40,none\n")
    assert verdicts(report, "C2")[0]["IND-CER-V"]["status"] == "fail"
    assert verdicts(report, "C1")[1] == "pass" and code == 1


def test_same_text_lines_keep_their_own_voltage_column(tmp_path, monkeypatch, capsys):
    # Two lines with one description but different Voltage cells are read line by line: 14 V on
    # the 16 V part is 88 % > 60 % (System Reliability Center derating sheet, ceramic) and fails
    # whichever line comes first; the 50 V part passes.
    monkeypatch.chdir(tmp_path)
    for order in ((0, 1), (1, 0)):
        lines = ["C1,1,CAP CER 0.1UF X7R 0603,50V,KC-104\n",
                 "C2,1,CAP CER 0.1UF X7R 0603,16V,KC-104\n"]
        (tmp_path / "bom.csv").write_text("Designator,Qty,Description,Voltage,"
                                          "Manufacturer Part Number\n"
                                          + "".join(lines[i] for i in order), encoding="utf-8")
        (tmp_path / "design.csv").write_text("refdes,v_dc [V],t_ambient_c [degC],c_min_f\n"
                                             "C1,14,40,none\nC2,14,40,none\n", encoding="utf-8")
        assert main(["audit", "bom.csv", "--design", "design.csv", "--no-config", "--quiet",
                     "--json", "out.json"]) == 1
        report = json.loads((tmp_path / "out.json").read_text(encoding="utf-8"))
        assert verdicts(report, "C2")[0]["IND-CER-V"]["status"] == "fail"
        assert verdicts(report, "C1")[1] == "pass"


def test_a_voltage_column_below_the_description_wins(run, tmp_path):
    # README, columns: where a column and the text disagree the lower rated voltage is used and
    # the conflict is a finding. 14 V on 16 V ceramic fails.
    (tmp_path / "bom.csv").write_text("Designator,Qty,Description,Voltage,Manufacturer Part "
                                      "Number\nC1,1,CAP CER 0.1UF 50V X7R 0603,16V,KC-104\n",
                                      encoding="utf-8")
    (tmp_path / "design.csv").write_text("refdes,v_dc [V],t_ambient_c [degC],c_min_f\n"
                                         "C1,14,40,none\n", encoding="utf-8")
    assert main(["audit", "bom.csv", "--design", "design.csv", "--no-config", "--quiet",
                 "--json", "out.json"]) == 1
    got, _ = verdicts(json.loads((tmp_path / "out.json").read_text(encoding="utf-8")), "C1")
    assert got["IND-CER-V"]["status"] == "fail"
    assert got["bom.column_conflict"]["status"] == "warn"


def test_parts_data_below_the_bom_text_is_restressed(run, tmp_path):
    # Parts data giving 16 V for a part the BOM calls 50 V: the lower value is used (README,
    # parts data), so the placement stresses are recomputed: 14 V on 16 V = 88 % > 60 % fails
    # (System Reliability Center derating sheet, ceramic). The bank's ripple heating with ESR
    # from the parts data also re-runs the stresses of its members.
    (tmp_path / "parts.csv").write_text("mpn,rated_voltage,esr\nKC-104-50,16V,0.01\n",
                                        encoding="utf-8")
    code, report = run(_CER50 + "C2,1,CAP CER 0.1UF 50V 10% X7R 0603,KC-104-50\n",
                       "refdes,kind,members,v_dc [V],t_ambient_c [degC],c_min_f,i_ripple_a [A],"
                       "f_ripple_hz [Hz]\nBANK,bank,C1 C2,14,40,none,0.5,100000\n",
                       "--parts", "parts.csv")
    for refdes in ("C1", "C2"):
        got, status = verdicts(report, refdes)
        assert got["IND-CER-V"]["status"] == "fail" and status == "fail"
    assert code == 1


@pytest.mark.parametrize("fail_on,code", [(None, 1), ("nodata", 1), ("warn", 1), ("fail", 0)])
def test_fail_on_gates_a_board_with_only_missing_data(run, fail_on, code):
    # README exit statuses: nodata is at or above the default gate; --fail-on fail lets it out
    # with 0 but the report still says nodata.
    extra = () if fail_on is None else ("--fail-on", fail_on)
    got, report = run(_CER50 + "C3,1,CAP CER 1UF 50V 10% X7R 0603,KC-105-50\n",
                      "refdes,v_dc [V],t_ambient_c [degC],c_min_f\nC1,5,40,none\n", *extra)
    assert got == code and report["status"] == "nodata"


@pytest.mark.parametrize("cell", ["TRUE", "false"])
def test_a_boolean_in_a_design_voltage_column_is_refused_not_read_as_a_number(
        tmp_path, capsys, cell):
    # A spreadsheet's TRUE/FALSE in v_dc once read as 1 V / 0 V on the fast path, so a 16 V
    # ceramic on a 48 V rail passed. It is an input error, as the text path always said.
    bom = tmp_path / "bom.csv"
    bom.write_text("Designator,Qty,Value,Description\n"
                   "C1,1,0.1uF,CAP CER 0.1UF 16V 10% X7R 0603\n", encoding="utf-8")
    design = tmp_path / "design.csv"
    design.write_text(f"refdes,v_dc [V],t_ambient_c [°C]\nC1,{cell},55\n", encoding="utf-8")
    assert main(["audit", str(bom), "--design", str(design), "--quiet", "--no-config"]) == 2
    assert cell in capsys.readouterr().err


@pytest.mark.parametrize("value, passes", [("100nF", True), ("100mF", False)])
def test_a_capacitance_no_part_of_its_technology_has_is_not_a_pass(run, value, passes):
    # A C0G ceramic of 100 mF (nF written as mF) met every check as read, so the slip passed.
    # MLCCs reach about 1 mF (value from memory); far above it the data is implausible: a
    # finding at nodata (bomcheck.spec.PLAUSIBLE_CAPACITANCE_F).
    code, report = run(f"C1,1,CAP CER {value} 50V 5% C0G 0603,KR-1\n",
                       "refdes,v_dc [V],t_ambient_c [°C],c_min_f\nC1,5,25,1e-8\n")
    (placement,) = report["placements"]
    assert (placement["status"] == "pass") is passes
    if not passes:
        assert placement["status"] == "nodata" and code == 1
        assert [f["code"] for f in report["import_findings"]] == ["capacitance_implausible"]
