"""``traits concepts``: import, list, suggest, accept and export the concept list."""

from __future__ import annotations

import argparse
import dataclasses
from collections.abc import Mapping
from pathlib import Path

from rich.console import Console
from rich.markup import escape
from rich.table import Table
from rich.tree import Tree

from extractor.cli.common import (
    Subcommands,
    counted,
    open_workspace,
    print_notes,
    print_warnings,
    print_written,
)
from extractor.ingest.concept_changes import ConceptChanges
from extractor.ingest.intake import import_concepts
from extractor.jobs.curate import (
    MIN_COUNT_PERCENT,
    ConceptListing,
    TermSuggestions,
    accept_alias,
    export_concepts,
    list_concepts,
    suggest_terms,
)
from extractor.models.terms import TermSuggestion
from extractor.workspace import store
from extractor.workspace.folder import Workspace
from extractor.workspace.settings import ConceptListSettings

MAPPING_OPTIONS = {
    "id_column": "--id-column",
    "label_column": "--label-column",
    "synonyms_columns": "--synonyms-column",
    "lang_column": "--lang-column",
    "lang": "--lang",
    "parent_column": "--parent-column",
    "definition_column": "--definition-column",
    "split": "--split",
    "roots": "--root",
    "exclude": "--exclude",
}
"""Setting of ``[concept_list]`` -> the option of ``traits concepts import`` that overrides it."""


def _options(args: argparse.Namespace, ws: Workspace) -> ConceptListSettings:
    """Return traits.toml's ``[concept_list]`` (trait lists only) with the options given."""
    base = ws.settings.concept_list if args.kind == "trait" else ConceptListSettings()
    given = {name: getattr(args, name) for name in MAPPING_OPTIONS if getattr(args, name)}
    for name in ("synonyms_columns", "roots", "exclude"):
        if name in given:
            given[name] = tuple(given[name])
    return dataclasses.replace(base, **given)


def cmd_concepts_import(args: argparse.Namespace, console: Console) -> int:
    """Import a concept or variety list; show what it changes first."""
    with open_workspace(args) as ws:
        report = import_concepts(
            ws, Path(args.file), kind=args.kind, options=_options(args, ws), dry_run=args.dry_run
        )
    print_warnings(console, report.warnings)
    print_notes(console, report.notes)
    noun = "varieties" if args.kind == "variety" else "concepts"
    if report.status == "unchanged":
        console.print(f"{escape(report.path)} is already the current list; nothing to import.")
        return 0
    print_changes(console, report.changes)
    if report.status == "checked":
        console.print(
            f"Checked {report.concepts} {noun} with {report.aliases} aliases in "
            f"{escape(report.path)}; nothing was stored (--dry-run)."
        )
    else:
        console.print(
            f"Imported {report.concepts} {noun} with {report.aliases} aliases from "
            f"{escape(report.path)}."
        )
    return 0


def print_changes(console: Console, changes: ConceptChanges) -> None:
    """Print what a new list version changes: added, removed, renamed, synonyms, labels kept."""
    if changes.first or not changes.any:
        if not changes.first:
            console.print("The new version changes no concept, label or synonym.")
        return
    table = Table(title="Changes against the list in force")
    for column in ("change", "concept", "detail"):
        table.add_column(column, overflow="fold")
    for cid in changes.added:
        table.add_row("added", escape(cid), "")
    for cid in changes.removed:
        kept = changes.labels_kept.get(cid, 0)
        detail = f"{kept} labeled sentences point at it; their labels are kept" if kept else ""
        table.add_row("removed", escape(cid), detail)
    for r in changes.renamed:
        table.add_row(
            "renamed", escape(r.concept), escape(f"{r.lang}: {r.before!r} -> {r.after!r}")
        )
    for c in changes.synonyms:
        parts = [f"+ {t}" for t in c.added] + [f"- {t}" for t in c.removed]
        table.add_row("synonyms", escape(c.concept), escape("; ".join(parts)))
    console.print(table)


def cmd_concepts_list(args: argparse.Namespace, console: Console) -> int:
    """Show the concepts as a tree (with mention counts once a model has run) and the versions."""
    with open_workspace(args) as ws:
        listing = list_concepts(ws, args.kind)
    console.print(concept_tree(listing, "Concepts" if args.kind == "trait" else "Varieties"))
    history = Table(title="Imported versions")
    for column in ("#", "kind", "file", "sha256", "imported", "concepts", "aliases"):
        history.add_column(column)
    for v in listing.versions:
        history.add_row(
            str(v.id),
            v.kind,
            escape(v.path),
            v.sha256[:12],
            v.imported_at,
            str(v.n_concepts),
            str(v.n_aliases),
        )
    console.print(history)
    return 0


