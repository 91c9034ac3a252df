"""The CLI's commands: each calls the library, then a renderer. Imported only after parsing."""

from __future__ import annotations

import argparse
import json
import os
import sys
from pathlib import Path

from bomcheck.errors import InputError

EXIT_CLEAN, EXIT_FINDINGS = 0, 1


def _console(args: argparse.Namespace, *, stderr: bool = False):
    from bomcheck.render import make_console

    stream = sys.stderr if stderr else sys.stdout
    # A pipe or a CI log has no width of its own; 132 columns keep the audit table readable.
    width = None if stream.isatty() or os.environ.get("COLUMNS") else 132
    return make_console(file=stream, no_color=bool(os.environ.get("NO_COLOR")), width=width)


def _import_options(args: argparse.Namespace):
    from bomcheck.importer import ImportOptions

    columns: dict[str, str] = {}
    for item in args.columns:
        for pair in item.split(","):
            if not pair.strip():
                continue
            if "=" not in pair:
                raise InputError("--columns entry without '='", text=pair,
                                 expected="FIELD=HEADER, e.g. refdes=Designator")
            field, header = pair.split("=", 1)
            columns[field.strip().lower()] = header.strip()
    sheet = args.sheet
    if sheet is not None and sheet.isdigit():
        sheet = int(sheet)
    return ImportOptions(sheet=sheet, encoding=args.encoding, columns=columns,
                         column_map=args.column_map)


def write_text_atomic(path: str, text) -> None:
    """Write ``text`` (a string or an iterable of strings) to ``path`` through a temporary file
    and a rename, so a failed run never leaves a half-written report ('-' is stdout)."""
    pieces = [text] if isinstance(text, str) else text
    if path == "-":
        sys.stdout.writelines(pieces)
        return
    target = Path(path)
    tmp = target.with_name(f".{target.name}.{os.getpid()}.tmp")
    try:
        with tmp.open("w", encoding="utf-8", newline="\n") as f:
            f.writelines(pieces)
        os.replace(tmp, target)
    except OSError as exc:
        tmp.unlink(missing_ok=True)
        raise InputError(f"cannot write report: {exc.strerror}", path=path) from None
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise


def run_parse(args: argparse.Namespace) -> int:
    from bomcheck.values import parse_value

    specs = [parse_value(t) for t in args.text]
    if args.json:
        print(json.dumps([s.to_dict() for s in specs], ensure_ascii=False, indent=2))
    else:
        from bomcheck.render import print_specs

        print_specs(_console(args), specs)
    return EXIT_CLEAN


def run_import(args: argparse.Namespace) -> int:
    from bomcheck.importer import read_bom

    result = read_bom(args.bom, _import_options(args))
    if args.json:
        from bomcheck.report import SPEC_FIELDS, _records

        cols = ("refdes", "row", "fitted", "not_fitted_reason", "text", "value_text",
                "description", "mpn", "manufacturer", "qty")
        placements = [
            {**base, **spec}
            for base, spec in zip(_records(result.placements, cols),
                                  _records(result.placements, SPEC_FIELDS))
        ]
        out = {
            "source": result.source.to_dict(),
            "placements": placements,
            "skipped": _records(result.skipped, ("row", "kind", "reason", "text")),
            "findings": [f.to_dict() for f in result.findings],
            "totals": result.totals,
        }
        print(json.dumps(out, ensure_ascii=False, indent=2, allow_nan=False))
    else:
        from bomcheck.render import print_import

        print_import(_console(args), result, show_all=args.all)
    return EXIT_CLEAN


def run_audit(args: argparse.Namespace) -> int:
    from bomcheck.audit import AuditOptions, run_audit
    from bomcheck.report import status_at_least

    options = AuditOptions(rules=tuple(args.rules), import_options=_import_options(args),
                           design_sheet=args.design_sheet)
    report = run_audit(args.bom, args.design, options)
    if args.json:
        write_text_atomic(args.json, report.iter_json())
    if args.json != "-":
        from bomcheck.render import accounting_line, print_audit

        console = _console(args)
        if args.quiet:
            console.print(accounting_line(report.totals))
        else:
            print_audit(console, report, show_all=args.all)
    return EXIT_FINDINGS if status_at_least(report.status, args.fail_on) else EXIT_CLEAN


def run_rules(args: argparse.Namespace) -> int:
    from bomcheck import rules
    from bomcheck.render import print_rules, print_ruleset_names

    console = _console(args)
    if not args.name:
        print_ruleset_names(console, rules.shipped_names(), rules.DEFAULT_RULESET)
        return EXIT_CLEAN
    print_rules(console, rules.load_rules(tuple(args.name)))
    return EXIT_CLEAN
