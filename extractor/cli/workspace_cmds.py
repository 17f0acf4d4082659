"""Commands that make and fill a workspace: ``init``, ``add``, ``status``."""

from __future__ import annotations

import argparse
import dataclasses
import json
from collections.abc import Collection, Mapping, Sequence
from pathlib import Path
from typing import Any

from rich.console import Console
from rich.markup import escape
from rich.table import Table

from extractor.cli.common import (
    Subcommands,
    counted,
    open_workspace,
    print_notes,
    print_warnings,
    print_written,
    spoken_list,
)
from extractor.errors import InputError
from extractor.ingest.language import language_name
from extractor.jobs.add import LanguageFound, add_interviews
from extractor.jobs.status import (
    ValueSuggestions,
    metadata_merges,
    metadata_suggestions,
    workspace_status,
)
from extractor.report.metadata import Harmonised
from extractor.workspace.folder import create_workspace
from extractor.workspace.store import StoredQuestion

_COUNT_COLUMNS = ("respondents", "answers", "sentences")


def cmd_init(args: argparse.Namespace, console: Console) -> int:
    """Create a workspace folder."""
    made = create_workspace(Path(args.dir or args.workspace))
    if made.existed:
        console.print(
            f"A workspace already exists in [bold]{made.root}[/]; nothing was changed. "
            "See what it holds with [bold]traits status[/]."
        )
        return 0
    print_written(console, args, made.root)
    console.print(
        f"Workspace ready in [bold]{made.root}[/]: traits.toml, traits.sqlite, models/, "
        "exports/, interviews/."
    )
    console.print("Next: [bold]traits add FILE...[/] and [bold]traits concepts import FILE[/].")
    return 0


def _column_mapping(args: argparse.Namespace) -> dict[str, str] | None:
    """Return the columns named on the command line, by role, or None for none."""
    mapping = {
        key: value
        for key, value in (
            ("respondent", args.respondent_column),
            ("question", args.question_column),
            ("answer", args.answer_column),
            ("language", args.language_column),
            ("variety", args.variety_column),
        )
        if value
    }
    return mapping or None


def _metadata_renames(given: Sequence[str] | None) -> dict[str, str]:
    """Return ``--metadata STORED=NAME`` options as a mapping, or raise InputError."""
    renames: dict[str, str] = {}
    for item in given or ():
        stored, sep, name = item.partition("=")
        if not sep or not stored.strip() or not name.strip():
            raise InputError(
                f"--metadata takes STORED=NAME, like --metadata sex=gender; got {item!r}."
            )
        renames[stored.strip()] = name.strip()
    return renames


def cmd_add(args: argparse.Namespace, console: Console) -> int:
    """Add interview files, and metadata column renames."""
    renames = _metadata_renames(args.metadata)
    if not args.files and not renames:
        raise InputError("Give interview files to add, or --metadata STORED=NAME, or both.")
    with open_workspace(args) as ws:
        added = add_interviews(
            ws,
            [Path(p) for p in args.files],
            sheet=args.sheet,
            mapping=_column_mapping(args),
            metadata=renames,
        )
        merged = metadata_merges(ws) if renames else None
    if merged is not None:
        print_metadata(console, merged)
    reports = added.files
    if not reports:
        return 0
    table = Table(title="Interview files")
    # A path is never cut short: it folds onto further lines (no ellipsis) so the user
    # can see exactly which file each row is about, however narrow the terminal.
    table.add_column("file", overflow="fold")
    for column in ("status", "layout", *_COUNT_COLUMNS):
        table.add_column(column, justify="right" if column in _COUNT_COLUMNS else "left")
    for report in reports:
        counts = (getattr(report, k) for k in _COUNT_COLUMNS)
        table.add_row(
            report.path,
            report.status,
            report.layout,
            *("" if n is None else str(n) for n in counts),
        )
    console.print(table)
    for report in reports:
        print_warnings(console, report.warnings)
    print_languages(console, added.languages)
    print_unlisted(console, added.unlisted)
    print_unknown_questions(console, added.unknown_questions)
    return 0


def print_unlisted(console: Console, unlisted: Mapping[str, int]) -> None:
    """Say which languages outside the study's the new answers read as, and what to do."""
    if not unlisted:
        return
    # "26 answers read as Swahili (sw) and 24 as Portuguese (pt)": the verb after the first.
    (tag, first), *rest = unlisted.items()
    head = f"{counted(first, 'answer')} {'reads' if first == 1 else 'read'} as"
    said = spoken_list(
        [f"{head} {language_name(tag)} ({tag})"]
        + [f"{n} as {language_name(t)} ({t})" for t, n in rest]
    )
    tags = ", ".join(f'"{tag}"' for tag in unlisted)
    print_notes(
        console,
        [
            f"{said}, languages this study does not list (the languages in traits.toml "
            "and the concept list's), so detection stored each as one of the study's "
            f"languages. If that is right, add {tags} to languages under [workspace] in "
            "traits.toml, then run `traits language detect --all`."
        ],
    )


def print_unknown_questions(console: Console, unknown: Sequence[StoredQuestion]) -> None:
    """Print the stored questions whose direction is unknown, and how to give it."""
    if not unknown:
        return
    shown = ", ".join(
        f"{q.question} ({counted(q.answers, 'answer')})" for q in unknown[:_SHOWN_QUESTIONS]
    )
    more = f" and {len(unknown) - _SHOWN_QUESTIONS} more" if len(unknown) > _SHOWN_QUESTIONS else ""
    # A plain-text note: "[codebook]" read as rich markup would vanish from the sentence.
    print_notes(
        console,
        [
            f"{counted(len(unknown), 'question')} "
            f"{'tells' if len(unknown) == 1 else 'tell'} stance nothing: {shown}{more}. "
            "Give each its direction (likes, dislikes, "
            "wishes or open) in questions.csv (columns question, text, direction) or under "
            "[codebook] in traits.toml; it is evidence for stance, never the answer."
        ],
    )


