"""Tests of extractor.models.stance_features: NegEx-style negation, span-relative features."""

from __future__ import annotations

import pytest

from tests.models.toy import features as _features

# ------------------------------------------------------------------ negation (NegEx)
# Triggers below come from the NegEx lists (Chapman et al., 2001, J Biomed Inform
# 34:301-310), recalled from memory: pre-negation "no", "not", "denies", "without",
# "no evidence of"; post-negation "unlikely", "free"; pseudo-negation "no increase",
# "not only"; termination "but"; scope of five words.


@pytest.mark.parametrize(
    ("text", "term", "negated"),
    [
        ("The field showed no rot this season.", "rot", True),
        ("The farmer denies any rot in the store.", "rot", True),
        ("We harvested it without pests.", "pests", True),
        ("There is no evidence of weevils in the sacks.", "weevils", True),
        ("Pod shattering is unlikely with Tembala.", "Pod shattering", True),
        ("The seed stays weevil free.", "weevil", True),
        ("There was no increase in yield.", "yield", False),
        ("It is not only the taste that we value.", "taste", False),
        ("No rot in the store but the pods split.", "pods", False),
        ("No rot in the store but the pods split.", "rot", True),
        ("It is not true that after three long dry seasons the pods split.", "pods", False),
    ],
    ids=[
        "pre-no",
        "pre-denies",
        "pre-without",
        "pre-no-evidence-of",
        "post-unlikely",
        "post-free",
        "pseudo-no-increase",
        "pseudo-not-only",
        "termination-but-after",
        "termination-but-before",
        "beyond-five-word-scope",
    ],
)
def test_stance_features_negation_scope_follows_negex(text: str, term: str, negated: bool) -> None:
    assert bool(_features(text, term).get("span_negated")) is negated


@pytest.mark.parametrize(
    ("text", "term", "lang"),
    [
        ("Le grain ne pourrit pas au grenier.", "pourrit", "fr"),
        ("Sans charançons, même après six mois.", "charançons", "fr"),
        ("El grano no se pudre en el granero.", "se pudre", "es"),
        ("Sin gorgojos en el almacén.", "gorgojos", "es"),
    ],
    ids=["fr-ne-pas", "fr-sans", "es-no", "es-sin"],
)
def test_stance_features_negation_in_french_and_spanish(text: str, term: str, lang: str) -> None:
    assert _features(text, term, lang).get("span_negated")


def test_stance_features_sin_embargo_is_not_negation() -> None:
    # "sin embargo" (however) holds the trigger "sin" but negates nothing.
    features = _features("Sin embargo el sabor es bueno.", "sabor", "es")
    assert not features.get("span_negated")
    assert features.get("after_contrast")


# ------------------------------------------------------------------ span words are not evidence


def test_stance_features_never_include_the_span_words() -> None:
    features = _features("People say the bitterness is welcome in the sauce.", "bitterness")
    assert not any("bitterness" in key for key in features)


def test_stance_features_same_context_gives_same_features_whatever_the_trait() -> None:
    # Bitterness can be welcome: the trait word must not move the stance.
    bitter = _features("We really like the bitterness of Tembala.", "bitterness")
    sweet = _features("We really like the sweetness of Tembala.", "sweetness")
    assert bitter == sweet
