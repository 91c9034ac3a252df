"""The differences that matter between an original and its alternate
(``bomcheck.substitute.differences``): polarity, footprint, dielectric class, AC and safety
ratings."""

import pytest
from substitute_boards import board  # noqa: F401 (a fixture)
from substitute_boards import alt, check

from bomcheck.substitute.differences import spec_differences


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


# IEC 60384-14 (value from memory): subclass 1 is rated for higher impulse voltages than 2 in
# the same series (X1 above X2, Y1 above Y2); a Y (line-to-earth) part across the line is
# common practice, subject to the product's safety approval.
@pytest.mark.parametrize("original, proposed, severity", [
    ("X2", "X1", "note"), ("Y2", "Y1", "note"), ("X2", "Y2", "review"),
    ("X1", "X2", "reject"), ("Y2", "X1", "reject"), ("X2", "", "reject"),
], ids=["X1-for-X2", "Y1-for-Y2", "Y2-for-X2", "X2-for-X1", "X1-for-Y2", "none-for-X2"])
def test_safety_class_replacements(original, proposed, severity):
    spec = {"technology": "film", "voltage_v": 310.0, "voltage_kind": "ac"}
    found = spec_differences({**spec, "safety_class": original},
                             {**spec, "safety_class": proposed}, False)
    assert [(d[0], d[1]) for d in found] == [("safety_class", severity)]


def test_one_difference_per_topic_in_a_fixed_order():
    # Every topic compared, listed in the order purchasing reads them: polarity and technology,
    # ratings, safety, temperature range, dielectric, tolerance and capacitance, package.
    o = {"technology": "ceramic", "polarized": False, "voltage_v": 50.0, "voltage_kind": "dc",
         "temp_max_c": 125.0, "dielectric": "C0G", "dielectric_class": 1.0,
         "tol_minus_pct": 5.0, "tol_plus_pct": 5.0, "capacitance_f": 1e-10, "package": "0402"}
    a = {"technology": "tantalum", "polarized": True, "voltage_v": 25.0, "voltage_kind": "dc",
         "temp_max_c": 85.0, "dielectric": "X7R", "dielectric_class": 2.0,
         "tol_minus_pct": 10.0, "tol_plus_pct": 10.0, "capacitance_f": 2.2e-10,
         "package": "0603"}
    found = spec_differences(o, a, footprint_checked=False)
    assert [d[0] for d in found] == ["polarity", "technology", "rated_voltage", "temp_max",
                                    "dielectric", "tolerance", "capacitance", "package"]
    assert dict((d[0], d[1]) for d in found)["polarity"] == "reject"
    assert spec_differences(o, dict(o), footprint_checked=False) == []
