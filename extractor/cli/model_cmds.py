"""Commands that build and use model versions: ``train``, ``models``, ``run``, ``export``."""

from __future__ import annotations

import argparse
from collections.abc import Sequence
from pathlib import Path

from rich.console import Console
from rich.table import Table

from extractor.cli.common import (
    Subcommands,
    counted,
    metric_summary,
    open_workspace,
    print_json,
    print_notes,
    print_phone_regions,
    print_warnings,
    print_written,
    spoken_list,
)
from extractor.cli.concept_cmds import print_changes
from extractor.cli.workspace_cmds import print_languages, print_unknown_questions, print_unlisted
from extractor.jobs.export import export
from extractor.jobs.run import RunReport, run_in, train_and_tag
from extractor.jobs.status import model_versions
from extractor.report.caution import REVIEW_CAUTION

_LABELS_WIN = (
    "In sentences you labeled, the workbook shows your labels instead of the model's mentions, "
    "so its counts can differ."
)


def cmd_train(args: argparse.Namespace, console: Console) -> int:
    """Train a new model version."""
    with open_workspace(args) as ws:
        done = train_and_tag(ws, cross_validate=not args.no_cv)
    report, tagged = done.train, done.tag
    print_notes(console, report.notes)
    console.print(
        f"Model version [bold]{report.version}[/] trained on {report.counts.gold_sentences} "
        f"labeled and {report.counts.silver_sentences} dictionary-labeled sentences; "
        f"{metric_summary(report.metrics)}; it found {tagged.mentions} trait mentions "
        f"({tagged.unlinked} not linked to a concept)."
        + (f" {_LABELS_WIN}" if report.counts.gold_sentences else "")
    )
    return 0


MODEL_FOLDERS_NOTE = (
    "Model versions (in models/) hold words from the interviews (features, word clusters, "
    "the linker's vocabulary): they are personal data like the interviews. Phone numbers, "
    "e-mails, respondent IDs and listed names are masked before training, but share a "
    "model version only as you would share the interviews."
)


def cmd_models(args: argparse.Namespace, console: Console) -> int:
    """List model versions with their metrics."""
    with open_workspace(args) as ws:
        found = model_versions(ws)
    if args.json:
        print_json(console, {"versions": [model._asdict() for model in found]})
        return 0
    if not found:
        console.print("No model versions yet; run `traits train` or `traits run`.")
        return 0
    table = Table(title="Model versions")
    columns = ["version", "trained", "labeled", "matched by concept list", "quality"]
    if args.verbose:
        columns += ["folder", "concept list"]
    for column in columns:
        table.add_column(column)
    for model in found:
        counts = model.meta.get("counts", {})
        row = [
            model.version,
            model.created_at,
            str(counts.get("gold_sentences", "")),
            str(counts.get("silver_sentences", "")),
            metric_summary(model.metrics),
        ]
        if args.verbose:
            concept_list = model.meta.get("concept_list") or {}
            row += [model.path, str(concept_list.get("path", "none"))]
        table.add_row(*row)
    console.print(table)
    console.print(MODEL_FOLDERS_NOTE)
    return 0


def cmd_run(args: argparse.Namespace, console: Console) -> int:
    """Run the whole job in the workspace (the demo in the repository root)."""
    report = run_in(Path(args.workspace), retrain=args.retrain)
    if args.json:
        print_json(console, report)
        return 0
    if args.verbose:
        _print_run_detail(report, console)
    _print_run(report, console)
    print_written(console, args, report.export.path)
    return 0


