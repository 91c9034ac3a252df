"""The substitute check: alternates audited in every placement of the part they replace."""

import json
from importlib import resources
from io import StringIO
from pathlib import Path

import jsonschema
import pandas as pd
import pytest

from bomcheck.cli.main import main
from bomcheck.errors import InputError
from bomcheck.render.substitute_md import substitute_markdown
from bomcheck.substitute import (
    Alternate,
    SubstituteOptions,
    designator_list,
    read_alternates,
    run_direct,
    run_substitute,
)

ROOT = Path(__file__).resolve().parents[1]
SAMPLE_BOM = ROOT / "sample_boms" / "bw7-controller-bom.csv"
SAMPLE_DESIGN = ROOT / "sample_boms" / "bw7-design.csv"
SAMPLE_ALTERNATES = ROOT / "sample_boms" / "bw7-alternates.csv"

BOM = """\
Designator,Qty,Value,Description,Manufacturer,MPN,Package,Voltage,Tolerance,Dielectric
"C1, C2",2,1uF,CAP CER 1UF 50V 10% X7R 0805,Tessel Passives,TP-0805-105K-50-X7R,0805,50V,10%,X7R
C3,1,10nF,CAP CER 10NF 100V 10% X7R 0603,Tessel Passives,TP-0603-103K-100-X7R,0603,100V,10%,X7R
C4,1,22uF,CAP TANT 22UF 16V 10% CASE C,Brackwell Tantalum,BW-C-226K-016,C,16V,10%,
C5,1,100pF,CAP CER 100PF 50V 5% C0G 0402,Tessel Passives,TP-0402-101J-50-C0G,0402,50V,5%,C0G
C6,1,10uF,CAP CER 10UF 25V 10% X5R 1206,Tessel Passives,TP-1206-106K-25-X5R,1206,25V,10%,X5R
C7,1,100nF,CAP FILM 0.1UF 310VAC X2 PP,Orrin Film,OF-X2-104-310,P15,310VAC,10%,
R1,1,10k,RES 10K 1% 0402,Ferrow Resistive,FR-0402-103F,0402,,1%,
"""
DESIGN = """\
refdes,v_dc [V],v_tol_pct [%],v_ac_rms [V],t_ambient_c [°C],c_min_f,v_reverse_pk [V]
*,,,,55,none,0
C1,3.3,0,,55,,
C2,24,0,,55,,
C3,24,0,,95,,
C4,12,5,,55,,
C5,3.3,0,,55,,
C6,12,0,,55,,
C7,,,253,55,,
"""


@pytest.fixture
def board(tmp_path):
    bom, design = tmp_path / "bom.csv", tmp_path / "design.csv"
    bom.write_text(BOM, encoding="utf-8")
    design.write_text(DESIGN, encoding="utf-8")
    return str(bom), str(design)


def check(board, *alternates, **options):
    bom, design = board
    return run_substitute(bom, design, alternates, SubstituteOptions(**options)).results


def alt(original, description, **kw):
    return Alternate(original=original, mpn=kw.pop("mpn", "NEW-PART-1"),
                     cells={"description": description}, **kw)


def by_refdes(result):
    return {p.refdes: p for p in result.placements}


def rules_of(placement, side):
    return {v.rule_id: getattr(v, side) for v in placement.verdicts if getattr(v, side)}


# --- verdicts ---------------------------------------------------------------------------------

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


def test_identical_part_is_drop_in(board):
    cells = {"value": "1uF", "description": "CAP CER 1UF 50V 10% X7R 0805", "package": "0805",
             "voltage": "50V", "tolerance": "10%", "dielectric": "X7R"}
    (r,) = check(board, Alternate("TP-0805-105K-50-X7R", mpn="TP-0805-105K-50-X7R", cells=cells))
    assert r.verdict == "drop-in" and r.reasons == () and r.differences == ()
    for p in r.placements:
        assert p.change == "same"
        assert all(v.original == v.proposed for v in p.verdicts)
    assert r.summary == "Drop-in for C1, C2: no verdict worse and no difference that matters"


