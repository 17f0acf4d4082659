"""Temperature calibration of the tagger, checked against outside references.

* The decoder at temperature T against python-crfsuite's own tagger (the reference
  library) opening the same model file with every weight divided by T: marginals and path
  probabilities must agree to rounding, and the best path must be the one at T = 1.
* The fitted temperature against scikit-learn's ``sklearn.metrics.log_loss`` and
  ``sklearn.calibration.calibration_curve`` on held-out MAMS tokens (Jiang et al.,
  EMNLP-IJCNLP 2019, Apache-2.0; read from ``../shared/datasets/mams-atsa/``): trained
  with the averaged perceptron on MAMS train sentences and cross-fitted on them alone, the
  temperature must lower the log-loss and the expected calibration error on val tokens
  against T = 1.
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pycrfsuite
import pytest
from sklearn.calibration import calibration_curve
from sklearn.metrics import log_loss

from extractor.models.crf_decoder import _FEATURE, _HEADER, CrfDecoder
from extractor.models.tagger import TraitTagger, sentence_items
from extractor.models.tagger_calibration import (
    CALIBRATE_FROM,
    FALLBACK,
    cross_fitted_temperature,
)
from extractor.models.tagger_training import fit_tagger
from extractor.nlp.clusters import learn_clusters
from extractor.nlp.spans import spans_to_iob
from extractor.types import TAGS, Sentence, Span
from tests.mams import SKIP_REASON, load_mams
from tests.models.toy import toy_gold, toy_xy


def _scaled_model(model: bytes, temperature: float) -> bytes:
    """Return a CRFsuite model file with every weight divided by ``temperature``."""
    off_feat = _HEADER.unpack_from(model)[7]  # CRFsuite's crf1d header: offset of features
    count = int.from_bytes(model[off_feat + 8 : off_feat + 12], "little")
    start = off_feat + 12
    features = np.frombuffer(model, dtype=_FEATURE, count=count, offset=start).copy()
    features["weight"] /= temperature
    return model[:start] + features.tobytes() + model[start + features.nbytes :]


@pytest.fixture(scope="module")
def mams() -> tuple[list, list, list, list]:
    train, val = load_mams("train"), load_mams("val")
    if train is None or val is None:
        pytest.skip(SKIP_REASON)
    data = train[:300] + val[:300]
    sentences = [Sentence(i, d["sentence"], d["lang"]) for i, d in enumerate(data)]
    clusters = learn_clusters([(s.text, s.lang) for s in sentences], space="none")
    X, y = [], []
    for s, d in zip(sentences, data, strict=True):
        offsets, feats, _ = sentence_items(s, None, clusters)
        X.append(feats)
        y.append(spans_to_iob(offsets, [Span(m["start"], m["end"]) for m in d["mentions"]]))
    return X[:300], y[:300], X[300:], y[300:]


def test_decoder_at_a_temperature_is_crfsuite_on_weights_divided_by_it(mams: tuple) -> None:
    X, y, held_X, _ = mams
    tagger = TraitTagger(algorithm="ap", max_iterations=5).fit(X, y)
    decoder = CrfDecoder.from_model(tagger.model_bytes_)
    plain = decoder.decode(held_X[:100])
    for temperature in (0.5, 7.0):
        scaled = _scaled_model(tagger.model_bytes_, temperature)  # kept: CRFsuite reads it
        reference = pycrfsuite.Tagger()
        reference.open_inmemory(scaled)
        ours = decoder.decode(held_X[:100], temperature=temperature)
        spread = 0
        for xseq, d, d1 in zip(held_X[:100], ours, plain, strict=True):
            reference.set([a[0] + a[1] if isinstance(a[0], tuple) else a for a in xseq])
            assert d.path == d1.path  # the best path does not depend on the temperature
            expected = [
                [reference.marginal(lab, t) for lab in decoder.labels] for t in range(len(xseq))
            ]
            np.testing.assert_allclose(d.marginals, expected, rtol=1e-9, atol=1e-12)
            names = [decoder.labels[i] for i in d.path]
            assert d.probability == pytest.approx(reference.probability(names), rel=1e-9)
            spread += not np.allclose(d.marginals, d1.marginals)
        assert spread > 50  # the temperature changed most sentences' marginals


def _val_figures(tagger: TraitTagger, X: list, y: list) -> tuple[float, float]:
    """Return scikit-learn's token log-loss and the expected calibration error of P(trait)."""
    probs, truth = [], []
    for path, tags in zip(tagger.predict(X), y, strict=True):
        probs += [[m[t] for t in TAGS] for m in path.marginals]
        truth += [TAGS.index(t) for t in tags]
    p = np.clip(np.array(probs), 1e-15, 1.0)
    p /= p.sum(axis=1, keepdims=True)
    trait, is_trait = 1.0 - p[:, 0], (np.array(truth) != 0).astype(int)
    frac, mean = calibration_curve(is_trait, trait, n_bins=10)
    counts = np.bincount(np.searchsorted(np.linspace(0, 1, 11)[1:-1], trait), minlength=10)
    ece = float(np.sum(counts[counts > 0] * np.abs(frac - mean)) / len(trait))
    return float(log_loss(truth, p, labels=[0, 1, 2])), ece