def concept_tree(listing: ConceptListing, title: str) -> Tree:
    """Return the hierarchy as a rich tree; a concept with two parents shows under both."""
    known = {c.id: c for c in listing.concepts}
    children: dict[str | None, list[str]] = {}
    for concept in listing.concepts:
        parents: list[str | None] = [p for p in concept.parents if p in known]
        for parent in parents or [None]:
            children.setdefault(parent, []).append(concept.id)
    heading = title
    if listing.mentions is not None:
        heading += f" (mentions and respondents: model {listing.model_version})"
    tree = Tree(escape(heading))
    stack = [(tree, cid) for cid in reversed(children.get(None, []))]
    while stack:
        branch, cid = stack.pop()
        node = branch.add(_concept_line(listing, known[cid]))
        stack += [(node, child) for child in reversed(children.get(cid, []))]
    return tree


def _concept_line(listing: ConceptListing, concept: store.StoredConcept) -> str:
    """Return one concept's line: ID, labels per language, alias count and mention counts."""
    labels = "; ".join(f"{lang}: {text}" for lang, text in concept.labels.items())
    line = f"[bold]{escape(concept.id)}[/] {escape(labels)}"
    aliases = listing.alias_counts.get(concept.id, 0)
    line += f" [dim]({counted(aliases, 'alias', 'aliases')})[/]"
    if listing.mentions is not None and listing.respondents is not None:
        n = listing.mentions.get(concept.id, 0)
        people = listing.respondents.get(concept.id, 0)
        counts = f"{counted(n, 'mention')}, {counted(people, 'respondent')}"
        line += f" [cyan]{counts}[/]" if n else " [dim]no mentions[/]"
    return line


def cmd_concepts_suggest(args: argparse.Namespace, console: Console) -> int:
    """List frequent unlinked terms, and candidate synonyms in the workspace's languages."""
    with open_workspace(args) as ws:
        found = suggest_terms(ws, min_count=args.min_count)
    if not found.terms:
        often = counted(found.min_count, "time")
        rest = (
            "candidate synonyms from the pretrained space follow."
            if found.synonyms
            else "nothing to suggest."
        )
        console.print(f"No unlinked term occurs at least {often}; {rest}")
    else:
        table = Table(title="Unlinked terms (accept one with `traits concepts accept TERM ID`)")
        for column in ("term", "count", "nearest concepts (linker probability)", "example"):
            table.add_column(column, overflow="fold")
        for item in found.terms[: args.limit]:
            examples = item.examples or ("",)
            table.add_row(item.term, str(item.count), _nearest(item, found.names), str(examples[0]))
        console.print(table)
    if found.synonyms:
        console.print(_synonym_table(found, args.limit))
    return 0


def _synonym_table(found: TermSuggestions, limit: int) -> Table:
    """Candidate synonyms: words of the answers near a concept in the pretrained space."""
    table = Table(
        title="Candidate synonyms from the pretrained multilingual space, not in the list "
        "(accept one with `traits concepts accept WORD ID --lang LANG`)"
    )
    for column in ("word", "lang", "concept", "nearest alias", "cosine", "count"):
        table.add_column(column, overflow="fold")
    for cand in found.synonyms[:limit]:
        name = found.names.get(cand.concept_id, "")
        table.add_row(
            cand.text,
            cand.lang,
            f"{name} ({cand.concept_id})",
            cand.nearest_alias,
            f"{cand.similarity:.2f}",
            str(cand.occurrences),
        )
    return table


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
    p = concepts.add_parser(
        "import", help="import a concept list (table, OBO or SKOS); shows what it changes"
    )
    p.add_argument("file", help="a table (.csv .tsv .xlsx .xls .ods), .obo, or SKOS (.ttl .rdf)")
    p.add_argument(
        "--varieties",
        dest="kind",
        action="store_const",
        const="variety",
        default="trait",
        help="the file is a variety list",
    )
    _add_mapping_options(p)
    p.add_argument(
        "--dry-run", action="store_true", help="show what the list changes, store nothing"
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


def _add_mapping_options(p: argparse.ArgumentParser) -> None:
    """Add the options naming a table's columns and the branch to import."""
    table = p.add_argument_group("columns of a trait table (also [concept_list] in traits.toml)")
    table.add_argument("--id-column", dest="id_column", metavar="C", help="concept IDs")
    table.add_argument("--label-column", dest="label_column", metavar="C", help="labels")
    table.add_argument(
        "--synonyms-column",
        dest="synonyms_columns",
        metavar="C",
        action="append",
        help="synonyms (repeat for several columns)",
    )
    lang = table.add_mutually_exclusive_group()
    lang.add_argument("--lang-column", dest="lang_column", metavar="C", help="language tags")
    lang.add_argument("--lang", metavar="TAG", help="the language of every row (BCP 47)")
    table.add_argument("--parent-column", dest="parent_column", metavar="C", help="parent IDs")
    table.add_argument(
        "--definition-column", dest="definition_column", metavar="C", help="definitions"
    )
    table.add_argument(
        "--split", metavar="SEP", help='separator inside a cell (default: "|" or ";")'
    )
    branch = p.add_argument_group("one branch of the hierarchy (any kind of list)")
    branch.add_argument(
        "--root",
        dest="roots",
        metavar="ID",
        action="append",
        help="import only this concept and its descendants (repeatable)",
    )
    branch.add_argument(
        "--exclude",
        metavar="ID",
        action="append",
        help="leave out this concept and its descendants (repeatable)",
    )
