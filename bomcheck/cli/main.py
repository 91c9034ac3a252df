"""Command-line edge: parse the options, run the command, map errors to exit statuses.

The commands (and with them pandas and the stages) are imported only after the options parsed,
so that ``bomcheck --help`` and ``bomcheck --version`` answer quickly.
"""

from __future__ import annotations

import sys
from collections.abc import Sequence

from bomcheck.cli.options import build_parser
from bomcheck.errors import BomcheckError

__all__ = ["EXIT_CLEAN", "EXIT_FINDINGS", "EXIT_INTERNAL", "EXIT_UNUSABLE", "build_parser", "main"]

EXIT_CLEAN = 0
EXIT_FINDINGS = 1
EXIT_UNUSABLE = 2
EXIT_INTERNAL = 3  # a bug in bomcheck: never 0 (clean) or 1 (findings), so CI cannot mistake it


def _one_line(text: str) -> str:
    return " ".join(str(text).split())[:300]


def main(argv: Sequence[str] | None = None) -> int:
    """Run one command; exit status 0 clean, 1 findings, 2 unusable input, 3 internal error."""
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return EXIT_UNUSABLE
    try:
        from bomcheck.cli import commands  # pandas and the stages: not for --help

        return commands.run(args)
    except BomcheckError as exc:
        if args.debug:
            raise
        print(f"bomcheck: error: {exc}", file=sys.stderr)
        return exc.exit_code
    except KeyboardInterrupt:  # pragma: no cover
        return 130
    except BrokenPipeError:  # pragma: no cover - e.g. piped into head
        return EXIT_CLEAN
    except Exception as exc:  # noqa: BLE001 - anything else is a bug: say so, in one line
        if args.debug:
            raise
        print(f"bomcheck: internal error (a bug in bomcheck, not in your input): "
              f"{type(exc).__name__}: {_one_line(exc)}; rerun with --debug for the traceback "
              "and report it", file=sys.stderr)
        return EXIT_INTERNAL
