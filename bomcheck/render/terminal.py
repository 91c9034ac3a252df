"""Report stage, terminal edge: rich tables of specs, placements and audit results.

Every function takes the ``Console`` to print on; styles are the semantic names of ``THEME``.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from typing import Any

from rich.console import Console
from rich.text import Text
from rich.theme import Theme

from bomcheck.quantity import format_metric, format_si, is_missing
from bomcheck.render.verdicts import not_audited_counts
from bomcheck.render.textparts import (accounting_line, counts_parts, energy, group_cells, number,
                                       status_word, verdict_parts)
from bomcheck.report.diff import summary_line
from bomcheck.report.model import ruleset_summary
from bomcheck.substitute.words import designator_list

THEME = Theme(
    {
        "status.pass": "green",
        "status.warn": "yellow",
        "status.nodata": "magenta",
        "status.fail": "bold red",
        "status.waived": "cyan",
        "caution": "italic",
        "muted": "dim",
        "heading": "bold",
    }
)

DEFAULT_ROWS = 50
# Below this width the audit prints a short list per placement instead of the table, so that
# no cell is squeezed and no word broken: the table's columns at their natural widths
# ("aluminium-electrolytic", "bom.qty_mismatch", conditions) need about 130 columns.
COMPACT_WIDTH = 130


def make_console(*, file=None, no_color: bool = False, width: int | None = None) -> Console:
    """A console with the project theme; colour off when asked (NO_COLOR is honoured by rich).
    Neither markup nor emoji codes are read: text from the inputs (a description with
    ``[/b]``, an MPN such as ``:fire:``) prints as it is, never as styling, and rich's emoji table
    (a few ms at start) is not loaded. Styles are given as ``Text`` styles."""
    return Console(file=file, theme=THEME, no_color=no_color, width=width,
                   highlight=False, soft_wrap=False, emoji=False, markup=False)


def _table(title: str, **options) -> Any:
    """A rich table with the project's heading style (rich's table module loads only when a
    table is printed: ``--quiet`` prints none)."""
    from rich.table import Table
    return Table(title=title, header_style="heading", **options)


def status_text(status: str) -> Text:
    return Text(status_word(status), style=f"status.{status}")


def print_specs(console: Console, specs: Iterable) -> None:
    """One row per parsed text: what the parser read."""
    table = _table("Parsed values")
    for col in ("text", "cap?", "capacitance", "voltage", "tolerance", "dielectric", "technology",
                "temp range", "package", "unread / warnings"):
        table.add_column(col)
    for s in specs:
        tol = ""
        if s.tol_abs_f is not None:
            tol = f"±{format_si(s.tol_abs_f, 'F')}"
        elif s.tol_minus_pct is not None:
            tol = (f"±{s.tol_minus_pct:g} %" if s.tol_minus_pct == s.tol_plus_pct
                   else f"+{s.tol_plus_pct:g}/-{s.tol_minus_pct:g} %")
        temps = ""
        if s.temp_min_c is not None or s.temp_max_c is not None:
            temps = f"{number(s.temp_min_c, 6)}..{number(s.temp_max_c, 6)} °C"
        volt = format_si(s.voltage_v, "V") + (" AC" if s.voltage_kind == "ac" else "")
        table.add_row(
            s.text, "yes" if s.is_capacitor else "no", format_si(s.capacitance_f, "F"), volt, tol,
            s.dielectric or s.safety_class or "", s.technology or "", temps, s.package or "",
            ", ".join([*s.unread, *s.warnings]),
        )
    console.print(table)


def print_import(console: Console, result, *, show_all: bool = False) -> None:
    """Placements found in a BOM, the rows not taken, findings and the accounting line."""
    p = result.placements
    table = _table(f"Capacitor placements in {result.source.path}")
    for col in ("refdes", "row", "fitted", "capacitance", "voltage", "tol", "dielectric",
                "technology", "package", "text"):
        table.add_column(col, overflow="fold")
    limit = len(p) if show_all else DEFAULT_ROWS
    for rec in p.head(limit).itertuples(index=False):
        tol = "" if rec.tol_minus_pct is None or is_missing(rec.tol_minus_pct) else f"{rec.tol_minus_pct:g} %"
        table.add_row(
            rec.refdes, str(rec.row), "yes" if rec.fitted else Text("no", style="muted"),
            format_si(rec.capacitance_f, "F"), format_si(rec.voltage_v, "V"), tol,
            rec.dielectric or "", rec.technology or "", rec.package or "", rec.text,
        )
    console.print(table)
    if len(p) > limit:
        console.print(Text(f"... {len(p) - limit} more placements (use --all)", style="muted"))
    _print_skipped(console, result.skipped)
    for f in result.findings:
        console.print(Text.assemble(("finding", "status.warn"), f" row {f.row}: {f.message}"))
    console.print(accounting_line(result.totals))


def _print_skipped(console: Console, skipped, limit: int = 20) -> None:
    if not len(skipped):
        return
    table = _table("Rows not taken as capacitors")
    for col in ("row", "kind", "reason", "text"):
        table.add_column(col, overflow="fold")
    for rec in skipped.head(limit).itertuples(index=False):
        table.add_row(str(rec.row), rec.kind, rec.reason, rec.text)
    console.print(table)
    if len(skipped) > limit:
        console.print(Text(f"... {len(skipped) - limit} more rows not taken", style="muted"))


def verdict_line(report) -> Text:
    """``Overall: FAIL (severe environment)``: the audit's status and the environment it used."""
    before, status, after = verdict_parts(report)
    return Text.assemble(before, status_text(status), after)


