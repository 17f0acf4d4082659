"""Tests of extractor.report.about: the About sheet's rows and the export counts.

All people and trait IDs are invented; counts are made by hand from the study's rows.
"""

from __future__ import annotations

from extractor.report.about import ExportCounts, RunFacts, about_table, export_counts
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
    facts = RunFacts(model_version="m-3", quality_cross_validated={"span": {"f1": 0.71}})
    table = about_table(facts, COUNTS, [("Pseudonymised", "no")])
    items = table["Item"].tolist()
    assert table.iloc[0].tolist() == ["Caution", REVIEW_CAUTION]
    assert items[1:3] == ["Model version", "Model trained"]
    # Nested figures become "parent / key" rows.
    row = table.loc[table["Item"] == "Quality (cross-validated) / span / f1", "Value"]
    assert row.tolist() == [0.71]
    assert items[-10:] == [name for name, _ in COUNTS.items()] + ["Pseudonymised"]
    assert items.count("Caution") == 1


def test_about_table_lists_as_json_text() -> None:
    facts = RunFacts(quality_evaluation_sample={"folds": [0.5, 0.6]})
    table = about_table(facts, COUNTS, [])
    value = table.loc[table["Item"] == "Quality (evaluation sample) / folds", "Value"].item()
    assert value == "[0.5, 0.6]"  # JSON array text (RFC 8259 section 5)
