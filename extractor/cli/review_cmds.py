"""Review in a spreadsheet: `traits review export`, `traits review import`, `traits agreement`."""

from __future__ import annotations

import argparse
from pathlib import Path

from rich.console import Console
from rich.table import Table

from extractor.cli.common import Subcommands, counted, open_workspace, print_json, print_written
from extractor.jobs.agreement import workspace_agreement
from extractor.jobs.review import ReviewSelection, export_review, parse_where
from extractor.jobs.review_import import import_review
from extractor.models.agreement import AgreementReport, Coefficient
from extractor.report.caution import REVIEW_CAUTION
from extractor.report.review_quality import ReviewQuality


def cmd_review_export(args: argparse.Namespace, console: Console) -> int:
    """Write a review workbook of the chosen rows."""
    selection = ReviewSelection(
        sample=args.sample,
        seed=args.seed,
        low_confidence=args.low_confidence,
        concept=args.concept,
        where=tuple(parse_where(w) for w in args.where or ()),
    )
    with open_workspace(args) as ws:
        result = export_review(
            ws, selection, version=args.model_version, out=Path(args.out) if args.out else None
        )
    print_written(console, args, result.path)
    console.print(
        f"Wrote {result.path}: {counted(result.rows, 'row')}, "
        f"{counted(result.sentences, 'sentence')} of "
        f"{counted(result.respondents, 'respondent')} ({selection.describe()}). "
        "Fill in the coloured "
        "columns, then `traits review import FILE --reviewer NAME`."
    )
    console.print(f"[italic]{REVIEW_CAUTION}[/]")
    return 0


def quality_table(quality: ReviewQuality, version: str | None, by_concept: bool) -> Table:
    """Return the quality measured on a reviewed sample, overall (and by concept)."""
    table = Table(title=f"Model {version}: measured on {quality.measured_on}")
    table.add_column("what")
    table.add_column("precision")
    table.add_column("recall")
    for name, p, r in (
        ("mentions (words)", quality.mention_precision, quality.mention_recall),
        ("mentions (words and concept)", quality.concept_precision, quality.concept_recall),
        ("mentions (words, concept and stance)", quality.full_precision, None),
        ("respondent table", quality.table_precision, quality.table_recall),
    ):
        # A missed mention has no predicted stance to be right or wrong: no stance recall.
        table.add_row(name, p.text(), r.text() if r is not None else "–")
    for c in quality.by_concept if by_concept else ():
        table.add_row(f"concept {c.concept}", c.precision.text(), c.recall.text())
    return table


def cmd_review_import(args: argparse.Namespace, console: Console) -> int:
    """Store every reviewed sentence of a review workbook as a label."""
    with open_workspace(args) as ws:
        result = import_review(ws, Path(args.file), reviewer=args.reviewer, skip_bad=args.skip_bad)
    if args.json:
        print_json(console, result)
        return 0
    for line in result.skipped:
        console.print(f"[yellow]left out:[/] {line}", soft_wrap=True)
    console.print(
        f"{counted(result.reviewed, 'reviewed sentence')} in {result.path.name}: "
        f"{counted(result.stored, 'label')} stored for {result.reviewer}, "
        f"{result.unchanged} unchanged since an earlier import."
    )
    if result.quality is not None:
        console.print(quality_table(result.quality, result.model_version, args.verbose))
        if result.quality.caution:
            console.print(f"[yellow]{result.quality.caution}[/]")
        if not args.verbose:
            console.print("By concept: add -v.")
    if result.stored:
        console.print("Run `traits train` (or `traits run`) to build a model version from them.")
    return 0


def _coef(c: Coefficient) -> str:
    return ("undefined" if c.value is None else f"{c.value:.3f}") + f" ({c.items} items)"


def agreement_tables(report: AgreementReport) -> list[Table]:
    """Return the agreement figures: overall, per pair and per concept."""
    overall = Table(title=f"Agreement on {report.sentences} sentences labeled by two or more")
    overall.add_column("measure")
    overall.add_column("value (items)")
    overall.add_row("Krippendorff's alpha, concept", _coef(report.concept_alpha))
    overall.add_row("Krippendorff's alpha, stance", _coef(report.stance_alpha))
    pairs = Table(title="Pairs of annotators")
    for name in (
        "pair",
        "sentences",
        "kappa concept",
        "kappa stance",
        "span F1",
        "span+concept F1",
    ):
        pairs.add_column(name)
    for p in report.pairs:
        pairs.add_row(
            f"{p.first} / {p.second}",
            str(p.sentences),
            _coef(p.concept_kappa),
            _coef(p.stance_kappa),
            f"{p.span.f1:.3f} ({p.span.tp * 2 + p.span.fp + p.span.fn} spans)",
            f"{p.span_with_concept.f1:.3f}",
        )
    concepts = Table(title="Span F1 per concept (pooled over pairs)")
    for name in ("concept", "span F1", "items"):
        concepts.add_column(name)
    for c in report.by_concept:
        concepts.add_row(c.concept, f"{c.span.f1:.3f}", str(c.items))
    return [overall, pairs, concepts]


def cmd_agreement(args: argparse.Namespace, console: Console) -> int:
    """Agreement between annotators, and their disagreements as a review workbook."""
    annotators = args.annotators.split(",") if args.annotators else None
    with open_workspace(args) as ws:
        result = workspace_agreement(
            ws, annotators=annotators, out=Path(args.out) if args.out else None
        )
    if args.json:
        print_json(console, result)
        return 0
    for table in agreement_tables(result.report):
        console.print(table)
    if result.disagreements is not None:
        print_written(console, args, result.disagreements)
        console.print(
            f"{len(result.report.disagreements)} sentences were labeled differently: "
            f"{result.disagreements} lists them for a third person to settle "
            "(`traits review import FILE --reviewer NAME`)."
        )
    return 0


def register(sub: Subcommands) -> None:
    """Add ``review`` (export, import) and ``agreement`` to the command's subparsers."""
    review = sub.add_parser("review", help="check mentions in a spreadsheet").add_subparsers(
        dest="review_command", required=True, metavar="ACTION"
    )
    p = review.add_parser("export", help="write a review workbook with drop-down columns")
    p.add_argument("--sample", type=int, help="a random sample of N respondents (for quality)")
    p.add_argument("--seed", type=int, default=0, help="seed of the random sample (default 0)")
    p.add_argument(
        "--low-confidence",
        type=float,
        metavar="X",
        help="only sentences with a model mention below confidence X",
    )
    p.add_argument("--concept", metavar="ID", help="only sentences with a mention of this concept")
    p.add_argument(
        "--where",
        action="append",
        metavar="COLUMN=VALUE",
        help="only respondents whose column has this value (repeatable)",
    )
    p.add_argument("--model-version", help="model version whose mentions are shown")
    p.add_argument("--out", help="output file (default: exports/review.xlsx)")
    p.set_defaults(handler=cmd_review_export)
    p = review.add_parser("import", help="store the reviewed rows of a workbook as labels")
    p.add_argument("file")
    p.add_argument("--reviewer", required=True, help="who reviewed (labels are stored as theirs)")
    p.add_argument(
        "--skip-bad", action="store_true", help="import the other sentences when some rows are bad"
    )
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(handler=cmd_review_import)
    p = sub.add_parser("agreement", help="agreement between annotators, and their disagreements")
    p.add_argument("--annotators", help="comma-separated annotators to compare (default: all)")
    p.add_argument("--out", help="disagreements workbook (default: exports/disagreements.xlsx)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(handler=cmd_agreement)