def _print_run_detail(report: RunReport, console: Console) -> None:
    """What ``-v`` adds: each interview file and list read, and what training learned from."""
    for item in report.files:
        counts = f"{item.answers or 0} new answers, {item.sentences or 0} new sentences"
        console.print(f"{item.path}: {item.status} ({counts})", soft_wrap=True)
    for listed in (report.concepts, report.varieties):
        if listed is not None:
            console.print(f"{listed.path}: {listed.status}", soft_wrap=True)
    learned = report.train.counts
    console.print(
        f"Model version {report.train.version} learned from {learned.gold_sentences} "
        f"labeled sentences ({learned.gold_spans} spans), {learned.silver_sentences} "
        f"sentences matched by the concept list and {learned.aliases} aliases."
    )


def _print_run(report: RunReport, console: Console) -> None:
    new = report.new
    if report.first_run:
        counts = report.counts
        console.print(
            f"First run: {counts.respondents} respondents, {counts.sentences} sentences; "
            f"languages: {', '.join(counts.languages) or 'none'}."
        )
    elif new.respondents or new.sentences:
        languages = ", ".join(new.languages) or "none"
        console.print(
            f"New since the last run: {new.respondents} respondents, {new.sentences} "
            f"sentences; new languages: {languages}."
        )
    else:
        console.print("No new interviews since the last run.")
    previous = report.previous_version
    if previous is not None:
        learned = report.train.counts.gold_sentences
        console.print(
            f"Model version {report.train.version} learned from "
            f"{counted(learned, 'labeled sentence')} ({previous.labeled} for "
            f"{previous.version})."
        )
    for path, kind, named in report.lists_in_interviews:
        what = "concept list" if kind == "trait" else "variety list"
        said = f"{path} is the workspace's {what}, so it is not read as interviews."
        if not named:  # imported by hand: a run reads changes only of the list traits.toml names
            key = "concepts" if kind == "trait" else "varieties"
            option = "" if kind == "trait" else " --varieties"
            said += (
                f" `traits run` imports changes only of the list traits.toml names ({key} "
                f"under [workspace]): import changes to this one with `traits concepts "
                f"import {path}{option}`, or name it there."
            )
        print_notes(console, [said])
    if report.intake is not None:  # what `traits add` says of new files
        for file_report in report.intake.files:
            print_warnings(console, file_report.warnings)
        # training's note says which languages have neither stance cues nor labels
        print_languages(console, report.intake.languages, report.train.stance_gaps)
        print_unlisted(console, report.intake.unlisted)
        print_unknown_questions(console, report.intake.unknown_questions)
    for item in (report.concepts, report.varieties):
        if item is not None:
            print_warnings(console, item.warnings)
            print_notes(console, item.notes)
            if item.status == "imported":
                print_changes(console, item.changes)  # what a changed list changed
    print_notes(console, report.train.notes)
    if not report.retrained:
        console.print(
            "Nothing changed since model version "
            f"[bold]{report.train.version}[/] (interviews, concept lists, labels and model "
            "settings are as it was trained on), so it is reused. Run "
            "[bold]traits run --retrain[/] to train a new version anyway."
        )
    console.print(_run_table(report))
    for tag, n in report.silent:
        print_notes(
            console,
            [
                f"No trait was linked to a concept in any of the {n} {tag} sentences: "
                f"nothing in the concept list matches them and no label has taught the "
                f"model {tag} yet. Label some of them (`traits label`), or add {tag} "
                "synonyms to the concept list."
            ],
        )
    print_ungrouped(console, report.export.ungrouped)
    console.print(f"[italic]{REVIEW_CAUTION}[/]")


def print_ungrouped(console: Console, ungrouped: Sequence[tuple[str, int]]) -> None:
    """Name the respondent columns the workbook does not compare groups by, and how to."""
    if not ungrouped:
        return
    said = spoken_list([f"{column} ({n} values)" for column, n in ungrouped])
    one = len(ungrouped) == 1
    names = ", ".join(f'"{column}"' for column, _ in ungrouped)
    print_notes(
        console,
        [
            f"{said} {'is' if one else 'are'} not compared between groups (the sheets show "
            f"{'its' if one else 'their'} values per respondent); to compare, add {names} "
            "to group_by under [export] in traits.toml, or name the columns to compare "
            "with `traits export --group-by`."
        ],
    )


