"""Command-line edge: the commands, their options and help (argparse), read by ``bomcheck --help``.

Only light modules load here (the output registry names its writers without importing them), so
that ``bomcheck --help`` answers quickly; the commands themselves are in ``commands``.
"""

from __future__ import annotations

import argparse
import datetime

from bomcheck import __version__
from bomcheck.render.registry import for_command


def _positive_int(text: str) -> int:
    """An argparse type: a whole number above 0 (``1e6`` and ``1_000_000`` are accepted)."""
    try:
        value = float(text.replace("_", ""))
    except ValueError:
        value = float("nan")
    if not (1 <= value < 1e15 and value == int(value)):  # inf and nan stop before int()
        raise argparse.ArgumentTypeError(f"not a whole number above 0: {text!r}")
    return int(value)


def _add_limit_options(p: argparse.ArgumentParser) -> None:
    """The input size limits (``bomcheck.read.limits``), each overridable for a genuinely huge file."""
    g = p.add_argument_group("input limits", "files beyond a limit are refused (exit status 2); "
                             "raise a limit only for a genuine file")
    g.add_argument("--max-file-mb", type=_positive_int, metavar="MB", help="largest input "
                   "file, in MiB (default: 256)")
    g.add_argument("--max-rows", type=_positive_int, metavar="N", help="most rows of a table "
                   "(default: 200,000)")
    g.add_argument("--max-columns", type=_positive_int, metavar="N", help="most columns of a "
                   "table (default: 1,024)")
    g.add_argument("--max-cells", type=_positive_int, metavar="N", help="most cells (rows x "
                   "columns) of a table (default: 5,000,000)")
    g.add_argument("--max-placements", type=_positive_int, metavar="N", help="most placements "
                   "of a BOM after expanding designator ranges (default: 50,000)")


def _add_import_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("--sheet", help="XLSX sheet by name or 1-based index (default: the first "
                   "sheet with a designator column)")
    p.add_argument("--encoding", help="force a text encoding (default: detect UTF-8/UTF-16 BOM, "
                   "else UTF-8, else cp1252)")
    p.add_argument("--columns", action="append", default=[], metavar="FIELD=HEADER,...",
                   help="map canonical fields to headers, e.g. refdes=Designator,value=Comment")
    p.add_argument("--column-map", metavar="TOML", help="TOML file mapping fields to headers")
    p.add_argument("--include-hidden", action="store_true", help="read hidden rows, columns "
                   "and worksheets of XLSX inputs too (default: skipped, and counted)")
    _add_limit_options(p)


def _add_outputs(p: argparse.ArgumentParser, command: str) -> None:
    """One option per output of ``command`` in the registry (``bomcheck.render.registry.OUTPUTS``)."""
    for output in for_command(command):
        if output.kind == "flag":
            p.add_argument(f"--{output.name}", action="store_true", default=None,
                           help=output.help)
        else:
            p.add_argument(f"--{output.name}", metavar=output.metavar, help=output.help)


