"""The self-contained HTML report (bomcheck.render.html): content, no external asset, and a
render in a real browser (headless Chromium) when one is installed. The chart: test_html_chart.py."""

from __future__ import annotations

import html
import os
import re
import shutil
import subprocess
from html.parser import HTMLParser

import pytest

from substitute_boards import sample_result

from bomcheck.render.html import audit_html, substitute_html


@pytest.fixture(scope="module")
def report(sample_report_bare):
    return sample_report_bare


@pytest.fixture(scope="module")
def page(report):
    return audit_html(report)


class _Collect(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags: list[tuple[str, dict]] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))


def _tags(text: str) -> list[tuple[str, dict]]:
    p = _Collect()
    p.feed(text)
    return p.tags


def test_self_contained_no_network(page):
    for tag, attrs in _tags(page):
        for key in ("src", "href"):
            value = attrs.get(key)
            if value is not None:
                assert value.startswith("#"), (tag, key, value)  # in-page anchors only
        assert tag not in ("link", "iframe", "img", "object", "embed")
    assert "http://" not in page.replace('xmlns="http://www.w3.org/2000/svg"', "")
    assert "https://" not in page
    assert "@import" not in page and "url(" not in page


def test_holds_inputs_totals_every_verdict_groups_cautions_signature(page, report):
    for d in report.inputs:
        assert d["sha256"] in page
    assert "rows read 65 = capacitor rows 37 + non-capacitor rows 28" in page
    bad = report.verdicts[report.verdicts["status"] != "pass"]
    rows = re.findall(r'<tr data-status="(fail|warn|nodata|waived)" data-pos', page)
    placements_bad = int((report.table["status"] != "pass").sum())
    assert len(rows) == placements_bad + len(bad)  # placement rows + verdict rows
    assert "Banks and series stacks" in page and "DC_LINK" in page
    for caution in report.cautions:
        assert html.escape(caution) in page
    assert "local codes" in page.lower() or "local electrical codes" in page.lower()
    for role in ("Prepared by", "Reviewed by"):
        assert role in page
    assert "@media print" in page and "table-header-group" in page


def test_placements_worst_first_in_natural_order(page, report):
    order = re.findall(r'<tr data-status="[a-z]+" data-pos="\d+"><td data-v="\d+">\d+</td>'
                       r"<td>([^<]+)</td>", page)
    assert order == list(report.worst_first()["refdes"])
    assert order[0] == "C43"  # -10 degC margin on a 10 degC limit: -200 %, the worst


def test_substitute_page():
    result = sample_result()  # the sample's alternates, checked once per session
    text = substitute_html(result)
    assert "Substitutes" in text and "rejected" in text and "Reviewed by" in text
    assert text.count("<tr data-status=") == len(result.results)


# ---- a real browser ------------------------------------------------------------------------

def _chromium() -> str | None:
    for name in ("chromium", "chromium-browser", "google-chrome", "chrome"):
        found = shutil.which(name)
        if found:
            return found
    return None


def test_renders_in_headless_chromium(page, tmp_path):
    browser = _chromium()
    if browser is None:
        pytest.skip("no Chromium installed: the browser check needs it (Debian/Ubuntu: "
                    "apt-get install chromium; see the README, 'Tests')")
    path = tmp_path / "audit.html"
    path.write_text(page, encoding="utf-8")
    cmd = [browser, "--headless", "--no-sandbox", "--disable-gpu",
           "--disable-background-networking", "--no-first-run", "--disable-extensions",
           f"--user-data-dir={tmp_path / 'profile'}", "--virtual-time-budget=3000",
           "--dump-dom", path.as_uri()]
    out = subprocess.run(cmd, capture_output=True, text=True, timeout=120,
                         env={**os.environ, "HOME": str(tmp_path)})
    dom = out.stdout
    assert out.returncode == 0 and "<svg" in dom, out.stderr[-2000:]
    # The page's script ran in the browser: the filter wrote its count, the headers are sortable
    assert re.search(r'<span class="count muted">\d+ shown</span>', dom)
    assert 'class="sortable"' in dom
    # the table and the chart are in the rendered DOM
    assert dom.count("<tr data-status=") >= 63 and dom.count('class="point"') >= 50