def _conditions(rec) -> str:
    parts = []
    if not is_missing(rec.v_upper_v):
        v = f"{rec.v_upper_v:.4g} V"
        if not is_missing(getattr(rec, "v_ripple_pk", math.nan)) and rec.v_ripple_pk:
            v += f"+{rec.v_ripple_pk:.3g}"
        parts.append(v)
    elif not is_missing(getattr(rec, "v_ac_rms", math.nan)):
        parts.append(f"{rec.v_ac_rms:.4g} V rms")
    if not is_missing(rec.t_operating_c):
        parts.append(f"{rec.t_operating_c:.4g} °C")
    return ", ".join(parts)


def print_audit(console: Console, report, *, show_all: bool = False) -> None:
    """The audit worst first (a table, or below ``COMPACT_WIDTH`` columns a short list per
    placement), the findings behind it, the totals by status, what was not audited, and the
    cautions."""
    ordered = report.worst_first()
    limit = len(ordered) if show_all else DEFAULT_ROWS
    shown = ordered.head(limit)
    rows = _audit_rows(report.governing(), shown)
    if console.width < COMPACT_WIDTH:
        _print_audit_list(console, rows, show_all)
    else:
        _print_audit_table(console, rows)
    if len(ordered) > limit:
        console.print(Text(f"... {len(ordered) - limit} more placements (use --all)", style="muted"))
    print_findings(console, report, shown.index if not show_all else None)
    for d in report.design_unmatched:
        console.print(Text.assemble(status_text("nodata"), f" {d['reason']}"))
    print_waiver_findings(console, report.waiver_findings)
    print_groups(console, getattr(report, "groups", ()))
    print_counts(console, report)
    kinds = not_audited_counts(report)
    if kinds:
        console.print("Not audited: " + ", ".join(f"{k.replace('_', ' ')} {n}" for k, n in kinds.items())
                      + " (each with its reason in the JSON report; bomcheck import lists them)")
    console.print(accounting_line(report.totals))
    for w in report.input_warnings:
        console.print(Text.assemble(("warning ", "status.warn"), str(w)))
    console.print("Rule sets: " + ", ".join(f"{r['name']} {r['version']}" for r in report.rulesets)
                  + f"; environment: {report.environment}")
    for c in report.cautions:
        console.print(Text(f"Caution: {c}", style="caution"))
    console.print(verdict_line(report))


def _audit_rows(gov, shown) -> list[tuple]:
    """(placement record, stress, limit, rule) of each placement shown."""
    rows = []
    for i, rec in zip(shown.index, shown.itertuples(index=False)):
        g = gov.loc[i] if i in gov.index else None
        if g is None:
            rows.append((rec, "", "", ""))
            continue
        rows.append((rec, format_metric(g.get("value"), g.get("metric"), glyphs=True),
                     format_metric(g.get("limit"), g.get("metric"), glyphs=True),
                     str(g["rule_id"])))
    return rows