def _iso_date(text: str) -> datetime.date:
    """An argparse type: YYYY-MM-DD to a date (a bad date is a usage error, exit status 2)."""
    try:
        return datetime.date.fromisoformat(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a date: {text!r} (expected YYYY-MM-DD)") from None


def _add_audit_outputs(p: argparse.ArgumentParser) -> None:
    """Reports, waivers and the baseline of ``audit``; unset ones may come from pyproject.toml."""
    _add_outputs(p, "audit")
    p.add_argument("--warn-as", choices=("failure", "skipped", "pass"), default=None,
                   help="how a warning shows in the JUnit XML (default: failure)")
    p.add_argument("--waivers", metavar="FILE", help="approved deviations (TOML or CSV): "
                   "matching verdicts become 'waived'")
    p.add_argument("--today", metavar="YYYY-MM-DD", type=_iso_date, help="judge waiver expiry "
                   "on this day instead of the clock's (reproducible runs)")
    p.add_argument("--baseline", metavar="OLD.json", help="compare with an earlier JSON report: "
                   "new, resolved and changed verdicts")
    p.add_argument("--no-config", action="store_true", help="ignore [tool.bomcheck] in "
                   "pyproject.toml")


# Operating conditions of the direct form of ``substitute``: (flag, design-sheet column, help).
SUBSTITUTE_CONDITIONS = (
    ("--v-dc", "v_dc", "working DC voltage, e.g. 12 or '12 V'"),
    ("--v-dc-max", "v_dc_max", "upper bound of the rail"),
    ("--v-tol-pct", "v_tol_pct", "rail tolerance in %% (upper bound = v_dc x (1 + tol))"),
    ("--v-ripple", "v_ripple_pk", "peak ripple, e.g. '150 mV'"),
    ("--v-transient", "v_transient_pk", "peak transient or surge voltage"),
    ("--v-reverse", "v_reverse_pk", "peak reverse voltage (polarized parts)"),
    ("--v-ac", "v_ac_rms", "AC rms voltage (AC-rated and safety parts)"),
    ("--t-ambient", "t_ambient_c", "ambient temperature at the part, degC"),
    ("--t-rise", "t_rise_c", "self-heating, delta degC"),
    ("--c-min", "c_min_f", "capacitance the circuit needs, e.g. 4.7uF"),
    ("--life", "life_h", "required life, e.g. '10 years'"),
)


def _add_substitute(sub, common: argparse.ArgumentParser) -> None:
    """The ``substitute`` command: alternates checked in every placement of their original."""
    p = sub.add_parser(
        "substitute", parents=[common], help="check proposed alternates in every placement "
        "of the part they replace",
        description="Audit each proposed alternate in every placement of the part it "
        "replaces, under that placement's operating conditions, side by side with the "
        "original, and give a verdict: drop-in, review or rejected, with the reasons. Give a "
        "BOM and an alternates file (--alternates), or one pair directly (--original TEXT "
        "--proposed TEXT, with --design and --refdes or inline conditions such as --v-dc 12 "
        "--t-ambient 85). Exit status 0: no alternate rejected; 1: an alternate is rejected; "
        "2: inputs unusable; 3: internal error (a bug).")
    p.add_argument("bom", nargs="?", help="BOM file (.csv, .tsv, .txt, .xlsx); not needed in "
                   "the direct form")
    p.add_argument("--alternates", metavar="FILE", help="alternates file (.csv, .xlsx, .toml): "
                   "original (MPN, BOM line text or designators) -> alternate (mpn, "
                   "description, optional parts-data fields, footprint_checked)")
    _add_audit_inputs(p)
    p.add_argument("--original", metavar="TEXT", help="direct form: the part replaced (its "
                   "text; with a BOM also its MPN or designators)")
    p.add_argument("--proposed", metavar="TEXT", help="direct form: the alternate's "
                   "description")
    p.add_argument("--proposed-mpn", metavar="MPN", help="direct form: the alternate's MPN")
    p.add_argument("--footprint-checked", action="store_true", help="direct form: the "
                   "alternate's footprint was checked (a different case size is then no "
                   "rejection)")
    p.add_argument("--refdes", action="append", default=[], metavar="C12", help="direct form "
                   "without a BOM: designators of the placements (repeatable, or a list)")
    for flag, _name, text in SUBSTITUTE_CONDITIONS:
        p.add_argument(flag, metavar="VALUE", help=f"direct form: {text}")
    p.add_argument("--margin-drop", type=float, default=10.0, metavar="PP", help="review when "
                   "a stress shown in %% comes this many percentage points closer to its "
                   "limit (default: 10)")
    p.add_argument("--temp-margin-drop", type=float, default=10.0, metavar="DEGC",
                   help="review when a temperature margin shrinks by more than this "
                   "(default: 10 degC)")
    _add_outputs(p, "substitute")
    p.add_argument("--all", action="store_true", help="show every alternate and placement "
                   "in detail")
    _add_import_options(p)


def _add_audit_inputs(p: argparse.ArgumentParser) -> None:
    """The inputs an audit takes beside the BOM; shared by audit and substitute."""
    p.add_argument("--design", metavar="SHEET", help="design sheet of operating conditions "
                   "(.csv, .xlsx, .toml)")
    p.add_argument("--design-sheet", metavar="NAME", help="worksheet of an XLSX design sheet")
    p.add_argument("--parts", metavar="FILE", help="parts data keyed by MPN (.csv, .xlsx, "
                   ".toml): ratings, ESR, ripple, surge, life, leakage, DC-bias curves; "
                   "overrides the BOM text")
    p.add_argument("--rules", action="append", default=[], metavar="NAME_OR_PATH",
                   help="rule set by shipped name or TOML path (repeatable; later ones override "
                   "rules of the same id). Default: the shipped default set")
    p.add_argument("--parts-override", action="store_true",
                   help="let the parts data replace what the BOM text says (default: where they "
                   "disagree, the conservative value is used and the conflict reported)")
    p.add_argument("--environment", choices=("severe", "benign"), default=None,
                   help="which environment's limits apply where a rule gives both (default: "
                   "severe, the stricter); named in every report")


def _add_import(sub, common: argparse.ArgumentParser) -> None:
    p = sub.add_parser("import", parents=[common], help="read a BOM and list its capacitor "
                       "placements", description="Read a BOM (CSV, TSV, XLSX) and list every "
                       "capacitor placement with its parsed specification; every row is "
                       "accounted for.")
    p.add_argument("bom", help="BOM file (.csv, .tsv, .txt, .xlsx, .xls, .ods) or '-' for "
                   "standard input")
    _add_import_options(p)
    p.add_argument("--json", metavar="OUT", help="write the JSON form to OUT ('-' for stdout) "
                   "instead of printing a table")
    p.add_argument("--all", action="store_true", help="show every placement, not the first 50")


def _add_parse(sub, common: argparse.ArgumentParser) -> None:
    p = sub.add_parser("parse", parents=[common], help="parse capacitor value text",
                       description="Parse capacitor value strings such as '4u7 50V X7R' or "
                       "'CAP CER 0.1UF 16V 10%% X5R 0402' into a specification.")
    p.add_argument("text", nargs="+", help="value text to parse")
    p.add_argument("--json", metavar="OUT", help="write the JSON form to OUT ('-' for stdout) "
                   "instead of printing a table")


def _add_audit(sub, common: argparse.ArgumentParser) -> None:
    p = sub.add_parser("audit", parents=[common], help="audit a BOM against derating rules "
                       "under the design's operating conditions",
                       description="Audit every fitted capacitor placement of a BOM: applied "
                       "voltage, temperature and worst-case capacitance against the derating "
                       "rules in force. Exit status 0: nothing at or above --fail-on; 1: "
                       "findings at or above it; 2: inputs unusable; 3: internal error (a "
                       "bug).")
    p.add_argument("bom", nargs="?", help="BOM file (.csv, .tsv, .txt, .xlsx, .xls, .ods) or '-' "
                   "for standard input; not with --manifest")
    p.add_argument("--manifest", metavar="TOML", help="audit every [[board]] of a manifest "
                   "(product, bom, design, parts, rules, waivers) on two worker processes: one "
                   "combined report, a summary row per board, exit status the worst board's")
    _add_audit_inputs(p)
    p.add_argument("--fail-on", choices=("fail", "nodata", "warn", "new"), default=None,
                   help="lowest status that makes the exit status 1 (order: waived < warn < "
                   "nodata < fail; default: nodata, since no data never passes); 'new': only "
                   "new or worsened problems against --baseline")
    p.add_argument("--all", action="store_true", help="show every placement, not the worst 50")
    p.add_argument("--quiet", action="store_true", help="print only the overall verdict, the "
                   "counts and the totals line")
    _add_audit_outputs(p)
    _add_import_options(p)


def _add_diff(sub, common: argparse.ArgumentParser) -> None:
    p = sub.add_parser("diff", parents=[common], help="compare two JSON audit reports (release "
                       "to release)",
                       description="Compare two JSON reports of bomcheck audit: verdicts new, "
                       "resolved and changed (by designator and rule id) and placements added "
                       "or removed. Exit status 0, or 1 with --fail-on new when the new report "
                       "has new or worsened problems (warn or worse); 2: inputs unusable.")
    p.add_argument("old", help="the earlier JSON report (bomcheck audit --json)")
    p.add_argument("new", help="the later JSON report")
    p.add_argument("--json", metavar="OUT", help="write the comparison as JSON ('-' for stdout)")
    p.add_argument("--markdown", metavar="OUT", help="write the comparison as Markdown")
    p.add_argument("--fail-on", choices=("new",), default=None,
                   help="'new': exit status 1 when there are new or worsened problems")
    p.add_argument("--all", action="store_true", help="show every change, passing ones too")


def _add_where_used(sub, common: argparse.ArgumentParser) -> None:
    p = sub.add_parser("where-used", parents=[common], help="list every placement of a part "
                       "(by MPN) in a JSON report, with its stress and status",
                       description="List every product and placement of a part number in a "
                       "JSON report of bomcheck audit (single or combined with --manifest), "
                       "with its voltage ratio, temperature margin, status and the rules it "
                       "does not pass. Exit status 0: the part is placed; 1: it is not; 2: the "
                       "report is unusable.")
    p.add_argument("report", help="JSON report of bomcheck audit --json (schema version 2)")
    p.add_argument("mpn", help="manufacturer part number (case and spaces ignored)")
    p.add_argument("--json", metavar="OUT", help="write the list as JSON ('-' for stdout)")
    p.add_argument("--csv", metavar="OUT", help="write the list as CSV ('-' for stdout)")


def _add_rules(sub, common: argparse.ArgumentParser) -> None:
    p = sub.add_parser("rules", parents=[common], help="list the rules of a rule set with "
                       "limits and sources", description="List shipped rule sets, or the rules "
                       "of one (by name or path) with their limits and sources.")
    p.add_argument("name", nargs="*", help="rule set name or TOML path (default: list the sets)")


# The commands in the order ``bomcheck --help`` lists them, each with the function adding it.
COMMANDS = (("import", _add_import), ("parse", _add_parse), ("audit", _add_audit),
            ("diff", _add_diff), ("where-used", _add_where_used),
            ("substitute", _add_substitute), ("rules", _add_rules))


def build_parser() -> argparse.ArgumentParser:
    """The whole command line: global options, then one sub-parser per command."""
    parser = argparse.ArgumentParser(
        prog="bomcheck",
        description="Audit a bill of materials for capacitor derating and stress before release.",
    )
    parser.add_argument("--version", action="version", version=f"bomcheck {__version__}")
    parser.add_argument("--debug", action="store_true", help="show tracebacks for errors")
    # --debug is accepted before or after the command name.
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                        help="show tracebacks for errors")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for _name, add in COMMANDS:
        add(sub, common)
    return parser
