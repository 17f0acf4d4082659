"""The ``traits`` command line: parse options, call one library function, print the result.

Every failure meant for a user is a :class:`~extractor.errors.TraitsError`; it is
caught once, in :func:`main`, and printed as one sentence without a traceback.
"""

from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

from rich.console import Console
from rich.table import Table

from extractor import __version__, progress
from extractor.errors import TraitsError
from extractor.workspace import store
from extractor.workspace.folder import Workspace, init_workspace

CAUTION = (
    "Automatic extraction makes mistakes: have a person review the mentions before the "
    "results inform any decision."
)

Handler = Callable[[argparse.Namespace, Console], int]


def _workspace(args: argparse.Namespace) -> Workspace:
    return Workspace(Path(args.workspace))


# --------------------------------------------------------------------------- init / add / status


def cmd_init(args: argparse.Namespace, console: Console) -> int:
    """Create a workspace folder."""
    root = init_workspace(Path(args.dir))
    console.print(
        f"Workspace ready in [bold]{root}[/]: traits.toml, traits.sqlite, models/, exports/."
    )
    console.print("Next: [bold]traits add FILE...[/] and [bold]traits concepts import FILE[/].")
    return 0


def cmd_add(args: argparse.Namespace, console: Console) -> int:
    """Add interview files."""
    from extractor.ingest.intake import add_files

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
    with _workspace(args) as ws:
        reports = add_files(
            ws, [Path(p) for p in args.files], sheet=args.sheet, mapping=mapping or None
        )
    table = Table(title="Interview files")
    for column in ("file", "status", "layout", "respondents", "answers", "sentences"):
        table.add_column(
            column, justify="right" if column in ("respondents", "answers", "sentences") else "left"
        )
    for report in reports:
        table.add_row(
            report["path"],
            report["status"],
            report.get("layout", ""),
            *(str(report.get(k, "")) for k in ("respondents", "answers", "sentences")),
        )
    console.print(table)
    for report in reports:
        for warning in report["warnings"]:
            console.print(f"[yellow]warning:[/] {warning}")
    return 0


def cmd_status(args: argparse.Namespace, console: Console) -> int:
    """Print the workspace's counts."""
    with _workspace(args) as ws:
        counts = store.counts(ws.conn)
    if args.json:
        console.file.write(json.dumps(counts, sort_keys=True) + "\n")
        return 0
    table = Table(title=f"Workspace {Path(args.workspace).resolve()}")
    table.add_column("what")
    table.add_column("count", justify="right")
    for key, value in counts.items():
        if key in ("languages", "language_tags"):
            value = ", ".join(f"{lang} {n}" for lang, n in value.items()) or "-"
        table.add_row(key, str(value))
    console.print(table)
    return 0


# --------------------------------------------------------------------------- concepts


def cmd_concepts_import(args: argparse.Namespace, console: Console) -> int:
    """Import a concept or variety list."""
    from extractor.ingest.intake import import_concepts

    with _workspace(args) as ws:
        report = import_concepts(ws, Path(args.file), kind=args.kind)
    for warning in report["warnings"]:
        console.print(f"[yellow]warning:[/] {warning}")
    noun = "varieties" if args.kind == "variety" else "concepts"
    if report["status"] == "unchanged":
        console.print(f"{report['path']} is already the current list; nothing to import.")
    else:
        console.print(
            f"Imported {report['concepts']} {noun} with {report['aliases']} aliases "
            f"from {report['path']}."
        )
    return 0


