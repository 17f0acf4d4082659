"""Tests of extractor.report.about: the About sheet's rows and the export counts.

All people and trait IDs are invented; counts are made by hand from the study's rows.
"""

from __future__ import annotations

from extractor.report.about import (
    STANCE_READING,
    ExportCounts,
    RunFacts,
    about_table,
    export_counts,
)
from extractor.report.caution import REVIEW_CAUTION
from extractor.report.inputs import prepare
from tests.report.study import Study

COUNTS = ExportCounts(
    individuals=7,
    focus_groups=1,
    mentions=11,
    linked=9,
    unlinked=2,
    by_person=0,
    predicted=11,
    from_dictionary=0,
    concepts=2,
)


def test_export_counts_of_the_study(study: Study) -> None:
    m, r = prepare(*study)
    # Hand count: 8 respondents of whom FG1 is a group; 11 rows, 2 without a concept.
    assert export_counts(m, r) == COUNTS


def test_about_table_caution_first_then_facts_then_counts() -> None:
    facts = RunFacts(model_version="m-3")
    table = about_table(facts, COUNTS, [("Pseudonymised", "no")])
    items = table["Item"].tolist()
    assert table.iloc[0].tolist()[:2] == ["Caution", REVIEW_CAUTION]
    # How to read a stance on a trait named by a fault comes right after the caution.
    assert table.iloc[1].tolist()[:2] == ["Stances", STANCE_READING]
    assert items[2:4] == ["Model version", "Model trained"]
    assert items[-10:] == [name for name, _ in COUNTS.items()] + ["Pseudonymised"]
    assert items.count("Caution") == 1


def test_about_table_rounds_quality_figures_and_gives_each_a_meaning() -> None:
    cv = {
        "k": 5,
        "span_f1": {"mean": 0.71234, "sd": 0.0456},
        "folds": [{"fold": 1, "summary": {"span_f1": 0.7}}],
    }
    sample = {"span_f1": 0.6666666, "n_gold_spans": 42, "by_concept": {"X:1": {"f1": 0.5}}}
    table = about_table(
        RunFacts(quality_cross_validated=cv, quality_evaluation_sample=sample), COUNTS, []
    )
    value = dict(zip(table["Item"], table["Value"], strict=True))
    assert value["Quality (cross-validated): span F1"] == "0.71 ± 0.05"
    assert value["Quality (cross-validated): folds"] == 5
    assert value["Quality (evaluation sample): span F1"] == 0.67
    assert value["Quality (evaluation sample): spans a person marked"] == 42
    # no JSON text: fold lists and per-concept records stay in the model's files
    assert not any(isinstance(v, str) and v.startswith(("[", "{")) for v in table["Value"])
    # every row but the caution says in one line what it means
    assert table["Meaning"].map(lambda t: bool(t) and "\n" not in t).all()


def test_about_table_says_when_quality_was_not_measured() -> None:
    table = about_table(RunFacts(), COUNTS, [])
    value = dict(zip(table["Item"], table["Value"], strict=True))
    assert value["Quality (cross-validated)"] == "not measured"


def test_about_table_shows_quality_measured_on_reviewed_respondents() -> None:
    reviewed = {"measured on": "10 reviewed respondents (133 sentences)", "reviewer": "Amina"}
    table = about_table(RunFacts(quality_reviewed_sample=reviewed), COUNTS, [])
    rows = dict(zip(table["Item"], table["Value"], strict=True))
    assert rows["Quality (reviewed sample): measured on"].startswith("10 reviewed respondents")
    unmeasured = about_table(RunFacts(), COUNTS, [])
    assert "Quality (reviewed sample)" in set(unmeasured["Item"])
