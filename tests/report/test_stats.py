"""Tests of extractor.report.stats against published examples and reference libraries."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats as sps
from statsmodels.stats.multitest import multipletests
from statsmodels.stats.proportion import proportion_confint

from extractor.errors import InputError
from extractor.report.stats import (
    CHI_SQUARE,
    FISHER_2X2,
    MIN_SAMPLE,
    NO_TEST,
    bh_adjust,
    chi_square_allowed,
    f1_interval,
    fisher_monte_carlo,
    group_difference,
    too_few,
    wilson_interval,
)

# Newcombe R.G. (1998) "Two-sided confidence intervals for the single proportion:
# comparison of seven methods", Statistics in Medicine 17:857-872, Table I, method 3
# (Wilson score interval without continuity correction). Values from memory; they
# agree with statsmodels to the four decimals printed in the paper.
NEWCOMBE_TABLE_I = [
    (81, 263, 0.2553, 0.3662),
    (15, 148, 0.0624, 0.1605),
    (0, 20, 0.0, 0.1611),
    (1, 29, 0.0061, 0.1718),
]


@pytest.mark.parametrize(
    ("k", "n", "low", "high"),
    NEWCOMBE_TABLE_I,
    ids=["81-of-263", "15-of-148", "0-of-20", "1-of-29"],
)
def test_wilson_interval_matches_newcombe_table_i(k: int, n: int, low: float, high: float) -> None:
    got = wilson_interval(k, n)
    assert got[0] == pytest.approx(low, abs=5e-5)
    assert got[1] == pytest.approx(high, abs=5e-5)


@pytest.mark.parametrize(
    ("k", "n"),
    [(0, 1), (1, 1), (0, 7), (7, 7), (3, 10), (50, 100), (1, 1000), (999, 1000)],
    ids=["0-1", "1-1", "0-7", "7-7", "3-10", "50-100", "1-1000", "999-1000"],
)
def test_wilson_interval_matches_statsmodels(k: int, n: int) -> None:
    # Reference: statsmodels.stats.proportion.proportion_confint(method="wilson").
    ref = proportion_confint(k, n, alpha=0.05, method="wilson")
    got = wilson_interval(k, n)
    assert got == pytest.approx(ref, abs=1e-12)
    assert 0.0 <= got[0] <= k / n <= got[1] <= 1.0


def test_wilson_interval_narrower_at_lower_confidence() -> None:
    # A 90% interval lies inside the 95% one (definition of a confidence level).
    wide, narrow = wilson_interval(12, 40, 0.05), wilson_interval(12, 40, 0.10)
    assert wide[0] < narrow[0] < narrow[1] < wide[1]


@pytest.mark.parametrize(
    ("k", "n", "alpha", "match"),
    [
        (1, 0, 0.05, "at least 1"),
        (5, 4, 0.05, "between 0 and n"),
        (-1, 4, 0.05, "between 0 and n"),
        (1.5, 4, 0.05, "whole number"),
        (1, 4, 1.5, "alpha"),
    ],
    ids=["n-zero", "k-above-n", "k-negative", "k-fraction", "alpha-out-of-range"],
)
def test_wilson_interval_rejects_bad_counts(k: float, n: int, alpha: float, match: str) -> None:
    with pytest.raises(InputError, match=match):
        wilson_interval(k, n, alpha)  # type: ignore[arg-type]


def test_group_difference_fisher_matches_scipy_docs_example() -> None:
    # scipy.stats.fisher_exact documentation: [[8, 2], [1, 5]] -> odds ratio 20.0,
    # two-sided p = 0.034965034965034975. Expected counts are below 5, so the rule picks Fisher.
    res = group_difference([[8, 2], [1, 5]])
    assert res.test == FISHER_2X2
    assert res.statistic == pytest.approx(20.0)
    assert res.p_value == pytest.approx(0.034965034965034975, rel=1e-12)


def test_group_difference_fisher_matches_hypergeometric_sum() -> None:
    # scipy docs, Notes: for [[6, 2], [1, 4]] the two-sided p is the sum of
    # hypergeometric probabilities not above the observed one: x in {2, 6, 7}.
    m, n, big_n = 13, 8, 7
    expected = sum(sps.hypergeom.pmf(x, m, n, big_n) for x in (2, 6, 7))
    res = group_difference([[6, 2], [1, 4]])
    assert res.p_value == pytest.approx(expected, rel=1e-9)
    assert res.p_value == pytest.approx(0.10256410256410257, rel=1e-9)


def test_group_difference_chi_square_matches_scipy() -> None:
    table = [[30, 20], [18, 32], [25, 25]]
    # Reference: scipy.stats.chi2_contingency, Pearson statistic without Yates correction.
    ref = sps.chi2_contingency(np.array(table), correction=False)
    res = group_difference(table)
    assert res.test == CHI_SQUARE
    assert res.statistic == pytest.approx(ref.statistic, rel=1e-12)
    assert res.p_value == pytest.approx(ref.pvalue, rel=1e-12)


def test_group_difference_chi_square_2x2_matches_textbook_formula() -> None:
    # Pearson X² for a 2x2 table = N(ad - bc)² / (r1 r2 c1 c2) (standard textbook identity).
    a, b, c, d = 40, 60, 25, 75
    n = a + b + c + d
    x2 = n * (a * d - b * c) ** 2 / ((a + b) * (c + d) * (a + c) * (b + d))
    res = group_difference([[a, b], [c, d]])
    assert res.test == CHI_SQUARE
    assert res.statistic == pytest.approx(x2, rel=1e-12)
    assert res.p_value == pytest.approx(sps.chi2.sf(x2, 1), rel=1e-12)


# Expected-count rule (Cochran; common practice). Two equal-sized groups make every
# expected count half the column total, so the tables below sit exactly on the edges.
RULE_CASES = [
    ([[5, 5], [5, 5]], True),  # all expected = 5
    ([[4, 5], [5, 5]], False),  # one of four below 5 (25%)
    ([[4, 10, 10, 10, 10], [4, 10, 10, 10, 10]], True),  # 2 of 10 below 5 = 20%
    ([[4, 4, 10, 10, 10], [4, 4, 10, 10, 10]], False),  # 4 of 10 below 5 = 40%
    ([[1, 10, 10, 10, 10], [0, 10, 10, 10, 10]], False),  # 20%, but 0.5 is below 1
]


@pytest.mark.parametrize(
    ("table", "allowed"),
    RULE_CASES,
    ids=["2x2-all-5", "2x2-one-below-5", "2x5-20pct", "2x5-40pct", "2x5-one-below-1"],
)
def test_chi_square_allowed_switch_point(table: list[list[int]], allowed: bool) -> None:
    expected = sps.contingency.expected_freq(np.array(table))
    # Check the hand-built table really is what the id says (scipy computes expected counts).
    share_below_5 = float(np.mean(expected < 5))
    assert bool(share_below_5 <= 0.2 and expected.min() >= 1) == allowed
    assert chi_square_allowed(table) is allowed


def test_group_difference_large_sparse_table_uses_monte_carlo_fisher() -> None:
    table = [[1, 10, 10, 10, 10], [0, 10, 10, 10, 10]]
    res = group_difference(table)
    assert res.test.startswith("Fisher exact (Monte Carlo")
    # The observed table is the most likely one under independence, so its p-value is large;
    # scipy's fisher_exact with the same seeded Monte-Carlo method is the reference.
    ref = sps.fisher_exact(
        np.array(table),
        method=sps.MonteCarloMethod(n_resamples=9999, rng=np.random.default_rng(20240601)),
    )
    assert res.p_value == pytest.approx(ref.pvalue)
    assert res.p_value == group_difference(table).p_value  # fixed seed: reproducible


def _random_tables(count: int, seed: int) -> list[np.ndarray]:
    """Tables of 2-6 groups x 2-3 outcomes with 1-40 respondents per group, some sparse."""
    rng = np.random.default_rng(seed)
    tables: list[np.ndarray] = []
    while len(tables) < count:
        rows, cols = int(rng.integers(2, 7)), int(rng.integers(2, 4))
        p = rng.uniform(0.02, 0.5)
        shares = [p] + [(1 - p) / (cols - 1)] * (cols - 1)
        table = np.stack([rng.multinomial(n, shares) for n in rng.integers(1, 40, size=rows)])
        table = table[table.sum(axis=1) > 0][:, table.sum(axis=0) > 0]
        if min(table.shape) >= 2:
            tables.append(table)
    return tables


def test_fisher_monte_carlo_gives_scipys_figures_exactly() -> None:
    # Outside reference: scipy's fisher_exact with the same seeded Monte-Carlo method. The
    # same random tables and the same sums, so the same floats, not just close ones; the
    # tables include transposed (non-contiguous) ones and many ties in probability.
    for i, table in enumerate(_random_tables(60, seed=3)):
        table = table if i % 2 else table.T.copy().T
        n_resamples, seed = (999, 9999)[i % 3 == 0], 1000 + i
        ref = sps.fisher_exact(
            table,
            method=sps.MonteCarloMethod(n_resamples=n_resamples, rng=np.random.default_rng(seed)),
        )
        got = fisher_monte_carlo(table, n_resamples, seed)
        assert got == (float(np.ravel(ref.statistic)[0]), float(np.ravel(ref.pvalue)[0])), table


def test_group_difference_monte_carlo_detects_clear_difference() -> None:
    # Every respondent of group 1 in column 1 and so on: exact p is tiny (1/multinomial count).
    res = group_difference([[6, 0, 0], [0, 6, 0], [0, 0, 1]])
    assert res.test.startswith("Fisher exact (Monte Carlo")
    assert res.p_value < 0.001


@pytest.mark.parametrize(
    "table",
    [[[3, 0], [4, 0]], [[3, 2]], [[0, 0], [0, 0]], [[5, 2], [0, 0]]],
    ids=["nobody-in-column", "one-group", "empty", "empty-group"],
)
def test_group_difference_no_test_without_two_groups_and_outcomes(table: list[list[int]]) -> None:
    res = group_difference(table)
    assert res.test == NO_TEST
    assert math.isnan(res.p_value)


@pytest.mark.parametrize(
    "table",
    [[[1, -1], [2, 3]], [[1.5, 2], [2, 3]], [1, 2, 3]],
    ids=["negative", "fraction", "one-dimensional"],
)
def test_group_difference_rejects_bad_tables(table: object) -> None:
    with pytest.raises(InputError, match="table"):
        group_difference(table)  # type: ignore[arg-type]


def test_bh_adjust_matches_statsmodels() -> None:
    p = [0.01, 0.04, 0.03, 0.005, 0.5, 0.2]
    # Reference: statsmodels.stats.multitest.multipletests(method="fdr_bh").
    ref = multipletests(p, method="fdr_bh")[1]
    assert bh_adjust(p) == pytest.approx(list(ref), rel=1e-12)


def test_bh_adjust_benjamini_hochberg_1995_example() -> None:
    # Benjamini & Hochberg (1995), J. R. Stat. Soc. B 57:289-300, section 4: fifteen
    # p-values, at q = 0.05 the procedure rejects the four smallest (values from memory).
    p = [
        0.0001,
        0.0004,
        0.0019,
        0.0095,
        0.0201,
        0.0278,
        0.0298,
        0.0344,
        0.0459,
        0.3240,
        0.4262,
        0.5719,
        0.6528,
        0.7590,
        1.000,
    ]
    adjusted = bh_adjust(p)
    assert sum(a <= 0.05 for a in adjusted) == 4


def test_bh_adjust_keeps_nan_out_of_the_count() -> None:
    got = bh_adjust([0.01, math.nan, 0.04])
    # With NaN left out, m = 2 (statsmodels on the two real p-values is the reference).
    ref = multipletests([0.01, 0.04], method="fdr_bh")[1]
    assert got[0] == pytest.approx(ref[0]) and got[2] == pytest.approx(ref[1])
    assert math.isnan(got[1])


def test_bh_adjust_rejects_out_of_range() -> None:
    with pytest.raises(InputError, match="between 0 and 1"):
        bh_adjust([0.2, 1.2])


def test_group_difference_handles_many_single_respondent_groups() -> None:
    # Fourteen groups of one or two respondents: scipy's Monte-Carlo Fisher test returns
    # its statistic as a one-element array here; the p-value must agree with scipy's.
    table = [
        [1, 0],
        [0, 1],
        [1, 0],
        [0, 1],
        [1, 0],
        [1, 0],
        [1, 0],
        [1, 0],
        [1, 0],
        [0, 1],
        [0, 1],
        [1, 0],
        [2, 0],
        [0, 1],
    ]
    result = group_difference(table, n_resamples=999, seed=3)
    reference = sps.fisher_exact(
        np.array(table), method=sps.MonteCarloMethod(n_resamples=999, rng=np.random.default_rng(3))
    )
    assert result.p_value == pytest.approx(float(np.ravel(reference.pvalue)[0]))


@pytest.mark.parametrize(
    ("tp", "fp", "fn"), [(2, 0, 0), (8, 3, 5), (0, 4, 4)], ids=["perfect", "mixed", "no-hit"]
)
def test_f1_interval_is_the_wilson_interval_of_jaccard_carried_to_f1(
    tp: int, fp: int, fn: int
) -> None:
    # F1 = 2J / (1 + J), J = tp / (tp + fp + fn) (from memory); statsmodels' Wilson
    # interval of J is the outside reference.
    low_j, high_j = proportion_confint(tp, tp + fp + fn, alpha=0.05, method="wilson")
    bounds = f1_interval(tp, fp, fn)
    assert bounds is not None
    low, high = bounds
    assert low == pytest.approx(2 * max(0.0, low_j) / (1 + max(0.0, low_j)), abs=1e-12)
    assert high == pytest.approx(2 * min(1.0, high_j) / (1 + min(1.0, high_j)), abs=1e-12)
    f1 = 2 * tp / (2 * tp + fp + fn)
    assert low <= f1 <= high


def test_f1_interval_is_none_without_items() -> None:
    assert f1_interval(0, 0, 0) is None


def test_too_few_below_thirty() -> None:
    # Common practice: the n >= 30 rule of thumb for a proportion.
    assert MIN_SAMPLE == 30 and too_few(29) and not too_few(30)
