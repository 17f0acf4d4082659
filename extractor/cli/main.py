"""The ``traits`` command line: parse options, call one job function, print the result.

Each command group lives in its own module (:mod:`~extractor.cli.workspace_cmds`,
:mod:`~extractor.cli.concept_cmds`, :mod:`~extractor.cli.model_cmds`,
:mod:`~extractor.cli.label_cmds`). Every failure meant for a user is a
:class:`~extractor.errors.TraitsError`; it is caught once, in :func:`main`, and printed
as one sentence without a traceback.
"""

from __future__ import annotations

import argparse
import errno
import sqlite3
import sys
from collections.abc import Sequence
from pathlib import Path

from rich.console import Console

from extractor import __version__, progress
from extractor.cli import (
    concept_cmds,
    label_cmds,
    language_cmds,
    model_cmds,
    report_cmds,
    review_cmds,
    workspace_cmds,
)
from extractor.cli.common import CommandsAction, global_options, print_said
from extractor.errors import TraitsError
from extractor.workspace import store
from extractor.workspace.folder import STORE_FILE


def build_parser() -> argparse.ArgumentParser:
    """Return the argument parser of the ``traits`` command."""
    parser = argparse.ArgumentParser(
        prog="traits",
        description="Extract preferred, disliked and wanted crop traits from interview answers.",
    )
    parser.add_argument("--version", action="version", version=f"trait-extractor {__version__}")
    global_options(parser)
    parser.register("action", "parsers", CommandsAction)
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    for commands in (
        workspace_cmds,
        concept_cmds,
        model_cmds,
        report_cmds,
        label_cmds,
        review_cmds,
        language_cmds,
    ):
        commands.register(sub)
    return parser


def _sentence(exc: Exception, args: argparse.Namespace) -> str:
    """Return the one sentence a failure is printed as."""
    if isinstance(exc, sqlite3.Error):
        # A failure of the store that its own functions did not word (e.g. a damaged page
        # found while reading, a full disk at commit): say what is true about the store.
        return str(store.store_failure(exc, Path(getattr(args, "workspace", ".")) / STORE_FILE))
    if isinstance(exc, OSError):
        # A file the command was told to read or write (e.g. --out in a missing folder).
        where = f"'{exc.filename}'" if exc.filename else None
        if exc.errno == errno.ENOSPC:
            into = where or f"into the workspace {getattr(args, 'workspace', '.')}"
            return (
                f"The disk is full: writing {into} failed, and nothing of it was recorded in "
                "the store; free some space on that disk (old versions in models/ and files "
                "in exports/ can go) and run the command again."
            )
        return (
            f"Cannot use {where or 'a file'}: {exc.strerror or exc}; check the path and its "
            "permissions."
        )
    return str(exc)


def main(argv: Sequence[str] | None = None, *, console: Console | None = None) -> int:
    """Run the ``traits`` command; return its exit code."""
    console = console or Console()
    errors = Console(stderr=True) if console.file is sys.stdout else console
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.quiet and args.verbose:  # one before the command, one after it
        parser.error("argument -v/--verbose: not allowed with argument -q/--quiet")
    # -q: rich prints nothing (errors aside, below); a command still prints the path of
    # the file it wrote, and --json its object, past rich (common.print_written/print_json).
    was_quiet = console.quiet
    console.quiet = was_quiet or args.quiet
    progress.enable(console if console.is_terminal and not args.quiet else None)
    try:
        return int(args.handler(args, console))
    except (TraitsError, OSError, sqlite3.Error) as exc:
        console.quiet = was_quiet
        print_said(
            errors, "error", "bold red", _sentence(exc, args), highlight=False, soft_wrap=True
        )
        return 1
    except KeyboardInterrupt:
        console.quiet = was_quiet
        errors.print("Interrupted; everything confirmed so far is saved.")
        return 130
    finally:
        console.quiet = was_quiet
        progress.enable(None)
