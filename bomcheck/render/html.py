"""Report stage, browser edge: the audit (or the substitute check) as one self-contained HTML file.

One file, no network and no external asset: the style sheet, the small sorting/filtering script
and the stress-versus-temperature chart (inline SVG) are all in the page, so it can be mailed,
archived with a release and printed. Every text from the inputs goes through
``textsafe.html_text``. The print style sheet gives a paginated record (landscape, table headers
repeated on each page, the controls hidden) ending with a signature block.

Nothing is recomputed: every figure comes from the ``Report`` (or ``SubstituteResult``); the
order of placements and verdicts is the shared worst-first order of ``bomcheck.report.model``.
"""

from __future__ import annotations

import math
import platform
import sys
from collections.abc import Iterable, Sequence

import pandas as pd

from bomcheck.quantity import format_metric, format_si, is_missing
from bomcheck.render.html_chart import chart_section
from bomcheck.render.textparts import COUNTED, accounting_line, energy, group_cells
from bomcheck.render.textsafe import html_text as esc
from bomcheck.render.verdicts import bom_rows
from bomcheck.substitute.words import designator_list

CAUTION_NOTE = ("These cautions come from the clauses they cite; they are not compliance "
                "verdicts. Local electrical codes, the product's own safety standard and "
                "licensed practice govern.")

# Status colours: lightness falls as severity rises, so the order survives greyscale printing.
_CSS = """
:root{--fail:#5e2750;--nodata:#8e9cc2;--warn:#e9d8a6;--pass:#e3ebe8;--waived:#e2ded6;
--ink:#1b1f24;--rule:#8a939c;--head:#dce1e6}
*{box-sizing:border-box}
body{font:14px/1.4 system-ui,-apple-system,"Segoe UI",Roboto,"Liberation Sans",sans-serif;
color:var(--ink);margin:1.5rem auto;max-width:1400px;padding:0 1rem}
h1{font-size:1.5rem;margin:.2rem 0}h2{font-size:1.15rem;margin:1.6rem 0 .5rem;
border-bottom:1px solid var(--rule)}h3{font-size:1rem;margin:1rem 0 .3rem}
table{border-collapse:collapse;width:100%;margin:.3rem 0 1rem}table.narrow{width:auto}
th,td{border:1px solid #c5ccd3;padding:.25rem .4rem;text-align:left;vertical-align:top}
th{background:var(--head);font-weight:600}
td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
td.mono,span.mono{font-family:ui-monospace,"DejaVu Sans Mono",monospace;font-size:.85em;
word-break:break-all}
.status{display:inline-block;min-width:4.5em;padding:0 .3em;border-radius:3px;
font-weight:600;text-align:center}
.s-fail{background:var(--fail);color:#fff}.s-nodata{background:var(--nodata)}
.s-warn{background:var(--warn)}.s-pass{background:var(--pass);font-weight:400}
.s-waived{background:var(--waived);font-style:italic}
.s-rejected{background:var(--fail);color:#fff}.s-review{background:var(--warn)}
.s-drop-in{background:var(--pass)}
.overall{font-size:1.2rem;margin:.4rem 0}
.controls{margin:.4rem 0;display:flex;gap:1rem;flex-wrap:wrap;align-items:center}
.controls input[type=search]{min-width:18rem;padding:.2rem .4rem}
th.sortable{cursor:pointer}th.sortable::after{content:" \\2195";color:#6b737b}
th[aria-sort=ascending]::after{content:" \\2191"}th[aria-sort=descending]::after{content:" \\2193"}
td.bomtext{font-size:.8em;color:#3b4148;min-width:9rem;max-width:14rem}
td.expl{min-width:20rem}
.chart{max-width:1100px}.chart text{font:11px sans-serif;fill:#1b1f24}
.chart .lbl{font-size:9px}.muted{color:#5b636b}.print-only{display:none}
ul.cautions li{margin:.3rem 0}
.signature{margin-top:2rem;break-inside:avoid}
.signature table td{height:3.2rem;width:33%}
.signature th{width:12rem}
@media print{
@page{size:A4 landscape;margin:12mm 12mm 14mm;
@bottom-right{content:"page " counter(page) " of " counter(pages);font:8pt sans-serif}}
th.sortable::after,th[aria-sort]::after{content:none}
table{font-size:8.5pt}td.bomtext{font-size:7.5pt}
.screen-only{display:none}
.print-only{display:block!important}
body{margin:0;max-width:none;font-size:10pt}
.controls,.noprint{display:none!important}
thead{display:table-header-group}tr,.chart,figure{break-inside:avoid}
h2{break-after:avoid}
th,td{padding:.12rem .25rem}
.status{border:1px solid #555}
a{color:inherit;text-decoration:none}
}
"""

