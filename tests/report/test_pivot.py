from __future__ import annotations

import pandas as pd
import pytest

from extractor.report.inputs import prepare
from extractor.report.pivot import MAX_GROUPS, pivot_table, wide_groupings
from extractor.report.stats import format_p, format_share
from extractor.report.summary import trait_summary
from tests.report.reference import counts, group_members, share
from tests.report.study import CONCEPTS, Study


def _pct(x: float) -> str:
    return f"{x:.0%}"


def test_pivot_cells_are_shares_with_statsmodels_wilson_intervals(study: Study) -> None:
    m, r = prepare(*study)
    frame, _ = pivot_table(trait_summary(m, r, CONCEPTS, ["gender"]))
    checked = 0
    for row in frame.to_dict("records"):
        cid = row["Trait"].rsplit("(", 1)[1].rstrip(")")
        outcome = {"liked": "like", "disliked": "dislike", "wanted": "want"}.get(
            row["Outcome"], "mention"
        )
        for column, value in (("all individuals", None), ("gender: woman", "woman")):
            header = next(h for h in frame.columns if h.startswith(column + " (n="))
            members = group_members(r, None if value is None else "gender", value)
            k, n = counts(m, members, cid, outcome)
            p, low, high = share(k, n)
            assert row[header] == f"{_pct(p)} ({_pct(low)}–{_pct(high)})"
            checked += 1
    assert checked >= 8


def test_pivot_shades_cells_of_one_or_two_respondents(study: Study) -> None:
    m, r = prepare(*study)
    frame, flags = pivot_table(trait_summary(m, r, CONCEPTS, ["gender"]))
    assert flags.small
    for i, column in flags.small:
        n = int(column.rsplit("n=", 1)[1].rstrip(")"))
        k = round(int(frame.loc[i, column].split("%")[0]) * n / 100)
        assert 0 < k <= 2 or n <= 2


def test_pivot_headers_carry_group_sizes(study: Study) -> None:
    m, r = prepare(*study)
    frame, _ = pivot_table(trait_summary(m, r, CONCEPTS, ["gender"]))
    # hand count from study_frames: 7 individuals (4 women, 2 men, 1 unrecorded), 1 group
    assert "all individuals (n=7)" in frame.columns
    assert "gender: woman (n=4)" in frame.columns and "gender: man (n=2)" in frame.columns
    assert "focus groups (n=1)" in frame.columns
    assert "gender: p (adjusted)" in frame.columns


@pytest.mark.parametrize(
    ("p", "text"),
    [(0.00002, "< 0.001"), (0.001, "0.001"), (0.0234, "0.023"), (float("nan"), "")],
    ids=["tiny", "floor", "plain", "none"],
)
def test_format_p_reads_like_a_paper(p: float, text: str) -> None:
    assert format_p(p) == text  # APA style, from memory


def test_format_share_uses_the_wilson_interval() -> None:
    p, low, high = share(3, 10)
    assert format_share(3, 10) == f"{_pct(p)} ({_pct(low)}–{_pct(high)})"


def test_pivot_leaves_out_a_grouping_with_too_many_values(study: Study) -> None:
    m, r = prepare(*study)
    r = r.assign(code=[f"c{i}" for i in range(len(r))])  # one value per respondent
    summary = trait_summary(m, r, CONCEPTS, ["gender", "code"])
    frame, _ = pivot_table(summary)
    assert wide_groupings(summary) == [] and any(c.startswith("code:") for c in frame.columns)
    extra = pd.DataFrame(
        {"respondent": [f"X{i}" for i in range(MAX_GROUPS)], "is_group": False}
    ).assign(code=lambda f: f["respondent"])
    many = pd.concat([r, extra], ignore_index=True)  # 7 + 12 values of code
    summary = trait_summary(m, many, CONCEPTS, ["gender", "code"])
    frame, _ = pivot_table(summary)
    assert wide_groupings(summary) == ["code"]
    assert not any(c.startswith("code:") for c in frame.columns)