def cmd_concepts_list(args: argparse.Namespace, console: Console) -> int:
    """List concepts and the imported list versions."""
    with _workspace(args) as ws:
        versions = store.concept_versions(ws.conn)
        found = store.concepts(ws.conn, args.kind)
        alias_rows = store.aliases(ws.conn, args.kind)
    per_concept: dict[str, int] = {}
    for alias in alias_rows:
        per_concept[alias["concept_id"]] = per_concept.get(alias["concept_id"], 0) + 1
    table = Table(title="Concepts" if args.kind == "trait" else "Varieties")
    for column in ("id", "labels", "parent", "aliases"):
        table.add_column(column)
    for concept in found:
        labels = "; ".join(f"{lang}: {text}" for lang, text in concept["labels"].items())
        table.add_row(
            concept["id"], labels, concept["parent"] or "", str(per_concept.get(concept["id"], 0))
        )
    console.print(table)
    history = Table(title="Imported versions")
    for column in ("#", "kind", "file", "sha256", "imported", "concepts", "aliases"):
        history.add_column(column)
    for v in versions:
        history.add_row(
            str(v["id"]),
            v["kind"],
            v["path"],
            v["sha256"][:12],
            v["imported_at"],
            str(v["n_concepts"]),
            str(v["n_aliases"]),
        )
    console.print(history)
    return 0


# --------------------------------------------------------------------------- parser


def build_parser() -> argparse.ArgumentParser:
    """Return the argument parser of the ``traits`` command."""
    parser = argparse.ArgumentParser(
        prog="traits",
        description="Extract preferred, disliked and wanted crop traits from interview answers.",
    )
    parser.add_argument("--version", action="version", version=f"trait-extractor {__version__}")
    parser.add_argument("-w", "--workspace", default=".", help="workspace folder (default: .)")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    p = sub.add_parser("init", help="create a workspace folder")
    p.add_argument("dir", nargs="?", default=".")
    p.set_defaults(handler=cmd_init)

    p = sub.add_parser("add", help="add interview files (.xlsx .csv .tsv .txt .docx)")
    p.add_argument("files", nargs="+")
    p.add_argument("--sheet", help="read only this sheet of a workbook")
    p.add_argument("--respondent-column")
    p.add_argument("--question-column")
    p.add_argument("--answer-column")
    p.add_argument("--language-column")
    p.add_argument("--variety-column")
    p.set_defaults(handler=cmd_add)

    p = sub.add_parser("status", help="counts of what the workspace holds")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(handler=cmd_status)

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

    for register in _EXTRA_COMMANDS:
        register(sub, concepts)
    return parser


_EXTRA_COMMANDS: list[Callable[[Any, Any], None]] = []


# --------------------------------------------------------------------------- models


def _metric_summary(metrics: dict[str, Any]) -> str:
    """Return the headline figures of a version's metrics, e.g. ``span F1 0.71 (cv)``."""
    parts = []
    for key, tag in (("cross_validation", "cv"), ("evaluation_sample", "eval")):
        found = metrics.get(key) or {}
        span = found.get("span_f1") if isinstance(found, dict) else None
        if isinstance(span, dict):
            span = span.get("mean")
        if isinstance(span, (int, float)):
            parts.append(f"span F1 {span:.2f} ({tag})")
    return "; ".join(parts) or "not measured"


def cmd_train(args: argparse.Namespace, console: Console) -> int:
    """Train a new model version."""
    from extractor.jobs.pipeline import tag, train

    with _workspace(args) as ws:
        report = train(ws, cross_validate=not args.no_cv)
        tagged = tag(ws, report["models"], report["version"])
    for note in report["notes"]:
        console.print(f"[yellow]note:[/] {note}")
    counts = report["counts"]
    console.print(
        f"Model version [bold]{report['version']}[/] trained on {counts['gold_sentences']} "
        f"labeled and {counts['silver_sentences']} dictionary-labeled sentences; "
        f"{_metric_summary(report['metrics'])}; it found {tagged['mentions']} trait mentions "
        f"({tagged['unlinked']} not linked to a concept)."
    )
    return 0


