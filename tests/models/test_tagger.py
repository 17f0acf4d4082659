"""The CRF trait tagger: decoding, marginals, persistence, clone and tagging sentences."""

from __future__ import annotations

import itertools
import json
import time

import pycrfsuite
import pytest
from sklearn.base import clone

from extractor.errors import InputError, ModelError, NotFittedError
from extractor.models.tagger import (
    MODEL_FILE,
    PARAMS_FILE,
    TraitTagger,
    tag_sentences,
)
from extractor.models.tagger_training import fit_tagger
from extractor.nlp.features import sentence_features
from extractor.types import TAGS, Sentence
from tests.models.toy import labelled, toy_gold, toy_xy


@pytest.fixture(scope="module")
def toy_tagger() -> TraitTagger:
    return fit_tagger(toy_gold(), [], None, None, max_iterations=50)


def test_tagger_finds_trait_in_new_sentence(toy_tagger) -> None:
    sentence = Sentence(1, "Velora has a poor taste in the rainy season .", "en")
    (result,) = tag_sentences(toy_tagger, [sentence], None, None)
    assert [sentence.text[s.start : s.end] for s in result.spans] == ["taste"]


def test_tagger_marginals_equal_crfsuite_marginals(toy_tagger) -> None:
    # Outside check: CRFsuite's own forward-backward marginal for every tag (the third
    # tag's marginal is derived from the other two in predict, so compare all three).
    X, _ = toy_xy(toy_gold()[:3])
    crf = toy_tagger._fitted()
    for xseq, path in zip(X, toy_tagger.predict(X), strict=True):
        crf.set(xseq)
        for i, marginal in enumerate(path.marginals):
            assert set(marginal) == set(TAGS)
            for tag in TAGS:
                assert marginal[tag] == pytest.approx(crf.marginal(tag, i), abs=1e-9)


def test_tagger_path_probability_is_the_maximum_over_all_paths(toy_tagger) -> None:
    # Outside check: a linear-chain CRF defines a distribution over all tag paths whose
    # Viterbi path is the most probable one (Lafferty, McCallum & Pereira 2001, from
    # memory); verified by brute force over the 3^5 paths of a five-token sentence.
    X, _ = toy_xy([labelled("We like the taste .", "taste")])
    (path,) = toy_tagger.predict(X)
    crf = pycrfsuite.Tagger()
    crf.open_inmemory(toy_tagger.model_bytes_)
    crf.set(X[0])
    probs = [crf.probability(list(p)) for p in itertools.product(TAGS, repeat=len(X[0]))]
    assert sum(probs) == pytest.approx(1.0, abs=1e-6)
    assert path.probability == pytest.approx(max(probs))


def test_tagger_repairs_inside_after_outside() -> None:
    # Train on deliberately broken tags: "zq" is I-TRAIT right after O, so CRFsuite's
    # own Viterbi path puts I-TRAIT after O; predict must turn it into B-TRAIT.
    words = ["the", "zq", "is", "good"]
    X = [sentence_features(words)] * 5
    y = [["O", "I-TRAIT", "O", "O"]] * 5 + []
    X += [sentence_features(["a", "b", "c"])]
    y += [["B-TRAIT", "I-TRAIT", "O"]]
    tagger = TraitTagger(max_iterations=50, all_possible_transitions=False).fit(X, y)
    raw = pycrfsuite.Tagger()
    raw.open_inmemory(tagger.model_bytes_)
    assert raw.tag(X[0]) == ["O", "I-TRAIT", "O", "O"]  # the flaw being repaired exists
    (path,) = tagger.predict(X[:1])
    assert path.tags == ["O", "B-TRAIT", "O", "O"]


def test_tagger_never_starts_with_inside() -> None:
    X = [sentence_features(["zq", "is", "good"])] * 5
    y = [["I-TRAIT", "O", "O"]] * 5
    tagger = TraitTagger(max_iterations=30).fit(X, y)
    (path,) = tagger.predict(X[:1])
    assert path.tags[0] == "B-TRAIT"


def test_tagger_unfitted_raises() -> None:
    with pytest.raises(NotFittedError, match="not trained"):
        TraitTagger().predict([sentence_features(["a"])])


def test_tagger_init_only_stores_arguments() -> None:
    tagger = TraitTagger(c1=0.3, max_iterations=7)
    assert tagger.get_params()["c1"] == 0.3 and tagger.get_params()["max_iterations"] == 7
    assert not hasattr(tagger, "model_bytes_")


@pytest.mark.parametrize(
    ("X", "y", "message"),
    [
        ([], [], "no tokens"),
        ([sentence_features(["a", "b"])], [["O"]], "2 tokens but 1 tags"),
        ([sentence_features(["a"])], [["B-PER"]], "allowed are"),
        ([sentence_features(["a"])], [], "one tag sequence per sentence"),
    ],
    ids=["empty", "length", "unknown-tag", "count"],
)
def test_tagger_fit_rejects_bad_training_data(X, y, message: str) -> None:
    with pytest.raises(InputError, match=message):
        TraitTagger().fit(X, y)