# Sorting and filtering of tables marked data-sortable; numbers sort by data-v.
_JS = """
(function(){
function key(td){var v=td.getAttribute('data-v');if(v!==null&&v!==''){return [0,parseFloat(v),''];}
return [1,0,td.textContent.trim().toLowerCase()];}
function cmp(a,b){for(var i=0;i<3;i++){if(a[i]<b[i])return -1;if(a[i]>b[i])return 1;}return 0;}
document.querySelectorAll('table[data-sortable]').forEach(function(t){
var ths=t.tHead.rows[0].cells;
Array.prototype.forEach.call(ths,function(th,i){th.classList.add('sortable');
th.addEventListener('click',function(){var asc=th.getAttribute('aria-sort')!=='ascending';
Array.prototype.forEach.call(ths,function(h){h.removeAttribute('aria-sort');});
th.setAttribute('aria-sort',asc?'ascending':'descending');
var rows=Array.prototype.slice.call(t.tBodies[0].rows);
rows.sort(function(a,b){var r=cmp(key(a.cells[i]),key(b.cells[i]));
if(r===0){r=parseFloat(a.getAttribute('data-pos'))-parseFloat(b.getAttribute('data-pos'));return r;}
return asc?r:-r;});
rows.forEach(function(r){t.tBodies[0].appendChild(r);});});});});
document.querySelectorAll('[data-filter-for]').forEach(function(box){
var t=document.getElementById(box.getAttribute('data-filter-for'));
function apply(){var q=box.querySelector('input[type=search]').value.toLowerCase();
var on={};box.querySelectorAll('input[type=checkbox]').forEach(function(c){on[c.value]=c.checked;});
var shown=0;Array.prototype.forEach.call(t.tBodies[0].rows,function(r){
var ok=(on[r.getAttribute('data-status')]!==false)&&(!q||r.textContent.toLowerCase().indexOf(q)>=0);
r.style.display=ok?'':'none';if(ok)shown++;});
var n=box.querySelector('.count');if(n)n.textContent=shown+' shown';}
box.addEventListener('input',apply);apply();});
})();
"""

STATUSES = COUNTED  # worst first
# Passing verdicts listed in the page at most (every verdict that is not a pass is always listed).
MAX_PASSING_ROWS = 5_000


def _t(v) -> str:
    return "" if is_missing(v) else esc(v)


def _status(s) -> str:
    s = "" if is_missing(s) else str(s)
    label = s.upper() if s in ("fail", "warn") else s
    return f'<span class="status s-{esc(s)}">{esc(label)}</span>'


def _num_attr(v) -> str:
    """A data-v attribute for sorting by number ('' for none)."""
    try:
        x = float(v)
    except (TypeError, ValueError):
        return ""
    return f' data-v="{x:.9g}"' if math.isfinite(x) else ""


def _table(headers: Sequence[str], rows: Iterable[str], *, table_id: str = "",
           sortable: bool = False, cls: str = "") -> str:
    ident = f' id="{table_id}"' if table_id else ""
    attrs = (" data-sortable" if sortable else "") + (f' class="{cls}"' if cls else "")
    head = "".join(f"<th scope=\"col\">{esc(h)}</th>" for h in headers)
    return (f"<table{ident}{attrs}><thead><tr>{head}</tr></thead><tbody>"
            + "".join(rows) + "</tbody></table>")


def _page(title: str, body: list[str]) -> str:
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">"
            "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; "
            "style-src 'unsafe-inline'; script-src 'unsafe-inline'; img-src data:\">"
            f"<title>{esc(title)}</title><style>{_CSS}</style></head><body>\n"
            + "\n".join(body) + f"\n<script>{_JS}</script>\n</body></html>\n")


