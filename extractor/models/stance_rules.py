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

    The rules, first match wins: a negated wish is disliked; a wish before the span,
    in its clause, or after a condition that holds it ("si elle restait tendre, ce serait
    parfait") is wanted; excess is disliked; a span held off by a resistance
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
    what the respondent hopes for, not what the variety has. And weak words (see
    :func:`cue_evidence`) that go against a question leaning to liked or disliked alone
    give way to it.

    Args:
        features: Features from :func:`extractor.models.stance.stance_features`.

    Returns:
        ``(stance, confidence)`` with confidence in ``[0.4, 0.85]``.
    """
    stance, conf, weak = cue_evidence(features)
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
    lean = _one_lean(features)
    if weak and lean is not None and stance != lean and stance in ("liked", "disliked"):
        # Weak words do not overrule the question: "what do you not like? - at the market
        # they say it is cheap" is a fault (cheap for a seller), "why do you grow it? - the
        # insects hardly touch it" a good. See :func:`cue_evidence` for what is weak.
        return lean, 0.55
    return stance, conf


def _one_lean(features: Mapping[str, float]) -> str | None:
    """Return ``liked`` or ``disliked`` when the question leans that way alone, else None."""
    g = features.get
    if g("q_wanted", 0) or bool(g("q_liked", 0)) == bool(g("q_disliked", 0)):
        return None
    return "liked" if g("q_liked", 0) else "disliked"


def cue_rule(features: Mapping[str, float]) -> tuple[str, float]:
    """Return :func:`rule_stance`'s answer before the question's lean is applied.

    Without the ``q_*`` features: what the words around the mention alone decide.
    """
    stance, conf, _ = cue_evidence(features)
    return stance, conf


def cue_evidence(features: Mapping[str, float]) -> tuple[str, float, bool]:
    """Return :func:`cue_rule`'s answer and whether the words behind it are weak evidence.

    Weak: a cue word inside the span itself (the trait's own value, "cheap", says
    little of whether it is welcome: cheap is good to a buyer and bad to a seller), cue
    words outside the span's clause (its contrast segment), and a comparison with no
    evaluative word in the span's clause ("the harvest is small compared to Ruvaro").
    Where such words went against a question that leans to liked or disliked alone, the
    lean was right for 12 of 12 gold mentions of the demo and 7 of 8 of our maize labels
    (real answers; DEVELOPERS.md, "Stance evidence").
    """
    g = features.get
    wish = g("wanted_before", 0) or g("wanted_clause", 0) or g("wanted_if", 0)
    if g("wanted_neg", 0) and not wish:
        return "disliked", 0.6, False
    if wish:
        return "wanted", 0.75, False
    if g("excess_near", 0) or g("excess", 0):
        return "disliked", (0.75 if g("excess_near", 0) else 0.65), False
    if g("span_resisted", 0):
        return "liked", 0.7, False
    if g("span_negated_fault", 0):
        return "liked", 0.7, False
    if g("span_negated_good", 0):
        return "disliked", 0.7, False
    score = g("clause_liked", 0) - g("clause_disliked", 0)
    if score:
        return ("liked" if score > 0 else "disliked"), min(0.6 + 0.1 * abs(score), 0.85), False
    if g("indifferent", 0):
        # "no importa el color", "rouge ou tacheté, peu importe", "it depends on the price":
        # the trait is named as not deciding anything, neither welcome nor a fault.
        return "neutral", 0.6, False
    own = g("span_good", 0) - g("span_fault", 0)
    if own:
        return ("liked" if own > 0 else "disliked"), 0.6, True
    seg = g("seg_liked", 0) - g("seg_disliked", 0)
    if seg:
        return ("liked" if seg > 0 else "disliked"), 0.55, True
    if g("after_contrast", 0) or g("before_contrast", 0):
        if g("other_side_liked", 0):
            return "disliked", 0.55, False
        if g("other_side_disliked", 0):
            return "liked", 0.55, False
    if g("span_negated", 0):
        if g("q_liked", 0) and not g("q_disliked", 0) and not g("q_wanted", 0):
            # Asked what is good about it, a trait said to be absent is a fault it lacks:
            # "why do you buy it? - it does not give gas".
            return "liked", 0.55, False
        return "disliked", 0.55, False
    if g("comparison", 0) and g("span_before_marker", 0):
        return ("disliked" if g("comparison_less", 0) else "liked"), 0.55, True
    for q, stance in (("q_wanted", "wanted"), ("q_disliked", "disliked"), ("q_liked", "liked")):
        if g(q, 0):
            return stance, 0.5, False
    return "neutral", 0.4, False


def rule_proba(features: Mapping[str, float]) -> np.ndarray:
    """Return :func:`rule_stance` as a distribution over :data:`~extractor.types.STANCES`."""
    stance, conf = rule_stance(features)
    out = np.full(len(STANCES), (1.0 - conf) / (len(STANCES) - 1))
    out[STANCES.index(stance)] = conf
    return out
