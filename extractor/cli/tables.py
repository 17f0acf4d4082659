"""Rich tables of evaluation figures and of simulated learning curves.

Every quality figure is shown with the counts it comes from and its 95% Wilson interval
(:mod:`extractor.report.stats`), and a table says when its sample is too small to mean
much (:data:`~extractor.report.stats.MIN_SAMPLE` items, common practice).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping, Sequence

from rich.table import Table

from extractor.loop.curves import CurveRow, GainRow
from extractor.models.metrics import PRF, SUMMARY_KEYS, GroupScores, ScoreReport, StanceScores
from extractor.models.sentence_metrics import SentenceScores
from extractor.models.validation import CrossValidation, Evaluation
from extractor.report.stats import MIN_SAMPLE, f1_interval, too_few, wilson_interval

INTERVAL_NOTE = (
    "In brackets: hits/items and the 95% Wilson interval; for F1 the interval of "
    "tp/(tp+fp+fn) carried over to F1."
)
"""The caption that says what the brackets beside a figure hold."""


def _fmt(value: float | None) -> str:
    return "-" if value is None else f"{value:.3f}"


def _bounds(bounds: tuple[float, float] | None) -> str:
    return "" if bounds is None else f"{bounds[0]:.2f}–{bounds[1]:.2f}"


def _share(value: float | None, k: int, n: int) -> str:
    """Return a share as ``0.750 (3/4, 0.30–0.95)``: the figure, its counts, its interval."""
    if value is None or n == 0:
        return _fmt(value)
    return f"{value:.3f} ({k}/{n}, {_bounds(wilson_interval(k, n))})"


def _f1(part: PRF | None) -> str:
    """Return an F1 with its interval (:func:`~extractor.report.stats.f1_interval`)."""
    if part is None:
        return "-"
    bounds = f1_interval(part.tp, part.fp, part.fn)
    return _fmt(part.f1) if bounds is None else f"{part.f1:.3f} ({_bounds(bounds)})"


def _prf_row(name: str, part: PRF | None) -> list[str]:
    if part is None:
        return [name, "-", "-", "-", "-"]
    return [
        name,
        _share(part.precision, part.tp, part.tp + part.fp),
        _share(part.recall, part.tp, part.tp + part.fn),
        _f1(part),
        str(part.gold),
    ]


def _too_few_note(n_gold: int, what: str) -> str | None:
    """Return the warning for a sample of ``n_gold`` gold spans, or None when it is enough."""
    if not too_few(n_gold):
        return None
    return (
        f"Only {n_gold} gold spans in {what}: with fewer than {MIN_SAMPLE} (common practice) "
        "these figures are too few to mean much; label more sentences "
        "(`traits label --evaluation` for the evaluation sample)."
    )


def _prf_table(title: str, rows: list[list[str]], first: str, caption: str | None = None) -> Table:
    table = Table(title=title, caption=caption or INTERVAL_NOTE)
    table.add_column(first)
    for column in ("precision", "recall", "F1", "gold"):
        table.add_column(column, justify="right")
    for row in rows:
        table.add_row(*row)
    return table


def _folds_table(results: CrossValidation) -> Table:
    n_gold = [fold.result.scores.n_gold_spans for fold in results.folds]
    table = Table(
        title=f"{results.k}-fold cross-validation, grouped by respondent",
        caption=_too_few_note(sum(n_gold), "all folds together"),
    )
    table.add_column("fold")
    for key in SUMMARY_KEYS:
        table.add_column(key.replace("_", " "), justify="right")
    table.add_column("gold spans", justify="right")
    for fold, n in zip(results.folds, n_gold, strict=True):
        table.add_row(
            str(fold.fold + 1), *(_fmt(getattr(fold.summary, k)) for k in SUMMARY_KEYS), str(n)
        )
    table.add_row("mean", *(_fmt(getattr(results.mean, k)) for k in SUMMARY_KEYS), "")
    table.add_row("sd", *(_fmt(getattr(results.sd, k)) for k in SUMMARY_KEYS), "")
    table.add_row("total", *("" for _ in SUMMARY_KEYS), str(sum(n_gold)))
    return table


def _language_table(by_language: Mapping[str, GroupScores]) -> Table:
    language = Table(title="By language", caption=INTERVAL_NOTE)
    language.add_column("language")
    for column in ("span F1", "span + concept F1", "stance accuracy", "respondent F1", "gold"):
        language.add_column(column, justify="right")
    for lang, part in by_language.items():
        language.add_row(
            lang, _f1(part.span), _f1(part.span_concept),
            _stance_accuracy(part.stance) if part.stance else "-",
            _f1(part.respondent),
            str(part.n_gold_spans),
        )  # fmt: skip
    return language


def _stance_accuracy(stance: StanceScores) -> str:
    correct = sum(row[i] for i, row in enumerate(stance.confusion))  # the diagonal
    return _share(stance.accuracy, correct, stance.n)


def _stance_table(stance: StanceScores) -> Table:
    confusion = Table(
        title=f"Stance on exactly matched mentions: accuracy "
        f"{_stance_accuracy(stance)}, macro-F1 {stance.macro_f1:.3f} (of {stance.n})"
    )
    confusion.add_column("gold \\ predicted")
    for label in stance.labels:
        confusion.add_column(label, justify="right")
    for label, row in zip(stance.labels, stance.confusion, strict=True):
        confusion.add_row(label, *(str(n) for n in row))
    return confusion


def evaluation_tables(results: ScoreReport | Evaluation | CrossValidation) -> list[Table]:
    """Return rich tables of a score, an evaluation-sample or a cross-validation result.

    The results are those of :func:`extractor.models.metrics.score` and
    :mod:`extractor.models.validation` (``evaluate_on``, ``cross_validate``). A
    cross-validation result gives one table: a row per fold, then mean and sd; each
    fold's detailed tables can be had by passing ``results.folds[i].result``.
    """
    if isinstance(results, CrossValidation):
        return [_folds_table(results)]
    scores = results.scores if isinstance(results, Evaluation) else results
    small = _too_few_note(scores.n_gold_spans, "this sample")
    tables = [_prf_table("Scores", [
        _prf_row("span (strict)", scores.span),
        _prf_row("span + concept", scores.span_concept),
        _prf_row("respondent + trait + stance", scores.respondent),
    ], "figure", f"{INTERVAL_NOTE} {small}" if small else None)]  # fmt: skip
    if scores.by_concept:
        tables.append(
            _prf_table(
                "Span + concept by concept",
                [_prf_row(c, part) for c, part in scores.by_concept.items()],
                "concept",
            )
        )
    tables.append(_language_table(scores.by_language))
    if scores.stance is not None:
        tables.append(_stance_table(scores.stance))
    return tables


def curve_table(rows: Sequence[CurveRow]) -> Table:
    """Return the table of span F1 by strategy and budget (mean over repeats)."""
    table = Table(title="Span F1 by strategy and budget (mean over repeats)")
    for column in dataclasses.fields(CurveRow) if rows else ():
        table.add_column(column.name)
    for row in rows:
        values = (getattr(row, f.name) for f in dataclasses.fields(row))
        table.add_row(*(f"{v:.3f}" if isinstance(v, float) else str(v) for v in values))
    return table


def gain_table(gains: Sequence[GainRow]) -> Table:
    """Return the table of span F1 gains over random, paired by repeat."""
    table = Table(title="Span F1 gain over random, paired by repeat (same seed sentences)")
    for column in ("strategy", "budget", "repeats", "gain (points)", "sd", "wins"):
        table.add_column(column)
    for row in gains:
        table.add_row(
            row.strategy,
            str(row.budget),
            str(row.n),
            f"{100 * row.gain:+.1f}",
            f"{100 * row.sd:.1f}",
            f"{row.wins}/{row.n}",
        )
    return table


def sentence_line(scores: SentenceScores) -> str:
    """Return the sentence-level figures (mentions and implicit traits together) as one line."""
    stance = (
        "no stance to judge"
        if scores.stance_accuracy is None
        else f"stance accuracy {scores.stance_accuracy:.3f} on {scores.stance_n}"
    )
    respondent = (
        "" if scores.respondent is None else f"; respondent-triple F1 {scores.respondent.f1:.3f}"
    )
    return (
        f"Traits per sentence (mentions and implicit traits, {scores.n_sentences} sentences): "
        f"concept F1 {scores.concept.f1:.3f} (P {scores.concept.precision:.3f}, "
        f"R {scores.concept.recall:.3f}), {stance}{respondent}."
    )