def _environment(tool_version: str) -> list[tuple[str, str]]:
    import numpy

    return [("bomcheck", tool_version), ("Python", platform.python_version()),
            ("pandas", pd.__version__), ("numpy", numpy.__version__),
            ("platform", f"{platform.system()} {platform.machine()}"),
            ("command", " ".join(["bomcheck", *sys.argv[1:]]) if sys.argv else "")]


def _inputs_section(inputs, rulesets, tool_version: str) -> list[str]:
    out = ["<h2 id=\"inputs\">Inputs, rule sets and environment</h2>",
           _table(("input", "path", "SHA-256"), (
               f"<tr><td>{_t(d.get('role'))}</td><td class=\"mono\">{_t(d.get('path'))}</td>"
               f"<td class=\"mono\">{_t(d.get('sha256'))}</td></tr>" for d in inputs))]
    out.append(_table(("rule set", "title", "version", "file", "extends"), (
        f"<tr><td>{_t(r.get('name'))}</td><td>{_t(r.get('title'))}</td>"
        f"<td>{_t(r.get('version'))}</td><td class=\"mono\">{_t(r.get('path'))}</td>"
        f"<td>{_t(r.get('extends'))}</td></tr>" for r in rulesets)))
    sources = rulesets[-1].get("sources", []) if rulesets else []
    if sources:
        out.append("<h3>Sources of the rules</h3>")
        out.append(_table(("source", "title", "clause", "confidence"), (
            f"<tr><td>{_t(s.get('id'))}</td><td>{_t(s.get('title'))}</td>"
            f"<td>{_t(s.get('clause'))}</td><td>{_t(s.get('confidence'))}</td></tr>"
            for s in sources)))
    out.append("<h3>Environment</h3>")
    out.append(_table(("item", "value"), (f"<tr><td>{esc(k)}</td><td class=\"mono\">{esc(v)}"
                                          "</td></tr>" for k, v in _environment(tool_version))))
    return out


def _input_warnings_section(report) -> list[str]:
    """The doubts about the input files (design sheet, parts data, BOM reading) and the
    environment the limits were taken for."""
    out = [f"<p>Environment: {esc(report.environment)} (the limits of that environment apply "
           "where a rule gives two).</p>"]
    if report.input_warnings:
        out += ["<h2 id=\"input-warnings\">Input warnings</h2>", "<ul>"
                + "".join(f"<li>{esc(str(w))}</li>" for w in report.input_warnings) + "</ul>"]
    return out


def _cautions_section(cautions) -> list[str]:
    return ["<h2 id=\"cautions\">Cautions</h2>", "<ul class=\"cautions\">"
            + "".join(f"<li>{esc(c)}</li>" for c in cautions) + "</ul>",
            f"<p class=\"muted\">{esc(CAUTION_NOTE)}</p>"]


def _signature() -> str:
    return ("<section class=\"signature\"><h2>Review record</h2>"
            "<table><thead><tr><th scope=\"col\">role</th><th scope=\"col\">name</th>"
            "<th scope=\"col\">signature</th><th scope=\"col\">date</th></tr></thead><tbody>"
            "<tr><th scope=\"row\">Prepared by</th><td></td><td></td><td></td></tr>"
            "<tr><th scope=\"row\">Reviewed by</th><td></td><td></td><td></td></tr>"
            "</tbody></table></section>")


# ---- the audit -------------------------------------------------------------------------------

def _conditions(rec: dict) -> str:
    parts = []
    v = rec.get("v_upper_v")
    if not is_missing(v):
        parts.append(f"{v:.4g} V")
    elif not is_missing(rec.get("v_ac_rms")):
        parts.append(f"{rec['v_ac_rms']:.4g} V rms")
    t = rec.get("t_operating_c")
    if not is_missing(t):
        parts.append(f"{t:.4g} °C")
    return ", ".join(parts)


def _value_text(rec: dict) -> str:
    bits = [format_si(rec.get("capacitance_f"), "F"), format_si(rec.get("voltage_v"), "V")]
    if rec.get("voltage_kind") == "ac" and bits[1]:
        bits[1] += " AC"
    for k in ("dielectric", "safety_class", "package"):
        if not is_missing(rec.get(k)) and rec.get(k):
            bits.append(str(rec[k]))
    return " ".join(b for b in bits if b)