def cmd_models(args: argparse.Namespace, console: Console) -> int:
    """List model versions with their metrics."""
    with _workspace(args) as ws:
        found = store.models(ws.conn)
    if not found:
        console.print("No model versions yet; run `traits train` or `traits run`.")
        return 0
    table = Table(title="Model versions")
    for column in ("version", "trained", "labeled", "silver", "quality"):
        table.add_column(column)
    for model in found:
        counts = model["meta"].get("counts", {})
        table.add_row(
            model["version"],
            model["created_at"],
            str(counts.get("gold_sentences", "")),
            str(counts.get("silver_sentences", "")),
            _metric_summary(model["metrics"]),
        )
    console.print(table)
    return 0


def cmd_run(args: argparse.Namespace, console: Console) -> int:
    """Run the whole job in the workspace (the demo in the repository root)."""
    from extractor.jobs.pipeline import run
    from extractor.workspace.folder import is_workspace

    root = Path(args.workspace)
    if not is_workspace(root):
        if not (root / "sample_interviews").is_dir() and not (root / "interviews").is_dir():
            raise TraitsError(
                f"{root.resolve()} is not a workspace; run `traits init` there first, or run "
                "`traits run` in a folder holding interviews/."
            )
        init_workspace(root)
    with _workspace(args) as ws:
        report = run(ws)
    _print_run(report, console)
    return 0


def _print_run(report: dict[str, Any], console: Console) -> None:
    new = report["new"]
    if new["respondents"] or new["sentences"]:
        languages = ", ".join(new["languages"]) or "none"
        console.print(
            f"New since the last run: {new['respondents']} respondents, {new['sentences']} "
            f"sentences; new languages: {languages}."
        )
    else:
        console.print("No new interviews since the last run.")
    for item in (report["concepts"], report["varieties"]):
        for warning in (item or {}).get("warnings", []):
            console.print(f"[yellow]warning:[/] {warning}")
    for note in report["train"]["notes"]:
        console.print(f"[yellow]note:[/] {note}")
    tagged = report["tag"]
    counts = report["counts"]
    table = Table(title="trait-extractor run")
    table.add_column("what")
    table.add_column("value", justify="right")
    table.add_row("respondents", str(counts["respondents"]))
    table.add_row("sentences", str(counts["sentences"]))
    table.add_row("languages", ", ".join(counts["languages"]))
    table.add_row("concepts", str(counts["concepts"]))
    table.add_row("sentences labeled by a person", str(counts["labels"]))
    table.add_row("model version", report["train"]["version"])
    table.add_row("quality", _metric_summary(report["train"]["metrics"]))
    previous = report["previous_version"]
    if previous is not None:
        table.add_row(
            "previous version", f"{previous['version']}: {_metric_summary(previous['metrics'])}"
        )
    table.add_row("trait mentions found", str(tagged["mentions"]))
    table.add_row("mentions not linked to a concept", str(tagged["unlinked"]))
    table.add_row("workbook", str(report["export"]["path"]))
    console.print(table)
    console.print(f"[italic]{CAUTION}[/]")


def cmd_export(args: argparse.Namespace, console: Console) -> int:
    """Write the workbook (or another format) for the newest model version."""
    from extractor.jobs.pipeline import ensure_tagged
    from extractor.report.results import export_workbook

    with _workspace(args) as ws:
        version = ensure_tagged(ws, args.version)
        if args.format == "xlsx":
            report = export_workbook(
                ws,
                version,
                out=Path(args.out) if args.out else None,
                pseudonymise=args.pseudonymise,
                min_confidence=args.min_confidence,
                group_by=args.group_by.split(",") if args.group_by else None,
                names_file=args.names_file,
            )
        else:
            from extractor.report.results import export_other

            report = export_other(
                ws,
                version,
                args.format,
                out=Path(args.out) if args.out else None,
                pseudonymise=args.pseudonymise,
                min_confidence=args.min_confidence,
                names_file=args.names_file,
            )
    console.print(f"Wrote {report['path']} ({report['mentions']} mentions).")
    if report.get("chart"):
        console.print(f"Chart: {report['chart']}")
    console.print(f"[italic]{CAUTION}[/]")
    return 0


