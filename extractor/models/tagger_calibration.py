"""A temperature for the tagger's probabilities, fitted on held-out gold sentences.

CRFsuite's averaged perceptron (``ap``) finds good paths but is not trained for
likelihood: its weights are large, so its token marginals and path probabilities sit at 0
and 1 (median path probability on MAMS test 0.999-1.000 against 0.24-0.35 with SGD). Uncertainty
sampling then sees ties, and thresholds on probabilities (the silver judge's, recall
decoding's) mean nothing. Temperature scaling divides every weight by one number T before
marginals are computed (Guo et al. 2017, "On calibration of modern neural networks", for
classifiers; here for a linear-chain CRF): the best path stays, the probabilities spread.

T is the one that minimises the negative log-likelihood of the gold tags under the token
marginals of sentences the model did not train on: :func:`cross_fitted_temperature`
trains one model per fold of the gold sentences on the other folds (and any silver
sentences), decodes the held-out fold, and minimises the pooled loss over ``log T``. With
fewer than :data:`CALIBRATE_FROM` gold sentences, or no trait among the held-out ones,
it returns :data:`FALLBACK` for the trainer (figures in DEVELOPERS.md, "Tagger figures").
"""

from __future__ import annotations

import math
import random
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np
from scipy.optimize import minimize_scalar

from extractor.models.crf_decoder import CrfDecoder
from extractor.models.tagger import Features, TraitTagger
from extractor.nlp.spans import OUTSIDE

CALIBRATE_FROM = 20
"""Gold sentences from which the temperature is fitted rather than :data:`FALLBACK`."""

FOLDS = 3
"""Folds of the gold sentences in cross-fitting."""

MAX_HELD_OUT = 1000
"""Held-out sentences (a seeded sample when there are more) the temperature is fitted on."""

BOUNDS = (0.05, 500.0)
"""The temperatures searched."""

FALLBACK = {"ap": 18.0}
"""The temperature of a trainer when there are too few gold sentences to fit one; 1 for
trainers not named (SGD and L-BFGS are trained for likelihood). For ``ap`` (5 epochs), the
fitted temperatures on MAMS were 16.0-18.8 at 100 and 200 sentences (27 on all 4,297)."""

NEEDS_CALIBRATION = frozenset({"ap", "pa", "arow"})
"""Trainers not trained for likelihood, whose probabilities ``fit_tagger`` calibrates."""


def token_nll(
    decoder: CrfDecoder, X: Sequence[Features], y: Sequence[Sequence[str]], temperature: float
) -> tuple[float, int]:
    """Return the summed negative log marginal of the gold tags, and the tokens counted.

    Tokens whose gold tag the model never learned are not counted (their marginal is 0
    at every temperature).
    """
    where = {label: k for k, label in enumerate(decoder.labels)}
    total, count = 0.0, 0
    for decoded, tags in zip(decoder.decode(X, temperature=temperature), y, strict=True):  # type: ignore[arg-type]
        known = [(i, where[t]) for i, t in enumerate(tags) if t in where]
        if not known:
            continue
        rows, cols = zip(*known, strict=True)
        probs = decoded.marginals[list(rows), list(cols)]
        total -= float(np.log(np.maximum(probs, 1e-300)).sum())
        count += len(known)
    return total, count


def fit_temperature(
    held_out: Sequence[tuple[CrfDecoder, Sequence[Features], Sequence[Sequence[str]]]],
) -> float:
    """Return the temperature minimising the pooled token log-loss of held-out sentences.

    Args:
        held_out: Per model, its decoder and the sentences (features, IOB2 tags) it did not
            train on.
    """

    def loss(log_t: float) -> float:
        total, count = 0.0, 0
        for decoder, X, y in held_out:
            part, n = token_nll(decoder, X, y, math.exp(log_t))
            total, count = total + part, count + n
        return total / max(count, 1)

    low, high = (math.log(b) for b in BOUNDS)
    result = minimize_scalar(loss, bounds=(low, high), method="bounded", options={"xatol": 1e-3})
    return float(math.exp(result.x))


def fallback(params: Mapping[str, Any]) -> float:
    """Return the documented temperature of the trainer ``params`` name."""
    algorithm = TraitTagger(**params).get_params()["algorithm"]
    return FALLBACK.get(algorithm, 1.0)


def cross_fitted_temperature(
    params: Mapping[str, Any],
    gold_X: Sequence[Features],
    gold_y: Sequence[Sequence[str]],
    *,
    weight: int = 1,
    extra_X: Sequence[Features] = (),
    extra_y: Sequence[Sequence[str]] = (),
    folds: int = FOLDS,
    seed: int = 0,
) -> float:
    """Return the temperature fitted by cross-fitting on the gold sentences.

    Each fold's model is a :class:`~extractor.models.tagger.TraitTagger` of ``params``
    trained on the other folds' gold sentences, each repeated ``weight`` times, and on
    ``extra_X``/``extra_y`` (silver sentences), as the tagger itself is trained.

    Args:
        params: The tagger's parameters.
        gold_X: Each gold sentence's features, once.
        gold_y: Their IOB2 tags.
        weight: Repetitions of a gold sentence in training.
        extra_X: Further training sentences (never held out).
        extra_y: Their tags.
        folds: Number of folds.
        seed: Seed of the folds' shuffle.
    """
    n = len(gold_X)
    has_trait = [any(t != OUTSIDE for t in tags) for tags in gold_y]
    if n < max(CALIBRATE_FROM, folds) or sum(has_trait) < folds:
        return fallback(params)
    order = list(range(n))
    random.Random(seed).shuffle(order)
    keep = set(order[:MAX_HELD_OUT])
    fitted = {**params, "recall_threshold": None, "temperature": 1.0}
    held_out = []
    for k in range(folds):
        held = set(order[k::folds])
        inside = [i for i in range(n) if i not in held]
        X = [gold_X[i] for i in inside for _ in range(weight)] + list(extra_X)
        y = [gold_y[i] for i in inside for _ in range(weight)] + list(extra_y)
        model = TraitTagger(**fitted).fit(X, y)
        chosen = sorted(held & keep)
        held_out.append(
            (
                CrfDecoder.from_model(model.model_bytes_),
                [gold_X[i] for i in chosen],
                [gold_y[i] for i in chosen],
            )
        )
    return fit_temperature(held_out)
