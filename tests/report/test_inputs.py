"""Tests of extractor.report.inputs: checking, completing and filtering the input frames.

All people, varieties and trait IDs are invented; the rules checked are the contributor
guide's (a person's label replaces the models' output for its sentence).
"""

from __future__ import annotations

import json
from typing import Any

import numpy as np
import pandas as pd
import pytest

from extractor.errors import InputError
from extractor.report.inputs import (
    OPTIONAL_MENTION_COLUMNS,
    complete_respondents,
    filter_confidence,
    merge_gold,
    plain_value,
    prepare,
)
from tests.report.study import S1, S2, S3, mention


def test_merge_gold_drops_predictions_in_labeled_sentences() -> None:
    rows = pd.DataFrame(
        [
            mention("W1", 1, S1, "cooks fast", "BTX:0001", "liked", source="person"),
            mention("W1", 1, S1, "cooks fast every", "BTX:0003", "neutral"),
            mention("W1", 2, S2, "pest tolerance", "BTX:0002", "wanted", source="dictionary"),
        ]
    )
    out = merge_gold(rows)
    assert out["source"].tolist() == ["person", "dictionary"]


def test_filter_confidence_never_drops_person_labels() -> None:
    rows = pd.DataFrame(
        [
            mention(
                "W1", 1, S1, "cooks fast", "BTX:0001", "liked", source="person", confidence=0.1
            ),
            mention("W1", 2, S2, "pest tolerance", "BTX:0002", "wanted", confidence=0.4),
            mention("W1", 3, S3, "Cooks fast", "BTX:0001", "liked", confidence=0.6),
            mention("W1", 4, S3, "weevils eat it", "BTX:0002", "disliked", confidence=None),
        ]
    )
    out = filter_confidence(rows, 0.5)
    assert out["sentence_id"].tolist() == [1, 3, 4]


def test_filter_confidence_rejects_out_of_range() -> None:
    rows = pd.DataFrame([mention("W1", 1, S1, "cooks fast", "BTX:0001", "liked")])
    with pytest.raises(InputError, match="between 0 and 1"):
        filter_confidence(rows, 1.5)


def test_prepare_names_missing_columns() -> None:
    with pytest.raises(InputError, match="lacks the column"):
        prepare(pd.DataFrame({"respondent": ["W1"]}), pd.DataFrame({"respondent": ["W1"]}))


def test_prepare_adds_missing_optional_columns_as_empty() -> None:
    row = mention("W1", 1, S1, "cooks fast", "BTX:0001", "liked")
    required = {k: v for k, v in row.items() if k not in OPTIONAL_MENTION_COLUMNS}
    m, _ = prepare(pd.DataFrame([required]), pd.DataFrame({"respondent": ["W1"]}))
    assert set(OPTIONAL_MENTION_COLUMNS) <= set(m.columns)
    empty = [c for c in OPTIONAL_MENTION_COLUMNS if c != "implicit"]
    assert m[empty].isna().all(axis=None)
    assert m["implicit"].tolist() == [False]  # a mention with a quote span unless it says


def test_prepare_rejects_unknown_source() -> None:
    rows = pd.DataFrame([mention("W1", 1, S1, "cooks fast", "BTX:0001", "liked", source="llm")])
    with pytest.raises(InputError, match="'source' must hold person, predicted, dictionary"):
        prepare(rows, pd.DataFrame({"respondent": ["W1"]}))


def test_complete_respondents_adds_respondents_only_in_mentions() -> None:
    mentions = pd.DataFrame([mention("W9", 1, S1, "cooks fast", "BTX:0001", "liked")])
    out = complete_respondents(pd.DataFrame({"respondent": ["W1"]}), mentions)
    assert out["respondent"].tolist() == ["W1", "W9"]
    assert out["is_group"].tolist() == [False, False]


def test_complete_respondents_rejects_duplicates() -> None:
    with pytest.raises(InputError, match="respondent 'W1' more than once"):
        complete_respondents(pd.DataFrame({"respondent": ["W1", "W1"]}), pd.DataFrame())


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        (np.int64(7), 7),
        (np.float64(0.25), 0.25),
        (np.bool_(True), True),
        (float("nan"), None),
        (pd.NA, None),
        (pd.NaT, None),
        (None, None),
        ("=SUM(A1)", "=SUM(A1)"),
    ],
    ids=["numpy-int", "numpy-float", "numpy-bool", "nan", "pd-NA", "NaT", "none", "text"],
)
def test_plain_value_gives_json_scalars(value: Any, expected: Any) -> None:
    got = plain_value(value)
    assert got == expected and type(got) is type(expected)
    # JSON (RFC 8259 section 6) has no NaN: a missing value must be written as null.
    assert json.loads(json.dumps(got, allow_nan=False)) == expected