def _register_model_commands(sub: Any, concepts: Any) -> None:
    p = sub.add_parser("train", help="train a new model version")
    p.add_argument("--no-cv", action="store_true", help="skip cross-validation")
    p.set_defaults(handler=cmd_train)
    p = sub.add_parser("models", help="list model versions and their measured quality")
    p.set_defaults(handler=cmd_models)
    p = sub.add_parser("run", help="the whole job: add new interviews, train, tag, export")
    p.set_defaults(handler=cmd_run)
    p = sub.add_parser("export", help="write the preferred-traits workbook or another format")
    p.add_argument("--out", help="output file (default: exports/preferred_traits.xlsx)")
    p.add_argument("--format", choices=("xlsx", "csv", "jsonl", "conll", "jsonld"), default="xlsx")
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
    p.add_argument("--version", help="model version (default: the newest)")
    p.set_defaults(handler=cmd_export)


_EXTRA_COMMANDS.append(_register_model_commands)


# --------------------------------------------------------------------------- labels


def cmd_label(args: argparse.Namespace, console: Console) -> int:
    """Label the most informative sentences in the terminal."""
    from extractor.jobs.pipeline import label

    with _workspace(args) as ws:
        summary = label(
            ws,
            annotator=args.annotator,
            batch_size=args.batch,
            strategy=args.strategy,
            evaluation=args.evaluation,
            console=console,
        )
    console.print(
        f"Saved {summary['labeled']} labels this session ({summary['total_labels']} in all). "
        "Run `traits train` (or `traits run`) to build a model version from them."
    )
    return 0


def cmd_import_labels(args: argparse.Namespace, console: Console) -> int:
    """Import gold labels from JSON Lines or CoNLL IOB2 columns."""
    from extractor.ingest.labels import import_labels, read_labels

    path = Path(args.file)
    with _workspace(args) as ws:
        default_lang = ws.settings["workspace"]["default_language"]
        records = read_labels(path, default_lang=default_lang)
        counts = import_labels(
            ws.conn, records, annotator=args.annotator, default_lang=default_lang, source=path.name
        )
    console.print(
        f"Imported {counts['labels']} labels ({counts['spans']} spans) from {path.name}: "
        f"{counts['matched']} matched stored sentences, {counts['added_sentences']} were added."
    )
    return 0


def cmd_evaluate(args: argparse.Namespace, console: Console) -> int:
    """Cross-validate on the labeled sentences and score the evaluation sample."""
    from extractor.jobs.pipeline import evaluate_workspace

    with _workspace(args) as ws:
        results = evaluate_workspace(ws, k=args.folds)
    from extractor.models.metrics import format_tables

    for title, part in (
        ("cross-validation", results.get("cross_validation")),
        ("evaluation sample", results.get("evaluation_sample")),
    ):
        if not part:
            console.print(f"No {title} figures: {results.get('notes', {}).get(title, '')}")
            continue
        console.rule(title)
        for table in format_tables(part):
            console.print(table)
    if results.get("notes", {}).get("stale version"):
        console.print(f"[bold]Note[/bold]: {results['notes']['stale version']}")
    if results.get("version"):
        console.print(f"Stored with model version {results['version']}.")
    return 0


def _budgets(text: str) -> list[int]:
    """Parse ``--budgets``: comma-separated whole numbers, 0 or more."""
    try:
        values = [int(part) for part in text.split(",") if part.strip()]
    except ValueError:
        values = []
    if not values or min(values) < 0:
        raise argparse.ArgumentTypeError(
            f"budgets must be whole numbers separated by commas, like 0,50,100; got {text!r}"
        )
    return values


