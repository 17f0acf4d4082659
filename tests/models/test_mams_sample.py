"""Outside check of the tagger on a sample of open data, fast enough for the default suite.

MAMS aspect terms (Jiang et al., EMNLP-IJCNLP 2019, Apache-2.0; read from
``../shared/datasets/mams-atsa/``): the tagger with its default parameters is trained on
the first 800 train sentences, without dictionary or clusters, and tags the first 400
test sentences. The span F1 is computed by seqeval (strict IOB2 mode), the reference
library for CoNLL-style span scores, and must agree with our own span scorer.
"""

from __future__ import annotations

import pytest
from seqeval.metrics import f1_score
from seqeval.scheme import IOB2

from extractor.models.tagger import TraitTagger, sentence_items
from extractor.nlp.spans import iob_to_spans, span_prf, spans_to_iob
from tests.mams import mams_pairs

TRAIN, TEST = 800, 400


def test_mams_sample_span_f1_by_seqeval() -> None:
    train, test = mams_pairs("train", TRAIN), mams_pairs("test", TEST)
    items = [sentence_items(s, None, None) for s, _ in train]
    tagger = TraitTagger().fit(
        [f for _, f, _ in items],
        [spans_to_iob(o, spans) for (o, _, _), (_, spans) in zip(items, train, strict=True)],
    )
    test_items = [sentence_items(s, None, None) for s, _ in test]
    paths = tagger.predict([f for _, f, _ in test_items])
    pairs = zip(test_items, test, strict=True)
    gold_tags = [spans_to_iob(o, spans) for (o, _, _), (_, spans) in pairs]
    pred_tags = [p.tags for p in paths]
    f1 = f1_score(gold_tags, pred_tags, mode="strict", scheme=IOB2)
    ours = span_prf(
        [spans for _, spans in test],
        [iob_to_spans(o, p.tags) for (o, _, _), p in zip(test_items, paths, strict=True)],
    ).f1
    assert ours == pytest.approx(f1, abs=1e-9)
    # Project measurement (no published figure for this sample): the default parameters
    # gave 0.681 here (c2=4: 0.672, c2=8: 0.663, 50 epochs: 0.690); the bar sits two
    # points below, so a change that costs the tagger that much on outside data fails.
    # Tagging every token O scores 0.
    assert f1 >= 0.66
