"""The reasons behind a substitute verdict (``bomcheck.substitute.reasons``): a margin that
shrinks past the option's amount needs review."""

import pytest
from substitute_boards import board  # noqa: F401 (a fixture)
from substitute_boards import alt, check


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
