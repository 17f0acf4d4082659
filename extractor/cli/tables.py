"""Rich tables of evaluation figures and of simulated learning curves."""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping, Sequence

from rich.table import Table

from extractor.loop.curves import CurveRow, GainRow
from extractor.models.metrics import PRF, SUMMARY_KEYS, GroupScores, ScoreReport, StanceScores
from extractor.models.validation import CrossValidation, Evaluation


def _fmt(value: float | None) -> str:
    return "-" if value is None else f"{value:.3f}"


def _prf_row(name: str, part: PRF | None) -> list[str]:
    if part is None:
        return [name, "-", "-", "-", "-"]
    return [name, _fmt(part.precision), _fmt(part.recall), _fmt(part.f1), str(part.gold)]


def _prf_table(title: str, rows: list[list[str]], first: str) -> Table:
    table = Table(title=title)
    table.add_column(first)
    for column in ("precision", "recall", "F1", "gold"):
        table.add_column(column, justify="right")
    for row in rows:
        table.add_row(*row)
    return table


def _folds_table(results: CrossValidation) -> Table:
    table = Table(title=f"{results.k}-fold cross-validation, grouped by respondent")
    table.add_column("fold")
    for key in SUMMARY_KEYS:
        table.add_column(key.replace("_", " "), justify="right")
    for fold in results.folds:
        table.add_row(str(fold.fold + 1), *(_fmt(getattr(fold.summary, k)) for k in SUMMARY_KEYS))
    table.add_row("mean", *(_fmt(getattr(results.mean, k)) for k in SUMMARY_KEYS))
    table.add_row("sd", *(_fmt(getattr(results.sd, k)) for k in SUMMARY_KEYS))
    return table


def _language_table(by_language: Mapping[str, GroupScores]) -> Table:
    language = Table(title="By language")
    language.add_column("language")
    for column in ("span F1", "span + concept F1", "stance accuracy", "respondent F1", "gold"):
        language.add_column(column, justify="right")
    for lang, part in by_language.items():
        language.add_row(
            lang, _fmt(part.span.f1),
            _fmt(part.span_concept.f1 if part.span_concept else None),
            _fmt(part.stance.accuracy if part.stance else None),
            _fmt(part.respondent.f1 if part.respondent else None),
            str(part.n_gold_spans),
        )  # fmt: skip
    return language


def _stance_table(stance: StanceScores) -> Table:
    confusion = Table(
        title=f"Stance on exactly matched mentions: accuracy "
        f"{stance.accuracy:.3f}, macro-F1 {stance.macro_f1:.3f}"
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
    tables = [_prf_table("Scores", [
        _prf_row("span (strict)", scores.span),
        _prf_row("span + concept", scores.span_concept),
        _prf_row("respondent + trait + stance", scores.respondent),
    ], "figure")]  # fmt: skip
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