def _placements_section(report) -> list[str]:
    ordered = report.worst_first()
    gov = report.governing()
    cols = [c for c in ("refdes", "row", "status", "technology", "capacitance_f", "voltage_v",
                        "voltage_kind", "dielectric", "safety_class", "package", "v_upper_v",
                        "v_ac_rms", "t_operating_c", "text") if c in ordered]
    recs = ordered[cols].astype(object).where(ordered[cols].notna(), None).to_dict("records")
    g = gov.reindex(ordered.index) if len(gov) else pd.DataFrame(index=ordered.index)
    gcols = {c: (g[c].tolist() if c in g else [None] * len(g)) for c in
             ("rule_id", "value", "limit", "rel_margin", "metric", "basis", "message")}
    rows = []
    for pos, rec in enumerate(recs):
        metric = gcols["metric"][pos]
        rel = gcols["rel_margin"][pos]
        rows.append(
            f'<tr data-status="{_t(rec.get("status"))}" data-pos="{pos}">'
            f'<td data-v="{pos}">{pos + 1}</td>'
            f'<td>{_t(rec.get("refdes"))}</td><td class="num"{_num_attr(rec.get("row"))}>'
            f'{_t(rec.get("row"))}</td>'
            f'<td data-v="{STATUSES.index(rec["status"]) if rec.get("status") in STATUSES else 9}">'
            f'{_status(rec.get("status"))}</td>'
            f'<td>{esc(_value_text(rec))}</td><td>{_t(rec.get("technology"))}</td>'
            f'<td>{esc(_conditions(rec))}</td><td>{_t(gcols["rule_id"][pos])}</td>'
            f'<td class="num"{_num_attr(gcols["value"][pos])}>'
            f'{esc(format_metric(gcols["value"][pos], metric))}</td>'
            f'<td class="num"{_num_attr(gcols["limit"][pos])}>'
            f'{esc(format_metric(gcols["limit"][pos], metric))}</td>'
            f'<td class="num"{_num_attr(rel)}>{"" if is_missing(rel) else f"{rel:.1%}"}</td>'
            f'<td>{_t(gcols["basis"][pos])}</td><td class="expl">{_t(gcols["message"][pos])}</td>'
            f'<td class="bomtext">{_t(rec.get("text"))}</td></tr>')
    boxes = "".join(f'<label><input type="checkbox" value="{s}" checked> {s}</label>'
                    for s in STATUSES)
    return ["<h2 id=\"placements\">Placements, worst first</h2>",
            "<p class=\"muted\">Worst status first, then the smallest margin relative to its "
            "limit (unit-free), then designators in natural order. Click a column heading to "
            "sort; type to filter.</p>",
            f'<div class="controls" data-filter-for="placements-table"><input type="search" '
            f'placeholder="filter: designator, rule, text..." aria-label="filter placements">'
            f'{boxes}<span class="count muted"></span></div>',
            _table(("#", "refdes", "BOM row", "status", "part", "technology", "conditions",
                    "governing rule", "stress", "limit", "margin / limit", "basis",
                    "message", "BOM text"), rows, table_id="placements-table", sortable=True)]


def _verdict_rows(v: pd.DataFrame, metric_of: dict, rows: list) -> list[str]:
    cols = {c: (v[c].tolist() if c in v else [None] * len(v)) for c in
            ("refdes", "rule_id", "status", "value", "limit", "margin", "basis", "message",
             "source", "waived_from")}
    out = []
    for i, row in enumerate(rows):
        metric = metric_of.get(cols["rule_id"][i])
        waived = cols["waived_from"][i]
        status = _status(cols["status"][i]) + (
            f' <span class="muted">(was {_t(waived)})</span>' if not is_missing(waived) else "")
        out.append(
            f'<tr data-status="{_t(cols["status"][i])}" data-pos="{i}">'
            f'<td>{_t(cols["refdes"][i])}</td><td class="num"{_num_attr(row)}>{_t(row)}</td>'
            f'<td>{status}</td><td>{_t(cols["rule_id"][i])}</td>'
            f'<td class="num"{_num_attr(cols["value"][i])}>'
            f'{esc(format_metric(cols["value"][i], metric))}</td>'
            f'<td class="num"{_num_attr(cols["limit"][i])}>'
            f'{esc(format_metric(cols["limit"][i], metric))}</td>'
            f'<td>{_t(cols["basis"][i])}</td>'
            f'<td class="expl">{_t(cols["message"][i])}</td><td>{_t(cols["source"][i])}</td></tr>')
    return out


