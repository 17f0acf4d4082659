"""`traits report`: write the self-contained HTML report to share, pseudonymised by default."""

from __future__ import annotations

import argparse
from pathlib import Path

from rich.console import Console

from extractor.cli.common import (
    Subcommands,
    open_workspace,
    print_json,
    print_phone_regions,
    print_written,
)
from extractor.jobs.report import report
from extractor.report.caution import REVIEW_CAUTION


def cmd_report(args: argparse.Namespace, console: Console) -> int:
    """Write the HTML report for the newest model version."""
    with open_workspace(args) as ws:
        result = report(
            ws,
            version=args.model_version,
            out=Path(args.out) if args.out else None,
            pseudonymise=not args.identified,
            min_confidence=args.min_confidence,
            group_by=args.group_by.split(",") if args.group_by else None,
            names_file=args.names_file,
        )
    if args.json:
        print_json(console, result)
        return 0
    print_written(console, args, result.path)
    kind = "with respondent IDs and quotes as recorded" if args.identified else "pseudonymised"
    console.print(f"Wrote {result.path} ({result.mentions} mentions, {kind}).", markup=False)
    print_phone_regions(console, result.phone_regions)
    console.print(f"[italic]{REVIEW_CAUTION}[/]")
    return 0


def register(sub: Subcommands) -> None:
    """Add ``report`` to the command's subparsers."""
    p = sub.add_parser("report", help="write one self-contained HTML report to share")
    p.add_argument("--out", help="output file (default: exports/report.html)")
    p.add_argument(
        "--identified",
        action="store_true",
        help="keep respondent IDs and quotes as recorded (default: pseudonymised)",
    )
    p.add_argument("--min-confidence", type=float, default=None)
    p.add_argument("--group-by", help="comma-separated respondent columns to compare")
    p.add_argument("--names-file", help="names to screen out of quotes, one per line")
    p.add_argument("--model-version", help="report this model version (default: the newest)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(handler=cmd_report)
