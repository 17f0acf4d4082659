"""Tests of extractor.report.tables: traits per respondent, the trait matrix, unlinked terms.

All people, varieties and trait IDs are invented; expected cells are counted by hand
from the rows of :func:`tests.report.study.study_frames`.
"""

from __future__ import annotations

import pandas as pd

from extractor.report.inputs import prepare
from extractor.report.tables import (
    EVIDENCE_COLUMNS,
    NO_QUOTE_SPAN,
    mention_evidence,
    preferred_traits,
    trait_matrix,
    unlinked_terms,
)
from tests.report.study import CONCEPTS, S1, S2, S3, Study, mention


def test_preferred_traits_lists_everyone_and_orders_by_count(study: Study) -> None:
    m, r = prepare(*study)
    table = preferred_traits(m, r, CONCEPTS)
    assert "W4" in set(table["Respondent"])  # interviewed, no mention: still a row
    w1 = table.loc[table["Respondent"] == "W1"].set_index("Variety", drop=False)
    assert w1.loc["Nyota", "Liked"] == "fast cooking (BTX:0001)"
    assert table.loc[table["Respondent"] == "FG1", "Type"].item() == "focus group"


def test_preferred_traits_orders_by_mention_count() -> None:
    rows = pd.DataFrame(
        [
            mention("W1", 1, S3, "weevils eat it", "BTX:0002", "liked"),
            mention("W1", 2, S1, "cooks fast", "BTX:0001", "liked"),
            mention("W1", 3, S1, "cooks fast every", "BTX:0001", "liked"),
        ]
    )
    m, r = prepare(rows, pd.DataFrame({"respondent": ["W1"]}))
    liked = preferred_traits(m, r, CONCEPTS)["Liked"].item()
    assert liked == "fast cooking (BTX:0001); pest tolerance (BTX:0002)"


def test_preferred_traits_one_row_per_variety(study: Study) -> None:
    m, r = prepare(*study)
    w1 = preferred_traits(m, r, CONCEPTS).loc[lambda t: t["Respondent"] == "W1"]
    # W1: two mentions about Nyota, one naming no variety (blank, sorted first).
    assert w1["Variety"].isna().tolist() == [True, False]
    assert w1["Variety"].iloc[1] == "Nyota"
    assert w1["Mentions"].tolist() == [1, 2]
    assert w1["Wanted"].tolist() == ["pest tolerance (BTX:0002)", ""]


def test_trait_matrix_cells(study: Study) -> None:
    m, r = prepare(*study)
    matrix = trait_matrix(m, r, CONCEPTS).set_index("Respondent")
    assert matrix.loc["W1", "fast cooking (BTX:0001)"] == "liked"
    assert matrix.loc["W2", "pest tolerance (BTX:0002)"] == "disliked"
    assert pd.isna(matrix.loc["W4", "fast cooking (BTX:0001)"])
    # Most respondents first: fast cooking (5 incl. the group) before pest tolerance (3).
    assert list(matrix.columns[-2:]) == ["fast cooking (BTX:0001)", "pest tolerance (BTX:0002)"]


def test_trait_matrix_mixed_when_stances_disagree() -> None:
    rows = pd.DataFrame(
        [
            mention("W1", 1, S1, "cooks fast", "BTX:0001", "liked"),
            mention("W1", 2, S3, "Cooks fast", "BTX:0001", "disliked"),
        ]
    )
    m, r = prepare(rows, pd.DataFrame({"respondent": ["W1"]}))
    assert trait_matrix(m, r, CONCEPTS)["fast cooking (BTX:0001)"].item() == "mixed"


def test_mention_evidence_marks_implicit_rows_as_without_quote_span(study: Study) -> None:
    mentions, respondents = study
    first = mentions.iloc[[0]].assign(implicit=True)
    m, r = prepare(pd.concat([first, mentions.iloc[1:]], ignore_index=True), respondents)
    evidence = mention_evidence(m, r, CONCEPTS)
    marked = evidence["Span text"] == NO_QUOTE_SPAN
    assert marked.sum() == 1
    assert evidence.loc[marked, "Sentence"].iloc[0] == mentions["sentence"].iloc[0]


def test_mention_evidence_columns_and_metadata(study: Study) -> None:
    m, r = prepare(*study)
    evidence = mention_evidence(m, r, CONCEPTS)
    # Metadata columns sit right after the respondent, then the evidence columns in order.
    expected = ["Respondent", "gender", "district", *list(EVIDENCE_COLUMNS.values())[1:]]
    assert list(evidence.columns) == expected
    assert len(evidence) == len(m)
    first = evidence.iloc[0]  # sorted by respondent: FG1 comes first
    assert (first["Respondent"], first["Trait"], first["district"]) == (
        "FG1",
        "fast cooking",
        "Kasiri",
    )


def test_unlinked_terms_groups_spellings(study: Study) -> None:
    m, _ = prepare(*study)
    table = unlinked_terms(m)
    assert table["Term"].tolist() == ["seed is small"]
    assert table[["Mentions", "Respondents"]].iloc[0].tolist() == [2, 2]
    assert table["Examples"].item() == S2


def test_unlinked_terms_meets_case_accent_and_spacing_variants() -> None:
    rows = pd.DataFrame(
        [
            mention("W1", 1, "Il résiste bien.", "résiste", None, "liked"),
            mention("W2", 2, "Il RESISTE bien.", "RESISTE", None, "liked"),
            mention("W3", 3, "Il re\u0301siste bien.", "re\u0301siste", None, "liked"),
            mention("W4", 4, "Elle résiste  bien.", "résiste  bien", None, "liked"),
            mention("W5", 5, "Elle résiste bien.", "résiste bien", None, "liked"),
        ]
    )
    m, _ = prepare(rows, pd.DataFrame({"respondent": ["W1", "W2", "W3", "W4", "W5"]}))
    table = unlinked_terms(m)
    # "e" followed by U+0301 COMBINING ACUTE ACCENT decomposes like U+00E9 (Unicode
    # canonical decomposition, from memory); with case folding and runs of spaces made
    # one, the first three are one term and the last two another.
    got = table[["Mentions", "Respondents"]].values.tolist()
    assert got == [[3, 3], [2, 2]]
    assert table["Term"].iloc[0] in {"résiste", "RESISTE", "re\u0301siste"}


def test_preferred_traits_lists_traits_named_without_a_stance_as_neutral() -> None:
    rows = [
        mention("N1", 1, S1, "cooks fast", "BTX:0001", "neutral"),
        mention("N1", 2, S2, "pest tolerance", "BTX:0002", None),
        mention("N1", 3, S3, "Cooks fast", "BTX:0001", "liked"),
    ]
    m, r = prepare(pd.DataFrame(rows), pd.DataFrame({"respondent": ["N1"]}))
    row = preferred_traits(m, r, CONCEPTS).iloc[0]
    assert row["Liked"] == "fast cooking (BTX:0001)"
    assert row["Neutral"] == "fast cooking (BTX:0001); pest tolerance (BTX:0002)"
