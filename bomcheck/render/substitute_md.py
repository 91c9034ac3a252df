"""Report stage, Markdown edge of the substitute check: a short summary of a
``bomcheck.substitute.result.SubstituteResult`` for a pull-request comment on a BOM change
request. Input text is escaped by ``textsafe.md_text``, the one escaping function of every
Markdown writer."""

from __future__ import annotations

from bomcheck.render.textsafe import md_text as _md
from bomcheck.substitute.result import SubstituteResult
from bomcheck.substitute.words import designator_list


def substitute_markdown(result: SubstituteResult) -> str:
    """A short Markdown summary: one table row per alternate, then each one's reasons."""
    t = result.totals
    lines = ["## bomcheck substitute check", "",
             f"**{result.status}**: {t['alternates']} alternates checked; drop-in "
             f"{t['drop-in']}, review {t['review']}, rejected {t['rejected']}.", "",
             "| Original | Alternate | Placements | Verdict | Reason |",
             "|---|---|---|---|---|"]
    for r in result.results:
        lines.append(f"| {_md(r.alternate.original)} | {_md(r.alternate.label)} | "
                     f"{_md(designator_list(r.refdes))} | {_md(r.verdict)} | {_md(r.summary)} |")
    for r in result.results:
        if r.verdict == "drop-in" and not r.reasons:
            continue
        lines += ["", f"### {_md(r.alternate.label)} for {_md(r.alternate.original)}: "
                      f"{r.verdict}", ""]
        lines += [f"- {_md(i.sentence)}" for i in r.reasons]
    rules = ", ".join(f"{_md(s['name'])} {_md(s['version'])}" for s in result.rulesets)
    lines += ["", f"Rule sets: {rules}.", "", "### Cautions", ""]
    lines += [f"- {_md(c)}" for c in result.cautions]
    lines.append("")
    return "\n".join(lines)
