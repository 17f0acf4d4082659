"""``python -m extractor`` runs the ``traits`` command."""

from extractor.cli import main

raise SystemExit(main())
