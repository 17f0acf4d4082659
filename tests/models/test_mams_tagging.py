"""Outside check of the tagger on open data: aspect-term spans of MAMS (EMNLP-IJCNLP 2019).

Trained on the train split's gold spans only (no dictionary), scored with strict exact
span F1 on the test split. Word clusters are learned from the texts of all three splits
without their labels, as the tool learns them from a workspace's unlabeled answers.
"""

from __future__ import annotations

import time

import pytest

from extractor.models.tagger import tag_sentences
from extractor.models.tagger_training import fit_tagger
from extractor.nlp.clusters import learn_clusters
from extractor.nlp.spans import span_prf
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