def cmd_simulate(args: argparse.Namespace, console: Console) -> int:
    """Learning curves with a simulated annotator answering from gold labels."""
    import json as _json

    from extractor.ingest.concepts import load_concept_list
    from extractor.ingest.labels import read_labels
    from extractor.loop.simulate import curve_table, paired_gain, plot, simulate

    pool = read_labels(Path(args.pool), default_lang=args.lang)
    test = read_labels(Path(args.test), default_lang=args.lang)
    aliases = []
    if args.concepts:
        loaded = load_concept_list(Path(args.concepts), default_lang=args.lang)
        aliases = [(a["concept_id"], a["text"], a["lang"]) for a in loaded.aliases]
    results = simulate(
        pool,
        test,
        aliases,
        strategies=args.strategies.split(","),
        budgets=args.budgets,
        repeats=args.repeats,
        seed=args.seed,
        batch_size=args.batch,
        jobs=args.jobs,
        model=args.model,
        subpool=args.subpool or None,
    )
    Path(args.out).write_text(_json.dumps(results, indent=1), encoding="utf-8")
    table = Table(title="Span F1 by strategy and budget (mean over repeats)")
    rows = curve_table(results)
    for column in rows[0] if rows else ():
        table.add_column(str(column))
    for row in rows:
        table.add_row(*(f"{v:.3f}" if isinstance(v, float) else str(v) for v in row.values()))
    console.print(table)
    gains = paired_gain(results)
    if gains:
        table = Table(title="Span F1 gain over random, paired by repeat (same seed sentences)")
        for column in ("strategy", "budget", "repeats", "gain (points)", "sd", "wins"):
            table.add_column(column)
        for row in gains:
            table.add_row(
                row["strategy"],
                str(row["budget"]),
                str(row["n"]),
                f"{100 * row['gain']:+.1f}",
                f"{100 * row['sd']:.1f}",
                f"{row['wins']}/{row['n']}",
            )
        console.print(table)
    if args.plot:
        plot(results, Path(args.plot))
        console.print(f"Plot: {args.plot}")
    console.print(f"Results: {args.out}")
    return 0


# --------------------------------------------------------------------------- concept curation


def cmd_concepts_suggest(args: argparse.Namespace, console: Console) -> int:
    """List frequent unlinked terms with examples and their nearest concepts."""
    from extractor.jobs.pipeline import suggest_terms

    with _workspace(args) as ws:
        found = suggest_terms(ws, min_count=args.min_count)
        default = ws.settings["workspace"]["default_language"]
        names = {
            c["id"]: c["labels"].get(default) or next(iter(c["labels"].values()), "")
            for c in store.concepts(ws.conn)
        }
    if not found:
        console.print("No unlinked term occurs often enough; nothing to suggest.")
        return 0
    table = Table(title="Unlinked terms (accept one with `traits concepts accept TERM ID`)")
    for column in ("term", "count", "nearest concepts", "nearest by word use", "example"):
        table.add_column(column, overflow="fold")
    for item in found[: args.limit]:
        nearest = ", ".join(
            f"{names.get(c, '')} ({c}) {p:.2f}" for c, p in item.get("nearest", [])[:3]
        )
        similar = ", ".join(
            f"{names.get(c, '')} ({c}) {p:.2f}" for c, p in item.get("nearest_by_vectors", [])[:3]
        )
        examples = item.get("examples") or [""]
        table.add_row(item["term"], str(item["count"]), nearest, similar, str(examples[0]))
    console.print(table)
    return 0


def cmd_concepts_accept(args: argparse.Namespace, console: Console) -> int:
    """Add a term as an annotator alias of a concept."""
    with _workspace(args) as ws:
        lang = args.lang or ws.settings["workspace"]["default_language"]
        added = store.add_alias(ws.conn, args.concept, args.term, lang, args.annotator)
    console.print(
        f"Added {args.term!r} ({lang}) as an alias of {args.concept}."
        if added
        else f"{args.term!r} ({lang}) is already an alias of {args.concept}."
    )
    return 0