def test_fitted_temperature_lowers_held_out_log_loss_and_calibration_error(mams: tuple) -> None:
    X, y, held_X, held_y = mams
    params: dict[str, Any] = {"algorithm": "ap", "max_iterations": 5}
    tagger = TraitTagger(**params).fit(X, y)
    tagger.temperature = cross_fitted_temperature(params, X, y)
    assert tagger.temperature > 2.0  # the perceptron's weights are far too sure of themselves
    fitted_loss, fitted_ece = _val_figures(tagger, held_X, held_y)
    fitted = tagger.temperature
    tagger.temperature = 1.0
    plain_loss, plain_ece = _val_figures(tagger, held_X, held_y)
    assert fitted_loss < 0.5 * plain_loss, (fitted, fitted_loss, plain_loss)
    assert fitted_ece < plain_ece, (fitted_ece, plain_ece)
    # SGD is trained for likelihood: its fitted temperature stays near 1.
    assert 0.5 < cross_fitted_temperature({"algorithm": "l2sgd"}, X, y) < 2.0


def test_fit_tagger_calibrates_the_perceptron_and_saves_the_temperature(tmp_path) -> None:
    gold = toy_gold()
    assert len(gold) >= CALIBRATE_FROM
    tagger = fit_tagger(gold, [], None, None, algorithm="ap", max_iterations=5)
    assert tagger.temperature != 1.0
    tagger.save(tmp_path)
    again = TraitTagger.load(tmp_path)
    assert again.temperature == tagger.temperature
    X, _ = toy_xy(gold)
    assert [p.marginals for p in again.predict(X)] == [p.marginals for p in tagger.predict(X)]
    # Likelihood-trained SGD is left alone unless asked.
    assert fit_tagger(gold, [], None, None, algorithm="l2sgd").temperature == 1.0
    assert fit_tagger(gold, [], None, None, algorithm="l2sgd", calibrate=True).temperature != 1.0


def test_too_few_gold_sentences_take_the_documented_temperature() -> None:
    few = toy_gold()[: CALIBRATE_FROM - 1]
    tagger = fit_tagger(few, [], None, None, algorithm="ap", max_iterations=5)
    assert tagger.temperature == FALLBACK["ap"]


def test_a_temperature_that_is_no_positive_number_is_refused() -> None:
    X, y = toy_xy(toy_gold())
    decoder = CrfDecoder.from_model(TraitTagger(algorithm="ap").fit(X, y).model_bytes_)
    for bad in (0.0, -1.0, float("nan"), float("inf")):
        with pytest.raises(ValueError, match="temperature"):
            decoder.decode(X[:1], temperature=bad)
