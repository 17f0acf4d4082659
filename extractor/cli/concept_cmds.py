"""``traits concepts``: import, list, suggest, accept and export the concept list."""

from __future__ import annotations

import argparse
from collections.abc import Mapping
from pathlib import Path

from rich.console import Console
from rich.table import Table

from extractor.cli.common import Subcommands, open_workspace, print_warnings, print_written
from extractor.ingest.intake import import_concepts
from extractor.jobs.curate import (
    MIN_COUNT_PERCENT,
    accept_alias,
    export_concepts,
    list_concepts,
    suggest_terms,
)
from extractor.models.terms import TermSuggestion


def cmd_concepts_import(args: argparse.Namespace, console: Console) -> int:
    """Import a concept or variety list."""
    with open_workspace(args) as ws:
        report = import_concepts(ws, Path(args.file), kind=args.kind)
    print_warnings(console, report.warnings)
    noun = "varieties" if args.kind == "variety" else "concepts"
    if report.status == "unchanged":
        console.print(f"{report.path} is already the current list; nothing to import.")
    else:
        console.print(
            f"Imported {report.concepts} {noun} with {report.aliases} aliases from {report.path}."
        )
    return 0


def cmd_concepts_list(args: argparse.Namespace, console: Console) -> int:
    """List concepts and the imported list versions."""
    with open_workspace(args) as ws:
        listing = list_concepts(ws, args.kind)
    table = Table(title="Concepts" if args.kind == "trait" else "Varieties")
    for column in ("id", "labels", "parent", "aliases"):
        table.add_column(column)
    for concept in listing.concepts:
        labels = "; ".join(f"{lang}: {text}" for lang, text in concept.labels.items())
        table.add_row(
            concept.id,
            labels,
            concept.parent or "",
            str(listing.alias_counts.get(concept.id, 0)),
        )
    console.print(table)
    history = Table(title="Imported versions")
    for column in ("#", "kind", "file", "sha256", "imported", "concepts", "aliases"):
        history.add_column(column)
    for v in listing.versions:
        history.add_row(
            str(v.id),
            v.kind,
            v.path,
            v.sha256[:12],
            v.imported_at,
            str(v.n_concepts),
            str(v.n_aliases),
        )
    console.print(history)
    return 0


def cmd_concepts_suggest(args: argparse.Namespace, console: Console) -> int:
    """List frequent unlinked terms with examples and their nearest concepts."""
    with open_workspace(args) as ws:
        found = suggest_terms(ws, min_count=args.min_count)
    if not found.terms:
        console.print(
            f"No unlinked term occurs often enough (at least {found.min_count} times); "
            "nothing to suggest."
        )
        return 0
    table = Table(title="Unlinked terms (accept one with `traits concepts accept TERM ID`)")
    for column in ("term", "count", "nearest concepts (linker probability)", "example"):
        table.add_column(column, overflow="fold")
    for item in found.terms[: args.limit]:
        examples = item.examples or ("",)
        table.add_row(item.term, str(item.count), _nearest(item, found.names), str(examples[0]))
    console.print(table)
    return 0


def _nearest(item: TermSuggestion, names: Mapping[str, str]) -> str:
    """Return the linker's nearest concepts with their probability: one scale.

    Concepts whose aliases are used alike (word vectors) and not already listed follow,
    without a figure, since a cosine is not a probability.
    """
    shown = [f"{names.get(c, '')} ({c}) {p:.2f}" for c, p in item.nearest[:3]]
    listed = {c for c, _ in item.nearest[:3]}
    alike = [f"{names.get(c, '')} ({c})" for c, _ in item.nearest_by_vectors[:3] if c not in listed]
    if alike:
        shown.append("used alike: " + ", ".join(alike))
    return ", ".join(shown)


def cmd_concepts_accept(args: argparse.Namespace, console: Console) -> int:
    """Add a term as an annotator alias of a concept."""
    with open_workspace(args) as ws:
        done = accept_alias(ws, args.term, args.concept, lang=args.lang, annotator=args.annotator)
    console.print(
        f"Added {done.term!r} ({done.lang}) as an alias of {done.concept}."
        if done.added
        else f"{done.term!r} ({done.lang}) is already an alias of {done.concept}."
    )
    return 0


def cmd_concepts_export(args: argparse.Namespace, console: Console) -> int:
    """Write the concept list with accepted aliases for curators."""
    with open_workspace(args) as ws:
        path = export_concepts(ws, Path(args.out) if args.out else None)
    print_written(console, args, path)
    console.print(f"Wrote {path}; aliases accepted by annotators are in 'accepted_aliases'.")
    return 0


def register(sub: Subcommands) -> None:
    """Add ``concepts`` and its actions to the command's subparsers."""
    concepts = sub.add_parser("concepts", help="the trait concept list").add_subparsers(
        dest="concepts_command", required=True, metavar="ACTION"
    )
    p = concepts.add_parser("import", help="import a concept list (CSV or XLSX)")
    p.add_argument("file")
    p.add_argument(
        "--varieties",
        dest="kind",
        action="store_const",
        const="variety",
        default="trait",
        help="the file is a variety list",
    )
    p.set_defaults(handler=cmd_concepts_import)
    p = concepts.add_parser("list", help="list concepts and imported versions")
    p.add_argument(
        "--varieties", dest="kind", action="store_const", const="variety", default="trait"
    )
    p.set_defaults(handler=cmd_concepts_list)

    p = concepts.add_parser("suggest", help="frequent unlinked terms and their nearest concepts")
    p.add_argument(
        "--min-count",
        type=int,
        help=f"fewest mentions of a term (default: {MIN_COUNT_PERCENT}%% of the respondents, "
        "at least 1)",
    )
    p.add_argument("--limit", type=int, default=30)
    p.set_defaults(handler=cmd_concepts_suggest)
    p = concepts.add_parser("accept", help="add a term as an alias of a concept")
    p.add_argument("term")
    p.add_argument("concept")
    p.add_argument("--lang", help="language of the term (default: the workspace's)")
    p.add_argument("--annotator", default="curator")
    p.set_defaults(handler=cmd_concepts_accept)
    p = concepts.add_parser("export", help="the concept list with accepted aliases, for curators")
    p.add_argument("--out", help="output CSV (default: exports/concepts_with_accepted_aliases.csv)")
    p.set_defaults(handler=cmd_concepts_export)
