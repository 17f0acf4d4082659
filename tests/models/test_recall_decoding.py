"""Decoding for recall while the tagger has seen few labels."""

from __future__ import annotations

from pathlib import Path

import pytest
from seqeval.metrics import f1_score, recall_score
from seqeval.metrics.sequence_labeling import get_entities
from seqeval.scheme import IOB2

from extractor.models.recall_decoding import RECALL_BELOW, RECALL_THRESHOLD, recall_tags
from extractor.models.tagger import TraitTagger, sentence_items
from extractor.models.tagger_training import fit_tagger
from extractor.nlp.dictionary import build_dictionary
from extractor.nlp.spans import spans_to_iob
from extractor.types import Sentence
from tests.mams import mams_pairs
from tests.models.toy import toy_gold

O, B, I = "O", "B-TRAIT", "I-TRAIT"  # noqa: E741 (the IOB2 tags)


def marg(trait: float, begin_share: float = 1.0) -> dict[str, float]:
    """A token's marginals: TRAIT probability ``trait``, of which ``begin_share`` is B."""
    return {O: 1.0 - trait, B: trait * begin_share, I: trait * (1.0 - begin_share)}


def test_without_threshold_the_path_is_returned_as_it_is() -> None:
    tags = [O, B, I, O]
    assert recall_tags(tags, [marg(0.9)] * 4, None) == tags


def test_probable_tokens_outside_the_path_become_spans() -> None:
    tags = [O, O, O, B, O, O]
    marginals = [marg(0.1), marg(0.4), marg(0.5, 0.2), marg(0.9), marg(0.2), marg(0.35)]
    # Tokens 1-2: one span (token 2 is more likely inside than a beginning); token 5 alone.
    assert recall_tags(tags, marginals, 0.3) == [O, B, I, B, O, B]
    assert recall_tags(tags, marginals, 0.6) == tags


def test_a_probable_run_touching_a_path_span_is_left_out() -> None:
    # Tokens 0-2 read as one span B I I that overlaps the path's span at token 2.
    tags = [O, O, B, I]
    marginals = [marg(0.5), marg(0.5, 0.1), marg(0.9, 0.1), marg(0.9, 0.1)]
    assert recall_tags(tags, marginals, 0.3) == tags


def test_added_spans_read_the_same_by_seqeval() -> None:
    # seqeval (strict IOB2) reads the result as the path's spans plus the new ones.
    tags = [B, O, O, O, B, I, O]
    marginals = [marg(0.8), marg(0.1), marg(0.6), marg(0.5, 0.3), marg(0.9), marg(0.9), marg(0.4)]
    out = recall_tags(tags, marginals, 0.3)
    entities = {(s, e) for _, s, e in get_entities(out)}
    assert {(s, e) for _, s, e in get_entities(tags)} < entities
    assert entities == {(0, 0), (2, 3), (4, 5), (6, 6)}


def test_fit_tagger_decodes_for_recall_only_on_few_gold_sentences(tmp_path: Path) -> None:
    gold = toy_gold()
    few = fit_tagger(gold, [], None, None, max_iterations=20)
    assert few.recall_threshold == RECALL_THRESHOLD
    many = fit_tagger(gold, [], None, None, recall_below=len(gold), max_iterations=20)
    assert many.recall_threshold is None
    few.save(tmp_path)
    assert TraitTagger.load(tmp_path).recall_threshold == RECALL_THRESHOLD
    assert RECALL_BELOW > len(gold)


def test_the_dictionary_alone_reads_the_best_path() -> None:
    dictionary = build_dictionary([("TX:0001", "taste", "en")])
    silver = [Sentence(i, f"We like the taste of Velora {i} .", "en") for i in range(5)]
    assert fit_tagger([], silver, dictionary, None, max_iterations=5).recall_threshold is None


@pytest.mark.parametrize("size", [100, 200])
def test_recall_decoding_lifts_span_f1_on_few_mams_labels(size: int) -> None:
    # MAMS aspect terms (Jiang et al., EMNLP-IJCNLP 2019, Apache-2.0): the first `size`
    # train sentences, no dictionary or clusters, scored on the first 400 test sentences
    # by seqeval (strict IOB2). Project measurement: F1 0.601 -> 0.610 at 100 sentences
    # (recall 0.541 -> 0.694), 0.624 -> 0.646 at 200 (recall 0.543 -> 0.671).
    train, test = mams_pairs("train", size), mams_pairs("test", 400)
    items = [sentence_items(s, None, None) for s, _ in train]
    y = [spans_to_iob(o, spans) for (o, _, _), (_, spans) in zip(items, train, strict=True)]
    tagger = TraitTagger().fit([f for _, f, _ in items], y)
    test_items = [sentence_items(s, None, None) for s, _ in test]
    gold = [spans_to_iob(o, spans) for (o, _, _), (_, spans) in zip(test_items, test, strict=True)]
    paths = tagger.predict([f for _, f, _ in test_items])
    plain = [p.tags for p in paths]
    tagger.recall_threshold = RECALL_THRESHOLD
    recalled = [p.tags for p in tagger.predict([f for _, f, _ in test_items])]
    assert recalled == [recall_tags(p.tags, p.marginals, RECALL_THRESHOLD) for p in paths]

    def scores(pred: list[list[str]]) -> tuple[float, float]:
        kw = {"mode": "strict", "scheme": IOB2}
        return recall_score(gold, pred, **kw), f1_score(gold, pred, **kw)

    (r0, f0), (r1, f1) = scores(plain), scores(recalled)
    assert r1 > r0 + 0.1
    assert f1 > f0
