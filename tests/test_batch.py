"""Batch audits over a manifest (bomcheck.pipeline.batch, `audit --manifest`) on small invented
boards written by the tests (tests/batch_boards.py). The combined outputs: test_batch_out.py;
where-used queries: test_whereused.py."""

import json
import sys
from pathlib import Path

import pytest
from batch_boards import boards  # noqa: F401 (a fixture)
from batch_boards import BOARDS, DESIGN_HEADER, HEADER, batch

from conftest import ROOT
from bomcheck.pipeline.batch import read_manifest
from bomcheck.cli.main import main
from bomcheck.errors import InputError


def test_manifest_paths_are_relative_to_it_and_defaults_apply(tmp_path):
    (tmp_path / "sub").mkdir()
    (tmp_path / "sub" / "m.toml").write_text(
        'rules = ["industrial"]\n[[board]]\nproduct = "X"\nbom = "x.csv"\n'
        '[[board]]\nproduct = "Y"\nbom = "y.csv"\ndesign = "y-d.csv"\nrules = ["other.toml"]\n',
        encoding="utf-8")
    x, y = read_manifest(str(tmp_path / "sub" / "m.toml"))
    assert (x.product, Path(x.bom), x.design, x.rules) == (
        "X", tmp_path / "sub" / "x.csv", None, ("industrial",))
    assert Path(y.design) == tmp_path / "sub" / "y-d.csv"
    assert [Path(r) for r in y.rules] == [tmp_path / "sub" / "other.toml"]


@pytest.mark.parametrize("text, words", [
    ("", "no boards"),
    ('[[board]]\nbom = "a.csv"\n', "board 1: 'product' is missing"),
    ('[[board]]\nproduct = "A"\nbom = "a.csv"\ncolour = "red"\n', "unknown key 'colour'"),
    ('[[board]]\nproduct = "A"\nbom = "a.csv"\n[[board]]\nproduct = "A"\nbom = "b.csv"\n',
     "listed twice"),
    ("[[board]\n", "not valid TOML"),  # the one TOML loader's message, with the line
], ids=["empty", "no-product", "unknown-key", "twice", "not-toml"])
def test_manifest_errors_name_the_file_and_board(tmp_path, text, words):
    path = tmp_path / "m.toml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError) as err:
        read_manifest(str(path))
    assert words in str(err.value) and str(path) in str(err.value)


def test_each_board_report_is_the_single_audit_report(boards):
    assert batch("--json", "all.json", "--quiet") == 1
    first = (boards / "all.json").read_text(encoding="utf-8")
    assert batch("--json", "again.json", "--quiet") == 1
    assert (boards / "again.json").read_text(encoding="utf-8") == first  # byte-identical
    combined = json.loads(first)
    for product, status in (("Tarn-A", 0), ("Tarn-B", 1)):
        assert main(["audit", f"{product}.csv", "--design", f"{product}-design.csv",
                     "--json", "one.json", "--quiet", "--no-config"]) == status
        single = json.loads((boards / "one.json").read_text(encoding="utf-8"))
        got = next(b["report"] for b in combined["boards"] if b["product"] == product)
        assert got == single


def test_batch_exit_status_is_clean_when_every_board_passes(boards):
    (boards / "boards.toml").write_text(
        '[[board]]\nproduct = "Tarn-A"\nbom = "a.csv"\ndesign = "Tarn-A-design.csv"\n',
        encoding="utf-8")
    (boards / "a.csv").write_text(HEADER + BOARDS["Tarn-A"][0].splitlines()[0] + "\n",
                                  encoding="utf-8")
    (boards / "Tarn-A-design.csv").write_text(DESIGN_HEADER + "C1,3.3,40,10 nF\n",
                                              encoding="utf-8")
    assert batch("--quiet") == 0


def test_a_broken_board_stops_the_batch_naming_board_and_file(boards, capsys):
    (boards / "Tarn-B.csv").unlink()
    assert batch("--json", "all.json") == 2
    err = capsys.readouterr().err
    assert "board 'Tarn-B'" in err and "Tarn-B.csv" in err and "Traceback" not in err
    assert not (boards / "all.json").exists()


@pytest.mark.parametrize("extra", [["--design", "d.csv"], ["--xlsx", "a.xlsx"],
                                   ["bom.csv"]], ids=["design", "xlsx", "bom-too"])
def test_options_that_belong_to_one_board_are_refused(boards, capsys, extra):
    assert batch(*extra) == 2
    assert "manifest" in capsys.readouterr().err


def test_benchmark_boards_audit_in_a_batch(tmp_path, monkeypatch):
    """The benchmark's generator (benchmarks/synth.py) gives boards a batch audits whole."""
    monkeypatch.syspath_prepend(str(ROOT / "benchmarks"))
    from synth import write_manifest

    manifest = write_manifest(tmp_path, boards=3, placements=40)
    monkeypatch.chdir(tmp_path)
    assert main(["audit", "--manifest", manifest.name, "--json", "all.json", "--quiet",
                 "--no-config"]) in (0, 1)
    data = json.loads((tmp_path / "all.json").read_text(encoding="utf-8"))
    assert [b["totals"]["audited"] for b in data["boards"]] == [40, 40, 40]
    sys.modules.pop("synth", None)
