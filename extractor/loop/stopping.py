"""The stopping rule: stop asking once successive models agree on a fixed stop set.

Bloodgood & Vijay-Shanker (2009), "A Method for Stopping Active Learning Based on
Stabilizing Predictions and the Need for User-Adjustable Stopping" (CoNLL): Cohen's kappa
between successive models' tags on an unlabeled stop set; when it stays high for a few
rounds, further labels change little.
"""

from __future__ import annotations

from collections.abc import Sequence

from extractor.errors import InputError


def _flatten(tags: Sequence[Sequence[str]] | Sequence[str]) -> list[str]:
    out: list[str] = []
    for item in tags:
        if isinstance(item, str):
            out.append(item)
        else:
            out.extend(item)
    return out


def stabilizing_predictions(
    previous_tags: Sequence[Sequence[str]] | Sequence[str],
    current_tags: Sequence[Sequence[str]] | Sequence[str],
) -> float:
    """Cohen's kappa between two successive models' token tags on the stop set.

    Bloodgood & Vijay-Shanker (2009): when successive models agree almost perfectly on
    a fixed unlabeled stop set, further labels change little. Tags may be given per
    sentence (lists of lists) or flat; they are compared token by token.

    When both models give every token the same single tag (say all ``O``), expected and
    observed agreement are both 1 and the formula is 0/0; we define kappa = 1.0 there,
    because the two models agree perfectly (scikit-learn returns NaN unless told
    ``replace_undefined_by=1.0``).

    Raises:
        InputError: the two predictions do not cover the same number of tokens, or none.
    """
    first, second = _flatten(previous_tags), _flatten(current_tags)
    if len(first) != len(second) or not first:
        raise InputError(
            "Both models' predictions must cover the same stop-set tokens; got "
            f"{len(first)} and {len(second)} tokens."
        )
    n = len(first)
    observed = sum(a == b for a, b in zip(first, second, strict=True)) / n
    labels = set(first) | set(second)
    expected = sum((first.count(t) / n) * (second.count(t) / n) for t in labels)
    if expected >= 1.0:
        return 1.0
    return (observed - expected) / (1.0 - expected)


def should_stop(kappas: Sequence[float], threshold: float = 0.99, rounds: int = 3) -> bool:
    """Return True once the last ``rounds`` kappas are all at or above ``threshold``.

    Bloodgood & Vijay-Shanker (2009) stop when agreement stays above 0.99 over a window
    of three successive comparisons; both numbers are settings, as their title asks.
    """
    if rounds < 1:
        raise InputError(f"The number of rounds must be at least 1; got {rounds}.")
    if len(kappas) < rounds:
        return False
    return all(k >= threshold for k in kappas[-rounds:])
