"""Entry point for ``python -m bomcheck``."""

from bomcheck.cli import main

raise SystemExit(main())
