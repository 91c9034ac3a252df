"""The CLI's commands: each calls the library, then a renderer. Imported only after parsing."""

from __future__ import annotations

import argparse
import json
import os
import sys
from contextlib import contextmanager
from pathlib import Path

from bomcheck.errors import InputError

EXIT_CLEAN, EXIT_FINDINGS = 0, 1


def _console(args: argparse.Namespace, *, stderr: bool = False):
    from bomcheck.render.terminal import make_console

    stream = sys.stderr if stderr else sys.stdout
    # A terminal has its width (rich reads it, and COLUMNS); a pipe or a CI log gets 80.
    width = None if stream.isatty() or os.environ.get("COLUMNS") else 80
    return make_console(file=stream, no_color=bool(os.environ.get("NO_COLOR")), width=width)


def _import_options(args: argparse.Namespace):
    from bomcheck.parse.importer import ImportOptions

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
    """Write ``text`` (a string or an iterable of strings) to ``path`` atomically ('-' is
    stdout); see ``bomcheck.render.outfiles``."""
    from bomcheck.render.outfiles import write_text

    write_text(path, text)


def run_parse(args: argparse.Namespace) -> int:
    from bomcheck.parse.values import parse_value

    specs = [parse_value(t) for t in args.text]
    if args.json:
        from bomcheck.render.textsafe import json_dumps

        print(json_dumps([s.to_dict() for s in specs], indent=2))
    else:
        from bomcheck.render.terminal import print_specs

        print_specs(_console(args), specs)
    return EXIT_CLEAN


def run_import(args: argparse.Namespace) -> int:
    from bomcheck.parse.importer import read_bom

    result = read_bom(args.bom, _import_options(args))
    if args.json:
        from bomcheck.report.model import SPEC_FIELDS, _records

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
        from bomcheck.render.textsafe import json_dumps

        print(json_dumps(out, indent=2))
    else:
        from bomcheck.render.terminal import print_import

        print_import(_console(args), result, show_all=args.all)
    return EXIT_CLEAN


def run_audit(args: argparse.Namespace) -> int:
    from bomcheck.api import audit_files
    from bomcheck.pipeline.audit import AuditOptions
    from bomcheck.render.outfiles import output_lock
    from bomcheck.render.registry import OutputContext
    from bomcheck.report.model import status_at_least

    args = _with_config(args)
    if args.manifest is not None or args.bom is None:
        return _run_audit_manifest(args)
    outputs = _requested_outputs(args, "audit")
    baseline = _read_report_json(args.baseline, "baseline") if args.baseline else None
    if args.fail_on == "new" and baseline is None:
        raise InputError("--fail-on new compares with a baseline, and none was given",
                         expected="--baseline OLD.json (or baseline in [tool.bomcheck])")
    options = AuditOptions(rules=tuple(args.rules), import_options=_import_options(args),
                           design_sheet=args.design_sheet, waivers=args.waivers,
                           today=args.today, parts=getattr(args, "parts", None),
                           environment=args.environment,
                           parts_override=getattr(args, "parts_override", False))
    diff = None
    with _progress(args, 1 + len(outputs)) as stage:
        stage("audit: read, parse, evaluate")
        report = audit_files(args.bom, args.design, options=options)
        if baseline is not None:
            from bomcheck.report.diff import compare, report_digest

            # Compared from the report's tables: the JSON report is only ever streamed.
            diff = compare(baseline, report_digest(report), old_label=args.baseline,
                           new_label=args.json or "this audit")
        context = OutputContext(warn_as=args.warn_as, diff=diff, json_text=None)
        with output_lock(path for _, path in outputs):
            for output, path in outputs:
                stage(f"write {output.name}: {path}")
                output.load()(report, path, context)
    # Annotations share standard output with the terminal summary (CI logs read both).
    if all(path != "-" for o, path in outputs if o.kind == "file"):
        from bomcheck.render.terminal import print_audit, print_diff, print_quiet

        console = _console(args)
        if args.quiet:
            print_quiet(console, report)
            if diff is not None:
                from bomcheck.report.diff import summary_line

                console.print("Baseline: " + summary_line(diff))
        else:
            print_audit(console, report, show_all=args.all)
            if diff is not None:
                print_diff(console, diff, show_all=args.all)
    if args.fail_on == "new":
        return EXIT_FINDINGS if diff.new_problems else EXIT_CLEAN
    return EXIT_FINDINGS if status_at_least(report.status, args.fail_on) else EXIT_CLEAN


