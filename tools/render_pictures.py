"""Regenerate the README's pictures from the sample board: the HTML report as headless Chromium
draws it, and the workbook's chart as LibreOffice Calc prints it.

    python tools/render_pictures.py            # writes docs/html-report.png, docs/workbook-chart.png

Needs Chromium (``chromium``), LibreOffice (``soffice``) and poppler (``pdftotext``,
``pdftoppm``) from the distribution's packages (Debian/Ubuntu: ``apt-get install chromium
libreoffice-calc poppler-utils``). Not part of the test suite.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DOCS = ROOT / "docs"
SAMPLE = ROOT / "sample_boms"


def _need(*names: str) -> dict[str, str]:
    found = {}
    for name in names:
        path = shutil.which(name)
        if path is None:
            sys.exit(f"render_pictures: {name} is not installed (see the module docstring)")
        found[name] = path
    return found


def main() -> int:
    tools = _need("chromium", "soffice", "pdftotext", "pdftoppm")
    DOCS.mkdir(exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        env = {**os.environ, "HOME": tmp}
        # Paths relative to the checkout, as a user runs it.
        subprocess.run([sys.executable, "-m", "bomcheck", "audit",
                        "sample_boms/bw7-controller-bom.csv", "--design",
                        "sample_boms/bw7-design.csv", "--no-config", "--quiet",
                        "--html", str(work / "audit.html"), "--xlsx", str(work / "audit.xlsx")],
                       cwd=ROOT, check=False, env=env)
        subprocess.run([tools["chromium"], "--headless", "--no-sandbox", "--disable-gpu",
                        "--disable-background-networking", "--no-first-run",
                        "--hide-scrollbars", f"--user-data-dir={work / 'profile'}",
                        "--window-size=1280,1700",
                        f"--screenshot={DOCS / 'html-report.png'}",
                        (work / "audit.html").as_uri()],
                       check=True, env=env, capture_output=True)
        subprocess.run([tools["soffice"], "--headless", "--norestore",
                        f"-env:UserInstallation={(work / 'lo').as_uri()}", "--convert-to",
                        "pdf", "--outdir", str(work), str(work / "audit.xlsx")],
                       check=True, env=env, capture_output=True)
        pdf = work / "audit.pdf"
        page = _chart_page(tools["pdftotext"], pdf)
        subprocess.run([tools["pdftoppm"], "-f", str(page), "-l", str(page), "-r", "110",
                        "-png", "-singlefile", str(pdf), str(DOCS / "workbook-chart")],
                       check=True)
    for name in ("html-report.png", "workbook-chart.png"):
        print(DOCS / name)
    return 0


def _chart_page(pdftotext: str, pdf: Path) -> int:
    """The page of the printed workbook that holds the chart."""
    for page in range(1, 200):
        text = subprocess.run([pdftotext, "-f", str(page), "-l", str(page), str(pdf), "-"],
                              capture_output=True, text=True)
        if text.returncode != 0:
            break
        if "operating temperature [°C]" in text.stdout:
            return page
    sys.exit("render_pictures: no chart page in the printed workbook")


if __name__ == "__main__":
    raise SystemExit(main())