_VERDICT_HEADERS = ("refdes", "BOM row", "status", "rule", "value", "limit", "basis",
                    "message", "source")


def _verdicts_section(report) -> list[str]:
    metric_of = {} if report.rules is None else {r.id: r.metric for r in report.rules.rules}
    bad = report.verdicts_worst_first()
    out = ["<h2 id=\"verdicts\">Every verdict that is not a pass</h2>"]
    if len(bad):
        out.append(_table(_VERDICT_HEADERS, _verdict_rows(bad, metric_of, bom_rows(report, bad)),
                          table_id="verdicts-table", sortable=True))
    else:
        out.append("<p>None: every verdict passes.</p>")
    v = report.verdicts
    passed = v[v["status"] == "pass"] if len(v) else v
    if len(passed):
        place = pd.Series(range(len(report.table)), index=report.worst_first().index)
        passed = passed.assign(_p=passed["pidx"].map(place)).sort_values(
            ["_p", "rule_id"], kind="stable")
        out.append(f"<h3>Passing verdicts ({len(passed)})</h3>")
        if len(passed) > MAX_PASSING_ROWS:  # keep a large board's page light for a browser
            out.append(f"<p>The first {MAX_PASSING_ROWS:,} are listed (worst placements "
                       "first); the JSON report holds them all.</p>")
            passed = passed.head(MAX_PASSING_ROWS)
        out.append(f'<p class="print-only">The {len(passed)} passing verdicts are listed in '
                   "the on-screen report and the JSON report; the printed record lists every "
                   "verdict that is not a pass.</p>")
        out.append('<div class="screen-only">' + _table(
            _VERDICT_HEADERS, _verdict_rows(report.with_messages(passed), metric_of,
                                                bom_rows(report, passed)),
            table_id="checks-table", sortable=True) + "</div>")
    return out


def _groups_section(report) -> list[str]:
    groups = getattr(report, "groups", ()) or ()
    if not groups:
        return []
    rows = []
    for g in groups:
        need, discharge, shares = group_cells(g)
        rows.append(f"<tr><td>{_t(g.get('name'))}</td><td>{_t(g.get('kind'))}</td>"
                    f"<td>{esc(', '.join(map(str, g.get('members') or ())))}</td>"
                    f"<td class=\"num\">{esc(format_si(g.get('v_node_v'), 'V'))}</td>"
                    f"<td class=\"num\">{esc(format_si(g.get('c_eq_f'), 'F'))}</td>"
                    f"<td>{esc(need)}</td>"
                    f"<td class=\"num\">{esc(energy(g.get('energy_j')))}</td>"
                    f"<td>{esc(discharge)}</td><td>{esc(shares)}</td></tr>")
    return ["<h2 id=\"groups\">Banks and series stacks</h2>",
            _table(("group", "kind", "members", "node", "C eq", "C worst / need", "energy",
                    "discharge", "member shares (capacitive / DC)"), rows)]


def _totals_section(report) -> list[str]:
    t = report.totals
    rows = [f"<tr><td>{_status(s)}</td><td class=\"num\">{int(t.get(s, 0))}</td></tr>"
            for s in STATUSES]
    rows.append(f"<tr><th scope=\"row\">audited</th><td class=\"num\">"
                f"{int(t.get('audited', len(report.table)))}</td></tr>")
    return ["<h2 id=\"totals\">Totals</h2>", _table(("status", "placements"), rows,
                                                   cls="narrow"),
            f"<p>{esc(accounting_line(t))}</p>"]


def _not_audited_section(report) -> list[str]:
    out = []
    na = report.not_audited()
    unmatched = list(report.design_unmatched)
    if na or unmatched:
        out.append(f"<h2 id=\"not-audited\">Not audited ({len(na) + len(unmatched)})</h2>")
        out.append(_table(("kind", "designator", "row", "reason", "text"), [
            *(f"<tr><td>{_t(d['kind'].replace('_', ' '))}</td><td>{_t(d.get('refdes'))}</td>"
              f"<td class=\"num\">{_t(d.get('row'))}</td><td>{_t(d.get('reason'))}</td>"
              f"<td>{_t(d.get('text'))}</td></tr>" for d in na),
            *(f"<tr><td>design row not in the BOM</td><td>{_t(d.get('refdes'))}</td>"
              f"<td class=\"num\">{_t(d.get('row'))}</td><td>{_t(d.get('reason'))}</td>"
              "<td></td></tr>" for d in unmatched)]))
    found = getattr(report, "waiver_findings", ()) or ()
    if found:
        out.append("<h3>Waivers</h3><ul>" + "".join(
            f"<li>{esc(f.code.replace('_', ' '))}: {esc(f.message)}</li>" for f in found)
            + "</ul>")
    return out


