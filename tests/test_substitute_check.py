"""The substitute check (``bomcheck.substitute.check``): alternates audited in every placement
of the part they replace, from a BOM or from text, with the verdict and its exit status."""

import pytest
from substitute_boards import board  # noqa: F401 (a fixture)
from substitute_boards import SAMPLE_DESIGN, alt, by_refdes, check, rules_of, sample_result

from bomcheck.cli.main import main
from bomcheck.parse.design import read_design
from bomcheck.parse.importer import read_bom
from bomcheck.substitute import Alternate, run_direct, run_substitute, substitute_inputs


def test_x5r_for_x7r_in_a_95_degc_placement_is_rejected(board):
    # EIA-198 class II code (secondary): X7R is rated -55..+125 degC, X5R only to +85 degC; C3
    # runs at 95 degC, so the X5R alternate is above its rating.
    (r,) = check(board, alt("TP-0603-103K-100-X7R", "CAP CER 10NF 100V 10% X5R 0603"))
    assert r.verdict == "rejected"
    c3 = by_refdes(r)["C3"]
    assert (c3.original_status, c3.proposed_status) == ("pass", "fail")
    assert rules_of(c3, "proposed")["IND-CER-TM"]["status"] == "fail"
    assert r.proposed_spec["temp_max_c"] == 85.0 and r.original_spec["temp_max_c"] == 125.0
    assert r.summary.startswith("Rejected for C3: rated 85 degC, the placement runs at 95 degC")
    assert "X5R replacing X7R" in r.summary


def test_lower_voltage_alternate_passes_low_placement_and_fails_high_one(board):
    # System Reliability Center derating sheet, ceramic benign column (industrial set
    # IND-CER-V): at most 70 % of rated. 16 V part: C1 at 3.3 V is 20.6 %, C2 at 24 V is 150 %.
    (r,) = check(board, alt("TP-0805-105K-50-X7R", "CAP CER 1UF 16V 10% X7R 0805"),
                 environment="benign")
    c1, c2 = by_refdes(r)["C1"], by_refdes(r)["C2"]
    assert c1.proposed_status == "pass"
    assert rules_of(c1, "proposed")["IND-CER-V"]["value"] == pytest.approx(3.3 / 16)
    assert c2.proposed_status == "fail"
    assert rules_of(c2, "proposed")["IND-CER-V"]["value"] == pytest.approx(24 / 16)
    # The original (50 V) passes in both.
    assert c1.original_status == c2.original_status == "pass"
    assert r.verdict == "rejected"
    rejected = [i for i in r.reasons if i.severity == "reject"]
    # C2 only; its 24 V also breaks the transient rule (within the rating, common practice)
    assert {i.refdes for i in rejected} == {("C2",)}
    assert any("24 V peak = 150 % of the rating, above the 70 % limit" in i.text
               for i in rejected)


def test_polymer_for_mno2_tantalum_changes_the_limit_that_applies(board):
    # Industrial set: MnO2 solid tantalum IND-TAN-V 80 % (warn 70 %; System Reliability Center
    # sheet, tantalum solid) and IND-TAN-HALF 50 % (makers' MnO2 practice, common practice);
    # polymer tantalum rated above 10 V: IND-TPO-V-HIGH 80 % (makers' polymer practice, common
    # practice). C4 sees 12 V + 5 % = 12.6 V on 16 V: 78.75 %.
    (r,) = check(board, alt("BW-C-226K-016", "CAP TANT POLYMER 22UF 16V 10% CASE C"),
                 environment="benign")
    c4 = by_refdes(r)["C4"]
    original, proposed = rules_of(c4, "original"), rules_of(c4, "proposed")
    assert original["IND-TAN-V"]["limit"] == pytest.approx(0.80)
    assert original["IND-TAN-V"]["status"] == "warn"  # 78.75 % is past the 70 % warn limit
    assert original["IND-TAN-HALF"]["limit"] == pytest.approx(0.50)
    assert not any(rule.startswith("IND-TAN-") for rule in proposed)
    assert proposed["IND-TPO-V-HIGH"]["limit"] == pytest.approx(0.80)
    assert proposed["IND-TPO-V-HIGH"]["value"] == pytest.approx(12.6 / 16)
    assert proposed["IND-TPO-V-HIGH"]["status"] == "pass"
    # The proposed text gives no rated temperature: at 55 degC it passes even at the lowest
    # usual rating of polymer tantalum (105 degC), so the pass stands at that bound.
    assert (c4.original_status, c4.proposed_status) == ("warn", "pass")
    assert proposed["IND-TMAX"]["status"] == "pass"
    # A change of technology is never a drop-in (common practice: ESR and stability differ).
    assert r.verdict == "review"
    assert any(i.topic == "technology" for i in r.reasons)