def test_polarized_for_non_polarized_is_rejected(board):
    # Common practice: a polarized part cannot take the place of a non-polarized one. The
    # footprint is marked checked so that the polarity alone decides.
    (r,) = check(board, alt("C6", "CAP TANT 10UF 25V 10% CASE B", footprint_checked=True))
    assert r.verdict == "rejected"
    assert [i.topic for i in r.reasons if i.severity == "reject"] == ["polarity"]
    assert {d.field: d.severity for d in r.differences}["package"] == "note"


@pytest.mark.parametrize("checked, verdict, severity", [(False, "rejected", "reject"),
                                                        (True, "drop-in", "note")],
                         ids=["footprint-not-checked", "footprint-checked"])
def test_case_size_change_is_rejected_unless_footprint_checked(board, checked, verdict,
                                                               severity):
    # Common practice: a 0603 part does not fit 0402 pads; C0G has no DC-bias loss, so nothing
    # else changes.
    (r,) = check(board, alt("C5", "CAP CER 100PF 50V 5% C0G 0603", footprint_checked=checked))
    assert r.verdict == verdict
    assert {d.field: d.severity for d in r.differences} == {"package": severity}


def test_class_ii_replacing_class_i_is_always_flagged(board):
    # EIA-198 (secondary): C0G is class I, X7R class II; every verdict still passes at 3.3 V.
    (r,) = check(board, alt("C5", "CAP CER 100PF 50V 5% X7R 0402"))
    assert all(p.proposed_status == "pass" for p in r.placements)
    assert r.verdict == "review"
    assert {d.field: d.severity for d in r.differences}["dielectric"] == "review"


def test_losing_the_ac_and_safety_rating_is_rejected(board):
    # IEC 60384-14 safety classes (value from memory): a DC film part cannot take an X2 place.
    (r,) = check(board, alt("OF-X2-104-310", "CAP FILM 0.1UF 630V 10% PP 15MM", mpn="DC-630"))
    fields = {d.field: d.severity for d in r.differences}
    assert fields["ac_rating"] == fields["safety_class"] == "reject"
    assert r.verdict == "rejected"


@pytest.mark.parametrize("drop, verdict", [(10.0, "review"), (20.0, "drop-in")],
                         ids=["default-10-points", "20-points"])
def test_margin_drop_option(board, drop, verdict):
    # 1 uF X7R 25 V instead of 50 V at 3.3 V: 6.6 % -> 13.2 % of rated, 6.6 points; 16 V:
    # 6.6 % -> 20.6 %, 14 points closer to the 70 % limit (arithmetic).
    (r,) = check(board, alt("C1", "CAP CER 1UF 16V 10% X7R 0805"), margin_drop_pp=drop)
    margins = [i for i in r.reasons if i.kind == "margin"]
    assert bool(margins) == (drop == 10.0)
    assert r.verdict == verdict
    (r25,) = check(board, alt("C1", "CAP CER 1UF 25V 10% X7R 0805"), margin_drop_pp=drop)
    assert not [i for i in r25.reasons if i.kind == "margin"]


def test_original_found_by_mpn_designators_and_text(board):
    found = check(board,
                  alt("TP-0805-105K-50-X7R", "CAP CER 1UF 50V 10% X7R 0805"),
                  alt("C2", "CAP CER 1UF 50V 10% X7R 0805"),
                  alt("cap cer 1uf 50v 10%  x7r 0805", "CAP CER 1UF 50V 10% X7R 0805"))
    assert [(r.match, r.refdes) for r in found] == [("mpn", ("C1", "C2")), ("refdes", ("C2",)),
                                                   ("text", ("C1", "C2"))]


def test_an_original_not_in_the_bom_is_an_input_error(board):
    with pytest.raises(InputError, match="matches no capacitor placement"):
        check(board, alt("NOPE-123", "CAP CER 1UF 50V X7R 0805"))
    with pytest.raises(InputError, match="designators not in the BOM: C9"):
        check(board, alt("C1, C9", "CAP CER 1UF 50V X7R 0805"))