def _run_audit_manifest(args: argparse.Namespace) -> int:
    """``audit --manifest``: every board on the worker pool, the combined outputs, a summary
    row per board; the exit status follows the worst board."""
    from bomcheck import __version__
    from bomcheck.pipeline import batch
    from bomcheck.pipeline.audit import AuditOptions
    from bomcheck.report.model import status_at_least

    if args.manifest is None or args.bom is not None:
        raise InputError("give either a BOM or --manifest", expected="bomcheck audit BOM "
                         "[--design SHEET] or bomcheck audit --manifest boards.toml")
    per_board = [f"--{k.replace('_', '-')}" for k in ("design", "design_sheet", "parts",
                                                        "waivers", "baseline", "junit", "xlsx")
                 if getattr(args, k, None)]
    if per_board or args.fail_on == "new":
        raise InputError(f"{(per_board or ['--fail-on new'])[0]} is not available with "
                         "--manifest", path=args.manifest, expected="design, parts and "
                         "waivers per board in the manifest; outputs --json, --markdown, --csv")
    outputs = [(o.name, path) for o, path in _requested_outputs(args, "audit")]
    unsupported = [name for name, _ in outputs if name not in batch.COMBINERS]
    if unsupported:
        raise InputError(f"--{unsupported[0]} is not available with --manifest",
                         path=args.manifest, expected="outputs " + ", ".join(
                             f"--{k}" for k in batch.COMBINERS))
    boards = batch.read_manifest(args.manifest)
    base = AuditOptions(rules=tuple(args.rules), import_options=_import_options(args),
                        today=args.today, environment=args.environment)
    with batch.temporary_folder() as folder:
        results = batch.run_batch(boards, base, tuple(k for k, _ in outputs), folder)
        for kind, path in outputs:
            write_text_atomic(path, batch.COMBINERS[kind](
                results, *((__version__,) if kind == "json" else ())))
    if all(path != "-" for _, path in outputs):
        _print_boards(_console(args), results)
    return EXIT_FINDINGS if status_at_least(batch.worst(results), args.fail_on) else EXIT_CLEAN


def _print_boards(console, results) -> None:
    """The per-board summary table of a batch audit."""
    from rich.table import Table

    table = Table(title="bomcheck batch audit", title_justify="left")
    for name in ("product", "status", "audited", "pass", "warn", "nodata", "fail"):
        table.add_column(name, justify="left" if name in ("product", "status") else "right")
    for r in results:
        table.add_row(r.product, f"[status.{r.status}]{r.status}[/]",
                      *(str(int(r.totals.get(k, 0))) for k in ("audited", "pass", "warn",
                                                               "nodata", "fail")))
    console.print(table)


def run_where_used(args: argparse.Namespace) -> int:
    from bomcheck.report.whereused import uses_csv, where_used

    uses = where_used(_read_report_json(args.report, "audit"), args.mpn)
    if args.json:
        write_text_atomic(args.json, json.dumps([u.to_dict() for u in uses], ensure_ascii=False,
                                                indent=2, allow_nan=False) + "\n")
    if args.csv:
        write_text_atomic(args.csv, uses_csv(uses))
    if "-" not in (args.json, args.csv):
        _print_uses(_console(args), args.mpn, uses)
    return EXIT_CLEAN if uses else EXIT_FINDINGS


def _print_uses(console, mpn: str, uses) -> None:
    """The where-used list as a terminal table."""
    from rich.table import Table

    if not uses:
        console.print(f"{mpn}: not placed in this report")
        return
    table = Table(title=f"{mpn}: {len(uses)} placement{'s' if len(uses) != 1 else ''}",
                  title_justify="left")
    for name in ("product", "refdes", "row", "voltage ratio", "temp margin", "status",
                 "not passing"):
        table.add_column(name)
    for u in uses:
        table.add_row(u.product or "", u.refdes, "" if u.row is None else str(u.row),
                      "" if u.voltage_ratio is None else f"{u.voltage_ratio:.1%}",
                      "" if u.temp_margin_c is None else f"{u.temp_margin_c:g} degC",
                      f"[status.{u.status}]{u.status}[/]", " ".join(u.problems))
    console.print(table)


