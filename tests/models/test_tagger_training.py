"""Training the CRF tagger from gold and dictionary-labelled (silver) sentences."""

from __future__ import annotations

import itertools
from pathlib import Path

import numpy as np
import pycrfsuite
import pytest

from extractor.errors import InputError
from extractor.models.tagger import TraitTagger, sentence_items, tag_sentences
from extractor.models.tagger_training import AXES_BELOW, _self_labelled, _silver, fit_tagger
from extractor.nlp.clusters import learn_clusters
from extractor.nlp.dictionary import build_dictionary
from extractor.nlp.fold import fold
from extractor.nlp.text import tokenize
from extractor.types import Sentence, Span
from tests.models.toy import TEMPLATES, labelled, toy_gold, toy_xy


def test_fit_tagger_uses_dictionary_and_keeps_its_concept() -> None:
    dictionary = build_dictionary([("TX:0001", "taste", "en"), ("TX:0002", "yield", "en")])
    silver = [
        Sentence(i, tpl.format(t=t), "en")
        for i, (tpl, t) in enumerate(itertools.product(TEMPLATES, ["taste", "yield"]))
    ]
    tagger = fit_tagger(toy_gold()[:5], silver, dictionary, None, max_iterations=50)
    (result,) = tag_sentences(
        tagger, [Sentence(9, "The yield of Velora is good .", "en")], dictionary, None
    )
    assert result.spans == [Span(4, 9, "TX:0002")]
    assert len(result.token_offsets) == len(result.tags) == len(result.marginals) == 7
    assert 0.0 < result.probability <= 1.0


@pytest.mark.parametrize(
    ("silver_filter", "kept", "firmness_labelled"),
    [("all", 3, False), ("matched", 2, False), ("gold-check", 1, False), ("self-train", 2, True)],
    ids=["all", "matched", "gold-check", "self-train"],
)
def test_silver_filter_handles_unlisted_trait(
    silver_filter: str, kept: int, firmness_labelled: bool
) -> None:
    # The dictionary lacks "firmness", which gold labels as a trait: a silver sentence
    # mentioning it must not teach the tagger that "firmness" is O.
    dictionary = build_dictionary([("TX:0001", "taste", "en")])
    silver = [
        Sentence(1, "We like the taste and the firmness of Velora .", "en"),
        Sentence(2, "We like the taste of Velora .", "en"),
        Sentence(3, "We walked to the market .", "en"),
    ]
    X, y = toy_xy(toy_gold())
    sx, sy, _ = _silver(silver, dictionary, None, X, y, silver_filter, 0.5, {"max_iterations": 50})
    assert len(sx) == kept
    firmness_tags = [
        tags[i]
        for tags in sy
        if len(tags) == len(tokenize(silver[0].text, "en"))
        for i in [tokenize(silver[0].text, "en").index((26, 34))]
    ]
    assert ("B-TRAIT" in firmness_tags) == firmness_labelled


def test_fit_tagger_rejects_unknown_silver_filter() -> None:
    with pytest.raises(InputError, match="silver_filter must be one of"):
        fit_tagger(toy_gold(), [], None, None, silver_filter="none")


def test_self_labelled_keeps_sentences_whose_path_the_judge_is_sure_of() -> None:
    X, y = toy_xy(toy_gold())
    judge = TraitTagger(max_iterations=50).fit(X, y)
    unlabelled, _ = toy_xy([labelled(tpl.format(t="aroma"), "aroma") for tpl in TEMPLATES])
    paths = judge.predict(unlabelled)
    threshold = sorted(p.probability for p in paths)[len(paths) // 2]
    kept_X, kept_y = _self_labelled(judge, unlabelled, threshold)
    sure = [
        (x, p.tags) for x, p in zip(unlabelled, paths, strict=True) if p.probability >= threshold
    ]
    assert 0 < len(kept_X) < len(unlabelled)
    assert kept_X == [x for x, _ in sure] and kept_y == [t for _, t in sure]


def test_fit_tagger_self_trains_only_on_sentences_above_the_threshold() -> None:
    gold = toy_gold()[:10]
    silver = [Sentence(100 + i, tpl.format(t="aroma"), "en") for i, tpl in enumerate(TEMPLATES)]
    plain = fit_tagger(gold, silver, None, None, max_iterations=20)
    nobody_sure = fit_tagger(
        gold, silver, None, None, max_iterations=20, self_sentences=10, self_threshold=1.01
    )
    everybody = fit_tagger(
        gold, silver, None, None, max_iterations=20, self_sentences=10, self_threshold=0.0
    )
    assert nobody_sure.model_bytes_ == plain.model_bytes_
    assert everybody.model_bytes_ != plain.model_bytes_


def _with_axes(sentences: list[Sentence]) -> dict:
    """A cluster model of the sentences, every word given 8 seeded main-axis coordinates."""
    clusters = learn_clusters([(s.text, s.lang) for s in sentences], space="none")
    rng = np.random.default_rng(0)
    words = {fold(s.text[a:b]) for s in sentences for a, b in tokenize(s.text, s.lang)}
    places = {w: np.round(rng.normal(size=8) / 3, 4).tolist() for w in sorted(words)}
    clusters["pretrained"] = {**clusters["pretrained"], "axes": places}
    return clusters


def test_fit_tagger_reads_the_main_axes_only_on_few_gold_sentences(tmp_path: Path) -> None:
    gold = toy_gold()
    sentences = [s._replace(id=i) for i, (s, _) in enumerate(gold)]
    clusters = _with_axes(sentences)
    few = fit_tagger(gold, [], None, clusters, max_iterations=20)
    many = fit_tagger(gold, [], None, clusters, axes_below=len(gold), max_iterations=20)
    assert few.space_axes and not many.space_axes
    assert AXES_BELOW > len(gold)

    def axis_weights(tagger: TraitTagger) -> int:
        crf = pycrfsuite.Tagger()
        crf.open_inmemory(tagger.model_bytes_)
        return sum(1 for (a, _), w in crf.info().state_features.items() if a[:1] == "v" and w)

    assert axis_weights(few) >= 8
    assert axis_weights(many) == 0
    # Tagging builds the features the model was trained on: its probabilities are those
    # of the features with the axes (CRFsuite decodes these {name: value} dicts).
    results = tag_sentences(few, sentences, None, clusters)
    with_axes = few.predict([sentence_items(s, None, clusters, axes=True)[1] for s in sentences])
    without = few.predict([sentence_items(s, None, clusters)[1] for s in sentences])
    assert [r.probability for r in results] == [p.probability for p in with_axes]
    assert [r.probability for r in results] != [p.probability for p in without]
    few.save(tmp_path)
    assert TraitTagger.load(tmp_path).space_axes
    # Without gold (the dictionary alone) the axes wait, like the recall decoding.
    dictionary = build_dictionary([("TX:0001", "taste", "en")])
    assert not fit_tagger([], sentences, dictionary, clusters, max_iterations=5).space_axes
