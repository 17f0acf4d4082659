"""``traits language``: set or detect again the language of stored answers."""

from __future__ import annotations

import argparse

from rich.console import Console

from extractor.cli.common import Subcommands, open_workspace
from extractor.cli.workspace_cmds import print_languages
from extractor.jobs.language import (
    LanguageChange,
    Selection,
    detect_language_again,
    set_language,
)

_SHOWN = 10
"""Undecided answers listed, at most."""


def _selection(args: argparse.Namespace) -> Selection:
    """Return the answers the options select (all of them for ``--all``)."""
    return Selection(file=args.file, respondent=args.respondent, answer=args.answer)


def _print(console: Console, change: LanguageChange) -> None:
    plural = "" if change.selected == 1 else "s"
    console.print(
        f"{change.selected} answer{plural} selected; the language of {change.changed} changed.",
        highlight=False,
    )
    if change.given:
        console.print(
            f"{change.given} kept the language a person gave (a language column or "
            "`traits language set`); change those with `traits language set`.",
            highlight=False,
        )
    if change.undecided:
        console.print(
            f"{change.undecided} could not be told (too short or unclear) and kept their "
            "language; set it with `traits language set TAG --answer NUMBER`:",
            highlight=False,
        )
        for number, lang, text in change.undecided_answers[:_SHOWN]:
            console.print(f"  answer {number} ({lang}): {text}", markup=False, highlight=False)
        if change.undecided > _SHOWN:
            console.print(f"  and {change.undecided - _SHOWN} more.", highlight=False)
    if change.stale:
        console.print(
            f"Labels are kept; the model's suggestions for {change.stale} sentences are out of "
            "date and will be tagged again by the next `traits export` or `traits run`.",
            highlight=False,
        )
    print_languages(console, change.languages)


def cmd_set(args: argparse.Namespace, console: Console) -> int:
    """Set the language of stored answers."""
    with open_workspace(args) as ws:
        change = set_language(ws, args.tag, _selection(args))
    _print(console, change)
    return 0


def cmd_detect(args: argparse.Namespace, console: Console) -> int:
    """Detect the language of stored answers again."""
    with open_workspace(args) as ws:
        change = detect_language_again(ws, _selection(args))
    _print(console, change)
    return 0


def _selectors(p: argparse.ArgumentParser) -> None:
    group = p.add_mutually_exclusive_group(required=True)
    group.add_argument("--file", help="the answers first added from this interview file")
    group.add_argument("--respondent", help="the answers of this respondent ID")
    group.add_argument("--answer", type=int, help="one answer, by its number in the exports")
    group.add_argument("--all", action="store_true", help="every stored answer")


def register(sub: Subcommands) -> None:
    """Add ``language set`` and ``language detect`` to the command's subparsers."""
    p = sub.add_parser("language", help="set or detect again the language of stored answers")
    actions = p.add_subparsers(dest="language_command", required=True, metavar="ACTION")
    q = actions.add_parser("set", help="set the language of stored answers (labels are kept)")
    q.add_argument("tag", help="a BCP 47 language tag such as pt, sw or es-419")
    _selectors(q)
    q.set_defaults(handler=cmd_set)
    q = actions.add_parser("detect", help="detect the language of stored answers again")
    _selectors(q)
    q.set_defaults(handler=cmd_detect)
