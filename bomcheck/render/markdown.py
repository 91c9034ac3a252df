"""Report stage, CI edge: Markdown for a pull-request comment (an audit's summary, the comparison
with a baseline, a batch's per-board table).

Every text from the inputs goes through ``textsafe.md_text`` (one escaping function for every
Markdown writer); figures through ``quantity.format_metric``. Nothing reads a clock, so the same
report gives the same bytes.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator

from bomcheck.quantity import format_metric, is_missing
from bomcheck.render.textparts import COUNTED
from bomcheck.render.textsafe import md_text as _md
from bomcheck.render.verdicts import not_audited_counts
from bomcheck.report.diff import summary_line


def _input_line(report) -> str:
    """The BOM (and other inputs) by file name and SHA-256, for the head of a summary."""
    parts = []
    for d in report.inputs:
        name = str(d.get("path") or "").replace("\\", "/").rsplit("/", 1)[-1]
        digest = str(d.get("sha256") or "")
        digest = f" (SHA-256 `{digest}`)" if digest.isalnum() else ""
        parts.append(f"{_md(d.get('role'))} {_md(name)}{digest}")
    return "; ".join(parts)


def markdown_summary(report, *, limit: int = 50, diff=None) -> str:
    """A summary for a pull-request comment: the BOM and its hash, totals by status, every
    verdict that is not a pass (worst first, up to ``limit``) with its stress, limit, rule and
    message, waiver problems, the comparison with a baseline (``diff``, a
    ``bomcheck.report.diff.Diff``) and the cautions as a list."""
    out = [f"## bomcheck audit: {report.status.upper()}", ""]
    inputs = _input_line(report)
    if inputs:
        out += [f"Inputs: {inputs}.", ""]
    out += _totals(report)
    out += _verdicts_not_passing(report, limit)
    out += _waivers(report.waiver_findings, limit)
    if diff is not None:
        out += [diff_markdown(diff, limit=limit, level=3).rstrip("\n"), ""]
    rulesets = ", ".join(f"{_md(r['name'])} {_md(r.get('version'))}" for r in report.rulesets)
    if report.input_warnings:
        out += ["### Input warnings", ""]
        out += [f"- {_md(str(w))}" for w in report.input_warnings]
        out += [""]
    out += [f"Rule sets: {rulesets}; environment: {_md(report.environment)}.", "",
            "### Cautions", ""]
    out += [f"- {_md(c)}" for c in report.cautions]
    return "\n".join(out) + "\n"


def _totals(report) -> list[str]:
    """The totals table by status, then what was not audited and design rows not in the BOM."""
    totals = report.totals
    out = ["| status | placements |", "|:--|--:|"]
    out += [f"| {s} | {int(totals.get(s, 0))} |" for s in COUNTED]
    out += [f"| **audited** | **{int(totals.get('audited', len(report.table)))}** |", ""]
    not_audited = not_audited_counts(report)
    notes = []
    if not_audited:
        notes.append("Not audited: " + ", ".join(f"{k.replace('_', ' ')} {n}"
                                                 for k, n in not_audited.items()) + ".")
    if report.design_unmatched:
        notes.append("Design-sheet rows not in the BOM: " + ", ".join(
            f"{_md(d['refdes'])} (row {d['row']})" for d in report.design_unmatched) + ".")
    return out + ([" ".join(notes), ""] if notes else [])


def _verdicts_not_passing(report, limit: int) -> list[str]:
    """The table of verdicts that are not a pass, worst first, up to ``limit`` rows."""
    t = report.table
    bad = report.verdicts_worst_first()
    if len(bad):  # designators and statuses as the placement table has them
        status_of = t["status"].reindex(bad["pidx"].to_numpy()).to_numpy()
        bad = bad.assign(refdes=t["refdes"].reindex(bad["pidx"].to_numpy()).to_numpy())
        bad = bad[status_of != "pass"]
    if not len(bad):
        return [f"Every one of the {len(t)} audited placements passes.", ""]
    shown = bad.head(limit)
    placements = bad["pidx"].nunique()
    more = (f", the worst {len(shown)} shown (all in the JSON report)"
            if len(bad) > len(shown) else "")
    metric_of = {} if report.rules is None else {r.id: r.metric for r in report.rules.rules}
    out = [f"### Verdicts not passing: {len(bad)} on {placements} "
           f"placement{'s' if placements != 1 else ''}{more}", "",
           "| refdes | status | rule | stress | limit | message |",
           "|:--|:--|:--|--:|--:|:--|"]
    for refdes, status, rule, value, lim, message in zip(
            shown["refdes"], shown["status"], shown["rule_id"], shown["value"],
            shown["limit"], shown["message"]):
        metric = metric_of.get(rule)
        out.append("| " + " | ".join([
            _md(refdes), _md(status), _md(rule), _md(format_metric(value, metric)),
            _md(format_metric(lim, metric)), _md("" if is_missing(message) else message),
        ]) + " |")
    return out + [""]


def _waivers(found, limit: int) -> list[str]:
    """What became of each waiver, up to ``limit`` lines."""
    if not found:
        return []
    applied = sum(1 for f in found if f.code == "applied")
    out = [f"**Waivers:** {applied} applied, {len(found) - applied} not applied.", ""]
    out += [f"- {f.code.replace('_', ' ')}: {_md(f.message)}" for f in found[:limit]]
    if len(found) > limit:
        out.append(f"- ... {len(found) - limit} more in the JSON report")
    return out + [""]


def diff_markdown(diff, *, limit: int = 20, level: int = 2) -> str:
    """A comparison with a baseline (``bomcheck.report.diff.Diff``) as Markdown: the counts,
    then a table of the changes (problems first)."""
    head = "#" * level
    out = [f"{head} Changes since the baseline", "", _md(summary_line(diff)) + ".", ""]
    rows = diff.rows()
    rows.sort(key=lambda kc: not kc[1].is_problem)  # stable: problems first, order kept
    if rows:
        out += ["| change | refdes | rule | was | now |", "|:--|:--|:--|:--|:--|"]
        for kind, c in rows[:limit]:
            flag = " (new problem)" if c.is_problem else ""
            out.append(f"| {kind}{flag} | {_md(c.refdes)} | {_md(c.rule)} | "
                       f"{c.old_status or ''} | {c.new_status or ''} |")
        if len(rows) > limit:
            out.append(f"| ... | {len(rows) - limit} more | | | |")
        out.append("")
    for word, names in (("added", diff.added), ("removed", diff.removed)):
        if names:
            shown = ", ".join(_md(r) for r in names[:limit])
            more = f" and {len(names) - limit} more" if len(names) > limit else ""
            out.append(f"Placements {word}: {shown}{more}.")
    return "\n".join(out).rstrip("\n") + "\n"


def board_markdown(report, product: str) -> str:
    """One board's summary in a batch: the audit's summary under the board's product name."""
    _, _, rest = markdown_summary(report).partition("\n")  # the board's own title, replaced
    return f"## {product}: {report.status.upper()}\n{rest}\n"


def batch_markdown_head(boards: Iterable, status: str) -> Iterator[str]:
    """A batch's title and its table, one row per board (``product``, ``status`` and ``totals``
    of each); each board's own summary (``board_markdown``) follows it."""
    yield f"# bomcheck batch audit: {status.upper()}\n\n"
    yield "| product | status | audited | pass | warn | nodata | fail |\n"
    yield "|:--|:--|--:|--:|--:|--:|--:|\n"
    for r in boards:
        counts = " | ".join(str(int(r.totals.get(k, 0)))
                            for k in ("audited", "pass", "warn", "nodata", "fail"))
        yield f"| {_md(r.product)} | {r.status} | {counts} |\n"