def test_the_original_is_evaluated_exactly_as_the_audit_does():
    # The substitute check runs the audit's stages; on the sample board the original's verdicts
    # are the audit's (less the BOM-line findings, which are the same for both parts).
    from bomcheck.parse import design
    from bomcheck.parse import importer
    from bomcheck.evaluate import rules
    from bomcheck.pipeline.audit import placement_table, run_audit
    from bomcheck.substitute.table import Stages, evaluate

    report = run_audit(str(SAMPLE_BOM), str(SAMPLE_DESIGN))
    d = design.read_design(str(SAMPLE_DESIGN))
    stages = Stages.for_ruleset(rules.load_rules([rules.DEFAULT_RULESET]).for_environment(
        rules.DEFAULT_ENVIRONMENT), groups=d.groups)
    table, verdicts = evaluate(placement_table(importer.read_bom(str(SAMPLE_BOM)).placements, d),
                               stages)
    cols = ["pidx", "rule_id", "status", "value", "limit", "margin", "message"]
    audit = report.verdicts[~report.verdicts["rule_id"].str.startswith("bom.")]
    pd.testing.assert_frame_equal(audit[cols].reset_index(drop=True),
                                  verdicts[cols].reset_index(drop=True))


def test_bank_members_are_compared_too():
    # The sample's +24V_BULK bank (C11-C13, C38): swapping C11, C12 can change the whole bank.
    alternates = read_alternates(str(SAMPLE_ALTERNATES))
    (r,) = run_substitute(str(SAMPLE_BOM), str(SAMPLE_DESIGN),
                          [a for a in alternates if a.original == "VPX-1210-106K-35-X7R"]).results
    assert {p.refdes: p.role for p in r.placements} == {"C11": "replaced", "C12": "replaced",
                                                        "C13": "group", "C38": "group"}


def test_sample_alternates_show_every_verdict():
    result = run_substitute(str(SAMPLE_BOM), str(SAMPLE_DESIGN),
                            read_alternates(str(SAMPLE_ALTERNATES)))
    assert {r.verdict for r in result.results} == {"drop-in", "review", "rejected"}
    assert result.rejected and result.status == "rejected"


# --- the alternates file ------------------------------------------------------------------------

def test_toml_and_csv_alternates_read_alike(tmp_path):
    csv = tmp_path / "alt.csv"
    csv.write_text("original,mpn,description,footprint_checked,rated_voltage\n"
                   "C5,KV-0603-101J,CAP CER 100PF 50V 5% C0G 0603,yes,63 V\n", encoding="utf-8")
    toml = tmp_path / "alt.toml"
    toml.write_text('[[alternate]]\noriginal = "C5"\nmpn = "KV-0603-101J"\n'
                    'description = "CAP CER 100PF 50V 5% C0G 0603"\nfootprint_checked = true\n'
                    'rated_voltage = "63 V"\n', encoding="utf-8")
    (a,), (b,) = read_alternates(str(csv)), read_alternates(str(toml))
    assert (a.original, a.mpn, dict(a.cells), a.footprint_checked) == \
        (b.original, b.mpn, dict(b.cells), b.footprint_checked) == \
        ("C5", "KV-0603-101J", {"description": "CAP CER 100PF 50V 5% C0G 0603",
                                "voltage": "63 V"}, True)


def test_parts_data_in_the_alternates_file_is_laid_over_the_text(board, tmp_path):
    # A parts-data field (rated maximum temperature) overrides what the text implies.
    path = tmp_path / "alt.csv"
    path.write_text("original,mpn,description,temp_max\n"
                    "C3,KV-0603-103K,CAP CER 10NF 100V 10% X7R 0603,85 degC\n", encoding="utf-8")
    bom, design = board
    (r,) = run_substitute(bom, design, read_alternates(str(path))).results
    assert r.proposed_spec["temp_max_c"] == 85.0
    assert by_refdes(r)["C3"].proposed_status == "fail"  # 95 degC on an 85 degC rating


