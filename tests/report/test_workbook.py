"""Tests of extractor.report.workbook: per-respondent aggregation, statistics, the workbook.

All people, places, varieties and trait IDs below are invented.
"""

from __future__ import annotations

import zipfile
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pytest
from scipy import stats as sps
from statsmodels.stats.multitest import multipletests
from statsmodels.stats.proportion import proportion_confint

from extractor.errors import InputError
from extractor.report.privacy import PrivacyOptions
from extractor.report.workbook import (
    ALL_INDIVIDUALS,
    CAUTION,
    FOCUS_GROUPS,
    NOT_RECORDED,
    SHEETS,
    chart_data,
    filter_confidence,
    merge_gold,
    preferred_traits,
    prepare,
    trait_matrix,
    trait_summary,
    unlinked_terms,
    write_workbook,
)

SECRET = b"fictional-test-secret-0123456789"
CONCEPTS = pd.DataFrame(
    {
        "concept_id": ["BTX:0001", "BTX:0002", "BTX:0003"],
        "label": ["fast cooking", "pest tolerance", "large seed"],
        "parent": [None, None, None],
    }
)


def mention(
    respondent: str,
    sentence_id: int,
    sentence: str,
    span: str,
    concept: str | None,
    stance: str | None,
    *,
    source: str = "predicted",
    confidence: float | None = 0.9,
    variety: str | None = None,
) -> dict[str, object]:
    """Build one mention row; offsets are found in the sentence so they are always right."""
    start = sentence.index(span)
    return {
        "respondent": respondent,
        "sentence_id": sentence_id,
        "answer_id": sentence_id,
        "sentence": sentence,
        "question": "What do you like about it?",
        "lang": "en",
        "start": start,
        "end": start + len(span),
        "answer_start": start,
        "answer_end": start + len(span),
        "span_text": span,
        "concept_id": concept,
        "concept_label": None,
        "link_prob": 0.8 if concept else None,
        "stance": stance,
        "stance_prob": 0.7,
        "variety": variety,
        "ref_variety": None,
        "confidence": confidence,
        "source": source,
        "model_version": "m-3",
        "annotator": "coder-a" if source == "person" else None,
    }


S1 = "Nyota cooks fast and cooks fast every time."
S2 = "I want pest tolerance, but the seed is small."
S3 = "Cooks fast, but weevils eat it."


@pytest.fixture()
def study() -> tuple[pd.DataFrame, pd.DataFrame]:
    """Six individuals (3 women, 2 men, 1 unrecorded) and one focus group."""
    rows = [
        # W1 mentions fast cooking twice (liked): still one respondent.
        mention("W1", 1, S1, "cooks fast", "BTX:0001", "liked", variety="Nyota"),
        mention("W1", 1, S1, "cooks fast every", "BTX:0001", "liked", variety="Nyota"),
        mention("W1", 2, S2, "pest tolerance", "BTX:0002", "wanted"),
        mention("W2", 3, S3, "Cooks fast", "BTX:0001", "liked"),
        mention("W2", 3, S3, "weevils eat it", "BTX:0002", "disliked"),
        mention("W3", 4, S3, "Cooks fast", "BTX:0001", "disliked"),
        mention("M1", 5, S2, "pest tolerance", "BTX:0002", "wanted"),
        mention("M1", 5, S2, "seed is small", None, "disliked"),
        mention("M2", 6, S2, "seed is small", None, "disliked"),
        mention("U1", 7, S1, "cooks fast", "BTX:0001", "liked"),
        mention("FG1", 8, S1, "cooks fast", "BTX:0001", "liked"),
    ]
    respondents = pd.DataFrame(
        {
            "respondent": ["W1", "W2", "W3", "W4", "M1", "M2", "U1", "FG1"],
            "is_group": [False, False, False, False, False, False, False, True],
            "gender": ["woman", "woman", "woman", "woman", "man", "man", None, None],
            "district": ["Lumoro"] * 4 + ["Kasiri"] * 4,
        }
    )
    return pd.DataFrame(rows), respondents


def _summary(study: tuple[pd.DataFrame, pd.DataFrame], group_by: list[str]) -> pd.DataFrame:
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


# --- preparing ------------------------------------------------------------------------


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


# --- per-respondent tables ------------------------------------------------------------


def test_preferred_traits_lists_everyone_and_orders_by_count(study) -> None:
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


