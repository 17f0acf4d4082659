"""Intervals and tests for shares of respondents, and their multiple-testing correction.

Every share in an export is a share of *respondents* (k of n people), so the
interval is a binomial one: the Wilson score interval, which stays inside [0, 1]
and behaves well for the small groups and the 0 or n counts that interview
studies produce. Differences between groups (women vs men, farmers vs traders)
are tested on a contingency table of groups x (yes, no), with the test chosen by
the expected-count rule (Cochran's rule, common practice):

* Pearson's chi-square (no continuity correction) when no expected count is
  below 1 and no more than 20% of expected counts are below 5;
* otherwise Fisher's exact test: scipy's exact 2x2 test, or for larger tables a
  Monte-Carlo p-value over random tables with the observed margins, the figures of
  scipy's ``fisher_exact`` with ``scipy.stats.MonteCarloMethod`` computed without its
  per-table checks (:func:`fisher_monte_carlo`; fixed seed, so a workbook written twice
  carries the same p-values).

p-values across traits are adjusted with the Benjamini-Hochberg procedure.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from functools import lru_cache
from typing import NamedTuple

import numpy as np
from scipy import stats as sps
from scipy.special import gammaln
from scipy.stats.contingency import expected_freq
from statsmodels.stats.multitest import multipletests
from statsmodels.stats.proportion import proportion_confint

from extractor.errors import InputError

CHI_SQUARE = "chi-square"
FISHER_2X2 = "Fisher exact"
NO_TEST = "no test"
MONTE_CARLO_RESAMPLES = 9999
MONTE_CARLO_SEED = 20240601
"""Fixed seed of the Monte-Carlo Fisher test, so reruns give identical p-values."""


def fisher_monte_carlo_name(
    n_resamples: int = MONTE_CARLO_RESAMPLES, seed: int = MONTE_CARLO_SEED
) -> str:
    """Return the name under which a Monte-Carlo Fisher test is reported."""
    return f"Fisher exact (Monte Carlo, {n_resamples:,} random tables, seed {seed})"


class GroupTest(NamedTuple):
    """The outcome of a test of difference between groups."""

    test: str
    statistic: float
    p_value: float


def wilson_interval(k: int, n: int, alpha: float = 0.05) -> tuple[float, float]:
    """Return the Wilson score interval for ``k`` successes out of ``n``.

    Args:
        k: Number of respondents with the property, ``0 <= k <= n``.
        n: Number of respondents, at least 1.
        alpha: One minus the confidence level (0.05 for a 95% interval).

    Returns:
        ``(low, high)``, both within [0, 1].

    Raises:
        InputError: If the counts or ``alpha`` are out of range.
    """
    if not (0 < alpha < 1):
        raise InputError(f"The confidence parameter alpha must be between 0 and 1; got {alpha!r}.")
    if int(n) != n or n < 1:
        raise InputError(
            f"The number of respondents n must be a whole number of at least 1; got {n!r}."
        )
    if int(k) != k or not (0 <= k <= n):
        raise InputError(f"The count k must be a whole number between 0 and n={n}; got {k!r}.")
    return _wilson(int(k), int(n), float(alpha))


@lru_cache(maxsize=65536)
def _wilson(k: int, n: int, alpha: float) -> tuple[float, float]:
    """Return :func:`wilson_interval` of checked counts.

    Cached: a workbook asks for the same few hundred intervals thousands of times, and
    statsmodels takes a while per call.
    """
    low, high = proportion_confint(k, n, alpha=alpha, method="wilson")
    # At k = 0 and k = n the Wilson bound is exactly 0 or 1; floating point gives
    # 1e-17 or 1 - 1e-16, which would print as a strange non-zero bound.
    low = 0.0 if k == 0 else max(0.0, float(low))
    high = 1.0 if k == n else min(1.0, float(high))
    return low, high


MIN_SAMPLE = 30
"""Fewest items (gold spans, matched mentions) for a quality figure to mean much.

