from __future__ import annotations

from pathlib import Path

import pandas as pd
import pyreadstat
import pytest

from extractor.report.indicators import Indicators, indicator_table, variable_name, write_indicators
from extractor.report.inputs import prepare
from tests.report.reference import holders
from tests.report.study import CONCEPTS, Study

PARENTED = CONCEPTS.assign(parent=[None, None, "BTX:0001"])


def _table(study: Study) -> tuple[pd.DataFrame, pd.DataFrame, Indicators]:
    m, r = prepare(*study)
    return m, r, indicator_table(m, r, PARENTED)


def test_indicators_are_one_row_per_respondent_with_0_1_per_trait_and_stance(
    study: Study,
) -> None:
    m, r, table = _table(study)
    frame = table.frame.set_index("respondent")
    assert list(frame.index) == r["respondent"].tolist()
    for cid in PARENTED["concept_id"]:
        for outcome, prefix in (("like", "like"), ("dislike", "dislike"), ("want", "want")):
            who = holders(m, cid, outcome)  # counted from the mention rows apart
            column = frame[f"{prefix}_{cid.replace(':', '_')}"]
            assert set(column.loc[column == 1].index) == who
        any_column = frame[f"any_{cid.replace(':', '_')}"]
        assert set(any_column.loc[any_column == 1].index) == holders(m, cid, "mention")


def test_parent_indicators_count_narrower_traits(study: Study) -> None:
    m, _, table = _table(study)
    frame = table.frame.set_index("respondent")
    # BTX:0003 sits under BTX:0001: the parent variable is the union of the two
    expected = holders(m, "BTX:0001", "like") | holders(m, "BTX:0003", "like")
    column = frame["like_grp_BTX_0001"]
    assert set(column.loc[column == 1].index) == expected
    assert "like_grp_BTX_0002" not in frame.columns  # not a parent


def test_indicator_files_read_back_with_their_labels(study: Study, tmp_path: Path) -> None:
    _, _, table = _table(study)
    paths = write_indicators(tmp_path / "ind.csv", table)
    # pandas' own Stata reader is the outside reference for .dta
    with pd.io.stata.StataReader(paths["dta"]) as reader:
        labels = reader.variable_labels()
        dta = reader.read()
    assert labels["like_BTX_0001"] == "liked: fast cooking (BTX:0001)"
    assert labels["like_grp_BTX_0001"].endswith("or a narrower trait")
    assert set(dta["like_BTX_0001"].astype(str)) <= {"no", "yes"}  # value labels applied
    assert (dta["like_BTX_0001"].astype(str) == "yes").sum() == table.frame["like_BTX_0001"].sum()
    assert dta["gender"].tolist() == table.frame["gender"].tolist()
    # pyreadstat reads .sav (SPSS) with its metadata
    sav, meta = pyreadstat.read_sav(paths["sav"])
    assert meta.column_names_to_labels["want_BTX_0002"] == "wanted: pest tolerance (BTX:0002)"
    assert meta.variable_value_labels["want_BTX_0002"] == {0.0: "no", 1.0: "yes"}
    assert sav["want_BTX_0002"].tolist() == table.frame["want_BTX_0002"].tolist()
    csv = pd.read_csv(paths["csv"], keep_default_na=False)
    assert csv.columns.tolist() == table.frame.columns.tolist()
    book = pd.read_csv(paths["codebook"])
    assert book["Variable"].tolist() == table.frame.columns.tolist()


@pytest.mark.parametrize(
    ("text", "taken", "name"),
    [
        ("like_BTX:0001", set(), "like_BTX_0001"),
        ("2nd group", set(), "v2nd_group"),
        ("gender", {"gender"}, "gender_2"),
        ("x" * 40, set(), "x" * 32),
    ],
    ids=["colon", "digit-first", "taken", "too-long"],
)
def test_variable_names_suit_stata_and_spss(text: str, taken: set[str], name: str) -> None:
    assert variable_name(text, set(taken)) == name
