"""Batch audits over a manifest (bomcheck.pipeline.batch, `audit --manifest`) and where-used queries
(bomcheck.report.whereused, `bomcheck where-used`) on small invented boards written by the tests."""

import csv
import io
import json
import sys
from importlib import resources
from pathlib import Path

import jsonschema
import pytest

from bomcheck.pipeline.batch import read_manifest
from bomcheck.cli.main import main
from bomcheck.errors import InputError
from bomcheck.report.whereused import normalise_mpn, where_used

ROOT = Path(__file__).resolve().parents[1]
SCHEMA = json.loads(resources.files("bomcheck.schemas").joinpath("report.schema.json")
                    .read_text("utf-8"))
BATCH_SCHEMA = json.loads(resources.files("bomcheck.schemas").joinpath("batch.schema.json")
                          .read_text("utf-8"))
HEADER = "Designator,Qty,Value,Description,Manufacturer Part Number\n"
DESIGN_HEADER = "refdes,v_dc [V],t_ambient_c [°C],c_min_f\n"
# Invented parts. 3.3 V on a 50 V ceramic passes every shipped ceramic rule; 15 V on a 16 V
# ceramic fails them (common practice: class II ceramics are derated well under 90 %).
SHARED = "CAP CER 1UF 16V 10% X7R 0603,KV-0603-105-16"
BOARDS = {
    "Tarn-A": ("C1,1,100nF,CAP CER 0.1UF 50V 10% X7R 0603,KV-0603-104-50\n"
               f"C2,1,1uF,{SHARED}\n", "C1,3.3,40,10 nF\nC2,3.3,40,10 nF\n"),
    "Tarn-B": (f"C7,1,1uF,{SHARED}\nC9,1,1uF,{SHARED}\n", "C7,15,40,10 nF\nC9,3.3,60,10 nF\n"),
}


@pytest.fixture
def boards(tmp_path, monkeypatch):
    """Two invented boards and their manifest in ``tmp_path`` (the working directory)."""
    monkeypatch.chdir(tmp_path)
    lines = []
    for product, (bom, design) in BOARDS.items():
        (tmp_path / f"{product}.csv").write_text(HEADER + bom, encoding="utf-8")
        (tmp_path / f"{product}-design.csv").write_text(DESIGN_HEADER + design,
                                                        encoding="utf-8")
        lines += ["[[board]]", f'product = "{product}"', f'bom = "{product}.csv"',
                  f'design = "{product}-design.csv"', ""]
    (tmp_path / "boards.toml").write_text("\n".join(lines), encoding="utf-8")
    return tmp_path


def batch(*argv):
    return main(["audit", "--manifest", "boards.toml", "--no-config", *argv])


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


def test_batch_writes_one_combined_report_per_output(boards, capsys):
    assert batch("--json", "all.json", "--markdown", "all.md", "--csv", "all.csv") == 1
    shown = capsys.readouterr().out
    assert "Tarn-A" in shown and "Tarn-B" in shown  # the per-board summary table
    data = json.loads((boards / "all.json").read_text(encoding="utf-8"))
    jsonschema.validate(data, BATCH_SCHEMA)
    assert (data["kind"], data["status"]) == ("batch", "fail")  # the worst board's status
    assert [(b["product"], b["status"]) for b in data["boards"]] == [
        ("Tarn-A", "pass"), ("Tarn-B", "fail")]
    for b in data["boards"]:
        jsonschema.validate(b["report"], SCHEMA)
        assert b["totals"] == b["report"]["totals"]
    md = (boards / "all.md").read_text(encoding="utf-8")
    assert md.startswith("# bomcheck batch audit: FAIL")
    assert "| Tarn-A | pass | 2 |" in md and "## Tarn-B: FAIL" in md
    rows = list(csv.DictReader(io.StringIO((boards / "all.csv").read_text(encoding="utf-8"))))
    assert [(r["product"], r["refdes"]) for r in rows] == [
        ("Tarn-A", "C1"), ("Tarn-A", "C2"), ("Tarn-B", "C7"), ("Tarn-B", "C9")]


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


def test_where_used_lists_every_product_and_placement(boards, capsys):
    assert batch("--json", "all.json", "--quiet") == 1
    uses = where_used(json.loads((boards / "all.json").read_text(encoding="utf-8")),
                      "kv-0603-105-16")
    assert [(u.product, u.refdes) for u in uses] == [
        ("Tarn-A", "C2"), ("Tarn-B", "C7"), ("Tarn-B", "C9")]
    c7 = uses[1]
    # voltage ratio = applied peak / rated voltage (DEVELOPERS.md vocabulary): 15 V / 16 V
    assert c7.voltage_ratio == pytest.approx(15 / 16)
    # EIA-198 class II: X7R upper category temperature +125 degC; ambient 40 degC, no rise
    assert c7.temp_margin_c == pytest.approx(125 - 40)
    assert c7.status == "fail" and c7.problems
    assert (uses[0].status, uses[0].problems) == ("pass", ())
    capsys.readouterr()
    assert main(["where-used", "all.json", "KV-0603-105-16", "--json", "uses.json"]) == 0
    assert "Tarn-B" in capsys.readouterr().out
    listed = json.loads((boards / "uses.json").read_text(encoding="utf-8"))
    assert [u["refdes"] for u in listed] == ["C2", "C7", "C9"]
    assert main(["where-used", "all.json", "NO-SUCH-PART"]) == 1


def test_where_used_on_a_single_report_and_an_old_one(boards, capsys):
    assert main(["audit", "Tarn-B.csv", "--design", "Tarn-B-design.csv", "--json", "b.json",
                 "--quiet", "--no-config"]) == 1
    capsys.readouterr()
    assert main(["where-used", "b.json", " kv-0603-105-16 ", "--csv", "-"]) == 0
    rows = list(csv.DictReader(io.StringIO(capsys.readouterr().out)))
    assert [(r["product"], r["refdes"], r["status"]) for r in rows] == [
        ("", "C7", "fail"), ("", "C9", "pass")]
    old = {"placements": [{"refdes": "C1", "findings": [], "checks": []}]}
    (boards / "old.json").write_text(json.dumps(old), encoding="utf-8")
    assert main(["where-used", "old.json", "X"]) == 2
    assert "schema version 2" in capsys.readouterr().err


def test_mpns_compare_without_case_and_spaces():
    assert normalise_mpn(" kv-0603 105 ") == normalise_mpn("KV-0603105")


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
