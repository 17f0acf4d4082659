"""What the command modules share: the options every command takes, the workspace, JSON, figures.

The options ``-w``, ``-q`` and ``-v`` are taken before or after a command's name
(:class:`CommandsAction`); ``--json`` output is written from a job's typed result.
"""

from __future__ import annotations

import argparse
import dataclasses
import json
from collections.abc import Iterable, Mapping, Sequence
from pathlib import Path
from typing import Any

from rich.console import Console
from rich.text import Text

from extractor.report.stats import f1_interval, too_few
from extractor.workspace.folder import Workspace

Subcommands = argparse._SubParsersAction  # argparse has no public name for it
"""The ``traits`` parser's subcommands, where each command module adds its own."""


def global_options(parser: argparse.ArgumentParser, *, after: bool = False) -> None:
    """Add the options every command takes: ``-w DIR``, ``-q`` and ``-v``.

    The program's parser holds their defaults; each command's parser (``after=True``)
    takes them again without defaults (``argparse.SUPPRESS``), so that ``traits status
    -w DIR`` and ``traits -w DIR status`` mean the same and an option left out after the
    command does not undo one given before it.
    """
    parser.add_argument(
        "-w",
        "--workspace",
        default=argparse.SUPPRESS if after else ".",
        help="workspace folder (default: .)",
    )
    loudness = parser.add_mutually_exclusive_group()
    for short, long, what in (
        ("-q", "--quiet", "print only errors and the file written"),
        ("-v", "--verbose", "print more detail"),
    ):
        loudness.add_argument(
            short,
            long,
            action="store_true",
            default=argparse.SUPPRESS if after else False,
            help=what,
        )


def _options_after_command() -> argparse.ArgumentParser:
    parent = argparse.ArgumentParser(add_help=False)
    global_options(parent, after=True)
    return parent


_AFTER = _options_after_command()
"""The parent parser every command's parser is made with."""


class CommandsAction(argparse._SubParsersAction):
    """Subcommands whose parsers all take the global options, nested actions too.

    Registered as the ``parsers`` action of the program's parser; each parser it makes
    registers it in turn, so ``traits concepts suggest -w DIR`` works as well.
    """

    def add_parser(self, name: str, **kwargs: Any) -> argparse.ArgumentParser:
        """Add a command's parser made with the global options as a parent."""
        kwargs["parents"] = [*kwargs.get("parents", ()), _AFTER]
        parser = super().add_parser(name, **kwargs)
        parser.register("action", "parsers", CommandsAction)
        return parser


def print_json(console: Console, result: Any) -> None:
    """Write a job's typed result as one JSON object, for scripts (``--json``).

    Dataclasses become objects (:func:`dataclasses.asdict`), paths and anything else
    JSON lacks become text. It is written past rich, so ``-q`` does not silence it.
    """
    is_instance = dataclasses.is_dataclass(result) and not isinstance(result, type)
    data = dataclasses.asdict(result) if is_instance else result
    console.file.write(json.dumps(data, sort_keys=True, default=str) + "\n")


def print_written(console: Console, args: argparse.Namespace, path: Path | str) -> None:
    """Under ``-q``, print the path of the file the command wrote: all ``-q`` leaves."""
    if getattr(args, "quiet", False) and not getattr(args, "json", False):
        console.file.write(f"{path}\n")


def open_workspace(args: argparse.Namespace) -> Workspace:
    """Open the workspace the ``-w/--workspace`` option names (the current folder by default)."""
    return Workspace.open(Path(args.workspace))


def metric_summary(metrics: Mapping[str, Any]) -> str:
    """Return the headline figures of a version's metrics, e.g. ``span F1 0.71 (cv)``."""
    parts = []
    for key, tag in (("cross_validation", "cv"), ("evaluation_sample", "eval")):
        found = metrics.get(key) or {}
        span = found.get("span_f1") if isinstance(found, dict) else None
        if isinstance(span, dict):
            span = span.get("mean")
        if isinstance(span, (int, float)):
            parts.append(f"span F1 {span:.2f} ({tag}{_sample_size(found)})")
    return "; ".join(parts) or "not measured"


def _sample_size(found: Mapping[str, Any]) -> str:
    """Return ``: N gold spans, 95% low–high`` for a stored evaluation, or nothing."""
    counts = found.get("span")
    n_gold = found.get("n_gold_spans")
    if not isinstance(counts, dict) or not isinstance(n_gold, int):
        return ""  # cross-validation stores means over folds, not one sample
    bounds = f1_interval(int(counts["tp"]), int(counts["fp"]), int(counts["fn"]))
    text = f": {n_gold} gold spans"
    if bounds is not None:
        text += f", 95% {bounds[0]:.2f}–{bounds[1]:.2f}"
    return text + (", too few to mean much" if too_few(n_gold) else "")


def print_said(console: Console, kind: str, style: str, message: str, **options: Any) -> None:
    """Print ``kind: message`` with the kind styled and the message as plain text.

    Messages carry user text (file names, cells, settings such as ``[active]``), which
    is never rich markup: brackets in it are shown as they are, never read as styles.
    """
    console.print(Text.assemble((f"{kind}:", style), " ", message), **options)


def counted(n: int, singular: str, plural: str | None = None) -> str:
    """Return ``1 answer`` or ``3 answers`` (``plural`` where adding "s" is wrong)."""
    return f"{n} {singular if n == 1 else plural or singular + 's'}"


def spoken_list(items: Sequence[str], conjunction: str = "and") -> str:
    """Return "a", "a and b", "a, b and c" (or with another conjunction: "2, 3 or 4")."""
    if len(items) <= 1:
        return "".join(items)
    return f"{', '.join(items[:-1])} {conjunction} {items[-1]}"


def print_warnings(console: Console, warnings: Iterable[str]) -> None:
    """Print each warning on its own line."""
    for warning in warnings:
        print_said(console, "warning", "yellow", warning)


def print_notes(console: Console, notes: Iterable[str]) -> None:
    """Print each note on its own line."""
    for note in notes:
        print_said(console, "note", "yellow", note)


NO_PHONE_REGION = (
    "No phone region is known (none in the language tags, such as sw-KE, nor in "
    "phone_regions), so no country's national phone format was screened; name your "
    'countries under [export] in traits.toml, e.g. phone_regions = ["KE"].'
)
"""What a pseudonymised export says when it screened no country's phone format."""


def print_phone_regions(console: Console, regions: Sequence[str] | None) -> None:
    """Say once when a pseudonymised export knew no phone region (``None``: not pseudonymised)."""
    if regions is not None and not regions:
        print_said(console, "warning", "yellow", NO_PHONE_REGION)
