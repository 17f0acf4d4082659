"""Evaluation and simulation tables: the figures shown are the ones computed, every part drawn."""

from __future__ import annotations

import io
from dataclasses import replace

from rich.console import Console
from rich.table import Table
from sklearn.metrics import accuracy_score, confusion_matrix, f1_score
from statsmodels.stats.proportion import proportion_confint

from extractor.cli.tables import curve_table, evaluation_tables, gain_table
from extractor.loop.curves import CurveRow, GainRow
from extractor.models.metrics import ScoreReport, score, summary
from extractor.models.validation import CrossValidation, Evaluation, Fold
from extractor.types import Sentence, Span


def _render(tables: list[Table]) -> str:
    console = Console(file=io.StringIO(), width=160)
    for table in tables:
        console.print(table)
    out = console.file
    assert isinstance(out, io.StringIO)
    return out.getvalue()


# Four sentences, one span each; the model finds every span and concept but mistakes two
# stances (liked -> disliked, wanted -> liked).
GOLD_STANCES = ["liked", "liked", "disliked", "wanted"]
PRED_STANCES = ["liked", "disliked", "disliked", "liked"]


def _result() -> ScoreReport:
    gold = [
        (Sentence(id=i, text="xxx yyy zzz", lang="en", respondent=f"R{i}"), [Span(0, 3, "C1", g)])
        for i, g in enumerate(GOLD_STANCES)
    ]
    return score(gold, [[Span(0, 3, "C1", p)] for p in PRED_STANCES])


def test_evaluation_tables_show_stance_figures_as_scikit_learn_computes_them() -> None:
    # titles wrap to the table's width: compare with runs of spaces and line breaks as one
    text = " ".join(_render(evaluation_tables(_result())).split())
    # scikit-learn is the outside reference for accuracy and macro-F1 (average over the
    # classes seen in gold or prediction, 0 where a class is never predicted).
    accuracy = accuracy_score(GOLD_STANCES, PRED_STANCES)
    macro = f1_score(GOLD_STANCES, PRED_STANCES, average="macro", zero_division=0)
    correct = sum(g == p for g, p in zip(GOLD_STANCES, PRED_STANCES, strict=True))
    n = len(GOLD_STANCES)
    assert f"accuracy {accuracy:.3f} ({correct}/{n}, {_wilson(correct, n)}), " in text
    assert f"macro-F1 {macro:.3f} (of {n})" in text
    labels = ["liked", "disliked", "wanted"]
    matrix = confusion_matrix(GOLD_STANCES, PRED_STANCES, labels=labels)
    for label, row in zip(labels, matrix, strict=True):
        assert f"│ {label} │ " + " │ ".join(str(n) for n in row) + " │" in text


def test_evaluation_tables_draw_every_part() -> None:
    text = _render(evaluation_tables(_result()))
    for title in ("Scores", "Span + concept by concept", "By language", "gold \\ predicted"):
        assert title in text
    assert "span (strict)" in text and "respondent + trait + stance" in text


def test_simulation_tables_show_rows_and_wins() -> None:
    curve = [CurveRow("random", 10, 2, mean=0.5, sd=0.125, min=0.375, max=0.625, labeled_tokens=80)]
    gains = [GainRow("default", 10, 2, gain=0.031, sd=0.004, wins=1)]
    text = _render([curve_table(curve), gain_table(gains)])
    assert "0.500" in text and "0.125" in text
    assert "+3.1" in text and "0.4" in text and "1/2" in text


def _perfect(n: int) -> ScoreReport:
    """``n`` sentences with one gold span each, every span found with its concept and stance."""
    gold = [
        (Sentence(id=i, text="xxx yyy", lang="en", respondent=f"R{i}"), [Span(0, 3, "C1", "liked")])
        for i in range(n)
    ]
    return score(gold, [[Span(0, 3, "C1", "liked")] for _ in range(n)])


def _wilson(k: int, n: int) -> str:
    # statsmodels' Wilson score interval is the outside reference (Wilson, 1927).
    low, high = proportion_confint(k, n, alpha=0.05, method="wilson")
    return f"{low:.2f}–{min(1.0, high):.2f}"


def test_evaluation_tables_give_counts_and_wilson_intervals_beside_each_figure() -> None:
    text = " ".join(_render(evaluation_tables(_perfect(2))).split())
    # precision 1.000 from 2 of 2 predicted spans, recall from 2 of 2 gold spans
    assert f"1.000 (2/2, {_wilson(2, 2)})" in text
    assert "precision 1.000 │" not in text and "│ 1.000 │" not in text  # no bare figure
    # stance accuracy: 2 of 2 matched mentions
    assert f"accuracy 1.000 (2/2, {_wilson(2, 2)})" in text


def test_evaluation_tables_say_when_the_sample_is_too_small() -> None:
    small = " ".join(_render(evaluation_tables(_perfect(2))).split())
    assert "Only 2 gold spans" in small and "too few" in small
    large = " ".join(_render(evaluation_tables(_perfect(30))).split())
    assert "too few" not in large
    assert f"1.000 (30/30, {_wilson(30, 30)})" in large


def test_cross_validation_table_gives_each_folds_gold_spans_and_their_total_apart() -> None:
    report = _result()
    fold = Fold(
        fold=0, n_train=8, n_test=4, seconds=0.1, result=Evaluation(report, summary(report))
    )
    cv = CrossValidation(
        k=2, seed=0, mean=summary(report), sd=summary(report), folds=(fold, replace(fold, fold=1))
    )
    cells = {
        words[0]: words[1:]
        for line in _render(evaluation_tables(cv)).splitlines()
        if (words := line.replace("│", " ").split())
    }
    n = report.n_gold_spans
    assert cells["1"][-1] == cells["2"][-1] == str(n)
    assert str(2 * n) not in cells["sd"] and str(2 * n) not in cells["mean"]
    assert cells["total"] == [str(2 * n)]