def _print_audit_list(console: Console, rows: list[tuple], show_all: bool) -> None:
    """The narrow layout: two lines per placement that is not a pass (all with ``show_all``)."""
    console.print(Text("Capacitor derating audit (worst first)", style="heading"))
    passing = 0
    for rec, stress, lim, rule in rows:
        if rec.status == "pass" and not show_all:
            passing += 1
            continue
        figures = f": {stress or '-'} / {lim or '-'}" if stress or lim else ""
        console.print(Text.assemble(status_text(rec.status),
                                    f" {rec.refdes} row {rec.row} {rule}{figures}"))
        part = " ".join(p for p in (_short_value(rec), rec.technology or "?") if p)
        where = _conditions(rec)
        console.print(f"    {part}" + (f"; {where}" if where else ""))
    if passing:
        console.print(Text(f"{passing} of these placements pass (listed with --all)", style="muted"))


def _print_audit_table(console: Console, rows: list[tuple]) -> None:
    """The wide layout: one table row per placement shown."""
    table = _table("Capacitor derating audit (worst first)")
    for col, just, nowrap in (
            ("refdes", "left", True), ("row", "right", True), ("value", "left", False),
            ("technology", "left", False), ("conditions", "left", False),
            ("stress", "right", True), ("limit", "right", True), ("status", "left", True),
            ("rule", "left", True)):
        table.add_column(col, justify=just, no_wrap=nowrap, overflow="ellipsis"
                         if nowrap else "fold")
    for rec, stress, lim, rule in rows:
        table.add_row(rec.refdes, str(rec.row), _short_value(rec), rec.technology or "?",
                      _conditions(rec), stress, lim, status_text(rec.status), rule)
    console.print(table)


def print_counts(console: Console, report) -> None:
    """Placements audited and the count of each status, worst first."""
    head, counts = counts_parts(report)
    console.print(Text.assemble((head, "heading"), " ", *_joined(
        [Text(text, style=f"status.{status}") for status, text in counts], "  ")))


def _joined(parts: list[Text], sep: str) -> list[Text | str]:
    """``parts`` with ``sep`` between each two."""
    out: list[Text | str] = []
    for i, part in enumerate(parts):
        out.extend((sep, part) if i else (part,))
    return out


def print_quiet(console: Console, report) -> None:
    """``--quiet``: the counts by status, the accounting line and the overall verdict."""
    print_counts(console, report)
    console.print(accounting_line(report.totals))
    console.print(verdict_line(report))


def print_findings(console: Console, report, placements=None, limit: int = 40) -> None:
    """Every verdict that is not a pass, one line each, worst first (only for ``placements``
    when given: the rows the table showed)."""
    v = report.verdicts_worst_first()
    if placements is not None and len(v):
        v = v[v["pidx"].isin(placements)]
    if not len(v):
        return
    console.print(Text("Findings", style="heading"))
    for status, message in zip(v["status"].head(limit), v["message"].head(limit)):
        console.print(Text.assemble("  ", status_text(status), " ", str(message)))
    if len(v) > limit:
        of = " of the placements above" if placements is not None else ""
        console.print(Text(f"  ... {len(v) - limit} more findings{of} (every finding is in the "
                           "JSON report)", style="muted"))


def _short_value(rec) -> str:
    parts = [format_si(rec.capacitance_f, "F"), format_si(rec.voltage_v, "V")]
    if rec.dielectric:
        parts.append(rec.dielectric)
    return " ".join(p for p in parts if p)


def print_ruleset_names(console: Console, names: Iterable[str], default: str) -> None:
    """The shipped rule sets, the default marked."""
    for name in names:
        console.print(f"{name}{'  (default)' if name == default else ''}")
    console.print(Text("bomcheck rules NAME lists the rules of a set", style="muted"))


def print_rules(console: Console, ruleset) -> None:
    """Every rule of a rule set with its limits and source."""
    rows = [r.to_dict() for r in ruleset.describe()]
    summary = ruleset_summary(ruleset)
    title = "; ".join(f"{s['name']} {s['version']}: {s['title']}" for s in summary)
    table = _table(title, show_lines=False)
    keys = list(rows[0]) if rows else []
    for k in keys:
        table.add_column(k.replace("_", " "), overflow="fold")
    for r in rows:
        table.add_row(*("" if r[k] is None else str(r[k]) for k in keys))
    console.print(table)