def test_trait_matrix_cells(study) -> None:
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


def test_unlinked_terms_groups_spellings(study) -> None:
    m, _ = prepare(*study)
    table = unlinked_terms(m)
    assert table["Term"].tolist() == ["seed is small"]
    assert table[["Mentions", "Respondents"]].iloc[0].tolist() == [2, 2]
    assert table["Examples"].item() == S2


# --- summary ------------------------------------------------------------------------


def test_trait_summary_counts_respondents_not_mentions(study) -> None:
    row = _row(_summary(study, []), "BTX:0001", "mention", ALL_INDIVIDUALS, "all")
    # W1 (twice), W2, W3, U1 among 7 individuals; the focus group is not an individual.
    assert (row["Respondents"], row["Respondents in group"]) == (4, 7)
    assert row["Share"] == pytest.approx(4 / 7)


def test_trait_summary_wilson_interval_matches_statsmodels(study) -> None:
    row = _row(_summary(study, []), "BTX:0001", "like", ALL_INDIVIDUALS, "all")
    # Reference: statsmodels proportion_confint(method="wilson") for 3 of 7.
    low, high = proportion_confint(3, 7, method="wilson")
    assert (row["95% CI low"], row["95% CI high"]) == pytest.approx((low, high))


def test_trait_summary_reports_focus_groups_separately(study) -> None:
    row = _row(_summary(study, []), "BTX:0001", "like", FOCUS_GROUPS, "focus groups")
    assert (row["Respondents"], row["Respondents in group"]) == (1, 1)


def test_trait_summary_group_shares_and_fisher_test(study) -> None:
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


def test_trait_summary_bh_across_traits_matches_statsmodels(study) -> None:
    summary = _summary(study, ["gender"])
    part = summary.loc[(summary["Grouping"] == "gender") & (summary["Outcome"] == "mention")]
    first = part.drop_duplicates("Concept ID")
    # Reference: statsmodels multipletests(method="fdr_bh") over the per-trait p-values.
    ref = multipletests(first["p"].to_numpy(), method="fdr_bh")[1]
    assert first["p (BH-adjusted)"].to_numpy() == pytest.approx(ref)


def test_trait_summary_flags_one_or_two_respondents(study) -> None:
    summary = _summary(study, ["gender"])
    assert _row(summary, "BTX:0002", "want", "gender", "man")["Caution"] == "only 1 respondent"
    assert pd.isna(_row(summary, "BTX:0001", "mention", ALL_INDIVIDUALS, "all")["Caution"])


def test_trait_summary_rejects_unknown_grouping(study) -> None:
    with pytest.raises(InputError, match="'region' is not among the respondent columns"):
        _summary(study, ["region"])


def test_chart_data_top_traits_by_group(study) -> None:
    data = chart_data(_summary(study, ["gender"]), "gender")
    assert list(data.columns) == ["Trait", "man", "woman"]
    assert data["Trait"].iloc[0] == "fast cooking (BTX:0001)"
    assert data["woman"].iloc[0] == pytest.approx(2 / 4)


# --- the workbook -------------------------------------------------------------------


def _all_cells(path: Path) -> list[object]:
    wb = openpyxl.load_workbook(path)
    return [c.value for ws in wb.worksheets for row in ws.iter_rows() for c in row]


def test_write_workbook_sheets_and_craft(study, tmp_path: Path) -> None:
    out = tmp_path / "traits.xlsx"
    png = tmp_path / "chart.png"
    write_workbook(
        out,
        *study,
        CONCEPTS,
        {"model version": "m-3", "metrics": {"f1": 0.71}},
        group_by=["gender"],
        min_confidence=None,
        pseudonymise=None,
        chart_png=png,
    )
    wb = openpyxl.load_workbook(out)
    assert wb.sheetnames == list(SHEETS.values())
    for name in (SHEETS["preferred"], SHEETS["matrix"], SHEETS["mentions"]):
        assert wb[name].freeze_panes == "B2"
        assert wb[name].auto_filter.ref.startswith("A1:")
    summary = wb[SHEETS["summary"]]
    assert "respondents, not of mentions" in summary["A1"].value
    assert summary.auto_filter.ref.startswith("A6:")
    about = [c.value for row in wb[SHEETS["about"]].iter_rows() for c in row]
    assert CAUTION in about and "metrics / f1" in about
    with zipfile.ZipFile(out) as zf:  # a native chart part (ECMA-376 DrawingML chart)
        assert any(n.startswith("xl/charts/chart") for n in zf.namelist())
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature, RFC 2083 section 3.1


