"""The tagger alone: a scikit-learn estimator whose predictions are the models' own type."""

from __future__ import annotations

import pytest
from seqeval.metrics.sequence_labeling import get_entities
from sklearn.base import clone

from extractor.errors import InputError
from extractor.ingest.labels import to_gold
from extractor.loop.tagger_only import TaggerOnly, make_models
from extractor.models.bundle import SentencePrediction, TraitModels
from tests.loop.test_simulate import toy_records  # noqa: E402


def test_clone_copies_parameters_and_drops_fitted_state() -> None:
    gold = to_gold(toy_records(20, 1), first_id=0)
    fitted = TaggerOnly(tagger_params={"max_iterations": 5}).fit(gold, [], [], clusters={})
    # scikit-learn's clone is the outside reference for the estimator contract: it
    # rebuilds the estimator from get_params() and fails when __init__ alters a parameter.
    copy = clone(fitted)
    assert copy.get_params() == {"tagger_params": {"max_iterations": 5}}
    assert copy.get_params()["tagger_params"] is not fitted.tagger_params
    assert not hasattr(copy, "tagger_")


def test_predictions_are_mentions_without_stance_along_the_tag_path() -> None:
    gold = to_gold(toy_records(30, 1), first_id=0)
    model = TaggerOnly(tagger_params={"max_iterations": 20}).fit(gold, [], [], clusters={})
    sentences = [s for s, _ in to_gold(toy_records(6, 2), first_id=100)]
    predictions = model.predict(sentences)
    assert all(isinstance(p, SentencePrediction) for p in predictions)
    assert any(p.mentions for p in predictions)
    for p in predictions:
        tagged = p.tagged
        # seqeval reads the IOB2 path independently: (type, first token, last token)
        expected = [
            (tagged.token_offsets[a][0], tagged.token_offsets[b][1])
            for _, a, b in get_entities(list(tagged.tags))
        ]
        assert [(m.start, m.end) for m in p.mentions] == expected
        assert all(m.stance is None and m.concept_probs is None for m in p.mentions)


def test_fit_without_labels_or_aliases_is_refused() -> None:
    with pytest.raises(InputError, match="labeled sentences or aliases"):
        TaggerOnly().fit([], [], [])


@pytest.mark.parametrize(
    ("kind", "expected"),
    [("tagger", TaggerOnly), ("traits", TraitModels)],
    ids=["tagger", "traits"],
)
def test_make_models_builds_the_named_kind(kind: str, expected: type) -> None:
    assert isinstance(make_models(kind), expected)


def test_make_models_refuses_an_unknown_kind() -> None:
    with pytest.raises(InputError, match="model must be one of traits, tagger; got 'bert'"):
        make_models("bert")