def cmd_concepts_export(args: argparse.Namespace, console: Console) -> int:
    """Write the concept list with accepted aliases for curators."""
    from extractor.jobs.pipeline import export_concepts

    with _workspace(args) as ws:
        path = export_concepts(ws, Path(args.out) if args.out else None)
    console.print(f"Wrote {path}; aliases accepted by annotators are in 'accepted_aliases'.")
    return 0


def _register_label_commands(sub: Any, concepts: Any) -> None:
    p = sub.add_parser("label", help="label the most informative sentences in the terminal")
    p.add_argument("--annotator", required=True, help="your name, stored with every label")
    p.add_argument("--batch", type=int, help="sentences chosen together (default from settings)")
    p.add_argument("--strategy", help="query strategy (default from settings)")
    p.add_argument(
        "--evaluation",
        action="store_true",
        help="label sentences of the random evaluation sample (for honest "
        "quality figures) instead of the most informative ones",
    )
    p.set_defaults(handler=cmd_label)
    p = sub.add_parser("import-labels", help="import labels (gold JSON Lines or CoNLL IOB2)")
    p.add_argument("file")
    p.add_argument("--annotator", default="import", help="who the labels are attributed to")
    p.set_defaults(handler=cmd_import_labels)
    p = sub.add_parser("evaluate", help="cross-validated quality and the evaluation sample")
    p.add_argument("--folds", type=int, default=5)
    p.set_defaults(handler=cmd_evaluate)
    p = sub.add_parser("simulate", help="learning curves with a simulated annotator")
    p.add_argument("--pool", required=True, help="gold labels the annotator answers from")
    p.add_argument("--test", required=True, help="gold labels to score on")
    p.add_argument("--concepts", help="concept list (CSV or XLSX)")
    p.add_argument("--strategies", default="default,random")
    p.add_argument(
        "--budgets",
        default="0,50,100,200",
        type=_budgets,
        help="numbers of labeled sentences to score at, comma-separated",
    )
    p.add_argument("--repeats", type=int, default=3)
    p.add_argument("--seed", type=int, default=0)
    p.add_argument("--batch", type=int, default=5, help="sentences queried together")
    p.add_argument("--jobs", type=int, default=1, help="runs in parallel (cores)")
    p.add_argument(
        "--model",
        choices=("traits", "tagger"),
        default="traits",
        help="retrain every model (traits) or the tagger alone (faster)",
    )
    p.add_argument(
        "--subpool",
        type=int,
        default=500,
        help="after each retrain, rank a random sub-pool of this many unlabeled "
        "sentences, as `traits label` does (default 500; 0 = the whole pool)",
    )
    p.add_argument("--lang", default="en", help="language of records that name none")
    p.add_argument("--out", default="results.json")
    p.add_argument("--plot", help="PNG of F1 against labeled sentences and tokens")
    p.set_defaults(handler=cmd_simulate)

    p = concepts.add_parser("suggest", help="frequent unlinked terms and their nearest concepts")
    p.add_argument("--min-count", type=int, default=2)
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


_EXTRA_COMMANDS.append(_register_label_commands)


def main(argv: Sequence[str] | None = None, *, console: Console | None = None) -> int:
    """Run the ``traits`` command; return its exit code."""
    console = console or Console()
    errors = Console(stderr=True) if console.file is sys.stdout else console
    args = build_parser().parse_args(argv)
    progress.enable(console if console.is_terminal else None)
    try:
        return int(args.handler(args, console))
    except TraitsError as exc:
        errors.print(f"[bold red]error:[/] {exc}", highlight=False, soft_wrap=True)
        return 1
    except OSError as exc:
        # A file the command was told to read or write (e.g. --out in a missing folder).
        where = exc.filename or "a file"
        errors.print(
            f"[bold red]error:[/] cannot use {where}: {exc.strerror or exc}; check the path "
            "and its permissions.",
            highlight=False,
            soft_wrap=True,
        )
        return 1
    except KeyboardInterrupt:
        errors.print("Interrupted; everything confirmed so far is saved.")
        return 130
    finally:
        progress.enable(None)
