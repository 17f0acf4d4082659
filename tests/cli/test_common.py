"""What the command modules share: the headline quality figure, and messages with user text."""

from __future__ import annotations

import io

import pytest
from rich.console import Console
from statsmodels.stats.proportion import proportion_confint

from extractor.cli.common import counted, metric_summary, print_said, print_warnings, spoken_list
from extractor.models.metrics import score, summary
from extractor.models.validation import Evaluation
from extractor.types import Sentence, Span


def _stored(n: int) -> dict:
    """The metrics a version stores after `traits evaluate` on ``n`` perfectly found spans."""
    gold = [
        (Sentence(id=i, text="xxx yyy", lang="en", respondent=f"R{i}"), [Span(0, 3, "C1", "liked")])
        for i in range(n)
    ]
    result = score(gold, [[Span(0, 3, "C1", "liked")] for _ in range(n)])
    return {"evaluation_sample": Evaluation(result, summary(result)).to_dict()}


def test_metric_summary_gives_the_evaluation_count_interval_and_a_small_sample_warning() -> None:
    text = metric_summary(_stored(2))
    # statsmodels' Wilson interval of J = tp/(tp+fp+fn) = 2/2, carried to F1 = 2J/(1+J).
    low, _ = proportion_confint(2, 2, alpha=0.05, method="wilson")
    assert f"span F1 1.00 (eval: 2 gold spans, 95% {2 * low / (1 + low):.2f}–1.00" in text
    assert "too few" in text
    assert "too few" not in metric_summary(_stored(30))


@pytest.mark.parametrize(
    "text", ["survey [round 2].csv", "x[/]y.csv", "[active] strategy", "[bold]x"], ids=str
)
def test_warnings_and_errors_show_user_text_as_it_is(text: str) -> None:
    # user text is never rich markup: brackets are shown, and "[/]" raises nothing
    buffer = io.StringIO()
    console = Console(file=buffer, width=200)
    print_warnings(console, [f"File '{text}' has no answers."])
    print_said(console, "error", "bold red", f"File '{text}' is empty.")
    assert buffer.getvalue().splitlines() == [
        f"warning: File '{text}' has no answers.",
        f"error: File '{text}' is empty.",
    ]


@pytest.mark.parametrize(
    ("n", "expected"),
    [(0, "0 answers"), (1, "1 answer"), (2, "2 answers")],
)
def test_counted_says_one_in_the_singular(n: int, expected: str) -> None:
    assert counted(n, "answer") == expected


def test_counted_takes_an_irregular_plural() -> None:
    assert counted(3, "alias", "aliases") == "3 aliases"
    assert counted(1, "alias", "aliases") == "1 alias"


@pytest.mark.parametrize(
    ("items", "conjunction", "expected"),
    [
        ([], "and", ""),
        (["a"], "and", "a"),
        (["a", "b"], "and", "a and b"),
        (["2", "3", "4"], "or", "2, 3 or 4"),
    ],
)
def test_spoken_list_joins_the_last_with_the_conjunction(items, conjunction, expected) -> None:
    assert spoken_list(items, conjunction) == expected
