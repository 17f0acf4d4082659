from __future__ import annotations

from extractor.report.metadata import ColumnMerge, ValueMerge, harmonise

RECORDS = [
    {"respondent": "A", "is_group": False, "gender": "female", "role": "farmer"},
    {"respondent": "B", "is_group": False, "gender": "Female", "role": "Farmer"},
    {"respondent": "C", "is_group": False, "sex": "F", "occupation": "trader"},
    {"respondent": "D", "is_group": False, "sex": "M", "occupation": "farmer"},
    {"respondent": "E", "is_group": False, "gender": "male", "sex": "F"},
]


def test_harmonise_reads_renamed_columns_as_one() -> None:
    out = harmonise(RECORDS, {"sex": "gender", "occupation": "role"})
    assert [r["gender"] for r in out.records] == ["female", "female", "female", "male", "male"]
    assert all("sex" not in r and "occupation" not in r for r in out.records)
    # E has both: the column's own value wins over the renamed one
    assert ColumnMerge("gender", ("sex",), 2) in out.columns
    assert ColumnMerge("role", ("occupation",), 2) in out.columns


def test_harmonise_merges_spellings_and_gender_codes() -> None:
    out = harmonise(RECORDS, {"sex": "gender", "occupation": "role"})
    assert ValueMerge("gender", "female", ("F", "Female", "female"), 3) in out.values
    assert ValueMerge("gender", "male", ("M", "male"), 2) in out.values
    # the commonest spelling wins among those differing only in case
    assert [r.get("role") for r in out.records] == ["farmer", "farmer", "trader", "farmer", None]


def test_harmonise_keeps_spellings_when_asked() -> None:
    out = harmonise(RECORDS, {}, merge_spellings=False)
    assert [r.get("gender") for r in out.records] == ["female", "Female", None, None, "male"]
    assert out.values == ()


def test_harmonise_applies_explicit_values_ignoring_case_and_accents() -> None:
    records = [
        {"respondent": "A", "is_group": False, "role": "Agricultrice"},
        {"respondent": "B", "is_group": False, "role": "agricultor"},
    ]
    out = harmonise(records, {}, {"role": {"agricultrice": "farmer", "agricultor": "farmer"}})
    assert [r["role"] for r in out.records] == ["farmer", "farmer"]
    assert out.values == (ValueMerge("role", "farmer", ("Agricultrice", "agricultor"), 2),)


def test_harmonise_leaves_its_input_unchanged() -> None:
    before = [dict(r) for r in RECORDS]
    harmonise(RECORDS, {"sex": "gender"})
    assert before == RECORDS
