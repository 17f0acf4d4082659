"""Query strategies and batch selection, checked against outside sources.

Sources: Settles & Craven (2008), "An Analysis of Active Learning Strategies for Sequence
Labeling Tasks", EMNLP, section 3.1 (least confidence LC = 1 - P(y*|x); token entropy
TE = -(1/T) sum_t sum_m P(y_t=m) log P(y_t=m); total token entropy TTE = T * TE) and the
information density formula (score * mean similarity ** beta), formulas from memory;
modAL's own uncertainty, density and batch functions. The stopping rule's tests are in
test_stopping.py.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from modAL.batch import ranked_batch
from modAL.density import information_density
from modAL.uncertainty import classifier_entropy, classifier_uncertainty

from extractor.errors import InputError
from extractor.loop import strategies as active
from extractor.loop.strategies import (
    STRATEGIES,
    PoolItem,
    get_strategy,
    least_confidence,
    link_stance,
    mean_entropy,
    norm_logprob,
    select,
    total_entropy,
    weigh_by_density,
)

TAGS = ("O", "B-TRAIT", "I-TRAIT")

# Two tokens, hand-built marginals, best path probability 0.45.
HAND = PoolItem(
    marginals=(
        {"O": 0.9, "B-TRAIT": 0.1, "I-TRAIT": 0.0},
        {"O": 0.5, "B-TRAIT": 0.25, "I-TRAIT": 0.25},
    ),
    path_prob=0.45,
    n_tokens=2,
)
# By hand: H1 = -(0.9 ln 0.9 + 0.1 ln 0.1) = 0.094825 + 0.230259 = 0.325083;
#          H2 = -(0.5 ln 0.5 + 2 * 0.25 ln 0.25) = 0.346574 + 0.693147 = 1.039721.
H1, H2 = 0.325083, 1.039721


class ProbaTable:
    """A fake fitted classifier for modAL: predict_proba returns a fixed matrix."""

    def __init__(self, proba: np.ndarray) -> None:
        self.proba = proba

    def predict_proba(self, X: np.ndarray) -> np.ndarray:  # noqa: N803 - modAL's name
        return self.proba[np.asarray(X, dtype=int).ravel()]


def _matrix(item: PoolItem) -> np.ndarray:
    return np.array([[m[t] for t in TAGS] for m in item.marginals])


def _random_item(rng: np.random.Generator, n_tokens: int) -> PoolItem:
    proba = rng.dirichlet(np.ones(3), size=n_tokens)
    return PoolItem(
        marginals=tuple(dict(zip(TAGS, row, strict=True)) for row in proba),
        path_prob=float(np.prod(proba.max(axis=1))),
        n_tokens=n_tokens,
    )


# --------------------------------------------------------------------------- formulas


@pytest.mark.parametrize(
    ("fn", "expected"),
    [
        (least_confidence, 1 - 0.45),  # Settles & Craven 2008, LC
        (total_entropy, H1 + H2),  # Settles & Craven 2008, TTE
        (mean_entropy, (H1 + H2) / 2),  # Settles & Craven 2008, TE
        (norm_logprob, -math.log(0.45) / 2),  # -(1/T) log P(y*): 0.798508 / 2
    ],
    ids=["least-confidence", "total-token-entropy", "token-entropy", "norm-logprob"],
)
def test_strategy_matches_hand_computed_formula(fn, expected) -> None:
    assert fn([HAND])[0] == pytest.approx(expected, abs=1e-6)


@pytest.mark.parametrize("n_tokens", [1, 4, 17], ids=["one-token", "four-tokens", "long"])
def test_entropy_strategies_agree_with_modal_classifier_entropy(n_tokens: int) -> None:
    item = _random_item(np.random.default_rng(n_tokens), n_tokens)
    per_token = classifier_entropy(ProbaTable(_matrix(item)), np.arange(n_tokens))
    assert total_entropy([item])[0] == pytest.approx(per_token.sum())
    assert mean_entropy([item])[0] == pytest.approx(per_token.mean())


@pytest.mark.parametrize("reduce", ["max", "mean"], ids=["max", "mean"])
def test_link_stance_agrees_with_modal_classifier_uncertainty(reduce: str) -> None:
    links = np.array([[0.7, 0.2, 0.1], [0.4, 0.35, 0.25]])
    stances = np.array([[0.9, 0.05, 0.03, 0.02], [0.5, 0.3, 0.1, 0.1]])
    item = PoolItem(
        marginals=HAND.marginals,
        path_prob=0.5,
        n_tokens=2,
        link_dists=tuple({str(k): float(p) for k, p in enumerate(row)} for row in links),
        stance_dists=tuple({str(k): float(p) for k, p in enumerate(row)} for row in stances),
    )
    expected = np.concatenate(
        [
            classifier_uncertainty(ProbaTable(links), np.arange(2)),
            classifier_uncertainty(ProbaTable(stances), np.arange(2)),
        ]
    )
    reference = expected.max() if reduce == "max" else expected.mean()
    assert link_stance([item], reduce=reduce)[0] == pytest.approx(reference)


def test_link_stance_rejects_unknown_reduction() -> None:
    with pytest.raises(InputError, match="'max' or 'mean'"):
        link_stance([HAND], reduce="median")


def test_norm_logprob_does_not_favour_long_sentences_like_least_confidence() -> None:
    # Same per-token confidence 0.9: least confidence grows with length, norm-logprob not.
    short = PoolItem(HAND.marginals, 0.9**2, 2)
    long = PoolItem(tuple(HAND.marginals) * 10, 0.9**20, 20)
    lc = least_confidence([short, long])
    assert lc[1] > lc[0]
    assert norm_logprob([short, long]) == pytest.approx([-math.log(0.9)] * 2)


@pytest.mark.parametrize("name", sorted(STRATEGIES), ids=sorted(STRATEGIES))
def test_strategy_scores_every_untagged_sentence_the_same(name: str) -> None:
    cold = [PoolItem(), PoolItem(n_tokens=5), PoolItem(n_tokens=9)]
    scores = STRATEGIES[name].score(cold)
    assert len(scores) == 3
    assert np.ptp(scores) == 0.0


def test_strategies_include_the_required_names() -> None:
    required = {
        "least_confidence",
        "norm_logprob",
        "total_entropy",
        "mean_entropy",
        "link_stance",
        "random",
        "default",
    }
    assert required <= set(STRATEGIES)


def test_default_strategy_is_not_total_token_entropy() -> None:
    # Total token entropy did worse than random on aspect data; the default normalises.
    assert get_strategy("default").score is not total_entropy


def test_get_strategy_rejects_unknown_name() -> None:
    with pytest.raises(InputError, match="must be one of .*got 'bogus'"):
        get_strategy("bogus")


# --------------------------------------------------------------------------- density


def test_density_equals_modal_information_density() -> None:
    vectors = np.random.default_rng(3).normal(size=(40, 5))
    assert active.density(vectors) == pytest.approx(information_density(vectors))


def test_density_of_large_pool_estimates_modal_from_a_sample(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    vectors = np.random.default_rng(4).normal(size=(600, 4))
    monkeypatch.setattr(active, "_DENSE_LIMIT", 100)
    monkeypatch.setattr(active, "_REFERENCE", 300)
    exact = information_density(vectors)
    estimate = active.density(vectors)
    assert estimate == pytest.approx(exact, rel=0.03)
    assert np.corrcoef(estimate, exact)[0, 1] > 0.99


def test_density_with_reference_of_whole_pool_equals_modal(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    vectors = np.random.default_rng(5).normal(size=(60, 4))
    monkeypatch.setattr(active, "_DENSE_LIMIT", 10)
    monkeypatch.setattr(active, "_REFERENCE", 60)
    assert active.density(vectors) == pytest.approx(information_density(vectors))


def test_weigh_by_density_is_settles_craven_information_density() -> None:
    scores, dens = np.array([0.2, 0.8, 0.5]), np.array([0.5, 0.1, 0.9])
    assert weigh_by_density(scores, dens, 2.0) == pytest.approx(scores * dens**2)


def test_weigh_by_density_uses_density_alone_at_cold_start() -> None:
    dens = np.array([0.5, 0.1, 0.9])
    assert weigh_by_density(np.zeros(3), dens, 1.0) == pytest.approx(dens)


# --------------------------------------------------------------------------- selection


def test_select_takes_highest_scores_without_diversity() -> None:
    scores = np.array([0.1, 0.9, 0.5, 0.7])
    assert select(scores, None, 2, diversity=False) == [1, 3]


def test_select_never_picks_excluded() -> None:
    scores = np.array([0.1, 0.9, 0.5, 0.7])
    assert select(scores, None, 2, diversity=False, exclude={1, 3}) == [2, 0]


def test_select_breaks_cold_start_ties_reproducibly() -> None:
    scores = np.zeros(30)
    first = select(scores, None, 10, diversity=False, seed=7)
    assert first == select(scores, None, 10, diversity=False, seed=7)
    assert first != list(range(10))  # a random order, not the pool order
    assert len(set(first)) == 10


def _near_duplicate_pool() -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(0)
    base = rng.normal(size=8)
    dupes = base + rng.normal(scale=1e-3, size=(5, 8))
    others = rng.normal(size=(20, 8)) * 2
    vectors = np.vstack([dupes, others])
    scores = np.concatenate([np.full(5, 0.95), rng.uniform(0.5, 0.8, size=20)])
    return scores, vectors


def test_select_without_diversity_takes_all_near_duplicates() -> None:
    # The baseline the diverse selection must improve on.
    scores, vectors = _near_duplicate_pool()
    assert sorted(select(scores, vectors, 5, diversity=False)) == [0, 1, 2, 3, 4]


@pytest.mark.parametrize("labeled", [False, True], ids=["cold", "with-labels"])
def test_select_with_diversity_avoids_near_duplicates(labeled: bool) -> None:
    scores, vectors = _near_duplicate_pool()
    labeled_vectors = np.random.default_rng(9).normal(size=(3, 8)) if labeled else None
    picked = select(scores, vectors, 5, diversity=True, labeled_vectors=labeled_vectors)
    assert len(picked) == 5
    assert len(set(picked)) == 5
    assert len({0, 1, 2, 3, 4} & set(picked)) < 5


def test_select_with_diversity_still_spreads_with_more_labels_than_candidates() -> None:
    # The regime of a real loop: 100 labeled sentences, a pool of 300, 50 candidates.
    # Five identical top-scored sentences: a diverse batch asks one of them, not all five.
    # (alpha used to count only the 50 candidates, 50 / 150, and the batch was the top 5.)
    rng = np.random.default_rng(1)
    vectors = rng.normal(size=(300, 16))
    vectors[:5] = vectors[0]
    scores = np.concatenate([np.ones(5), rng.uniform(0.0, 0.9, size=295)])
    labeled_vectors = rng.normal(size=(100, 16))
    picked = select(
        scores, vectors, 5, diversity=True, labeled_vectors=labeled_vectors, candidates=50
    )
    assert len({0, 1, 2, 3, 4} & set(picked)) == 1


def test_ranked_batch_indices_counts_unlabeled_outside_the_candidates() -> None:
    # Given the whole pool's size, alpha is |U| / (|U| + |D|) as modAL computes it on the
    # whole pool: here 1000 / 1004 for the first pick, so distance dominates.
    rng = np.random.default_rng(2)
    pool, known = rng.normal(size=(30, 6)), rng.normal(size=(4, 6))
    uncertainty = np.linspace(1.0, 0.0, 30)
    nearest = np.linalg.norm(pool[:, None] - known[None], axis=2).min(axis=1)
    alpha = 1000 / 1004
    # Source: Cardoso et al. (2017) ranked batch-mode score as modAL's ranked_batch computes
    # it, alpha * (1 - similarity) + (1 - alpha) * uncertainty (formula from memory).
    expected = int(np.argmax(alpha * (1 - 1 / (1 + nearest)) + (1 - alpha) * uncertainty))
    assert active.ranked_batch_indices(pool, uncertainty, known, 1, n_unlabeled=1000) == [expected]


class _Learner:
    """The two attributes modAL's ranked_batch reads from a learner."""

    on_transformed = False

    def __init__(self, labeled: np.ndarray | None) -> None:
        self.X_training = labeled


