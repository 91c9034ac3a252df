"""Command-line edge, the commands: each calls the public library (``bomcheck.api``) and prints
with the terminal renderer (``bomcheck.render.terminal``, the CLI being the terminal's edge);
files are written through ``api.write_outputs``. Imported by ``main`` only after parsing.
"""

from __future__ import annotations

import argparse
import os
import sys
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

from bomcheck import api
from bomcheck.cli.config import Config, load_config, merge
from bomcheck.cli.options import SUBSTITUTE_CONDITIONS
from bomcheck.errors import InputError
from bomcheck.render.registry import Output, for_command
from bomcheck.render.textparts import quiet_lines

EXIT_CLEAN, EXIT_FINDINGS = 0, 1


def run(args: argparse.Namespace) -> int:
    """Run the command ``args.command`` (``run_<command>`` here) under the run's input limits."""
    with api.use_limits(_limits(args)):
        return globals()[f"run_{args.command.replace('-', '_')}"](args)


def _limits(args: argparse.Namespace) -> api.Limits:
    """The input limits of this run: the defaults with the options given."""
    mb = getattr(args, "max_file_mb", None)
    return api.Limits().with_options(
        file_bytes=mb * api.MIB if mb else None, rows=getattr(args, "max_rows", None),
        columns=getattr(args, "max_columns", None), cells=getattr(args, "max_cells", None),
        placements=getattr(args, "max_placements", None),
        include_hidden=getattr(args, "include_hidden", None) or None)


def _terminal() -> Any:
    """The terminal renderer, loaded when something is printed with it: it loads rich, which a
    ``--quiet`` run writing to a log or a pipe does without (it prints plain lines)."""
    from bomcheck.render import terminal
    return terminal


def _console(args: argparse.Namespace, *, stderr: bool = False) -> Any:
    """The terminal renderer's console on standard output (or error)."""
    stream = sys.stderr if stderr else sys.stdout
    # A terminal has its width (rich reads it, and COLUMNS); a pipe or a CI log gets 80.
    width = None if stream.isatty() or os.environ.get("COLUMNS") else 80
    return _terminal().make_console(file=stream, no_color=bool(os.environ.get("NO_COLOR")),
                                 width=width)


def _import_options(args: argparse.Namespace) -> api.ImportOptions:
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
    return api.ImportOptions(sheet=sheet, encoding=args.encoding, columns=columns,
                             column_map=args.column_map)


def run_parse(args: argparse.Namespace) -> int:
    specs = [api.parse_value(t) for t in args.text]
    if args.json:
        api.write_text(args.json, api.json_text([s.to_dict() for s in specs]) + "\n")
    if args.json != "-":
        _terminal().print_specs(_console(args), specs)
    return EXIT_CLEAN


def run_import(args: argparse.Namespace) -> int:
    result = api.import_file(args.bom, _import_options(args))
    if args.json:
        api.write_text(args.json, api.json_text(api.import_record(result)) + "\n")
    if args.json != "-":
        _terminal().print_import(_console(args), result, show_all=args.all)
    return EXIT_CLEAN


def _audit_options(args: argparse.Namespace) -> api.AuditOptions:
    return api.AuditOptions(rules=tuple(args.rules), import_options=_import_options(args),
                            design_sheet=args.design_sheet, waivers=args.waivers,
                            today=args.today, parts=getattr(args, "parts", None),
                            environment=args.environment,
                            parts_override=getattr(args, "parts_override", False))


def run_audit(args: argparse.Namespace) -> int:
    args = _with_config(args)
    if args.manifest is not None or args.bom is None:
        return _run_audit_manifest(args)
    outputs = _requested_outputs(args, "audit")
    baseline = api.read_report(args.baseline, "baseline") if args.baseline else None
    if args.fail_on == "new" and baseline is None:
        raise InputError("--fail-on new compares with a baseline, and none was given",
                         expected="--baseline OLD.json (or baseline in [tool.bomcheck])")
    diff = None
    with _progress(args, 1 + len(outputs)) as stage:
        stage("audit: read, parse, evaluate")
        report = api.audit_files(args.bom, args.design, options=_audit_options(args))
        if baseline is not None:
            # Compared from the report's tables: the JSON report is only ever streamed.
            diff = api.diff(baseline, report, old_label=args.baseline,
                            new_label=args.json or "this audit")
        api.write_outputs(report, [(o.name, path) for o, path in outputs], warn_as=args.warn_as,
                          diff=diff, on_output=lambda name, path: stage(f"write {name}: {path}"))
    # Annotations share standard output with the terminal summary (CI logs read both).
    if all(path != "-" for o, path in outputs if o.kind == "file"):
        _print_audit(args, report, diff)
    if args.fail_on == "new":
        return EXIT_FINDINGS if diff.new_problems else EXIT_CLEAN
    return EXIT_FINDINGS if api.at_least(report.status, args.fail_on) else EXIT_CLEAN


def _print_audit(args: argparse.Namespace, report: api.Report, diff: api.Diff | None) -> None:
    """The audit on the terminal: in full, or the counts with ``--quiet`` (plain lines where no
    colour is shown: a log, a pipe, NO_COLOR); then the baseline."""
    baseline = [] if diff is None else ["Baseline: " + api.diff_summary(diff)]
    if args.quiet and (os.environ.get("NO_COLOR") or not sys.stdout.isatty()):
        sys.stdout.write("".join(line + "\n" for line in [*quiet_lines(report), *baseline]))
        return
    console = _console(args)
    if args.quiet:
        _terminal().print_quiet(console, report)
        for line in baseline:
            console.print(line)
    else:
        _terminal().print_audit(console, report, show_all=args.all)
        if diff is not None:
            _terminal().print_diff(console, diff, show_all=args.all)