_SHOWN_QUESTIONS = 8


_LACKS = {
    "synonyms": "no synonyms in the concept list (only your labels teach it)",
    "stance cues": (
        "no stance cues (stances come from the question, your labels in any language, "
        "and cue words you add: see the README's 'Stance cues for your language')"
    ),
    "spaCy pipeline": "no spaCy pipeline (spaCy's multi-language tokenizer splits its words)",
}


def print_languages(
    console: Console, languages: Sequence[LanguageFound], cues_told: Collection[str] = ()
) -> None:
    """Print the languages of the stored sentences and what each of them lacks.

    ``cues_told`` are languages whose lack of stance cues another note of the same
    command already states (training's, in `traits run`): it is not said twice. Before
    any concept list is stored, that is said once, not as each language's lack of synonyms.
    """
    if not languages:
        return
    found = ", ".join(f"{lang.tag} {lang.sentences}" for lang in languages)
    console.print(f"Languages of the stored sentences: {found}.", highlight=False)
    if not languages[0].concept_list:
        console.print(
            "note: no concept list is imported yet (until it is, no language has synonyms "
            "and languages are told apart among the settings' languages only); import it "
            "with `traits concepts import FILE`, then run `traits language detect --all` if "
            "some answers' languages are wrong.",
            highlight=False,
        )
    for lang in languages:
        told = ("stance cues",) if lang.tag in cues_told else ()
        missing = [what for what in lang.lacks if what not in told]
        if missing:
            lacks = "; ".join(_LACKS[what] for what in missing)
            console.print(f"note: {lang.tag} has {lacks}.", highlight=False)


def print_metadata(console: Console, merged: Harmonised) -> None:
    """Print the metadata columns and values that exports read as one."""
    if not merged.columns and not merged.values:
        return
    table = Table(title="Metadata read as one (as stored -> as exported)")
    table.add_column("column")
    table.add_column("stored as", overflow="fold")
    table.add_column("read as")
    table.add_column("respondents", justify="right")
    for col in merged.columns:
        table.add_row("(column)", ", ".join(col.sources), col.column, str(col.respondents))
    for val in merged.values:
        table.add_row(val.column, ", ".join(val.spellings), val.value, str(val.respondents))
    console.print(table)


def print_suggestions(console: Console, suggested: ValueSuggestions) -> None:
    """Print suggested value merges and the ``values`` line that would make them."""
    if not suggested.merges:
        return
    console.print(
        "\nSuggested merges of values the pretrained space finds close (a suggestion: "
        "check each; they are read as one only after you add them):",
        highlight=False,
    )
    for s in suggested.merges:
        others = ", ".join(f"{escape(v)} ({n})" for v, n in s.others)
        console.print(
            f"  {escape(s.column)}: {escape(s.value)} ({s.count}) <- {others}",
            highlight=False,
            soft_wrap=True,
        )
    console.print(
        "To accept them, edit what you disagree with and put this line under "
        "\\[metadata] in traits.toml, in place of its values line:",
        highlight=False,
    )
    console.print(suggested.values_line, highlight=False, soft_wrap=True, markup=False)


def cmd_status(args: argparse.Namespace, console: Console) -> int:
    """Print the workspace's counts, and the metadata merged for exports."""
    with open_workspace(args) as ws:
        counts = dataclasses.asdict(workspace_status(ws))
        merged = metadata_merges(ws)
        suggested = None if args.json else metadata_suggestions(ws, merged)
    if args.json or suggested is None:
        console.file.write(json.dumps(counts, sort_keys=True) + "\n")
        return 0
    table = Table(title=f"Workspace {Path(args.workspace).resolve()}")
    table.add_column("what")
    table.add_column("count", justify="right")
    for key, value in counts.items():
        if key == "language_tags" and value == counts["languages"]:
            continue  # the same row twice when no answer has a region or script subtag
        shown: Any = value
        if key in ("languages", "language_tags"):
            shown = ", ".join(f"{lang} {n}" for lang, n in value.items()) or "-"
        table.add_row(key.replace("_", " "), str(shown))
    console.print(table)
    print_metadata(console, merged)
    print_suggestions(console, suggested)
    return 0


def register(sub: Subcommands) -> None:
    """Add ``init``, ``add`` and ``status`` to the command's subparsers."""
    p = sub.add_parser("init", help="create a workspace folder")
    p.add_argument("dir", nargs="?", help="the folder to make a workspace (default: -w, or .)")
    p.set_defaults(handler=cmd_init)

    p = sub.add_parser("add", help="add interview files (.xlsx .xls .ods .csv .tsv .txt .docx)")
    p.add_argument("files", nargs="*")
    p.add_argument(
        "--metadata",
        action="append",
        metavar="STORED=NAME",
        help="read the metadata column STORED as NAME in every file, stored ones too "
        "(repeatable; e.g. sex=gender)",
    )
    p.add_argument("--sheet", help="read only this sheet of a workbook")
    for role, what in (
        ("respondent", "the respondent IDs"),
        ("question", "the question asked (long layout)"),
        ("answer", "the answers (long layout)"),
        ("language", "each answer's language tag"),
        ("variety", "the variety spoken of"),
    ):
        p.add_argument(
            f"--{role}-column",
            metavar="HEADER",
            help=f"the column holding {what}, when its header is not recognised",
        )
    p.set_defaults(handler=cmd_add)

    p = sub.add_parser("status", help="counts of what the workspace holds")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(handler=cmd_status)
