"""The design sheet at scale: condition columns read as numbers give the same design, warnings
and errors as the same sheet read as text (a bare number's text is read by ``float`` and rounded
to 15 significant digits either way), and single designators found by character classes agree
with the pattern."""

import random
import re

import numpy as np
import pytest

from bomcheck.errors import InputError
from bomcheck.parse.design import (_condition_columns, _read_table_design, design_from_table,
                                   is_design_header, read_design)
from bomcheck.parse.design_build import _single_designators
from bomcheck.parse.design_cells import SINGLE
from bomcheck.read.reader import read_input_table

HEADER = "refdes,members,v_dc [V],v_tol_pct,Ripple mVpp,t_ambient_c,c_min_f,life_h,notes\n"


def _write(tmp_path, body, header=HEADER):
    path = tmp_path / "design.csv"
    path.write_text(header + body, encoding="utf-8")
    return str(path)


def _as_numbers(path):
    """The sheet read with its condition columns as numbers (NeedsText if it cannot be)."""
    raw = read_input_table(path, sheet=None, header_predicate=is_design_header, what="design",
                           expected="", numeric=_condition_columns)
    kinds = {h: raw.frame[h].dtype.kind for h in raw.frame.columns}
    assert {h for h, k in kinds.items() if k == "f"} == {
        h for h in raw.frame.columns if h not in ("refdes", "members", "notes")}
    return design_from_table(raw.frame, raw.rows, path=path, header_row=raw.header_row)


def _same_as_text(path):
    numbers, text = read_design(path), _read_table_design(path, None, None)
    assert _as_numbers(path).table.equals(numbers.table)  # read as numbers, not again as text
    assert numbers.conditions.equals(text.conditions)
    assert numbers.table.equals(text.table)
    assert numbers.warnings == text.warnings
    assert (numbers.defaults, numbers.defaults_row) == (text.defaults, text.defaults_row)
    assert numbers.groups == text.groups
    return numbers


def test_plain_numbers_read_as_numbers_equal_their_text(tmp_path):
    # Long mantissas, exponents, signs and zeros: float() of the text, then 15 digits
    # (value from memory: IEEE 754 doubles hold 15 significant decimal digits exactly).
    body = ("*,,,,,45,,87600,\n"
            "RAIL,\"C1-C3\",5,5,100,,1e-4,,rail\n"
            "C4,,12.000000000000001,0.05,,85,2.2e-6,5e4,\n"
            "C5,,-3.3,,,-40,0,,neg\n"
            "C6,,0.1234567890123456789,,,+25.5,.5e-6,,\n"
            "C7,,-0,,,,,,\n"
            "\n")
    design = _same_as_text(_write(tmp_path, body))
    assert design.conditions.at["C5", "v_dc"] == -3.3
    assert design.conditions.at["C1", "v_ripple_pk"] == pytest.approx(0.05)  # 100 mVpp / 2
    assert design.conditions.at["C4", "v_tol_pct"] == 0.05
    assert any("unusually small" in w.message for w in design.warnings)


def test_many_random_plain_numbers_equal_their_text(tmp_path):
    rng = random.Random(7)
    lines = []
    for i in range(400):
        digits = "".join(rng.choice("0123456789") for _ in range(rng.randint(1, 18)))
        cut = rng.randint(0, min(3, len(digits)))  # within the plausible voltages
        v = f"{digits[:cut]}.{digits[cut:]}" if rng.random() < 0.8 else digits[:3]
        if rng.random() < 0.3:
            v += f"e{rng.randint(-3, 1)}"
        lines.append(f"C{i + 1},,{v},,,{rng.randint(-40, 120)},,,\n")
    _same_as_text(_write(tmp_path, "".join(lines)))


@pytest.mark.parametrize("cell", ["13.2 V", "none", "n/a", "-", " ", "±5 %", "1,5", "nan", "inf"])
def test_a_cell_that_needs_its_text_reads_the_sheet_as_text(tmp_path, cell):
    column = "v_tol_pct" if "%" in cell else "c_min_f" if cell == "none" else "v_dc"
    header = f"refdes,{column},t_ambient_c\n"
    path = _write(tmp_path, f"C1,5,40\nC2,{cell},50\n", header)
    try:
        text = _read_table_design(path, None, None)
    except InputError as exc:
        with pytest.raises(InputError) as got:
            read_design(path)
        assert str(got.value) == str(exc)
        return
    assert read_design(path).conditions.equals(text.conditions)


@pytest.mark.parametrize("cell", ["1e400", "-5", "2000000"])
def test_an_implausible_number_is_named_by_its_text(tmp_path, cell):
    path = _write(tmp_path, f"C1,{cell},40\n", "refdes,c_min_f,t_ambient_c\n")
    with pytest.raises(InputError) as text:
        _read_table_design(path, None, None)
    with pytest.raises(InputError) as got:
        read_design(path)
    assert str(got.value) == str(text.value) and cell in str(got.value)


def test_single_designators_by_character_classes_agree_with_the_pattern():
    rng = random.Random(3)
    alphabet = "Cc1_0A9 ,-zZ@[`{/:\t"
    for _ in range(2000):
        cells = ["".join(rng.choice(alphabet) for _ in range(rng.randint(0, 5)))
                 for _ in range(rng.randint(1, 8))]
        single, upper = _single_designators(np.array(cells, dtype=object))
        want = [bool(re.fullmatch(SINGLE, c)) for c in cells]
        assert single.tolist() == want
        assert upper.tolist() == [c.upper() for c, w in zip(cells, want) if w]


def test_no_value_words_keep_a_column_read_as_numbers(tmp_path):
    # "-", "n/a", "NA" give no value, as their text does (design_cells.NO_VALUE).
    path = _write(tmp_path, "C1,,5,,,-,,,\nC2,,N/A,,,40,,na,\nC3,,\u2013,,,NA,,,\n")
    design = _same_as_text(path)
    assert design.conditions["v_dc"].isna().tolist() == [False, True, True]