def test_sample_alternates_show_every_verdict():
    result = sample_result()
    assert {r.verdict for r in result.results} == {"drop-in", "review", "rejected"}
    assert result.rejected and result.status == "rejected"


def test_inputs_already_read_give_what_the_files_give(board):
    # The pure call on read values is the one the file call makes: same verdicts, same inputs.
    bom, design = board
    alternates = [alt("C3", "CAP CER 10NF 100V 10% X5R 0603"),
                  alt("C5", "CAP CER 100PF 50V 5% C0G 0402")]
    pure = substitute_inputs(read_bom(bom), read_design(design), None, alternates)
    assert pure.to_json() == run_substitute(bom, design, alternates).to_json()
    assert [r.verdict for r in pure.results] == ["rejected", "drop-in"]


# --- direct form ------------------------------------------------------------------------------

def test_direct_form_with_inline_conditions():
    # EIA-198 (secondary): X5R to +85 degC, here at 85 + 10 degC of self-heating.
    result = run_direct("CAP CER 10NF 100V 10% X7R 0603",
                        [Alternate("original", cells={"description":
                                                      "CAP CER 10NF 100V 10% X5R 0603"})],
                        None, ["C12"], {"v_dc": "24 V", "t_ambient_c": "85", "t_rise_c": "10"})
    (r,) = result.results
    assert r.match == "direct" and r.refdes == ("C12",)
    assert by_refdes(r)["C12"].conditions == "24 V, 95 degC"
    assert r.verdict == "rejected"


def test_direct_form_with_a_design_sheet():
    result = run_direct("CAP CER 10NF 100V 10% X7R 0603",
                        [Alternate("original", cells={"description":
                                                      "CAP CER 10NF 100V 10% X7R 0603"})],
                        str(SAMPLE_DESIGN), ["C42"])
    assert result.results[0].verdict == "drop-in"
    assert by_refdes(result.results[0])["C42"].conditions == "25.2 V, 95 degC"


# --- exit status ------------------------------------------------------------------------------

def test_cli_exit_codes(board, tmp_path, capsys):
    bom, design = board
    rejected = tmp_path / "rejected.csv"
    rejected.write_text("original,mpn,description\n"
                        "TP-0603-103K-100-X7R,KV-X5R,CAP CER 10NF 100V 10% X5R 0603\n",
                        encoding="utf-8")
    fine = tmp_path / "fine.csv"
    fine.write_text("original,mpn,description\n"
                    "C3,KV-X7R,CAP CER 10NF 100V 10% X7R 0603\n", encoding="utf-8")
    unknown = tmp_path / "unknown.csv"
    unknown.write_text("original,mpn,description\nNOPE,KV-X7R,CAP CER 10NF 100V X7R\n",
                       encoding="utf-8")
    run = ["substitute", bom, "--design", design, "--alternates"]
    assert main([*run, str(rejected)]) == 1
    assert main([*run, str(fine)]) == 0
    assert main([*run, str(unknown)]) == 2
    assert main(["substitute", "--original", "CAP CER 10NF 100V X7R 0603", "--proposed",
                 "CAP CER 10NF 100V X5R 0603", "--v-dc", "24", "--t-ambient", "95"]) == 1
    assert main(["substitute", "--original", "CAP CER 10NF 100V X7R 0603", "--proposed",
                 "CAP CER 10NF 100V X5R 0603", "--v-dc", "5 A"]) == 2
    assert main(["substitute", bom]) == 2  # nothing to check
    err = capsys.readouterr().err
    assert "NOPE" in err and "wrong dimension" in err and "nothing to check" in err