@pytest.mark.parametrize("text, problem", [
    ("original,mpn\n,KV-1\n", "no original named"),
    ("original,mpn,footprint_checked\nC5,KV-1,perhaps\n", "not a yes/no value"),
    ("original,description,esr\nC5,CAP CER 100PF,bad\n", "no MPN"),
], ids=["no-original", "bad-flag", "parts-data-without-mpn"])
def test_bad_alternates_file_names_the_row(tmp_path, text, problem):
    path = tmp_path / "alt.csv"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError, match=problem) as info:
        read_alternates(str(path))
    assert info.value.row == 2


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


# --- CLI, exports -----------------------------------------------------------------------------

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


def test_json_validates_against_its_schema_and_is_reproducible(tmp_path, capsys):
    outs = [tmp_path / "a.json", tmp_path / "b.json"]
    for out in outs:
        main(["substitute", str(SAMPLE_BOM), "--design", str(SAMPLE_DESIGN), "--alternates",
              str(SAMPLE_ALTERNATES), "--json", str(out)])
    capsys.readouterr()
    schema = json.loads(resources.files("bomcheck.schemas").joinpath(
        "substitute.schema.json").read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    data = json.loads(outs[0].read_text(encoding="utf-8"))
    jsonschema.validate(data, schema)
    assert outs[0].read_bytes() == outs[1].read_bytes()
    assert data["totals"]["alternates"] == len(data["alternates"]) == 9
    bad = dict(data, status="maybe")
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(bad, schema)


def test_formula_like_alternate_text_stays_text_in_the_sheet(board, tmp_path):
    from openpyxl import load_workbook

    from bomcheck.render.xlsx_substitutes import write_substitute_workbook

    formula = '=HYPERLINK("http://example.invalid","click")'
    bom, design = board
    result = run_substitute(bom, design, [Alternate("C5", mpn="+1+1",
                                                    cells={"description": formula})])
    out = tmp_path / "subs.xlsx"
    write_substitute_workbook(result, out)
    wb = load_workbook(out)
    assert wb.sheetnames == ["Substitutes", "Substitute placements", "Substitute verdicts"]
    cells = {c.value: c for row in wb["Substitutes"].iter_rows(min_row=2) for c in row}
    assert cells[formula].data_type == "s"
    assert cells["+1+1"].data_type == "s"
    assert not [c for ws in wb for row in ws.iter_rows() for c in row if c.data_type == "f"]
    assert list(tmp_path.glob(".*.tmp")) == []


def test_markdown_and_terminal_show_verdicts_and_reasons(board):
    from bomcheck.render.terminal import make_console, print_substitutes

    bom, design = board
    result = run_substitute(bom, design, [alt("C3", "CAP CER 10NF 100V 10% X5R 0603"),
                                          alt("C5", "CAP CER 100PF 50V 5% C0G 0402")])
    md = substitute_markdown(result)
    assert "| C3 | NEW-PART-1 | C3 | rejected | Rejected for C3: rated 85 degC" in md
    assert "| C5 | NEW-PART-1 | C5 | drop-in |" in md
    buf = StringIO()
    print_substitutes(make_console(file=buf, no_color=True, width=100), result)
    text = buf.getvalue()
    assert "REJECTED" in text and "drop-in" in text and "Overall: REJECTED" in text


@pytest.mark.parametrize("names, text", [
    (["C7", "C8", "C9", "C10", "C12"], "C7-C10, C12"),
    (["C2", "C1"], "C1, C2"),
    (["C1", "C01", "C1A"], "C1, C01, C1A"),
    ([f"C{2 * i}" for i in range(1, 31)], ", ".join(f"C{2 * i}" for i in range(1, 25))
     + " and 6 more"),
], ids=["range", "pair", "odd-names", "long"])
def test_designator_list(names, text):
    assert designator_list(names) == text
