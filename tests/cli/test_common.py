"""The headline quality figure the model commands print: with its count and interval."""

from __future__ import annotations

from statsmodels.stats.proportion import proportion_confint

from extractor.cli.common import metric_summary
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
