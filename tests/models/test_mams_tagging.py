"""Outside check of the tagger on open data: aspect-term spans of MAMS (EMNLP-IJCNLP 2019).

Trained on the train split's gold spans only (no dictionary), scored with strict exact
span F1 on the test split. Word clusters are learned from the texts of all three splits
without their labels, as the tool learns them from a workspace's unlabeled answers.
"""

from __future__ import annotations

import time

import pytest
from seqeval.metrics import f1_score
from seqeval.scheme import IOB2

from extractor.models.tagger import tag_sentences
from extractor.models.tagger_training import AXES_BELOW, fit_tagger
from extractor.nlp import pretrained
from extractor.nlp.clusters import learn_clusters
from extractor.nlp.spans import span_prf, spans_to_iob
from extractor.nlp.text import tokenize
from tests.mams import mams_pairs

pytestmark = pytest.mark.slow


def test_mams_span_f1_with_clusters_reaches_target() -> None:
    train, val, test = mams_pairs("train"), mams_pairs("val"), mams_pairs("test")
    texts = [(s.text, s.lang) for s, _ in train + val + test]
    start = time.perf_counter()
    clusters = learn_clusters(texts)
    tagger = fit_tagger(train, [], None, clusters, gold_weight=1)
    seconds = time.perf_counter() - start
    results = tag_sentences(tagger, [s for s, _ in test], None, clusters)
    scores = span_prf([g for _, g in test], [r.spans for r in results])
    print(
        f"MAMS test span F1 {scores.f1:.4f} (P {scores.precision:.4f}, "
        f"R {scores.recall:.4f}); clusters + training {seconds:.1f}s"
    )
    # Target set by the project, not a published figure: a plain CRF with basic word
    # features measured about 0.725 strict span F1 on this split here (project measurement),
    # so the features and clusters must beat 0.74.
    assert scores.f1 >= 0.74


def test_main_axes_lift_span_f1_on_100_mams_labels() -> None:
    # The first 100 train sentences labelled, word clusters (with the pretrained space's
    # main axes) learned from the text of the first 2,000 train and 400 test sentences,
    # scored on those 400 test sentences by seqeval (strict IOB2), the reference library.
    # Project measurement: 0.6476 without the axes, 0.6582 with them (and +0.4 / +0.8 /
    # +0.9 points on three seeded random draws of 100 sentences).
    if not pretrained.installed(pretrained.DEFAULT):
        pytest.skip(f"the pretrained space {pretrained.DEFAULT!r} is not installed")
    train, test = mams_pairs("train", 2000), mams_pairs("test", 400)
    clusters = learn_clusters([(s.text, s.lang) for s, _ in train + test])
    assert len(clusters["pretrained"]["axes"]) > 5000
    gold = [spans_to_iob(tokenize(s.text, s.lang), spans) for s, spans in test]

    def f1(axes_below: int) -> float:
        tagger = fit_tagger(train[:100], [], None, clusters, axes_below=axes_below)
        assert tagger.space_axes == bool(axes_below)
        results = tag_sentences(tagger, [s for s, _ in test], None, clusters)
        return f1_score(gold, [r.tags for r in results], mode="strict", scheme=IOB2)

    assert f1(AXES_BELOW) > f1(0)