# Above this many lines a BOM takes long enough to deserve a progress bar on a terminal.
LARGE_BOM_LINES = 20_000
LARGE_XLSX_BYTES = 2_000_000  # about as many rows of a typical BOM export


def _with_config(args: argparse.Namespace) -> argparse.Namespace:
    """Options the command line left unset, from [tool.bomcheck] (unless --no-config)."""
    from bomcheck.cli.config import Config, load_config, merge

    merge(args, Config() if args.no_config else load_config())
    args.fail_on = args.fail_on or "nodata"  # no data never passes, at the exit status too
    args.environment = getattr(args, "environment", None) or "severe"
    args.warn_as = args.warn_as or "failure"
    return args


def _requested_outputs(args: argparse.Namespace, command: str) -> list:
    """(Output, path) of each output asked for, in registry order; at most one may use
    standard output (a flag output such as --annotations always does, as path '-')."""
    from bomcheck.render.registry import for_command

    outputs = []
    for output in for_command(command):
        value = getattr(args, output.name, None)
        if output.kind == "flag":
            if value:
                outputs.append((output, "-"))
        elif value:
            outputs.append((output, value))
    to_stdout = [o for o, path in outputs if path == "-"]
    if len(to_stdout) > 1:
        raise InputError("only one report can go to standard output ('-')",
                         text=", ".join(f"--{o.name}" + (" -" if o.kind == "file" else "")
                                        for o in to_stdout))
    for o in to_stdout:
        if not o.stdout:
            raise InputError(f"the {o.name} output cannot go to standard output",
                             text=f"--{o.name} -", expected=f"a file name such as "
                             f"{command}.{o.name}")
    return outputs


def _large_bom(path: str) -> bool:
    """True when the BOM has more than ``LARGE_BOM_LINES`` lines (XLSX: judged by its size)."""
    p = Path(path)
    try:
        if p.suffix.lower() in (".xlsx", ".xlsm"):
            return p.stat().st_size > LARGE_XLSX_BYTES
        lines = 0
        with p.open("rb") as f:
            while chunk := f.read(1 << 20):
                lines += chunk.count(b"\n")
                if lines > LARGE_BOM_LINES:
                    return True
    except OSError:
        pass
    return False


@contextmanager
def _progress(args: argparse.Namespace, stages: int):
    """A stage callback; it drives a rich progress bar on standard error only when that is an
    interactive terminal, the run is not --quiet and the BOM is large."""
    if args.quiet or not sys.stderr.isatty() or not _large_bom(args.bom):
        yield lambda label: None
        return
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

    columns = (TextColumn("{task.description}"), BarColumn(), MofNCompleteColumn(),
               TimeElapsedColumn())
    with Progress(*columns, console=_console(args, stderr=True), transient=True) as bar:
        task = bar.add_task("bomcheck", total=stages)
        started = False

        def stage(label: str) -> None:
            nonlocal started
            if started:
                bar.advance(task)
            started = True
            bar.update(task, description=label)

        yield stage
        bar.update(task, completed=stages)


def _read_report_json(path: str, role: str) -> dict:
    """A JSON report written by ``bomcheck audit --json``, parsed."""
    from bomcheck.read.reader import read_bytes

    try:  # a regular file within the size limit, like every input
        text = read_bytes(path, f"{role} report").decode("utf-8")
    except UnicodeDecodeError:
        raise InputError(f"cannot read the {role} report: not UTF-8 text", path=path) from None
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise InputError(f"the {role} report is not JSON ({exc.msg})", path=path, row=exc.lineno,
                         expected="the output of bomcheck audit --json") from None
    if not isinstance(data, dict) or not (isinstance(data.get("placements"), list)
                                          or isinstance(data.get("boards"), list)):
        raise InputError(f"the {role} report is not a bomcheck JSON report", path=path,
                         expected="the output of bomcheck audit --json")
    return data


