"""Entry point for ``python -m bomcheck``."""

from bomcheck.cli.main import main

raise SystemExit(main())
