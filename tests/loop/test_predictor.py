"""What the loop makes of the models' predictions: pool items, tagging the pool, retraining."""

from __future__ import annotations

import time

import numpy as np
import pytest
from modAL.uncertainty import classifier_uncertainty

from extractor.errors import TraitsError
from extractor.loop.predictor import (
    UNLINKED,
    Retraining,
    TrainingData,
    pool_item,
    suggested_spans,
    tag_pool,
)
from extractor.loop.strategies import get_strategy, link_stance
from extractor.models.bundle import Mention, SentencePrediction
from extractor.models.tagger import TagResult
from extractor.types import Sentence, Span
from tests.fake_model import FakeModel  # noqa: E402

SENTENCE = Sentence(1, "Zamaro Red cooks fast but is bitter.", "en")
TOKENS = [(0, 6), (7, 10), (11, 16), (17, 21), (22, 25), (26, 28), (29, 35), (35, 36)]
TAGS = ["O", "O", "B-TRAIT", "I-TRAIT", "O", "O", "B-TRAIT", "O"]
LINKS = [{"BTX:0002": 0.7, "BTX:0015": 0.2, "BTX:0011": 0.1}, {"BTX:0007": 0.4, "BTX:0020": 0.35}]
STANCES = [
    {"liked": 0.6, "disliked": 0.2, "wanted": 0.1, "neutral": 0.1},
    {"liked": 0.1, "disliked": 0.5, "wanted": 0.1, "neutral": 0.3},
]


class ProbaTable:
    """A fake fitted classifier for modAL: predict_proba returns a fixed matrix."""

    def __init__(self, proba: np.ndarray) -> None:
        self.proba = proba

    def predict_proba(self, X: np.ndarray) -> np.ndarray:  # noqa: N803 - modAL's name
        return self.proba[np.asarray(X, dtype=int).ravel()]


def _prediction() -> SentencePrediction:
    """Two mentions as the full models give them: the top concept and stance, and all odds."""
    mentions = []
    for (start, end), links, stances in zip([(11, 21), (29, 35)], LINKS, STANCES, strict=True):
        concept = max(links, key=lambda c: links[c])
        stance = max(stances, key=lambda s: stances[s])
        mentions.append(
            Mention(
                start, end, 0.8, concept, links[concept], stance, stances[stance], links, stances
            )
        )
    marginals = [
        {t: 0.9 if t == tag else 0.05 for t in ("O", "B-TRAIT", "I-TRAIT")} for tag in TAGS
    ]
    spans = [Span(m.start, m.end, m.concept, m.stance) for m in mentions]
    return SentencePrediction(mentions, TagResult(spans, TOKENS, TAGS, marginals, 0.9**8))


def test_pool_item_keeps_tagger_figures() -> None:
    prediction = _prediction()
    item = pool_item(prediction)
    assert item.n_tokens == len(TOKENS)
    assert item.path_prob == pytest.approx(0.9**8)
    assert list(item.marginals) == prediction.tagged.marginals


def test_pool_item_uncertainty_is_that_of_the_full_distributions() -> None:
    # modAL's classifier_uncertainty (1 - max probability) over every concept and stance
    # the models gave is the outside reference: the top probability must be enough.
    concepts = sorted({c for d in LINKS for c in d})
    links = np.array([[d.get(c, 0.0) for c in concepts] for d in LINKS])
    stances = np.array([[d[s] for s in STANCES[0]] for d in STANCES])
    expected = np.concatenate(
        [
            classifier_uncertainty(ProbaTable(links), np.arange(2)),
            classifier_uncertainty(ProbaTable(stances), np.arange(2)),
        ]
    )
    assert link_stance([pool_item(_prediction())])[0] == pytest.approx(expected.max())


def test_pool_item_counts_unlinked_mentions_by_their_link_probability() -> None:
    prediction = _prediction()
    unlinked = prediction.mentions[0]._replace(concept=None, link_prob=0.2)
    untouched = prediction.mentions[1]._replace(concept=None, link_prob=0.0, stance=None)
    item = pool_item(prediction._replace(mentions=[unlinked, untouched]))
    assert item.link_dists == [{UNLINKED: 0.2}]
    assert item.stance_dists == [{"liked": 0.6}]


def test_suggested_spans_are_the_mentions() -> None:
    assert suggested_spans(_prediction()) == (
        Span(11, 21, "BTX:0002", "liked"),
        Span(29, 35, "BTX:0007", "disliked"),
    )


def test_tag_pool_scores_every_sentence_and_keeps_stop_paths() -> None:
    model = FakeModel()
    pool = [SENTENCE, SENTENCE._replace(id=2)]
    update = tag_pool(model, get_strategy("least_confidence"), pool, [SENTENCE], [])
    # FakeModel's path probability is 1 - 1 / (id + 1): least confidence is 1 / (id + 1)
    assert update.raw_scores == pytest.approx({1: 1 / 2, 2: 1 / 3})
    assert update.stop_paths == [tuple(model.predict(SENTENCE).tagged.tags)]
    assert update.kappa is None  # no earlier model to agree with


def test_tag_pool_refuses_a_model_that_loses_sentences() -> None:
    def lossy(sentences: object) -> list[SentencePrediction]:
        return []

    with pytest.raises(TraitsError, match="returned 0 predictions for 1 sentences"):
        tag_pool(lossy, get_strategy("random"), [SENTENCE], [], [])


def test_retraining_reports_a_failure_as_one_update() -> None:
    def broken(data: TrainingData) -> FakeModel:
        raise ValueError("the CRF ran out of memory")

    job = Retraining()
    assert job.result() is None and not job.join(0.1)
    job.start(broken, [], get_strategy("random"), [SENTENCE], [], [])
    assert job.running
    deadline = time.monotonic() + 10
    while (update := job.result()) is None and time.monotonic() < deadline:
        time.sleep(0.01)
    assert update is not None and update.error == "the CRF ran out of memory"
    assert not job.running
