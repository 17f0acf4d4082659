from __future__ import annotations

import pandas as pd
import pytest

from extractor.report.inputs import prepare
from extractor.report.varieties import head_to_head, variety_table
from tests.report.reference import share
from tests.report.study import CONCEPTS, S1, S2, S3, mention


def _frames() -> tuple[pd.DataFrame, pd.DataFrame]:
    rows = [
        mention("A", 1, S1, "cooks fast", "BTX:0001", "liked", variety="Nyota"),
        mention("A", 2, S2, "pest tolerance", "BTX:0002", "wanted", variety="Nyota"),
        mention("B", 3, S3, "Cooks fast", "BTX:0001", "liked", variety="Nyota"),
        mention("C", 4, S3, "weevils eat it", "BTX:0002", "disliked", variety="Nyota"),
        mention("C", 5, S1, "cooks fast", "BTX:0001", "disliked", variety="Lulu"),
        mention("D", 6, S3, "Cooks fast", "BTX:0001", "liked", variety="Lulu"),
        mention("FG", 7, S1, "cooks fast", "BTX:0001", "liked", variety="Lulu"),
        mention("E", 8, S2, "pest tolerance", "BTX:0002", "liked"),  # no variety
    ]
    rows[5]["ref_variety"] = "Nyota"
    rows[4]["ref_variety"] = "Nyota"
    respondents = pd.DataFrame(
        {
            "respondent": ["A", "B", "C", "D", "E", "FG"],
            "is_group": [False] * 5 + [True],
            "gender": ["female", "male", "female", "male", "female", None],
        }
    )
    return prepare(pd.DataFrame(rows), respondents)


def test_variety_shares_are_of_its_respondents_with_statsmodels_wilson() -> None:
    m, r = _frames()
    table = variety_table(m, r, CONCEPTS)
    # counted from the rows above by hand: Nyota has A, B, C; Lulu has C, D (FG is a group)
    expected = {
        ("Nyota", "BTX:0001", "like"): (2, 3),
        ("Nyota", "BTX:0002", "want"): (1, 3),
        ("Nyota", "BTX:0002", "dislike"): (1, 3),
        ("Lulu", "BTX:0001", "dislike"): (1, 2),
        ("Lulu", "BTX:0001", "like"): (1, 2),
    }
    got = {
        (row["Variety"], row["Concept ID"], row["Outcome"]): row for row in table.to_dict("records")
    }
    assert set(got) == set(expected)
    for key, (k, n) in expected.items():
        row = got[key]
        p, low, high = share(k, n)
        assert (row["Respondents"], row["Respondents of variety"]) == (k, n)
        assert row["Share"] == pytest.approx(p)
        assert row["95% CI low"] == pytest.approx(low, abs=1e-12)
        assert row["95% CI high"] == pytest.approx(high, abs=1e-12)
    assert table["Variety"].iloc[0] == "Nyota"  # most respondents first


def test_head_to_head_lists_each_comparison_with_its_direction_and_quote() -> None:
    m, r = _frames()
    table = head_to_head(m, r, CONCEPTS)
    assert table[["Variety", "Direction", "Compared with", "Respondent"]].values.tolist() == [
        ["Lulu", "worse than", "Nyota", "C"],
        ["Lulu", "better than", "Nyota", "D"],
    ]
    assert table["Quote"].tolist() == [S1, S3]
    assert table["gender"].tolist() == ["female", "male"]
