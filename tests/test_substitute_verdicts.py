"""Both parts' verdicts side by side (``bomcheck.substitute.verdicts``): an identical part
changes no verdict."""

from substitute_boards import board  # noqa: F401 (a fixture)
from substitute_boards import check

from bomcheck.substitute import Alternate


def test_identical_part_is_drop_in(board):
    cells = {"value": "1uF", "description": "CAP CER 1UF 50V 10% X7R 0805", "package": "0805",
             "voltage": "50V", "tolerance": "10%", "dielectric": "X7R"}
    (r,) = check(board, Alternate("TP-0805-105K-50-X7R", mpn="TP-0805-105K-50-X7R", cells=cells))
    assert r.verdict == "drop-in" and r.reasons == () and r.differences == ()
    for p in r.placements:
        assert p.change == "same"
        assert all(v.original == v.proposed for v in p.verdicts)
    assert r.summary == "Drop-in for C1, C2: no verdict worse and no difference that matters"
