"""Tests of extractor.report.summary: shares of respondents, intervals, tests of difference.

All people and trait IDs are invented; the figures are checked against statsmodels and
scipy (named beside each check).
"""

from __future__ import annotations

import pandas as pd
import pytest
from scipy import stats as sps
from statsmodels.stats.multitest import multipletests
from statsmodels.stats.proportion import proportion_confint

from extractor.errors import InputError
from extractor.report.inputs import prepare
from extractor.report.summary import (
    ALL_INDIVIDUALS,
    FOCUS_GROUPS,
    NOT_RECORDED,
    small_sample_caution,
    trait_summary,
)
from tests.report.study import CONCEPTS, Study


def _summary(study: Study, group_by: list[str]) -> pd.DataFrame:
    m, r = prepare(*study)
    return trait_summary(m, r, CONCEPTS, group_by)


def _row(summary: pd.DataFrame, cid: str, outcome: str, grouping: str, group: str) -> pd.Series:
    sel = summary.loc[
        (summary["Concept ID"] == cid)
        & (summary["Outcome"] == outcome)
        & (summary["Grouping"] == grouping)
        & (summary["Group"] == group)
    ]
    assert len(sel) == 1
    return sel.iloc[0]


def test_trait_summary_counts_respondents_not_mentions(study: Study) -> None:
    row = _row(_summary(study, []), "BTX:0001", "mention", ALL_INDIVIDUALS, "all")
    # W1 (twice), W2, W3, U1 among 7 individuals; the focus group is not an individual.
    assert (row["Respondents"], row["Respondents in group"]) == (4, 7)
    assert row["Share"] == pytest.approx(4 / 7)


def test_trait_summary_wilson_interval_matches_statsmodels(study: Study) -> None:
    row = _row(_summary(study, []), "BTX:0001", "like", ALL_INDIVIDUALS, "all")
    # Reference: statsmodels proportion_confint(method="wilson") for 3 of 7.
    low, high = proportion_confint(3, 7, method="wilson")
    assert (row["95% CI low"], row["95% CI high"]) == pytest.approx((low, high))


def test_trait_summary_reports_focus_groups_separately(study: Study) -> None:
    row = _row(_summary(study, []), "BTX:0001", "like", FOCUS_GROUPS, "focus groups")
    assert (row["Respondents"], row["Respondents in group"]) == (1, 1)


def test_trait_summary_group_shares_and_fisher_test(study: Study) -> None:
    summary = _summary(study, ["gender"])
    women = _row(summary, "BTX:0001", "mention", "gender", "woman")
    men = _row(summary, "BTX:0001", "mention", "gender", "man")
    assert (women["Respondents"], women["Respondents in group"]) == (3, 4)
    assert (men["Respondents"], men["Respondents in group"]) == (0, 2)
    # Expected counts are tiny, so Fisher's exact; reference: scipy.stats.fisher_exact.
    assert women["Test"] == "Fisher exact"
    assert women["p"] == pytest.approx(sps.fisher_exact([[3, 1], [0, 2]]).pvalue)
    # The respondent with no gender is shown but left out of the test.
    assert _row(summary, "BTX:0001", "mention", "gender", NOT_RECORDED)["Respondents"] == 1


def test_trait_summary_bh_across_traits_matches_statsmodels(study: Study) -> None:
    summary = _summary(study, ["gender"])
    part = summary.loc[(summary["Grouping"] == "gender") & (summary["Outcome"] == "mention")]
    first = part.drop_duplicates("Concept ID")
    # Reference: statsmodels multipletests(method="fdr_bh") over the per-trait p-values.
    ref = multipletests(first["p"].to_numpy(), method="fdr_bh")[1]
    assert first["p (BH-adjusted)"].to_numpy() == pytest.approx(ref)


def test_trait_summary_flags_one_or_two_respondents(study: Study) -> None:
    summary = _summary(study, ["gender"])
    assert _row(summary, "BTX:0002", "want", "gender", "man")["Caution"] == "only 1 respondent"
    assert pd.isna(_row(summary, "BTX:0001", "mention", ALL_INDIVIDUALS, "all")["Caution"])


@pytest.mark.parametrize(
    ("k", "n", "expected"),
    [
        (1, 10, "only 1 respondent"),
        (2, 10, "only 2 respondents"),
        (0, 2, "group of 2"),
        (3, 10, None),
        (0, 0, None),
    ],
    ids=["one-voice", "two-voices", "tiny-group", "enough", "empty"],
)
def test_small_sample_caution(k: int, n: int, expected: str | None) -> None:
    assert small_sample_caution(k, n) == expected


def test_trait_summary_rejects_unknown_grouping(study: Study) -> None:
    with pytest.raises(InputError, match="'region' is not among the respondent columns"):
        _summary(study, ["region"])