def _run_audit_manifest(args: argparse.Namespace) -> int:
    """``audit --manifest``: every board on the worker pool, the combined outputs, a summary
    row per board; the exit status follows the worst board."""
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
    base = api.AuditOptions(rules=tuple(args.rules), import_options=_import_options(args),
                            today=args.today, environment=args.environment)
    results = api.audit_manifest(args.manifest, base, outputs)
    if all(path != "-" for _, path in outputs):
        _terminal().print_boards(_console(args), results)
    return EXIT_FINDINGS if api.at_least(api.batch_status(results), args.fail_on) else EXIT_CLEAN


def run_where_used(args: argparse.Namespace) -> int:
    uses = api.where_used(api.read_report(args.report, "audit"), args.mpn)
    if args.json:
        api.write_text(args.json, api.json_text([u.to_dict() for u in uses]) + "\n")
    if args.csv:
        api.write_text(args.csv, api.uses_csv(uses))
    if "-" not in (args.json, args.csv):
        _terminal().print_uses(_console(args), args.mpn, uses)
    return EXIT_CLEAN if uses else EXIT_FINDINGS


# Above this many lines a BOM takes long enough to deserve a progress bar on a terminal.
LARGE_BOM_LINES = 20_000
LARGE_XLSX_BYTES = 2_000_000  # about as many rows of a typical BOM export


def _with_config(args: argparse.Namespace) -> argparse.Namespace:
    """Options the command line left unset, from [tool.bomcheck] (unless --no-config)."""
    merge(args, Config() if args.no_config else load_config())
    args.fail_on = args.fail_on or "nodata"  # no data never passes, at the exit status too
    args.environment = getattr(args, "environment", None) or "severe"
    args.warn_as = args.warn_as or "failure"
    return args


def _requested_outputs(args: argparse.Namespace, command: str) -> list[tuple[Output, str]]:
    """(Output, path) of each output asked for, in registry order; at most one may use
    standard output (a flag output such as --annotations always does, as path '-')."""
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
def _progress(args: argparse.Namespace, stages: int) -> Iterator[Callable[[str], None]]:
    """A stage callback; it drives a rich progress bar on standard error only when that is an
    interactive terminal, the run is not --quiet and the BOM is large."""
    if args.quiet or not sys.stderr.isatty() or not _large_bom(args.bom):
        yield lambda label: None
        return
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

    # markup off: a stage names the output path, which is the user's text
    columns = (TextColumn("{task.description}", markup=False), BarColumn(), MofNCompleteColumn(),
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


def run_diff(args: argparse.Namespace) -> int:
    old = api.read_report(args.old, "old")
    new = api.read_report(args.new, "new")
    diff = api.diff(old, new, old_label=args.old, new_label=args.new)
    if args.json:
        api.write_text(args.json, api.json_text(diff.to_dict()) + "\n")
    if args.markdown:
        api.write_text(args.markdown, api.diff_markdown(diff))
    if "-" not in (args.json, args.markdown):
        _terminal().print_diff(_console(args), diff, show_all=args.all)
    return EXIT_FINDINGS if args.fail_on == "new" and diff.new_problems else EXIT_CLEAN


def run_rules(args: argparse.Namespace) -> int:
    console = _console(args)
    if not args.name:
        _terminal().print_ruleset_names(console, api.ruleset_names(), api.DEFAULT_RULESET)
        return EXIT_CLEAN
    _terminal().print_rules(console, api.rules(tuple(args.name)))
    return EXIT_CLEAN


def _check_substitute_usage(args: argparse.Namespace, conditions: dict[str, str]) -> None:
    """The forms of ``substitute``: a BOM with alternates, or the direct form."""
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


def _substitute_request(args: argparse.Namespace) -> tuple[list[api.Alternate], dict[str, str]]:
    """(alternates, inline conditions) of ``substitute``, the usage checked."""
    conditions = {name: getattr(args, flag.lstrip("-").replace("-", "_"))
                  for flag, name, _ in SUBSTITUTE_CONDITIONS
                  if getattr(args, flag.lstrip("-").replace("-", "_")) is not None}
    _check_substitute_usage(args, conditions)
    alternates = list(api.read_alternates(args.alternates)) if args.alternates else []
    if args.original is not None:
        cells = {"description": args.proposed} if args.proposed else {}
        alternates.append(api.Alternate(original=args.original, mpn=args.proposed_mpn or "",
                                        cells=cells, footprint_checked=args.footprint_checked,
                                        path="command line"))
    return alternates, conditions


def run_substitute(args: argparse.Namespace) -> int:
    outputs = _requested_outputs(args, "substitute")
    alternates, conditions = _substitute_request(args)
    options = api.SubstituteOptions(
        rules=tuple(args.rules), import_options=_import_options(args),
        design_sheet=args.design_sheet, parts=args.parts, margin_drop_pp=args.margin_drop,
        temp_margin_drop_c=args.temp_margin_drop,
        environment=getattr(args, "environment", None) or "severe",
        parts_override=getattr(args, "parts_override", False))
    if args.bom is None:
        result = api.substitute_direct(args.original, alternates, design=args.design,
                                       refdes=args.refdes, conditions=conditions,
                                       options=options)
    else:
        result = api.substitute_files(args.bom, args.design, alternates, options=options,
                                      alternates_path=args.alternates)
    api.write_outputs(result, [(o.name, path) for o, path in outputs])
    if all(path != "-" for _, path in outputs):
        _terminal().print_substitutes(_console(args), result, show_all=args.all)
    return EXIT_FINDINGS if result.rejected else EXIT_CLEAN