_WAIVER_STYLE = {"applied": "status.waived", "expired": "status.warn", "unused": "muted",
                 "bom_changed": "status.warn"}


def print_waiver_findings(console: Console, findings) -> None:
    """One line per waiver: applied, expired, unused, or not applied because the part changed."""
    for f in findings:
        label = f.code.replace("_", " ")
        console.print(Text.assemble(Text(f"waiver {label}", style=_WAIVER_STYLE.get(f.code, "")),
                                    f" {f.message}"))


def print_diff(console: Console, diff, *, show_all: bool = False) -> None:
    """A comparison with a baseline report (``bomcheck.report.diff.Diff``): a table of the verdicts
    that changed, are new or were resolved (problems marked), then the counts."""
    rows = diff.rows(include_pass=show_all)
    if rows:
        title = "Changes since the baseline"
        labels = [d.get("label") for d in (diff.old, diff.new)]
        if all(labels):
            title += f" ({labels[0]} -> {labels[1]})"
        table = _table(title)
        for col in ("change", "refdes", "rule", "was", "now", "message"):
            table.add_column(col, overflow="fold")
        limit = len(rows) if show_all else DEFAULT_ROWS
        for kind, c in rows[:limit]:
            change = Text(kind + (" (new problem)" if c.is_problem else ""),
                          style="status.fail" if c.is_problem else "")
            table.add_row(change, c.refdes, c.rule,
                          status_text(c.old_status) if c.old_status else Text("-", style="muted"),
                          status_text(c.new_status) if c.new_status else Text("-", style="muted"),
                          c.new_message or c.old_message or "")
        console.print(table)
        if len(rows) > limit:
            console.print(Text(f"... {len(rows) - limit} more changes (use --all)", style="muted"))
    for word, names in (("added", diff.added), ("removed", diff.removed)):
        if names:
            shown = ", ".join(names[:DEFAULT_ROWS])
            more = f" and {len(names) - DEFAULT_ROWS} more" if len(names) > DEFAULT_ROWS else ""
            console.print(f"Placements {word}: {shown}{more}")
    console.print(Text("Baseline: " + summary_line(diff), style="heading"))


def print_groups(console: Console, groups) -> None:
    """Banks and series stacks: combined capacitance, worst case against the need, stored
    energy and discharge, and each series member's worst voltage share."""
    if not groups:
        return
    if console.width < COMPACT_WIDTH:
        console.print(Text("Banks and series stacks", style="heading"))
        for g in groups:
            need, discharge, shares = group_cells(g)
            console.print(f"{g['name']} ({g['kind']}): {', '.join(g['members'])}")
            bits = [f"node {format_si(g.get('v_node_v'), 'V')}", f"C eq {format_si(g.get('c_eq_f'), 'F')}"]
            bits += [f"C worst / need {need}"] if need else []
            bits += [f"energy {energy(g.get('energy_j'))}"]
            bits += [f"discharge {discharge}"] if discharge else []
            bits += [f"shares (capacitive / DC) {shares}"] if shares else []
            console.print("    " + "; ".join(bits))
        return
    table = _table("Banks and series stacks")
    for col in ("group", "kind", "members", "node", "C eq", "C worst / need", "energy",
                "discharge", "member shares (capacitive / DC)"):
        table.add_column(col, overflow="fold")
    for g in groups:
        need, discharge, shares = group_cells(g)
        table.add_row(
            g["name"], g["kind"], ", ".join(g["members"]), format_si(g.get("v_node_v"), "V"),
            format_si(g.get("c_eq_f"), "F"), need, energy(g.get("energy_j")),
            discharge, shares,
        )
    console.print(table)


# Verdicts of the substitute check (bomcheck.substitute.check) shown with the audit's status styles.
_VERDICT_STYLE = {"drop-in": "status.pass", "review": "status.warn", "rejected": "status.fail"}
_SEVERITY_STYLE = {"reject": "status.fail", "review": "status.warn", "note": "muted"}


def verdict_text(verdict: str) -> Text:
    """A substitute verdict, styled: drop-in, REVIEW, REJECTED."""
    return Text(verdict if verdict == "drop-in" else verdict.upper(),
                style=_VERDICT_STYLE.get(verdict, ""))