def test_tagger_save_load_round_trip(toy_tagger, tmp_path) -> None:
    toy_tagger.save(tmp_path)
    loaded = TraitTagger.load(tmp_path)
    X, _ = toy_xy(toy_gold()[:4])
    assert [p.tags for p in loaded.predict(X)] == [p.tags for p in toy_tagger.predict(X)]
    assert loaded.get_params() == toy_tagger.get_params()


def test_tagger_load_refuses_corrupt_model(toy_tagger, tmp_path) -> None:
    toy_tagger.save(tmp_path)
    data = bytearray((tmp_path / MODEL_FILE).read_bytes())
    data[len(data) // 2] ^= 0xFF
    (tmp_path / MODEL_FILE).write_bytes(bytes(data))
    with pytest.raises(ModelError, match="corrupt or foreign"):
        TraitTagger.load(tmp_path)


def test_tagger_load_refuses_foreign_params(tmp_path) -> None:
    (tmp_path / PARAMS_FILE).write_text(json.dumps({"format": "other"}), encoding="utf-8")
    (tmp_path / MODEL_FILE).write_bytes(b"not a model")
    with pytest.raises(ModelError, match="is not a"):
        TraitTagger.load(tmp_path)


def test_tagger_load_refuses_crfsuite_model_with_foreign_tags(tmp_path) -> None:
    foreign = TraitTagger(max_iterations=5).fit([sentence_features(["a"])], [["O"]])
    trainer_tags = [["B-PER", "O"]]
    trainer = pycrfsuite.Trainer(verbose=False)
    trainer.append(sentence_features(["Amali", "said"]), trainer_tags[0])
    trainer.train(str(tmp_path / "foreign.crfsuite"))
    foreign.model_bytes_ = (tmp_path / "foreign.crfsuite").read_bytes()
    foreign.save(tmp_path)
    with pytest.raises(ModelError, match="foreign model"):
        TraitTagger.load(tmp_path)


def test_tagger_load_refuses_missing_folder(tmp_path) -> None:
    with pytest.raises(ModelError, match="cannot be read"):
        TraitTagger.load(tmp_path / "absent")


def test_tag_sentences_refuses_other_clusters(toy_tagger) -> None:
    toy_tagger_with_clusters = fit_tagger(
        toy_gold()[:4], [], None, {"clusters": {}, "fingerprint": "3:abc"}, max_iterations=5
    )
    with pytest.raises(ModelError, match="word clusters"):
        tag_sentences(
            toy_tagger_with_clusters,
            [Sentence(0, "taste", "en")],
            None,
            {"clusters": {}, "fingerprint": "4:def"},
        )


def test_tag_sentences_throughput(toy_tagger) -> None:
    # Project goal: >= 3,000 sentences/s on one core for features + CRF; the floor here
    # is lower so that a busy test machine does not fail it spuriously (CPU time).
    sentences = [
        Sentence(i, f"Respondent {i} said the taste of Velora {i} is good .", "en")
        for i in range(2000)
    ]
    start = time.process_time()
    results = tag_sentences(toy_tagger, sentences, None, None)
    rate = len(sentences) / (time.process_time() - start)
    assert len(results) == len(sentences)
    assert rate > 500, f"{rate:.0f} sentences/s"


def test_tagger_fit_rejects_unknown_algorithm() -> None:
    with pytest.raises(InputError, match="algorithm must be one of"):
        TraitTagger(algorithm="svm").fit([sentence_features(["a"])], [["O"]])


def test_tagger_same_data_gives_same_model() -> None:
    X, y = toy_xy(toy_gold())
    first = TraitTagger(max_iterations=20).fit(X, y).model_bytes_
    second = TraitTagger(max_iterations=20).fit(X, y).model_bytes_
    assert first == second


def test_tag_sentences_resumes_the_garbage_collector(toy_tagger) -> None:
    import gc

    tag_sentences(toy_tagger, [Sentence(id=1, text="The soft grain.", lang="en")], None, None)
    assert gc.isenabled()
    with pytest.raises(TypeError):  # fails inside the paused section (spaCy cannot read None)
        tag_sentences(toy_tagger, [Sentence(id=2, text=None, lang="en")], None, None)  # type: ignore[arg-type]
    assert gc.isenabled()


def test_tagger_clone_gives_an_unfitted_copy_with_the_same_params(toy_tagger) -> None:
    # scikit-learn's clone is the outside reference for the estimator contract: it
    # rebuilds an estimator from get_params() alone and checks that __init__ stored them.
    copy = clone(toy_tagger)
    assert copy.get_params() == toy_tagger.get_params()
    assert copy.get_params()["max_iterations"] == 50
    assert toy_tagger.is_fitted and not copy.is_fitted
