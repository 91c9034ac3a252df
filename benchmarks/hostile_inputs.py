"""Run the hostile-input corpus as separate processes and count what went wrong.

Each case of ``tests/hostile_corpus.py`` (malformed and hostile BOMs, design sheets, rule sets,
waiver and parts files, built in a temporary folder) runs as ``python -m bomcheck import`` and
``audit`` under an address-space limit (default 4 GiB), with every output written; the script
measures each process's peak resident memory and wall time and prints one line per run, then
the counts: tracebacks, runs over 10 s (hangs), wrong exit statuses, the largest peak memory and
outputs that are not valid JSON, XML or CSV. Files at or near the default limits (``big_cases``:
a million lines, 240k placements, a 4.9M-cell sheet, 1 MB cells) run last for the memory
figure; they are not held to the 10 s. Not a test: the figures depend on the machine.

    python benchmarks/hostile_inputs.py [--limit-gb 4] [--timeout 60] [-k NAME]
"""

from __future__ import annotations

import argparse
import csv
import io
import json
import os
import signal
import subprocess
import sys
import tempfile
import time
import xml.etree.ElementTree as ET
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from hostile_corpus import big_cases, cases  # noqa: E402

HANG_S = 10.0
csv.field_size_limit(1 << 30)  # outputs may hold a long cell; that is valid CSV


def _no_constant(name: str) -> float:
    raise ValueError(f"not JSON: {name}")


def _valid(path: Path) -> str | None:
    """None when the output file is valid for its kind (or absent), else the reason."""
    if not path.exists() or path.stat().st_size == 0:
        return None
    text = path.read_text(encoding="utf-8", errors="strict")
    try:
        if path.suffix == ".json":
            json.loads(text, parse_constant=_no_constant)
        elif path.suffix == ".xml":
            ET.fromstring(text.encode("utf-8"))
        elif path.suffix == ".csv":
            list(csv.reader(io.StringIO(text, newline="")))
    except Exception as exc:  # noqa: BLE001 - any failure is an invalid output
        return f"{path.name}: {type(exc).__name__}: {exc}"
    return None


# The default install has no python-calamine: --no-calamine runs bomcheck as it would there.
_WITHOUT_CALAMINE = ("import sys; sys.modules['python_calamine'] = None; "
                     "from bomcheck.cli.main import main; sys.argv[0] = 'bomcheck'; sys.exit(main())")


# The limit is set by a small launcher that then becomes bomcheck (exec). /usr/bin/time starts
# it and reports its peak memory: a process forked from this script would carry this script's
# own peak into the figure (the high-water mark survives exec).
_LAUNCH = ("import os, resource, sys; n = int(sys.argv[1]); "
           "resource.setrlimit(resource.RLIMIT_AS, (n, n)); "
           "os.execv(sys.executable, [sys.executable, *sys.argv[2:]])")
TIME = "/usr/bin/time"


def _run(argv: list[str], folder: Path, limit: int, timeout: float, calamine: bool = True
         ) -> tuple[int | None, float, int, str]:
    """(exit status or None when killed, seconds, peak RSS in bytes, stderr) of one process."""
    err_path, rss_path = folder / "stderr.txt", folder / "maxrss.txt"
    head = ["-m", "bomcheck"] if calamine else ["-c", _WITHOUT_CALAMINE]
    cmd = [TIME, "-f", "%M", "-o", str(rss_path), sys.executable, "-c", _LAUNCH, str(limit),
           *head, *argv]
    with open(folder / "stdout.json", "wb") as out, open(err_path, "wb") as err:
        t0 = time.perf_counter()
        proc = subprocess.Popen(cmd, stdout=out, stderr=err, stdin=subprocess.DEVNULL,
                                start_new_session=True)
        try:
            status: int | None = proc.wait(timeout=timeout)
        except subprocess.TimeoutExpired:
            os.killpg(proc.pid, signal.SIGKILL)  # the group this run started, nothing else
            proc.wait()
            status = None
        elapsed = time.perf_counter() - t0
    try:
        rss = int(rss_path.read_text().split()[-1]) * 1024
    except (OSError, ValueError, IndexError):
        rss = 0
    err_text = err_path.read_text("utf-8", "replace")
    # /usr/bin/time notes a non-zero exit on its own line: not bomcheck's output.
    err_text = "\n".join(ln for ln in err_text.splitlines()
                         if not ln.startswith("Command exited with non-zero status"))
    return status, elapsed, rss, err_text


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--limit-gb", type=float, default=4.0, help="address-space limit per run")
    ap.add_argument("--timeout", type=float, default=60.0, help="kill a run after this long")
    ap.add_argument("-k", default="", help="only cases whose name contains this")
    ap.add_argument("--no-calamine", action="store_true", help="run as the default install "
                    "does, without python-calamine (workbooks through openpyxl)")
    ap.add_argument("--no-big", action="store_true", help="leave out the files near the "
                    "default limits (they take the longest and use the most memory)")
    args = ap.parse_args()
    limit = int(args.limit_gb * (1 << 30))
    tracebacks = hangs = wrong = invalid = runs = 0
    peak = (0, "")
    with tempfile.TemporaryDirectory() as tmp:
        for case in cases() + ([] if args.no_big else big_cases()):
            if args.k not in case.name:
                continue
            folder = Path(tmp) / case.name
            folder.mkdir()
            argv = case.build(folder)
            for command in case.commands:
                outs = folder / "out"
                outs.mkdir(exist_ok=True)
                extra = (["--json", str(outs / "a.json"), "--csv", str(outs / "a.csv"),
                          "--junit", str(outs / "a.xml"), "--markdown", str(outs / "a.md")]
                         if command == "audit" else ["--json"])
                status, secs, rss, err = _run([command, *argv, *extra], folder, limit,
                                              args.timeout, calamine=not args.no_calamine)
                runs += 1
                notes = []
                if "Traceback" in err:
                    tracebacks += 1
                    notes.append("TRACEBACK")
                if status is None or (secs > HANG_S and not case.big):
                    hangs += 1
                    notes.append("HANG")
                if status not in case.expect:
                    wrong += 1
                    notes.append(f"exit {status}, expected {case.expect}")
                bad = [r for r in ([_valid(p) for p in outs.iterdir()]
                                   + ([_valid(folder / "stdout.json")] if command == "import"
                                      and status in (0, 1) else [])) if r]
                if bad:
                    invalid += 1
                    notes.append("INVALID " + "; ".join(bad))
                if rss > peak[0]:
                    peak = (rss, f"{case.name} {command}")
                for p in outs.iterdir():
                    p.unlink()
                print(f"{case.name:32} {command:7} exit {status!s:>4} {secs:6.2f} s "
                      f"{rss / (1 << 20):7.0f} MiB  {' '.join(notes)}", flush=True)
    print(f"\nruns {runs}: tracebacks {tracebacks}, hangs over {HANG_S:.0f} s {hangs}, wrong "
          f"exit status {wrong}, invalid outputs {invalid}, max peak RSS "
          f"{peak[0] / (1 << 20):.0f} MiB ({peak[1]}), address-space limit "
          f"{args.limit_gb:g} GiB, workbooks through "
          f"{'openpyxl' if args.no_calamine else 'python-calamine if installed'}")
    return 1 if tracebacks or hangs or wrong or invalid else 0


if __name__ == "__main__":
    sys.exit(main())