def _run_table(report: RunReport) -> Table:
    counts = report.counts
    table = Table(title="trait-extractor run")
    table.add_column("what")
    table.add_column("value", justify="right")
    table.add_row("respondents", str(counts.respondents))
    table.add_row("sentences", str(counts.sentences))
    table.add_row("languages", ", ".join(counts.languages))
    table.add_row("concepts", str(counts.concepts))
    table.add_row("sentences labeled by a person", str(counts.labels))
    table.add_row("model version", report.train.version)
    table.add_row("quality", metric_summary(report.train.metrics))
    previous = report.previous_version
    if previous is not None:
        table.add_row("previous version", f"{previous.version}: {metric_summary(previous.metrics)}")
    table.add_row("trait mentions the model found", str(report.tag.mentions))
    table.add_row("of them not linked to a concept", str(report.tag.unlinked))
    table.add_row("workbook", str(report.export.path))
    return table


def cmd_export(args: argparse.Namespace, console: Console) -> int:
    """Write the workbook (or another format) for the newest model version."""
    with open_workspace(args) as ws:
        report = export(
            ws,
            args.format,
            version=args.model_version,
            out=Path(args.out) if args.out else None,
            pseudonymise=args.pseudonymise,
            min_confidence=args.min_confidence,
            group_by=args.group_by.split(",") if args.group_by else None,
            names_file=args.names_file,
            level=args.level,
        )
    if args.json:
        print_json(console, report)
        return 0
    print_written(console, args, report.path)
    what = {"conll": "labeled sentences", "labels": "labeled sentences"}.get(
        args.format, "respondents" if args.format == "indicators" else "mentions"
    )
    console.print(f"Wrote {report.path} ({report.mentions} {what}).", markup=False)
    if report.chart:
        console.print(f"Chart: {report.chart}")
    if report.charts:
        console.print(f"Charts (PNG and SVG): {report.charts}", markup=False)
    print_ungrouped(console, report.ungrouped)
    print_phone_regions(console, report.phone_regions)
    console.print(f"[italic]{REVIEW_CAUTION}[/]")
    return 0


def register(sub: Subcommands) -> None:
    """Add ``train``, ``models``, ``run`` and ``export`` to the command's subparsers."""
    p = sub.add_parser("train", help="train a new model version")
    p.add_argument("--no-cv", action="store_true", help="skip cross-validation")
    p.set_defaults(handler=cmd_train)
    p = sub.add_parser("models", help="list model versions and their measured quality")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(handler=cmd_models)
    p = sub.add_parser("run", help="the whole job: add new interviews, train, tag, export")
    p.add_argument(
        "--retrain",
        action="store_true",
        help="train a new model version even when nothing changed since the latest one",
    )
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(handler=cmd_run)
    p = sub.add_parser("export", help="write the preferred-traits workbook or another format")
    p.add_argument("--out", help="output file (default: exports/preferred_traits.xlsx)")
    p.add_argument(
        "--format",
        choices=("xlsx", "csv", "jsonl", "conll", "jsonld", "labels", "indicators"),
        default="xlsx",
    )
    p.add_argument(
        "--pseudonymise",
        action="store_true",
        help="replace respondent IDs by pseudonyms and screen quotes",
    )
    p.add_argument(
        "--min-confidence",
        type=float,
        default=None,
        help="drop predicted mentions below this tagger confidence",
    )
    p.add_argument("--group-by", help="comma-separated respondent columns to compare")
    p.add_argument("--names-file", help="text file of names to screen out of quotes")
    p.add_argument("--model-version", help="model version to export (default: the newest)")
    p.add_argument(
        "--level",
        type=int,
        metavar="N",
        help="show every table at level N of the concept list (1 = its top concepts)",
    )
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(handler=cmd_export)
