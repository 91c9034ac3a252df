"""Output files (bomcheck.render.outfiles): written whole or not at all, stale temporary files of
dead runs removed, one run at a time per output folder, file names that are not UTF-8."""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import pytest
from hostile_cells import DESIGN, HEADER, bom_lines

from conftest import ROOT
from bomcheck.cli.main import main
from bomcheck.errors import InputError
from bomcheck.render.outfiles import atomic_path, clean_stale, printable, write_text


# Moved from test_textsafe.py.
# ---- files ----------------------------------------------------------------------------------

def test_atomic_write_leaves_nothing_on_error(tmp_path):
    target = tmp_path / "out.json"
    target.write_text("old", encoding="utf-8")

    def pieces():
        yield "new"
        raise RuntimeError("renderer failed")

    with pytest.raises(RuntimeError):
        write_text(str(target), pieces())
    assert target.read_text(encoding="utf-8") == "old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.json"]


def test_stale_temporary_files_of_dead_runs_are_removed(tmp_path):
    target = tmp_path / "audit.xlsx"
    dead = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"],
                          capture_output=True, text=True, check=True).stdout.strip()
    stale = tmp_path / f".audit.xlsx.bomcheck-{dead}-0123abcd.tmp"
    stale_dir = tmp_path / f".audit.xlsx.bomcheck-{dead}-0123abcd.d"
    alive = tmp_path / f".audit.xlsx.bomcheck-{os.getpid()}-0123abcd.tmp"
    other = tmp_path / ".other.tmp"
    for p in (stale, alive, other):
        p.write_text("x", encoding="utf-8")
    stale_dir.mkdir()
    (stale_dir / "openpyxl.abc").write_text("x", encoding="utf-8")
    removed = clean_stale(target)
    assert set(removed) == {stale, stale_dir}
    assert alive.exists() and other.exists()