Common practice (the n >= 30 rule of thumb for a proportion): below it the 95% Wilson
interval is too wide to tell a good model from a poor one; even at 30 items an interval
around 0.5 still spans about 0.33 to 0.67.
"""


def too_few(n: int) -> bool:
    """Return whether ``n`` items are too few for a figure to mean much (:data:`MIN_SAMPLE`)."""
    return n < MIN_SAMPLE


def f1_interval(tp: int, fp: int, fn: int, alpha: float = 0.05) -> tuple[float, float] | None:
    """Return an interval for F1 from the Wilson interval of the Jaccard index.

    F1 = 2J / (1 + J) with J = tp / (tp + fp + fn) (an identity of the two measures;
    from memory). J is a share of the ``tp + fp + fn`` items that are hits, so its
    Wilson interval is carried to F1 through that increasing map.

    Returns:
        ``(low, high)``, or None when there is nothing to score (no item at all).
    """
    n = tp + fp + fn
    if n == 0:
        return None
    low, high = wilson_interval(tp, n, alpha)
    return 2 * low / (1 + low), 2 * high / (1 + high)


def _clean_table(table: Sequence[Sequence[int]] | np.ndarray) -> np.ndarray:
    """Return the table as integers without all-zero rows and columns, or raise."""
    arr = np.asarray(table)
    if arr.ndim != 2:
        raise InputError(
            f"A contingency table must be two-dimensional; got {arr.ndim} dimension(s)."
        )
    if arr.size and (
        not np.all(np.isfinite(arr.astype(float)))
        or np.any(arr < 0)
        or np.any(arr != np.round(arr))
    ):
        raise InputError("A contingency table must hold non-negative whole counts.")
    arr = arr.astype(np.int64)
    # A group nobody belongs to, or an outcome nobody has, carries no information
    # and would make expected counts zero.
    arr = arr[arr.sum(axis=1) > 0]
    if arr.size:
        arr = arr[:, arr.sum(axis=0) > 0]
    return arr


def chi_square_allowed(table: Sequence[Sequence[int]] | np.ndarray) -> bool:
    """Return whether the expected-count rule allows the chi-square test.

    The rule (Cochran; common practice): no expected count below 1, and no more
    than 20% of expected counts below 5. Expected counts are computed from the
    table's margins after all-zero rows and columns are removed.
    """
    arr = _clean_table(table)
    if arr.shape[0] < 2 or arr.shape[1] < 2:
        return False
    expected = expected_freq(arr)
    return bool(expected.min() >= 1 and np.mean(expected < 5) <= 0.20)


def group_difference(
    table: Sequence[Sequence[int]] | np.ndarray,
    *,
    n_resamples: int = MONTE_CARLO_RESAMPLES,
    seed: int = MONTE_CARLO_SEED,
) -> GroupTest:
    """Test whether a share differs between groups, choosing the test by expected counts.

    Args:
        table: Counts with one row per group and one column per outcome,
            typically ``[[yes, no], [yes, no], ...]``.
        n_resamples: Random tables drawn for the Monte-Carlo Fisher test.
        seed: Seed of that Monte-Carlo draw.

    Returns:
        ``GroupTest(test, statistic, p_value)``. ``test`` is ``"chi-square"``
        (statistic: Pearson's X²), ``"Fisher exact"`` (2x2; statistic: sample odds
        ratio), the Monte-Carlo Fisher name (statistic: probability of the observed
        table), or ``"no test"`` with NaNs when fewer than two groups or two
        outcomes have any respondents.

    Raises:
        InputError: If the table is not a 2-D table of non-negative counts.
    """
    arr = _clean_table(table)
    if arr.shape[0] < 2 or arr.shape[1] < 2:
        return GroupTest(NO_TEST, math.nan, math.nan)
    # A summary repeats many tables (the same counts for several traits, every leaf trait
    # again in the parent roll-up); the test of a table is fixed by its counts and seed.
    return _test_table(arr.shape, arr.tobytes(), n_resamples, seed)


@lru_cache(maxsize=4096)
def _test_table(shape: tuple[int, ...], counts: bytes, n_resamples: int, seed: int) -> GroupTest:
    """Return :func:`group_difference` of a cleaned table given by its shape and bytes."""
    arr = np.frombuffer(counts, dtype=np.int64).reshape(shape)
    if chi_square_allowed(arr):
        res = sps.chi2_contingency(arr, correction=False)
        return GroupTest(CHI_SQUARE, float(res.statistic), float(res.pvalue))
    if arr.shape == (2, 2):
        res = sps.fisher_exact(arr)
        return GroupTest(FISHER_2X2, float(res.statistic), float(res.pvalue))
    statistic, p_value = fisher_monte_carlo(arr, n_resamples, seed)
    return GroupTest(fisher_monte_carlo_name(n_resamples, seed), statistic, p_value)


def fisher_monte_carlo(table: np.ndarray, n_resamples: int, seed: int) -> tuple[float, float]:
    """Return the probability of ``table`` and the Monte-Carlo p-value of Fisher's test.

    The same figures as ``scipy.stats.fisher_exact(table, method=MonteCarloMethod(
    n_resamples=n_resamples, rng=numpy.random.default_rng(seed)))``: the same random tables
    (``scipy.stats.random_table`` drawn from that generator), each table's probability by
    the same formula with the same sums, and scipy's rule for a table as extreme as the one
    observed (probability at most the observed one, give or take 100 machine epsilons)
    and for the p-value ((count + 1) / (resamples + 1)). Only scipy's checks of each of
    the thousands of random tables are left out: on the demo they took three quarters of
    the time. A test compares both on many tables.

    Args:
        table: A cleaned table (no all-zero row or column) of at least 2 x 2 counts.
        n_resamples: Random tables drawn.
        seed: Seed of the random generator.
    """
    table = np.ascontiguousarray(table)  # scipy sums each table's cells in this order
    rows, cols = table.sum(axis=1), table.sum(axis=0)
    total = int(table.sum())
    drawn = sps.random_table(rows, cols, seed=np.random.default_rng(seed)).rvs(size=n_resamples)
    lnfac = gammaln(np.arange(total + 1) + 1)  # lnfac[x] is scipy's gammaln(x + 1)
    const = np.sum(lnfac[rows], axis=-1) + np.sum(lnfac[cols], axis=-1) - lnfac[total]
    observed = float(np.exp(const - np.sum(lnfac[table], axis=(-1, -2))))
    null = np.exp(const - np.sum(lnfac[drawn.reshape((-1, *table.shape))], axis=(-1, -2)))
    gamma = abs(np.finfo(np.float64).eps * 100 * observed)
    p_value = (float(np.sum(null <= observed + gamma, dtype=np.float64)) + 1.0) / (
        n_resamples + 1.0
    )
    return min(observed, 1.0), min(max(p_value, 0.0), 1.0)


def bh_adjust(pvalues: Sequence[float]) -> list[float]:
    """Return Benjamini-Hochberg adjusted p-values, in the input order.

    NaN entries (no test was possible) stay NaN and do not count towards the
    number of tests.

    Raises:
        InputError: If a p-value lies outside [0, 1].
    """
    p = np.asarray(pvalues, dtype=float)
    out = np.full(p.shape, np.nan)
    ok = ~np.isnan(p)
    if np.any((p[ok] < 0) | (p[ok] > 1)):
        raise InputError("Every p-value must lie between 0 and 1.")
    if ok.any():
        out[ok] = multipletests(p[ok], method="fdr_bh")[1]
    return [float(x) for x in out]


def format_p(p: float | None) -> str:
    """Return a p-value as people read it: ``< 0.001``, else three decimals; blank when none.

    The three decimals and the ``< 0.001`` floor follow the APA publication manual
    (7th edition, section 6.36; from memory).
    """
    if p is None or math.isnan(p):
        return ""
    return "< 0.001" if p < 0.001 else f"{p:.3f}"


def format_share(k: int, n: int) -> str:
    """Return ``"42% (31–54%)"``: the share of ``k`` in ``n`` with its 95% Wilson interval."""
    if n == 0:
        return ""
    low, high = wilson_interval(k, n)
    return f"{k / n:.0%} ({low:.0%}–{high:.0%})"
