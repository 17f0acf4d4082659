"""The cold-start stance rules: a stance from the cue features of a mention alone.

Before any stance labels exist, :func:`rule_stance` answers from the features of
:func:`extractor.models.stance_features.stance_features`; the learned
:class:`extractor.models.stance.StanceModel` reads its answer as a feature and blends
with it until it has learned from enough labels.
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np

from extractor.types import STANCES


def rule_stance(features: Mapping[str, float]) -> tuple[str, float]:
    """Return a stance and a confidence from cue features alone (the cold-start answer).

    The rules, first match wins: a negated wish is disliked; a wish before the span
    or in its clause is wanted; excess is disliked; a span held off by a resistance
    word ("drought tolerant") is liked; a negated fault word in the span
    is liked and a negated good word disliked; then the net polarity of cues in the
    clause, then of cue words inside the span ("then they spoil", "cozinha
    rápido"), then in the contrast segment, then the opposite of the other side of a
    contrast; a negated span with no cue is disliked (the trait is missing), unless the
    question asked only for what is liked (then the trait is a fault it lacks); the
    praised side of a comparison is liked (the lowered side disliked); then the
    question's lean (a codebook direction, or the question's cue words); else neutral.
    Last, a trait read as liked in reply to a question that asks only for wishes ("what
    would you change?", "which variety would you try?") is wanted: the answer praises
    what the respondent hopes for, not what the variety has.

    Args:
        features: Features from :func:`extractor.models.stance.stance_features`.

    Returns:
        ``(stance, confidence)`` with confidence in ``[0.4, 0.85]``.
    """
    stance, conf = cue_rule(features)
    g = features.get
    if g("prefer_other", 0) and stance != "wanted":
        # Asked for faults, a preference is a wish for something else: "why did you
        # prefer it least? - she prefers dry maize" (our maize labels: wanted).
        return "wanted", 0.6
    if g("q_wanted", 0) and not g("q_liked", 0) and not g("q_disliked", 0):
        # Asked only what they wish for, a trait praised is one wanted: "which variety
        # would you try? - whatever is cheap"; so is a fault in a clause that describes
        # the variety hoped for: "one that does not give gas", "que no pierda el color".
        if stance == "liked" or (stance == "disliked" and g("wish_relative", 0)):
            return "wanted", 0.6
    return stance, conf


def cue_rule(features: Mapping[str, float]) -> tuple[str, float]:
    """Return :func:`rule_stance`'s answer before the question's wish lean is applied.

    Without the ``q_*`` features: what the words around the mention alone decide.
    """
    g = features.get
    if g("wanted_neg", 0) and not g("wanted_before", 0) and not g("wanted_clause", 0):
        return "disliked", 0.6
    if g("wanted_before", 0) or g("wanted_clause", 0):
        return "wanted", 0.75
    if g("excess_near", 0) or g("excess", 0):
        return "disliked", 0.75 if g("excess_near", 0) else 0.65
    if g("span_resisted", 0):
        return "liked", 0.7
    if g("span_negated_fault", 0):
        return "liked", 0.7
    if g("span_negated_good", 0):
        return "disliked", 0.7
    score = g("clause_liked", 0) - g("clause_disliked", 0)
    if score:
        return ("liked" if score > 0 else "disliked"), min(0.6 + 0.1 * abs(score), 0.85)
    if g("indifferent", 0):
        # "no importa el color", "rouge ou tacheté, peu importe", "it depends on the price":
        # the trait is named as not deciding anything, neither welcome nor a fault.
        return "neutral", 0.6
    own = g("span_good", 0) - g("span_fault", 0)
    if own:
        return ("liked" if own > 0 else "disliked"), 0.6
    seg = g("seg_liked", 0) - g("seg_disliked", 0)
    if seg:
        return ("liked" if seg > 0 else "disliked"), 0.55
    if g("after_contrast", 0) or g("before_contrast", 0):
        if g("other_side_liked", 0):
            return "disliked", 0.55
        if g("other_side_disliked", 0):
            return "liked", 0.55
    if g("span_negated", 0):
        if g("q_liked", 0) and not g("q_disliked", 0) and not g("q_wanted", 0):
            # Asked what is good about it, a trait said to be absent is a fault it lacks:
            # "why do you buy it? - it does not give gas".
            return "liked", 0.55
        return "disliked", 0.55
    if g("comparison", 0) and g("span_before_marker", 0):
        return ("disliked" if g("comparison_less", 0) else "liked"), 0.55
    for q, stance in (("q_wanted", "wanted"), ("q_disliked", "disliked"), ("q_liked", "liked")):
        if g(q, 0):
            return stance, 0.5
    return "neutral", 0.4


def rule_proba(features: Mapping[str, float]) -> np.ndarray:
    """Return :func:`rule_stance` as a distribution over :data:`~extractor.types.STANCES`."""
    stance, conf = rule_stance(features)
    out = np.full(len(STANCES), (1.0 - conf) / (len(STANCES) - 1))
    out[STANCES.index(stance)] = conf
    return out
