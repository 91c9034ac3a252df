"""The words of the substitute check (``bomcheck.substitute.words``): designator lists and a
placement's conditions."""

import subprocess
import sys

import pytest

from bomcheck.substitute import designator_list
from bomcheck.substitute.words import conditions_text


@pytest.mark.parametrize("names, text", [
    (["C7", "C8", "C9", "C10", "C12"], "C7-C10, C12"),
    (["C2", "C1"], "C1, C2"),
    (["C1", "C01", "C1A"], "C1, C01, C1A"),
    ([f"C{2 * i}" for i in range(1, 31)], ", ".join(f"C{2 * i}" for i in range(1, 25))
     + " and 6 more"),
], ids=["range", "pair", "odd-names", "long"])
def test_designator_list(names, text):
    assert designator_list(names) == text


@pytest.mark.parametrize("rec, text", [
    ({"v_upper_v": 12.6, "v_ripple_pk": 0.15, "t_operating_c": 60.0},
     "12.6 V + 0.15 V ripple, 60 degC"),
    ({"v_ac_rms": 253.0}, "253 V rms"),
    ({}, "no conditions"),
], ids=["dc-ripple-temperature", "ac", "none"])
def test_conditions_text(rec, text):
    assert conditions_text(rec) == text


def test_the_words_load_without_the_check():
    # Renderers import designator_list at start-up; the package loads the check only on use.
    code = ("import sys, bomcheck.substitute.words, bomcheck.substitute as s; "
            "print('bomcheck.substitute.check' in sys.modules, "
            "all(getattr(s, n) is not None for n in s.__all__), "
            "'bomcheck.substitute.check' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.split() == ["False", "True", "True"]
