"""Reading the alternates file (``bomcheck.substitute.alternates``): CSV and TOML alike, parts
data laid over the text, and a bad row named."""

import pytest
from substitute_boards import board  # noqa: F401 (a fixture)
from substitute_boards import by_refdes

from bomcheck.errors import InputError
from bomcheck.substitute import read_alternates, run_substitute


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
