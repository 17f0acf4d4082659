"""``python -m extractor`` runs the ``traits`` command."""

from extractor.cli.main import main

raise SystemExit(main())