def _bom_name(inputs) -> str:
    bom = next((d for d in inputs if d.get("role") == "bom"), None)
    return str(bom.get("path")) if bom else ""


def audit_html(report) -> str:
    """The audit report as one self-contained HTML page (module docstring)."""
    bom = _bom_name(report.inputs)
    title = f"bomcheck audit: {report.status.upper()}" + (f" — {bom}" if bom else "")
    body = [f"<header><h1>{esc(title)}</h1>",
            f"<p class=\"overall\">Overall: {_status(report.status)}</p>",
            "<nav class=\"noprint\"><a href=\"#totals\">totals</a> · "
            "<a href=\"#placements\">placements</a> · <a href=\"#verdicts\">verdicts</a> · "
            "<a href=\"#chart\">chart</a> · <a href=\"#groups\">banks and stacks</a> · "
            "<a href=\"#inputs\">inputs</a> · <a href=\"#cautions\">cautions</a></nav>"
            "</header>"]
    body += _totals_section(report)
    body += chart_section(report)
    body += _placements_section(report)
    body += _verdicts_section(report)
    body += _groups_section(report)
    body += _not_audited_section(report)
    body += _inputs_section(report.inputs, report.rulesets, report.tool_version)
    body += _input_warnings_section(report)
    body += _cautions_section(report.cautions)
    body.append(_signature())
    return _page(title, body)


# ---- the substitute check ----------------------------------------------------------------

def substitute_html(result) -> str:
    """The substitute check as one self-contained HTML page: one row per alternate with its
    verdict and reason, then each alternate's placements side by side and its reasons."""
    title = f"bomcheck substitute check: {result.status}"
    t = result.totals
    body = [f"<header><h1>{esc(title)}</h1>",
            f"<p class=\"overall\">Overall: {_status(result.status)} — {t['alternates']} "
            f"alternates: rejected {t['rejected']}, review {t['review']}, drop-in "
            f"{t['drop-in']}</p></header>",
            "<h2 id=\"substitutes\">Substitutes</h2>",
            _table(("original", "alternate", "placements", "verdict", "reason"), (
                f'<tr data-status="{esc(r.verdict)}" data-pos="{i}">'
                f"<td>{esc(r.alternate.original)}</td><td>{esc(r.alternate.label)}</td>"
                f"<td>{esc(designator_list(r.refdes))}</td><td>{_status(r.verdict)}</td>"
                f"<td>{esc(r.summary)}</td></tr>" for i, r in enumerate(result.results)),
                table_id="substitutes-table", sortable=True)]
    for r in result.results:
        body.append(f"<h3>{esc(r.alternate.label)} for {esc(r.alternate.original)}: "
                    f"{_status(r.verdict)}</h3>")
        if r.reasons:
            body.append("<ul>" + "".join(f"<li>{esc(i.sentence)}</li>" for i in r.reasons)
                        + "</ul>")
        body.append(_table(("refdes", "role", "conditions", "original", "rule", "alternate",
                            "rule", "change"), (
            f"<tr><td>{esc(p.refdes)}</td><td>{esc(p.role)}</td><td>{esc(p.conditions)}</td>"
            f"<td>{_status(p.original_status)}</td>"
            f"<td>{esc((p.original_governing or {}).get('rule') or '')}</td>"
            f"<td>{_status(p.proposed_status)}</td>"
            f"<td>{esc((p.proposed_governing or {}).get('rule') or '')}</td>"
            f"<td>{esc(p.change)}</td></tr>" for p in r.placements)))
    body += _inputs_section(result.inputs, result.rulesets, result.tool_version)
    body += _cautions_section(result.cautions)
    body.append(_signature())
    return _page(title, body)
