"""Allow ``python -m fieldkit``."""

from fieldkit.cli import main

raise SystemExit(main())