def test_workbook_temp_files_stay_beside_the_target_and_go(tmp_path, monkeypatch):
    """openpyxl's write-only temporary files go to a private folder beside the target."""
    import openpyxl.worksheet._writer as sheet_writer

    seen = []
    real = tempfile.NamedTemporaryFile

    def spy(*args, **kw):
        f = real(*args, **kw)
        seen.append(f.name)
        return f

    monkeypatch.setattr(sheet_writer, "NamedTemporaryFile", spy)
    (tmp_path / "bom.csv").write_text(HEADER + bom_lines(), encoding="utf-8")
    (tmp_path / "design.csv").write_text(DESIGN, encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    main(["audit", "bom.csv", "--design", "design.csv", "--no-config", "--quiet",
          "--xlsx", "a.xlsx"])
    assert seen and all(Path(n).parent.parent == tmp_path for n in seen)
    assert all(not Path(n).exists() for n in seen)
    assert sorted(p.name for p in tmp_path.iterdir() if p.name.startswith(".a.xlsx")) == []


def test_atomic_path_renames_only_complete_files(tmp_path):
    target = tmp_path / "x.bin"
    with atomic_path(target) as tmp:
        tmp.write_bytes(b"done")
        assert not target.exists()
    assert target.read_bytes() == b"done"


def test_output_lock_serialises_two_runs(tmp_path):
    """Two processes holding the lock of one output folder never overlap (fcntl.flock)."""
    pytest.importorskip("fcntl")
    log = tmp_path / "log"
    script = (
        "import sys, time; from bomcheck.render.outfiles import output_lock\n"
        f"with output_lock([{str(tmp_path / 'a.json')!r}]):\n"
        f"    open({str(log)!r}, 'a').write('start ' + sys.argv[1] + '\\n'); time.sleep(0.4)\n"
        f"    open({str(log)!r}, 'a').write('end ' + sys.argv[1] + '\\n')\n")
    procs = [subprocess.Popen([sys.executable, "-c", script, str(i)]) for i in (1, 2)]
    assert all(p.wait(timeout=30) == 0 for p in procs)
    lines = log.read_text().split("\n")[:4]
    assert lines[0].split()[0] == "start" and lines[1].split()[0] == "end"
    assert lines[0].split()[1] == lines[1].split()[1]  # one run's writes, then the other's


def test_non_utf8_output_file_name(tmp_path, capsys):
    """A file name that is not UTF-8 (bytes from the command line as surrogate escapes) is
    written byte for byte, and messages print it without an encoding error."""
    if sys.platform.startswith("win"):
        pytest.skip("file names are Unicode on Windows")
    (tmp_path / "bom.csv").write_text(HEADER + bom_lines(), encoding="utf-8")
    (tmp_path / "design.csv").write_text(DESIGN, encoding="utf-8")
    name = os.fsdecode(b"r\xe9sultat.json")  # Latin-1 bytes, not UTF-8
    html = os.fsdecode(b"r\xe9sultat.html")
    cwd = os.getcwd()
    os.chdir(tmp_path)
    try:
        code = main(["audit", "bom.csv", "--design", "design.csv", "--no-config", "--quiet",
                     "--json", name, "--html", html, "--markdown",
                     os.fsdecode(b"missing\xff/x.md")])
    finally:
        os.chdir(cwd)
    assert code == 2  # the unwritable one is an input error naming the file...
    err = capsys.readouterr().err
    assert "missing\\xff/x.md" in err and "Traceback" not in err
    assert (tmp_path / os.fsdecode(b"r\xe9sultat.json")).exists()  # ...the others were written
    json.loads((tmp_path / name).read_bytes())


def test_concurrent_runs_leave_one_runs_set_of_outputs(tmp_path):
    """Two audits writing the same outputs at once: the JSON and the CSV on disk afterwards
    come from the same run (the output lock makes each run write its set whole). Two processes,
    so the session's sample report cannot stand in."""
    sample = ROOT / "sample_boms"
    small = tmp_path / "small.csv"
    small.write_text(HEADER + "C1,1,100nF 16V X7R,x,y,Yes\n", encoding="utf-8")
    (tmp_path / "design.csv").write_text(DESIGN + "C1,5,55,none\n", encoding="utf-8")
    runs = [(str(sample / "bw7-controller-bom.csv"), str(sample / "bw7-design.csv")),
            (str(small), str(tmp_path / "design.csv"))]
    for _ in range(2):
        procs = [subprocess.Popen([sys.executable, "-m", "bomcheck", "audit", bom, "--design",
                                   design, "--no-config", "--quiet", "--json", "out.json",
                                   "--csv", "out.csv", "--xlsx", "out.xlsx"],
                                  cwd=tmp_path, stdout=subprocess.DEVNULL)
                 for bom, design in runs]
        assert all(p.wait(timeout=120) in (0, 1) for p in procs)
        data = json.loads((tmp_path / "out.json").read_text(encoding="utf-8"))
        rows = (tmp_path / "out.csv").read_bytes().count(b"\r\n") - 1
        assert rows == len(data["placements"])  # the CSV belongs to the JSON's run
        assert not [p for p in tmp_path.iterdir() if ".bomcheck-" in p.name]


def test_sigterm_during_a_write_leaves_no_temporary_file(tmp_path):
    lines = "".join(f"C{i},1,100nF 50V X7R 0402,x,y,Yes\n" for i in range(1, 4001))
    (tmp_path / "bom.csv").write_text(HEADER + lines, encoding="utf-8")
    (tmp_path / "design.csv").write_text(DESIGN, encoding="utf-8")
    proc = subprocess.Popen([sys.executable, "-m", "bomcheck", "audit", "bom.csv", "--design",
                             "design.csv", "--no-config", "--quiet", "--xlsx", "out.xlsx"],
                            cwd=tmp_path, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline and proc.poll() is None:
        if any(".bomcheck-" in p.name for p in tmp_path.iterdir()):
            break
        time.sleep(0.02)
    if proc.poll() is not None:
        pytest.fail("the workbook was written before a temporary file was seen")
    proc.send_signal(signal.SIGTERM)
    assert proc.wait(timeout=60) == 128 + signal.SIGTERM
    assert not (tmp_path / "out.xlsx").exists()
    assert not [p.name for p in tmp_path.iterdir() if ".bomcheck-" in p.name]


def test_write_text_writes_every_piece_and_standard_output_for_a_dash(tmp_path, capsys):
    target = tmp_path / "out.md"
    write_text(str(target), iter(["a", "b\n", "c"]))
    assert target.read_text(encoding="utf-8") == "ab\nc"
    write_text("-", "to stdout\n")  # '-' names standard output (common CLI convention)
    assert capsys.readouterr().out == "to stdout\n"


def test_an_unwritable_folder_is_an_input_error_naming_the_file(tmp_path):
    with pytest.raises(InputError, match="missing"):
        write_text(str(tmp_path / "missing" / "out.json"), "{}")
    assert list(tmp_path.iterdir()) == []


def test_printable_shows_undecodable_bytes_as_escapes():
    # a name from the command line that is not UTF-8 arrives as surrogate escapes (PEP 383)
    assert printable(os.fsdecode(b"r\xe9v.json")) == "r\\xe9v.json"
    assert printable("plain.json") == "plain.json"
