"""Shares of respondents per trait and group, with intervals and tests of difference.

Shares are always shares of respondents (k of n people), never of mentions. Focus
groups are counted as groups, apart from the individuals.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np
import pandas as pd

from extractor.errors import InputError
from extractor.report.inputs import concept_labels, metadata_columns
from extractor.report.stats import (
    MONTE_CARLO_RESAMPLES,
    MONTE_CARLO_SEED,
    NO_TEST,
    GroupTest,
    bh_adjust,
    group_difference,
    wilson_interval,
)
from extractor.report.tables import OUTCOMES, concept_order, respondent_concepts

ALL_INDIVIDUALS = "(all individuals)"
FOCUS_GROUPS = "(focus groups, counted as groups)"
NOT_RECORDED = "(not recorded)"
SUMMARY_NOTES = (
    "Shares are shares of respondents, not of mentions: a respondent who names a trait "
    "five times counts once.",
    "Focus groups are counted as groups, never as individuals: they are left out of every "
    f"individual share and reported on their own in the rows '{FOCUS_GROUPS}'.",
    "Difference between groups: Pearson chi-square (no continuity correction) when no "
    "expected count is below 1 and at most 20% are below 5; otherwise Fisher's exact test "
    "(exact for 2x2 tables; for larger tables a Monte-Carlo p-value from "
    f"{MONTE_CARLO_RESAMPLES:,} random tables with the observed margins, seed "
    f"{MONTE_CARLO_SEED}). p-values are adjusted across traits with Benjamini-Hochberg, "
    f"separately for each grouping and outcome. Respondents shown as '{NOT_RECORDED}' "
    "are left out of the tests.",
    "The Caution column marks cells resting on one or two respondents: read them as "
    "single voices, not as shares.",
)
SUMMARY_COLUMNS = [
    "Trait",
    "Concept ID",
    "Outcome",
    "Grouping",
    "Group",
    "Respondents in group",
    "Respondents",
    "Share",
    "95% CI low",
    "95% CI high",
    "Caution",
    "Test",
    "Statistic",
    "p",
    "p (BH-adjusted)",
]

Codes = dict[str, tuple[list[str], np.ndarray]]
"""Grouping column -> (group labels, each individual's group index)."""
Counts = dict[str, tuple[np.ndarray, np.ndarray]]
"""Grouping column -> (k[group, concept] with the outcome, n[group] respondents)."""


def small_sample_caution(k: int, n: int) -> str | None:
    """Return the Caution cell: a share resting on one or two respondents, or None."""
    if 0 < k <= 2:
        return f"only {k} respondent{'s' if k > 1 else ''}"
    if 0 < n <= 2:
        return f"group of {n}"
    return None


def _share_row(k: int, n: int) -> dict[str, Any]:
    low, high = wilson_interval(k, n) if n else (math.nan, math.nan)
    return {
        "Respondents in group": n,
        "Respondents": k,
        "Share": k / n if n else math.nan,
        "95% CI low": low,
        "95% CI high": high,
        "Caution": small_sample_caution(k, n),
    }


def outcome_matrix(
    mentions: pd.DataFrame, respondent_ids: Sequence[str], concept_ids: Sequence[str], outcome: str
) -> np.ndarray:
    """Return a respondents x concepts boolean array: who has ``outcome`` for which trait."""
    flags = respondent_concepts(mentions)
    if flags.empty:
        return np.zeros((len(respondent_ids), len(concept_ids)), dtype=bool)
    wide = flags.pivot_table(
        index="respondent", columns="concept_id", values=outcome, aggfunc="any", fill_value=False
    )
    wide = wide.reindex(index=list(respondent_ids), columns=list(concept_ids), fill_value=False)
    return wide.to_numpy(dtype=bool)


def _group_codes(values: pd.Series) -> tuple[list[str], np.ndarray]:
    """Return the sorted group labels (not recorded last) and each row's group index."""
    labels = values.map(lambda v: NOT_RECORDED if pd.isna(v) else str(v))
    groups = sorted(labels.unique(), key=lambda v: (v == NOT_RECORDED, v))
    index = {g: i for i, g in enumerate(groups)}
    return groups, labels.map(index).to_numpy(dtype=int)


def _group_counts(individuals: np.ndarray, codes: Codes) -> Counts:
    """Return, per grouping, respondents with the outcome per group and concept, and sizes."""
    n_concepts = individuals.shape[1]
    return {
        g: (
            np.array(
                [individuals[c == i].sum(axis=0) for i in range(len(groups))], dtype=int
            ).reshape(len(groups), n_concepts),
            np.bincount(c, minlength=len(groups)),
        )
        for g, (groups, c) in codes.items()
    }


def _grouping_rows(
    base: dict[str, Any], grouping: str, groups: list[str], k: np.ndarray, n: np.ndarray
) -> list[dict[str, Any]]:
    """Return one row per group of ``grouping`` for one concept, each with the group test."""
    table = [[int(k[i]), int(n[i] - k[i])] for i, name in enumerate(groups) if name != NOT_RECORDED]
    test = group_difference(table) if len(table) >= 2 else GroupTest(NO_TEST, math.nan, math.nan)
    # The test is repeated on every group row so a filtered view still shows it.
    return [
        {
            **base,
            "Grouping": grouping,
            "Group": name,
            **_share_row(int(k[i]), int(n[i])),
            "Test": test.test,
            "Statistic": test.statistic,
            "p": test.p_value,
        }
        for i, name in enumerate(groups)
    ]


def _outcome_rows(
    mentions: pd.DataFrame,
    respondents: pd.DataFrame,
    order: list[str],
    labels: dict[str, str],
    codes: Codes,
    outcome: str,
) -> list[dict[str, Any]]:
    """Return the summary rows of one outcome: overall, per grouping, focus groups."""
    is_group = respondents["is_group"].to_numpy(dtype=bool)
    mat = outcome_matrix(mentions, respondents["respondent"].tolist(), order, outcome)
    ind, grp = mat[~is_group], mat[is_group]
    counts = _group_counts(ind, codes)
    rows: list[dict[str, Any]] = []
    for j, cid in enumerate(order):
        base = {"Trait": labels.get(cid), "Concept ID": cid, "Outcome": outcome}
        share = _share_row(int(ind[:, j].sum()), len(ind))
        rows.append({**base, "Grouping": ALL_INDIVIDUALS, "Group": "all", **share})
        for g, (groups, _) in codes.items():
            k_by, n_by = counts[g]
            rows.extend(_grouping_rows(base, g, groups, k_by[:, j], n_by))
        if len(grp):
            share = _share_row(int(grp[:, j].sum()), len(grp))
            rows.append({**base, "Grouping": FOCUS_GROUPS, "Group": "focus groups", **share})
    return rows


def _adjust_p_values(out: pd.DataFrame) -> None:
    """Fill ``p (BH-adjusted)`` in place: one family per grouping and outcome, across traits."""
    for _, part in out.loc[out["p"].notna()].groupby(["Grouping", "Outcome"]):
        first = part.drop_duplicates("Concept ID")
        adjusted = dict(zip(first["Concept ID"], bh_adjust(first["p"].tolist()), strict=True))
        out.loc[part.index, "p (BH-adjusted)"] = part["Concept ID"].map(adjusted)


def trait_summary(
    mentions: pd.DataFrame,
    respondents: pd.DataFrame,
    concepts: pd.DataFrame,
    group_by: Sequence[str] = (),
) -> pd.DataFrame:
    """Return shares of respondents per concept, outcome and group, with tests.

    One row per (concept, outcome, grouping, group). Outcomes: ``mention``,
    ``like``, ``dislike``, ``want``. Grouping ``(all individuals)`` gives the
    overall share; each column of ``group_by`` gives one row per value, with a
    test of difference between the recorded values and its Benjamini-Hochberg
    adjustment across concepts; focus groups are reported as their own grouping.

    Raises:
        InputError: If a ``group_by`` column is not in ``respondents``.
    """
    for g in group_by:
        if g not in respondents.columns:
            raise InputError(
                f"The grouping column {g!r} is not among the respondent columns "
                f"({', '.join(metadata_columns(respondents)) or 'none'})."
            )
    labels = concept_labels(mentions, concepts)
    order = concept_order(mentions)
    individuals = respondents.loc[~respondents["is_group"].to_numpy(dtype=bool)]
    codes = {g: _group_codes(individuals[g]) for g in group_by}
    rows = [
        row
        for outcome in OUTCOMES
        for row in _outcome_rows(mentions, respondents, order, labels, codes, outcome)
    ]
    out = pd.DataFrame(rows, columns=SUMMARY_COLUMNS)
    if out.empty:
        return out
    rank = {c: i for i, c in enumerate(order)}
    out = out.sort_values("Concept ID", key=lambda s: s.map(rank), kind="stable", ignore_index=True)
    _adjust_p_values(out)
    return out
