"""Tests of extractor.models.sentence_traits: multi-label concepts per sentence, MAMS-ACSA check."""

from __future__ import annotations

import random
import time
from collections import Counter
from functools import lru_cache
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from sklearn.base import clone
from sklearn.metrics import f1_score
from sklearn.preprocessing import MultiLabelBinarizer

from extractor.errors import NotFittedError
from extractor.ingest.labels import LabelRecord, records_from_dicts
from extractor.models.sentence_traits import SentenceTraits, anchor_span, concept_similarity
from extractor.models.stance import StanceModel
from extractor.nlp.clusters import learn_clusters
from extractor.nlp.dictionary import build_dictionary
from extractor.types import Sentence, Span
from tests.mams_acsa import ACSA_SKIP, CATEGORIES, load_acsa

# ------------------------------------------------------------------ toy (invented) data

TOY = [
    ("My children finish the plate every time.", {"TX:taste"}),
    ("The children ask for more of it.", {"TX:taste"}),
    ("Everybody at home finishes the plate.", {"TX:taste"}),
    ("It is ready before the children come back from school.", {"TX:cooking"}),
    ("The pot is ready before the rains stop.", {"TX:cooking"}),
    ("It is ready quickly, the children eat early.", {"TX:cooking", "TX:taste"}),
    ("We sold the bags on Monday.", set()),
    ("The road to the market was closed.", set()),
    ("We planted after the short rains.", set()),
]


def _toy() -> tuple[list[Sentence], list[set[str]]]:
    return [Sentence(i, t, "en") for i, (t, _) in enumerate(TOY)], [c for _, c in TOY]


def test_fit_gives_a_probability_per_concept_per_sentence() -> None:
    sentences, concepts = _toy()
    model = SentenceTraits(threshold=0.5).fit(sentences, concepts)
    proba = model.predict_proba(sentences)
    assert model.classes_ == ["TX:cooking", "TX:taste"]
    assert proba.shape == (len(sentences), 2) and ((proba >= 0) & (proba <= 1)).all()
    found = model.detected(proba)
    assert [c for c, _ in found[0]] == ["TX:taste"]
    assert found[6] == []  # a sentence labeled "no trait here" stays without


def test_threshold_decides_when_the_model_abstains() -> None:
    sentences, concepts = _toy()
    model = SentenceTraits().fit(sentences, concepts)
    proba = model.predict_proba([Sentence(99, "The market sold the bags.", "en")])
    model.threshold = 1.01
    assert model.detected(proba) == [[]]
    model.threshold = 0.0
    assert {c for c, _ in model.detected(proba)[0]} == {"TX:cooking", "TX:taste"}


def test_unfitted_model_raises_and_clones_unfitted() -> None:
    with pytest.raises(NotFittedError, match="not trained yet"):
        SentenceTraits().predict_proba([Sentence(0, "x", "en")])
    sentences, concepts = _toy()
    fitted = SentenceTraits(C=2.0).fit(sentences, concepts)
    copy = clone(fitted)
    assert copy.get_params()["C"] == 2.0 and not copy.is_fitted


def test_save_and_load_give_the_same_probabilities(tmp_path: Path) -> None:
    sentences, concepts = _toy()
    model = SentenceTraits().fit(sentences, concepts)
    model.save(tmp_path / "sentence")
    again = SentenceTraits.load(tmp_path / "sentence")
    np.testing.assert_allclose(again.predict_proba(sentences), model.predict_proba(sentences))
    SentenceTraits().save(tmp_path / "unfitted")
    assert not SentenceTraits.load(tmp_path / "unfitted").is_fitted


def test_anchor_is_the_dictionary_match_else_the_heaviest_word() -> None:
    dictionary = build_dictionary([("TX:taste", "plate", "en")])
    sentence = Sentence(0, "My children finish the plate.", "en")
    assert anchor_span(sentence, "TX:taste", {}, dictionary) == Span(23, 28, "TX:taste")
    weights = {"children": 0.5, "finish": 2.0}
    assert anchor_span(sentence, "TX:cooking", weights, dictionary) == Span(12, 18, "TX:cooking")
    assert anchor_span(sentence, "TX:other", {}, None) == Span(0, 29, "TX:other")


def test_concept_similarity_is_one_for_an_alias_word() -> None:
    words = ["plate", "pot", "rains"]
    clusters: dict[str, Any] = {"words": words, "vectors": [[1.0, 0.0], [0.0, 1.0], [0.6, 0.8]]}
    dictionary = build_dictionary([("TX:a", "plate", "en"), ("TX:b", "pot", "en")])
    sims = concept_similarity([Sentence(0, "The rains and the plate", "en")], dictionary, clusters)
    np.testing.assert_allclose(sims, [[1.0, 0.8]])  # cosines worked by hand


# ------------------------------------------------------------------ MAMS-ACSA (outside check)

