"""Report stage, shared by the terminal and the HTML page: the plain-text pieces both print (the
accounting line, the counts by status, the overall verdict, a bank's or series stack's figures),
formatted by ``bomcheck.quantity``; ``quiet_lines`` is ``--quiet``'s summary without any styling."""

from __future__ import annotations

from bomcheck.parse.accounting import accounting_identity
from bomcheck.quantity import format_number, format_quantity, format_si, is_missing
from bomcheck.status import STATUS_ORDER

# The counts line names the statuses worst first.
COUNTED = STATUS_ORDER[::-1]


def counts_parts(report) -> tuple[str, list[tuple[str, str]]]:
    """(``Placements audited N:``, [(status, ``status count``)...]): the counts line in pieces, so
    the terminal can style each status and a plain log can join them."""
    t = report.totals
    return (f"Placements audited {t.get('audited', len(report.table))}:",
            [(s, f"{s} {t.get(s, 0)}") for s in COUNTED])


def status_word(status: str) -> str:
    """A status as the summaries print it: FAIL and WARN in capitals, the others as they are."""
    return status.upper() if status in ("fail", "warn") else status


def verdict_parts(report) -> tuple[str, str, str]:
    """(``Overall: ``, the status, `` (severe environment)``): the overall verdict in pieces."""
    return "Overall: ", report.status, f" ({report.environment} environment)"


def quiet_lines(report) -> list[str]:
    """``--quiet``'s summary as plain lines: the counts, the accounting line, the verdict."""
    head, counts = counts_parts(report)
    before, status, after = verdict_parts(report)
    return [head + " " + "  ".join(text for _, text in counts), accounting_line(report.totals),
            before + status_word(status) + after]


def accounting_line(totals: dict) -> str:
    """rows read = capacitor rows + non-capacitor rows + unreadable rows (+ approved-source rows
    + rows that are not placements, when there are any), with the counts."""
    return (
        f"{accounting_identity(totals)[0]}; placements {totals['placements']} "
        f"(fitted {totals['fitted']}, not fitted {totals['not_fitted']})"
    )


def number(value, digits: int = 4) -> str:
    """A number in ``digits`` significant digits, "" when missing."""
    return "" if is_missing(value) else format_number(float(value), digits)


def energy(value) -> str:
    """Stored energy in joules, 3 significant digits ("0.352 J"), "" when missing."""
    return "" if is_missing(value) else format_quantity(float(value), "J", digits=3)


def group_cells(g: dict) -> tuple[str, str, str]:
    """A group's need, discharge and member shares as text."""
    need = ""
    if g.get("c_min_f"):
        need = f"{format_si(g.get('c_worst_f'), 'F')} / {format_si(g['c_min_f'], 'F')}"
        if g.get("c_margin") is not None:
            need += f" = {g['c_margin']:.0%}"
    discharge = ""
    if g.get("discharge_s") is not None:
        discharge = f"{g['discharge_s']:.3g} s via {format_si(g.get('r_discharge_ohm'), 'ohm')}"
    shares = ", ".join(
        f"{s['refdes']} {number(s.get('v_share_cap_v'))} / "
        f"{number(s.get('v_share_dc_v'))} V" for s in g.get("shares") or ())
    return need, discharge, shares
