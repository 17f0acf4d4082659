"""The stopping rule, checked against scikit-learn's cohen_kappa_score.

Source: Bloodgood & Vijay-Shanker (2009), CoNLL, for the stopping rule (kappa between
successive models on a stop set, window of three, 0.99, from memory); scikit-learn's
cohen_kappa_score is the outside reference for kappa.
"""

from __future__ import annotations

import pytest
from sklearn.metrics import cohen_kappa_score

from extractor.errors import InputError
from extractor.loop.stopping import should_stop, stabilizing_predictions

KAPPA_CASES = [
    (["O", "O", "B-TRAIT", "I-TRAIT", "O"], ["O", "B-TRAIT", "B-TRAIT", "I-TRAIT", "O"]),
    (["O"] * 8 + ["B-TRAIT", "I-TRAIT"], ["O"] * 9 + ["B-TRAIT"]),
    (["O", "B-TRAIT", "O", "B-TRAIT"], ["B-TRAIT", "O", "B-TRAIT", "O"]),
    (["O", "B-TRAIT", "I-TRAIT"] * 5, ["O", "B-TRAIT", "I-TRAIT"] * 5),
]


@pytest.mark.parametrize(
    ("first", "second"),
    KAPPA_CASES,
    ids=["one-disagreement", "rare-traits", "total-disagreement", "identical"],
)
def test_kappa_equals_sklearn_cohen_kappa(first: list[str], second: list[str]) -> None:
    assert stabilizing_predictions(first, second) == pytest.approx(cohen_kappa_score(first, second))


def test_kappa_flattens_per_sentence_tags() -> None:
    first, second = KAPPA_CASES[0]
    nested = [first[:2], first[2:]], [second[:2], second[2:]]
    assert stabilizing_predictions(*nested) == pytest.approx(cohen_kappa_score(first, second))


@pytest.mark.filterwarnings("ignore::sklearn.exceptions.UndefinedMetricWarning")
def test_kappa_is_one_when_both_models_tag_everything_o() -> None:
    # Degenerate case: expected agreement is 1, the formula is 0/0. We define kappa = 1.0
    # (perfect agreement); scikit-learn gives NaN unless told replace_undefined_by=1.0.
    tags = ["O"] * 12
    assert stabilizing_predictions(tags, tags) == 1.0


def test_kappa_rejects_different_token_counts() -> None:
    with pytest.raises(InputError, match="same stop-set tokens; got 3 and 2"):
        stabilizing_predictions(["O", "O", "O"], ["O", "O"])


@pytest.mark.parametrize(
    ("kappas", "expected"),
    [
        ([0.5, 0.995, 0.992, 0.999], True),
        ([0.995, 0.98, 0.999, 0.999], False),
        ([0.999, 0.999], False),
        ([], False),
        ([0.9, 0.991, 1.0, 0.99], True),
    ],
    ids=["three-above", "dip-inside-window", "too-few-rounds", "none", "at-threshold"],
)
def test_should_stop_follows_window_of_three(kappas: list[float], expected: bool) -> None:
    assert should_stop(kappas, threshold=0.99, rounds=3) is expected


def test_should_stop_rejects_zero_rounds() -> None:
    with pytest.raises(InputError, match="at least 1; got 0"):
        should_stop([1.0], rounds=0)