@pytest.mark.parametrize("labeled", [False, True], ids=["cold-start", "with-labels"])
@pytest.mark.parametrize("seed", [0, 1, 2], ids=["pool-0", "pool-1", "pool-2"])
def test_ranked_batch_indices_equals_modal_ranked_batch(labeled: bool, seed: int) -> None:
    rng = np.random.default_rng(seed)
    pool, uncertainty = rng.normal(size=(30, 6)), rng.uniform(size=30)
    known = rng.normal(size=(4, 6)) if labeled else None
    reference, _ = ranked_batch(
        _Learner(known), pool, uncertainty, n_instances=8, metric="euclidean", n_jobs=None
    )
    ours = active.ranked_batch_indices(pool, uncertainty, known, 8)
    assert ours == [int(i) for i in reference]


def test_select_with_diversity_works_at_cold_start() -> None:
    _, vectors = _near_duplicate_pool()
    picked = select(np.zeros(len(vectors)), vectors, 4, diversity=True)
    assert len(set(picked)) == 4


def test_select_rejects_zero_batch() -> None:
    with pytest.raises(InputError, match="at least 1; got 0"):
        select(np.ones(3), None, 0, diversity=False)


def test_select_rejects_diversity_without_vectors() -> None:
    with pytest.raises(InputError, match="one sentence vector per pool item"):
        select(np.ones(3), None, 2, diversity=True)


def test_select_returns_nothing_from_exhausted_pool() -> None:
    assert select(np.ones(2), None, 2, diversity=False, exclude={0, 1}) == []


def test_sentence_vectors_are_unit_length_and_one_per_sentence() -> None:
    texts = [f"The beans from plot {k} cook fast and taste sweet" for k in range(12)]
    vectors = active.sentence_vectors(texts + ["Leaves turn bitter in Tinsoka"], dims=8)
    assert vectors.shape[0] == 13
    assert np.linalg.norm(vectors, axis=1) == pytest.approx(np.ones(13))
