"""Normalise stage (bomcheck/parse/fitted.py): whether each BOM line is fitted, from the fitted
column and the not-fitted marks in its cells, with the contradictions a reviewer must see."""

from __future__ import annotations

import math

import pytest

from bomcheck.parse.fitted import _fitted_cell, _variant_only, fold
from bomcheck.parse.importer import read_bom
from read_helpers import bom_file as _file, check_accounting as _check_accounting


def _num(v):
    return None if v is None or (isinstance(v, float) and math.isnan(v)) else float(v)


@pytest.mark.parametrize(
    ("cell", "fitted", "understood"),
    # Fitted-column words in English, German and French (common practice of BOM exports;
    # ordinary dictionary words): an empty cell means fitted.
    [("", True, True), ("Yes", True, True), ("ja", True, True), ("oui", True, True),
     ("\u2713", True, True), ("no", False, True), ("Nein", False, True), ("DNP", False, True),
     ("non monté", False, True), ("variant B", True, False)],
)
def test_fitted_column_cells(cell, fitted, understood):
    assert _fitted_cell(cell, negative=False)[:2] == (fitted, understood)


@pytest.mark.parametrize(("cell", "fitted"), [("x", False), ("yes", False), ("DNP", False),
                                              ("", True), ("no", True)])
def test_a_dnp_column_reads_the_other_way(cell, fitted):
    # A column headed "DNP" says yes when the part is NOT fitted (common practice).
    assert _fitted_cell(cell, negative=True)[0] is fitted


def test_yes_with_a_variant_mark_is_fitted_and_keeps_the_mark():
    # Common practice of variant notes: the yes describes this build; the mark is kept for the
    # finding.
    fitted, understood, mark = _fitted_cell("Yes (DNP in variant B)", negative=False)
    assert (fitted, understood) == (True, True) and mark and "DNP" in mark.upper()


def test_variant_words_limit_a_mark():
    # Common practice of variant notes: "variant" and "option" limit a DNP to some builds.
    assert _variant_only("DNP on the 115 V variant only") and _variant_only("DNP for option B")
    assert not _variant_only("DNP")


def test_fold_compares_cells_case_and_space_blind():
    # Hand-typed cells differ in case and spacing only (common practice).
    assert fold("  Not   FITTED ") == "not fitted"


def test_not_fitted_spellings(tmp_path):
    text = ("Designator,Value,Description,Fitted,Notes\n"
            "C1,DNP,,,\n"
            "C2,100nF,CAP CER 100nF DNI,,\n"
            "C3,NF,,,\n"
            "C4,100nF,,,NC\n"
            "C5,100nF,not fitted,,\n"
            "C6,100nF,CAP 100nF do not populate,,\n"
            "C7,100nF,,,no pop\n"
            "C8,100nF,,no,\n"
            "C9,100nF,,0,\n"
            "C10,100nF,,false,\n"
            "C11,100nF,,N,\n"
            "C12,100nF,,,nicht best\u00fcckt\n"
            "C13,100nF,,,non mont\u00e9\n"
            "C14 (DNP),100nF,,,\n"
            "C15,100 NF,,,\n"
            "C16,470uF NP,CAP ALU ELEC 470uF 25V NP,,\n"
            "C17,100nF,,yes,\n"
            "C18,100nF,,variant B,\n")
    r = read_bom(_file(tmp_path, text))
    _check_accounting(r)
    p = r.placements
    assert p["refdes"].tolist() == [f"C{i}" for i in range(1, 19)]
    assert p["fitted"].tolist() == [False] * 14 + [True] * 4
    assert p["not_fitted_reason"].tolist() == [
        "'DNP' in value", "'DNI' in description", "'NF' in value", "'NC' in notes",
        "'not fitted' in description", "'do not populate' in description", "'no pop' in notes",
        "Fitted column says 'no'", "Fitted column says '0'", "Fitted column says 'false'",
        "Fitted column says 'N'", "'nicht best\u00fcckt' in notes", "'non mont\u00e9' in notes",
        "'DNP' in designator", None, None, None, None]
    assert r.totals["not_fitted"] == 14
    # "100 NF" is 100 nF (upper-case unit after a number), NP is a non-polar electrolytic.
    assert _num(p["capacitance_f"].iloc[14]) == pytest.approx(100e-9)
    assert _num(p["capacitance_f"].iloc[0]) is None  # "DNP" is no value, still a placement
    assert [(f.row, f.code) for f in r.findings] == [(19, "fitted_unclear")]
    assert "'variant B', which is neither yes nor no" in r.findings[0].message


def test_fitted_yes_wins_over_a_variant_dnp_and_the_conflict_is_nodata(tmp_path):
    # Common practice: a Fitted column that says yes describes the variant of this BOM; a "DNP
    # on variant B" note elsewhere in the row (or after the yes) does not unfit the part. The
    # placement stays audited and the contradiction is a finding the audit gives as nodata.
    text = ("Designator,Qty,Value,Description,Fitted,Notes\n"
            "C7,1,10uF,CAP CER 10uF 16V X7R 10%,Yes,DNP on the 115 V variant only\n"
            "C8,1,10uF,CAP CER 10uF 16V X7R 10%,Yes (DNP in variant B),\n"
            "C9,1,10uF,CAP CER 10uF 16V X7R 10%,,DNP\n"
            "C10,1,10uF,CAP CER 10uF 16V X7R 10%,not fitted,\n")
    r = read_bom(_file(tmp_path, text))
    _check_accounting(r)
    assert r.placements["fitted"].tolist() == [True, True, False, False]
    got = [(f.row, f.code, f.severity) for f in r.findings]
    assert got == [(2, "fitted_conflict", "nodata"), (3, "fitted_conflict", "nodata")]
    assert "'DNP' in notes" in r.findings[0].message
    assert "Yes (DNP in variant B)" in r.findings[1].message


def test_dnp_limited_to_a_variant_keeps_the_part_fitted_with_a_finding(tmp_path):
    # Common practice of variant notes: "DNP on the 115 V variant only" does not unfit the part
    # in the build the BOM may describe; it stays audited and the audit shows the doubt
    # (nodata). A plain "DNP" note still means not fitted.
    text = ("Designator,Value,Description,Notes\n"
            "C7,10uF,CAP CER 10uF 16V X7R 10%,DNP on the 115 V variant only\n"
            "C8,10uF,CAP CER 10uF 16V X7R 10%,DNP for option B\n"
            "C9,10uF,CAP CER 10uF 16V X7R 10%,DNP\n")
    r = read_bom(_file(tmp_path, text))
    _check_accounting(r)
    assert r.placements["fitted"].tolist() == [True, True, False]
    assert [(f.row, f.code, f.severity) for f in r.findings] == [
        (2, "fitted_conflict", "nodata"), (3, "fitted_conflict", "nodata")]
    assert "names a variant" in r.findings[0].message


def test_negative_fitted_column(tmp_path):
    r = read_bom(_file(tmp_path, "Designator,Value,DNP\nC1,100nF,x\nC2,100nF,\nC3,100nF,DNP\n"
                                 "C4,100nF,no\n"))
    _check_accounting(r)
    assert r.placements["fitted"].tolist() == [False, True, False, True]
    assert r.placements["not_fitted_reason"].tolist()[:3] == [
        "DNP column says 'x'", None, "DNP column says 'DNP'"]