# A concept list for the eight MAMS-ACSA categories, written for this test the way a
# programme writes its trait list (a few common words each); not taken from the data.
MAMS_CONCEPTS = {
    "food": "food|dish|dishes|meal|taste|tasty|delicious|flavor|portion|portions|pizza|pasta|"
    "steak|sushi|dessert|appetizer|appetizers|entree|entrees|fish|chicken|burger|salad|sauce|"
    "bread|cooked|fresh|bland",
    "service": "service|served|wait|waited|waiting|slow|quick|attentive|rude|reservation|"
    "seated|order|ordered",
    "staff": "staff|waiter|waitress|server|servers|hostess|host|bartender|manager|chef|owner|"
    "friendly|waitstaff",
    "price": "price|prices|priced|expensive|cheap|pricey|cost|bill|worth|value|dollars|"
    "affordable|overpriced",
    "ambience": "ambience|ambiance|atmosphere|decor|music|noise|noisy|loud|romantic|cozy|"
    "lighting|vibe",
    "menu": "menu|selection|options|choices|specials|variety|wine list",
    "place": "place|location|restaurant|spot|area|neighborhood|seating|table|tables|room|bar|"
    "outside|space",
    "miscellaneous": "experience|night|evening|birthday|visit|time|friends|date",
}


def mams_aliases() -> list[tuple[str, str, str]]:
    """The test's concept list for MAMS-ACSA as ``(concept, alias, lang)``."""
    return [(c, a, "en") for c, words in MAMS_CONCEPTS.items() for a in words.split("|")]


@lru_cache(maxsize=1)
def _acsa() -> tuple[list[LabelRecord], list[LabelRecord], dict[str, Any]] | None:
    train, test = load_acsa("train"), load_acsa("test")
    if train is None or test is None:
        return None
    train_records, test_records = records_from_dicts(train), records_from_dicts(test)
    # The clusters are learned from the train split's text alone (unlabeled), as a
    # workspace learns them from its answers; one granularity is all this model reads.
    clusters = learn_clusters(
        [(r.text, r.lang) for r in train_records], seed=0, granularities=(32,), prototypes=0
    )
    return train_records, test_records, clusters


def _sentences(records: list[LabelRecord], first: int = 0) -> list[Sentence]:
    return [Sentence(first + i, r.text, r.lang) for i, r in enumerate(records)]


def test_mams_acsa_category_f1_with_200_random_sentences_reaches_078() -> None:
    # MAMS-ACSA (Jiang et al., EMNLP-IJCNLP 2019, Apache-2.0), test split, category
    # micro-F1 computed by scikit-learn's f1_score as the reference. The dataset README's
    # yardstick, TF-IDF logistic regression on 200 random train sentences, reaches 0.70.
    data = _acsa()
    if data is None:
        pytest.skip(ACSA_SKIP)
    train, test, clusters = data
    dictionary = build_dictionary(mams_aliases())
    binarizer = MultiLabelBinarizer(classes=list(CATEGORIES)).fit([])
    gold = binarizer.transform([[i.concept for i in r.implicit] for r in test])
    train_sentences, test_sentences = _sentences(train), _sentences(test, len(train))
    started, scores = time.perf_counter(), []
    for draw in range(3):
        picked = random.Random(draw).sample(range(len(train)), 200)
        model = SentenceTraits().fit(
            [train_sentences[i] for i in picked],
            [[t.concept for t in train[i].implicit] for i in picked],
            dictionary=dictionary,
            clusters=clusters,
        )
        proba = model.predict_proba(test_sentences, dictionary=dictionary, clusters=clusters)
        found = [[c for c, _ in row] for row in model.detected(proba)]
        scores.append(f1_score(gold, binarizer.transform(found), average="micro"))
    mean = float(np.mean(scores))
    print(f"MAMS-ACSA 200 random: micro-F1 {mean:.3f} {np.round(scores, 3)}")
    assert mean >= 0.78, f"mean micro-F1 {mean:.3f} of draws {scores}"
    assert time.perf_counter() - started < 120


def test_mams_acsa_polarity_on_gold_categories_beats_majority() -> None:
    # Stance of a category comes from the stance model over its anchor words; trained on
    # the whole train split, scored on the test split's gold categories. Whole-sentence
    # stance cannot tell the two opposite polarities MAMS sentences hold apart.
    data = _acsa()
    if data is None:
        pytest.skip(ACSA_SKIP)
    train, test, clusters = data
    dictionary = build_dictionary(mams_aliases())
    train_sentences, test_sentences = _sentences(train), _sentences(test, len(train))
    model = SentenceTraits().fit(
        train_sentences,
        [[t.concept for t in r.implicit] for r in train],
        dictionary=dictionary,
        clusters=clusters,
    )
    weights = {c: model.word_weights(c) for c in model.classes_}

    def examples(sentences: list[Sentence], records: list[LabelRecord]) -> list[Any]:
        return [
            (s, anchor_span(s, t.concept, weights[t.concept], dictionary), t.stance)
            for s, r in zip(sentences, records, strict=True)
            for t in r.implicit
        ]

    stance = StanceModel().fit(examples(train_sentences, train))
    scored = examples(test_sentences, test)
    predicted = stance.predict_many([(s, a) for s, a, _ in scored])
    accuracy = float(np.mean([p == g for (p, _), (_, _, g) in zip(predicted, scored, strict=True)]))
    majority_label = Counter(g for _, _, g in examples(train_sentences, train)).most_common(1)
    majority = float(np.mean([g == majority_label[0][0] for _, _, g in scored]))
    print(f"MAMS-ACSA polarity on gold categories: {accuracy:.3f}, majority {majority:.3f}")
    assert accuracy >= majority + 0.15
