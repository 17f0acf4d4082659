"""Commands about labels: `label`, `import-labels`, `convert-labels`, `evaluate`, `simulate`."""

from __future__ import annotations

import argparse
from pathlib import Path

from rich.console import Console

from extractor.cli.common import Subcommands, open_workspace, print_json, print_written
from extractor.cli.screen import run_console
from extractor.cli.tables import curve_table, evaluation_tables, gain_table, sentence_line
from extractor.jobs.evaluate import evaluate_workspace
from extractor.jobs.label import convert_label_file, import_label_file, labeling_setup
from extractor.jobs.simulate import simulate_files


def cmd_label(args: argparse.Namespace, console: Console) -> int:
    """Label the most informative sentences in the terminal."""
    with open_workspace(args) as ws:
        setup = labeling_setup(
            ws,
            annotator=args.annotator,
            batch_size=args.batch,
            strategy=args.strategy,
            evaluation=args.evaluation,
            train_first=not args.keep_model,
        )
        notice = (
            f"Trained model {setup.version} first: "
            + (
                "1 label was"
                if setup.trained_labels == 1
                else f"{setup.trained_labels} labels were"
            )
            + f" newer than model {setup.trained_from}."
            if setup.trained_from
            else ""
        )
        summary = run_console(
            setup.conn,
            annotator=setup.annotator,
            batch_size=setup.batch_size,
            strategy=setup.strategy,
            model_provider=setup.predictor,
            retrain=setup.retrain,
            console=console,
            settings=setup.settings,
            quality=setup.quality,
            version=setup.version,
            newer_labels=setup.newer_labels,
            notice=notice,
            respondents=setup.respondents,
            questions=setup.questions,
        )
    if summary.labeled:
        console.print("Run `traits train` (or `traits run`) to build a model version from them.")
    return 0


def cmd_import_labels(args: argparse.Namespace, console: Console) -> int:
    """Import labels from the label format (JSON Lines) or CoNLL IOB2 columns."""
    path = Path(args.file)
    with open_workspace(args) as ws:
        counts = import_label_file(ws, path, annotator=args.annotator)
    console.print(
        f"Imported {counts.labels} labels ({counts.spans} spans, {counts.implicit} implicit "
        f"traits) from {path.name}: {counts.matched} matched stored sentences, "
        f"{counts.added_sentences} were added.",
        markup=False,
    )
    return 0


def cmd_convert_labels(args: argparse.Namespace, console: Console) -> int:
    """Write a label file of earlier versions in the label format."""
    written = convert_label_file(Path(args.old), Path(args.new))
    console.print(
        f"Wrote {written} labeled sentences to {args.new} in the label format.", markup=False
    )
    print_written(console, args, Path(args.new))
    return 0


def cmd_evaluate(args: argparse.Namespace, console: Console) -> int:
    """Cross-validate on the labeled sentences and score the evaluation sample."""
    with open_workspace(args) as ws:
        report = evaluate_workspace(ws, k=args.folds)
    if args.json:
        print_json(console, report)
        return 0
    for title, part in (
        ("cross-validation", report.cross_validation),
        ("evaluation sample", report.evaluation_sample),
    ):
        if not part:
            console.print(f"No {title} figures: {report.notes.get(title, '')}")
            continue
        console.rule(title)
        for table in evaluation_tables(part):
            console.print(table)
        sentence = getattr(part, "sentence", None)
        if sentence is not None:
            console.print(sentence_line(sentence), markup=False)
    if report.notes.get("stale version"):
        console.print(f"[bold]Note[/bold]: {report.notes['stale version']}")
    if report.version:
        console.print(f"Stored with model version {report.version}.")
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
    report = simulate_files(
        Path(args.pool),
        Path(args.test),
        out=Path(args.out),
        concepts=Path(args.concepts) if args.concepts else None,
        lang=args.lang,
        strategies=args.strategies.split(","),
        budgets=args.budgets,
        repeats=args.repeats,
        seed=args.seed,
        batch_size=args.batch,
        jobs=args.jobs,
        model=args.model,
        subpool=args.subpool or None,
        plot_to=Path(args.plot) if args.plot else None,
    )
    console.print(curve_table(report.curve))
    if report.gains:
        console.print(gain_table(report.gains))
    if args.plot:
        console.print(f"Plot: {args.plot}")
    console.print(f"Results: {args.out}")
    print_written(console, args, args.out)
    return 0


def register(sub: Subcommands) -> None:
    """Add ``label``, ``import-labels``, ``convert-labels``, ``evaluate`` and ``simulate``."""
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
    p.add_argument(
        "--keep-model",
        action="store_true",
        help="start at once with the newest saved model even when labels are newer than "
        "it (by default a new version learns them first); the screen says so",
    )
    p.set_defaults(handler=cmd_label)
    p = sub.add_parser("import-labels", help="import labels (label JSON Lines or CoNLL IOB2)")
    p.add_argument("file")
    p.add_argument("--annotator", default="import", help="who the labels are attributed to")
    p.set_defaults(handler=cmd_import_labels)
    p = sub.add_parser(
        "convert-labels", help="rewrite a label file of earlier versions (text/spans) as JSON Lines"
    )
    p.add_argument("old", help="the old file (JSON Lines with 'text' and 'spans')")
    p.add_argument("new", help="the file to write (must not exist)")
    p.set_defaults(handler=cmd_convert_labels)
    p = sub.add_parser("evaluate", help="cross-validated quality and the evaluation sample")
    p.add_argument("--folds", type=int, default=5)
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(handler=cmd_evaluate)
    _register_simulate(sub)


def _register_simulate(sub: Subcommands) -> None:
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