def _stress(governing, metric_of: dict) -> str:
    if not governing:
        return ""
    metric = metric_of.get(governing["rule"])
    value, limit = format_metric(governing.get("value"), metric, glyphs=True), format_metric(
        governing.get("limit"), metric, glyphs=True)
    return f"{value} / {limit} {governing['rule']}" if value else governing["rule"]


def print_substitutes(console: Console, result, *, show_all: bool = False) -> None:
    """The substitute check (``bomcheck.substitute.check.SubstituteResult``): one row per alternate
    with its verdict and reason; then, for every alternate that is not a drop-in (all with
    ``show_all``), its placements side by side and its reasons; the totals and cautions."""
    table = _table("Substitute check")
    for col in ("original", "alternate", "placements", "verdict", "reason"):
        table.add_column(col, overflow="fold")
    for r in result.results:
        table.add_row(r.alternate.original, r.alternate.label, designator_list(r.refdes),
                      verdict_text(r.verdict), r.summary)
    console.print(table)
    for r in result.results:
        if r.verdict == "drop-in" and not show_all:
            continue
        metric_of = {v.rule_id: v.metric for p in r.placements for v in p.verdicts}
        detail = _table(f"{r.alternate.label} for {r.alternate.original}")
        for col in ("refdes", "role", "conditions", "original", "stress", "alternate",
                    "stress", "change"):
            detail.add_column(col, overflow="fold")
        shown = r.placements if show_all else r.placements[:DEFAULT_ROWS]
        for p in shown:
            detail.add_row(
                p.refdes, p.role, p.conditions, status_text(p.original_status),
                _stress(p.original_governing, metric_of), status_text(p.proposed_status),
                _stress(p.proposed_governing, metric_of),
                Text(p.change, style="status.fail" if p.change == "worse" else ""))
        console.print(detail)
        if len(r.placements) > len(shown):
            console.print(Text(f"... {len(r.placements) - len(shown)} more placements "
                               "(use --all)", style="muted"))
        for issue in r.reasons:
            console.print(Text.assemble("  ", Text(issue.sentence,
                                                   style=_SEVERITY_STYLE.get(issue.severity, ""))))
        if r.not_fitted:
            console.print(Text(f"  not fitted, not checked: {designator_list(r.not_fitted)}", style="muted"))
    t = result.totals
    console.print(Text.assemble(
        Text(f"Alternates checked {t['alternates']}: ", style="heading"),
        *(Text.assemble(verdict_text(v), f" {t[v]}  ") for v in ("rejected", "review",
                                                                 "drop-in"))))
    console.print("Rule sets: " + ", ".join(f"{s['name']} {s['version']}"
                                            for s in result.rulesets))
    for c in result.cautions:
        console.print(Text(f"Caution: {c}", style="caution"))
    console.print(Text.assemble("Overall: ", verdict_text(result.status)))


def print_boards(console: Console, results) -> None:
    """The per-board summary table of a batch audit."""
    table = _table("bomcheck batch audit", title_justify="left")
    for name in ("product", "status", "audited", "pass", "warn", "nodata", "fail"):
        table.add_column(name, justify="left" if name in ("product", "status") else "right")
    for r in results:
        table.add_row(r.product, status_text(r.status),
                      *(str(int(r.totals.get(k, 0))) for k in ("audited", "pass", "warn",
                                                               "nodata", "fail")))
    console.print(table)


def print_uses(console: Console, mpn: str, uses) -> None:
    """The where-used list as a terminal table."""
    if not uses:
        console.print(f"{mpn}: not placed in this report")
        return
    table = _table(f"{mpn}: {len(uses)} placement{'s' if len(uses) != 1 else ''}",
                   title_justify="left")
    for name in ("product", "refdes", "row", "voltage ratio", "temp margin", "status",
                 "not passing"):
        table.add_column(name)
    for u in uses:
        table.add_row(u.product or "", u.refdes, "" if u.row is None else str(u.row),
                      "" if u.voltage_ratio is None else f"{u.voltage_ratio:.1%}",
                      "" if u.temp_margin_c is None else f"{u.temp_margin_c:g} degC",
                      status_text(u.status), " ".join(u.problems))
    console.print(table)