def run_diff(args: argparse.Namespace) -> int:
    from bomcheck.report.diff import compare, diff_markdown

    old = _read_report_json(args.old, "old")
    new = _read_report_json(args.new, "new")
    diff = compare(old, new, old_label=args.old, new_label=args.new)
    if args.json:
        from bomcheck.render.textsafe import json_dumps

        write_text_atomic(args.json, json_dumps(diff.to_dict(), indent=2) + "\n")
    if args.markdown:
        write_text_atomic(args.markdown, diff_markdown(diff))
    if "-" not in (args.json, args.markdown):
        from bomcheck.render.terminal import print_diff

        print_diff(_console(args), diff, show_all=args.all)
    return EXIT_FINDINGS if args.fail_on == "new" and diff.new_problems else EXIT_CLEAN


def run_rules(args: argparse.Namespace) -> int:
    from bomcheck.evaluate import rules
    from bomcheck.render.terminal import print_rules, print_ruleset_names

    console = _console(args)
    if not args.name:
        print_ruleset_names(console, rules.shipped_names(), rules.DEFAULT_RULESET)
        return EXIT_CLEAN
    print_rules(console, rules.load_rules(tuple(args.name)))
    return EXIT_CLEAN


def _substitute_request(args: argparse.Namespace):
    """(alternates, inline conditions) of ``substitute``, the usage checked."""
    from bomcheck.cli.main import SUBSTITUTE_CONDITIONS
    from bomcheck.substitute import Alternate, read_alternates

    conditions = {name: getattr(args, flag.lstrip("-").replace("-", "_"))
                  for flag, name, _ in SUBSTITUTE_CONDITIONS
                  if getattr(args, flag.lstrip("-").replace("-", "_")) is not None}
    direct = args.original is not None
    if direct and not (args.proposed or args.proposed_mpn):
        raise InputError("--original needs the alternate", expected="--proposed TEXT and/or "
                         "--proposed-mpn MPN")
    if (args.proposed or args.proposed_mpn or args.footprint_checked) and not direct:
        raise InputError("--proposed names an alternate but --original is missing",
                         expected="--original TEXT (the part it replaces)")
    if args.bom is None:
        if not direct:
            raise InputError("nothing to check", expected="a BOM with --alternates FILE, or "
                             "--original TEXT --proposed TEXT")
        if args.alternates:
            raise InputError("--alternates needs the BOM that holds the originals",
                             text=args.alternates, expected="bomcheck substitute BOM "
                             "--alternates FILE")
    else:
        if not direct and not args.alternates:
            raise InputError("nothing to check", expected="--alternates FILE, or --original "
                             "and --proposed")
        if conditions or args.refdes:
            raise InputError("inline conditions and --refdes are for the direct form without "
                             "a BOM", expected="the BOM's placements and the design sheet "
                             "(name placements with --original C12)")
    alternates = list(read_alternates(args.alternates)) if args.alternates else []
    if direct:
        cells = {"description": args.proposed} if args.proposed else {}
        alternates.append(Alternate(original=args.original, mpn=args.proposed_mpn or "",
                                    cells=cells, footprint_checked=args.footprint_checked,
                                    path="command line"))
    return alternates, conditions


def run_substitute(args: argparse.Namespace) -> int:
    from bomcheck.substitute import SubstituteOptions, run_direct, run_substitute

    outputs = _requested_outputs(args, "substitute")
    alternates, conditions = _substitute_request(args)
    options = SubstituteOptions(
        rules=tuple(args.rules), import_options=_import_options(args),
        design_sheet=args.design_sheet, parts=args.parts, margin_drop_pp=args.margin_drop,
        temp_margin_drop_c=args.temp_margin_drop,
        environment=getattr(args, "environment", None) or "severe",
        parts_override=getattr(args, "parts_override", False))
    if args.bom is None:
        from bomcheck.parse.refdes import expand

        refdes = [r for item in args.refdes for r in expand(item)]
        result = run_direct(args.original, alternates, args.design, refdes, conditions, options)
    else:
        result = run_substitute(args.bom, args.design, alternates, options,
                                alternates_path=args.alternates)
    from bomcheck.render.outfiles import output_lock
    from bomcheck.render.registry import OutputContext

    context = OutputContext(substitutes=result)
    with output_lock(path for _, path in outputs):
        for output, path in outputs:
            output.load()(None, path, context)
    if all(path != "-" for _, path in outputs):
        from bomcheck.render.terminal import print_substitutes

        print_substitutes(_console(args), result, show_all=args.all)
    return EXIT_FINDINGS if result.rejected else EXIT_CLEAN