@pytest.mark.parametrize(
    "text",
    ['=HYPERLINK("http://x","y")', "+1 cooks fast", "-weevils", "@SUM(A1)", "\tcooks", "#N/A"],
    ids=["equals-formula", "plus", "minus", "at", "tab", "error-code"],
)
def test_write_workbook_user_text_never_becomes_formula(text: str, tmp_path: Path) -> None:
    sentence = f"{text} said the farmer"
    rows = pd.DataFrame([mention("W1", 1, sentence, "said", None, "liked")])
    out = tmp_path / "safe.xlsx"
    write_workbook(out, rows, pd.DataFrame({"respondent": ["W1"]}), CONCEPTS, {})
    ws = openpyxl.load_workbook(out)[SHEETS["mentions"]]
    header = [c.value for c in ws[1]]
    cell = ws.cell(row=2, column=header.index("Sentence") + 1)
    # ECMA-376 inline string: openpyxl reads it back as data type "s", never "f".
    assert cell.data_type == "s" and cell.value == sentence
    frame = pd.read_excel(out, sheet_name=SHEETS["mentions"])
    assert frame["Sentence"].item() == sentence
    with zipfile.ZipFile(out) as zf:
        sheet_xml = zf.read("xl/worksheets/sheet3.xml").decode()
    assert "<f>" not in sheet_xml


def test_write_workbook_pseudonymised_hides_ids_and_phone(study, tmp_path: Path) -> None:
    mentions, respondents = study
    phone = "+254 712 345 678"
    mentions = mentions.copy()
    mentions.loc[0, "sentence"] = S1 + f" Call Amani on {phone}."
    respondents = respondents.assign(name=[f"Person {i}" for i in range(len(respondents))])
    out = tmp_path / "private.xlsx"
    write_workbook(
        out,
        mentions,
        respondents,
        CONCEPTS,
        {},
        group_by=["gender"],
        pseudonymise=PrivacyOptions(secret=SECRET, names=("Amani",)),
    )
    text = "\n".join(str(v) for v in _all_cells(out) if v is not None)
    for original in respondents["respondent"]:
        assert original not in text  # not even inside another cell's text
    assert phone not in text and "712" not in text and "Amani" not in text
    assert "Person 1" not in text
    assert "[phone]" in text and "R-" in text


def test_write_workbook_min_confidence(study, tmp_path: Path) -> None:
    mentions, respondents = study
    mentions = mentions.copy()
    mentions.loc[mentions["respondent"] == "U1", "confidence"] = 0.2
    out = tmp_path / "conf.xlsx"
    write_workbook(out, mentions, respondents, CONCEPTS, {}, min_confidence=0.5)
    frame = pd.read_excel(out, sheet_name=SHEETS["mentions"])
    assert "U1" not in set(frame["Respondent"]) and len(frame) == len(mentions) - 1


def test_write_workbook_rejects_identifying_grouping(study, tmp_path: Path) -> None:
    with pytest.raises(InputError, match="'district' is dropped as identifying"):
        write_workbook(
            tmp_path / "x.xlsx",
            *study,
            CONCEPTS,
            {},
            group_by=["district"],
            pseudonymise=PrivacyOptions(secret=SECRET, drop_columns=("district",)),
        )


@pytest.mark.parametrize("name", ["missing/out.xlsx", "out.csv"], ids=["no-folder", "not-xlsx"])
def test_write_workbook_rejects_bad_path(study, tmp_path: Path, name: str) -> None:
    with pytest.raises(InputError, match="workbook"):
        write_workbook(tmp_path / name, *study, CONCEPTS, {})


def test_write_workbook_without_any_mentions(tmp_path: Path) -> None:
    empty = pd.DataFrame([mention("W1", 1, S1, "cooks fast", None, None)]).iloc[0:0]
    out = tmp_path / "empty.xlsx"
    write_workbook(
        out,
        empty,
        pd.DataFrame({"respondent": ["W1"]}),
        CONCEPTS,
        {},
        chart_png=tmp_path / "empty.png",
    )
    frame = pd.read_excel(out, sheet_name=SHEETS["preferred"])
    assert frame["Respondent"].tolist() == ["W1"]
    assert np.all(frame["Mentions"] == 0)
