"""Concept list loading and validation."""

from __future__ import annotations

import codecs
from pathlib import Path

import pytest

from extractor.errors import InputError
from extractor.ingest.concepts import load_concept_list, split_synonyms
from extractor.workspace.settings import ConceptListSettings


def _write(tmp_path: Path, text: str, name: str = "c.csv") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_load_concept_list_makes_preferred_and_alternative_aliases(tmp_path: Path) -> None:
    path = _write(
        tmp_path,
        "id,label,lang,synonyms,parent,definition\n"
        "BTX:0001,cooking time,en,cooks fast|quick to cook,,Time to cook.\n"
        "BTX:0001,temps de cuisson,fr,cuit vite;cuisson rapide,,\n",
    )
    loaded = load_concept_list(path)
    assert [c.id for c in loaded.concepts] == ["BTX:0001"]
    kinds = {(a.text, a.lang, a.kind) for a in loaded.aliases}
    assert ("cooking time", "en", "preferred") in kinds
    assert ("cuit vite", "fr", "alternative") in kinds
    assert len(loaded.aliases) == 6


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("name,lang\nx,en\n", "no 'id' or 'label' column"),
        ("id,label\n,taste\n", "row 2: the id is empty"),
        ("id,label,lang\nBTX:1,taste,en\nBTX:1,flavour,en\n", "rows 2 and 3"),
        ("id,label,lang\nBTX:1,taste,qq\n", "row 2: 'qq' is not a known language tag"),
        ("", "is empty"),
    ],
    ids=["missing-columns", "empty-id", "conflicting-labels", "unknown-language", "empty-file"],
)
def test_load_concept_list_rejects_bad_lists(tmp_path: Path, text: str, message: str) -> None:
    with pytest.raises(InputError, match=message):
        load_concept_list(_write(tmp_path, text))


def test_load_concept_list_warns_on_shared_synonyms(tmp_path: Path) -> None:
    path = _write(tmp_path, "id,label,lang,synonyms\nBTX:1,taste,en,sweet\nBTX:2,smell,en,sweet\n")
    warnings = load_concept_list(path).warnings
    assert len(warnings) == 1 and "BTX:1, BTX:2" in warnings[0]


def test_split_synonyms_accepts_pipe_and_semicolon() -> None:
    assert split_synonyms("a | b;c ;; ") == ["a", "b", "c"]


@pytest.mark.parametrize(
    ("bom", "codec", "delimiter"),
    [
        (codecs.BOM_UTF16_LE, "utf-16-le", "\t"),
        (codecs.BOM_UTF16_BE, "utf-16-be", "\t"),
        (b"", "utf-8", "|"),
        (b"", "utf-8", "\t"),
    ],
    ids=["utf16-le-tab", "utf16-be-tab", "utf8-pipe", "utf8-tab"],
)
def test_load_concept_list_reads_utf16_and_other_delimiters(
    tmp_path: Path, bom: bytes, codec: str, delimiter: str
) -> None:
    # UTF-16 BOMs as Python's codecs module holds them (Unicode FAQ on BOMs); the
    # synonyms keep their own ';' separator whatever the column delimiter is.
    rows = [
        ["id", "label", "lang", "synonyms"],
        ["BTX:0001", "temps de cuisson", "fr", "cuit vite;cuisson rapide"],
    ]
    path = tmp_path / "concepts.csv"
    path.write_bytes(bom + "\r\n".join(delimiter.join(r) for r in rows).encode(codec))
    loaded = load_concept_list(path)
    assert {(a.text, a.lang, a.kind) for a in loaded.aliases} == {
        ("temps de cuisson", "fr", "preferred"),
        ("cuit vite", "fr", "alternative"),
        ("cuisson rapide", "fr", "alternative"),
    }


# --- tables by column mapping -------------------------------------------------------

TRAIT_TABLE = (
    "Trait ID,Trait name,Other names,Local names,Language,Parent trait,Description,Unit\n"
    "BTX:0001,cooking quality,eating quality,,en,,How the beans cook.,\n"
    "BTX:0002,cooking time,cooks fast,quick to cook / slow to cook,en,BTX:0001,Minutes.,min\n"
)


def test_load_concept_list_reads_a_trait_table_by_mapping(tmp_path: Path) -> None:
    options = ConceptListSettings(
        id_column="Trait ID",
        label_column="trait name",  # header names match without regard to case
        synonyms_columns=("Other names", "Local names"),
        lang_column="Language",
        parent_column="Parent trait",
        definition_column="Description",
        split="/",
    )
    loaded = load_concept_list(_write(tmp_path, TRAIT_TABLE), options=options)
    assert [(c.id, c.parents, c.definition) for c in loaded.concepts] == [
        ("BTX:0001", (), "How the beans cook."),
        ("BTX:0002", ("BTX:0001",), "Minutes."),
    ]
    assert {(a.concept_id, a.text, a.kind) for a in loaded.aliases} == {
        ("BTX:0001", "cooking quality", "preferred"),
        ("BTX:0001", "eating quality", "alternative"),
        ("BTX:0002", "cooking time", "preferred"),
        ("BTX:0002", "cooks fast", "alternative"),
        ("BTX:0002", "quick to cook", "alternative"),
        ("BTX:0002", "slow to cook", "alternative"),
    }


def test_load_concept_list_lang_option_sets_every_row(tmp_path: Path) -> None:
    path = _write(tmp_path, "code,name\nBTX:1,temps de cuisson\n")
    options = ConceptListSettings(id_column="code", label_column="name", lang="fr")
    assert {a.lang for a in load_concept_list(path, options=options).aliases} == {"fr"}


def test_load_concept_list_unrecognised_table_lists_columns_and_the_options(
    tmp_path: Path,
) -> None:
    with pytest.raises(InputError) as caught:
        load_concept_list(_write(tmp_path, TRAIT_TABLE))
    message = str(caught.value)
    assert "'Trait ID', 'Trait name', 'Other names'" in message
    assert "--id-column 'Trait ID' --label-column 'Trait name'" in message


def test_load_concept_list_mapping_to_a_missing_column_names_it(tmp_path: Path) -> None:
    options = ConceptListSettings(id_column="Trait ID", label_column="Name of trait")
    with pytest.raises(InputError, match=r"no column 'Name of trait' \(given with --label-col"):
        load_concept_list(_write(tmp_path, TRAIT_TABLE), options=options)


def test_load_concept_list_several_parents_in_one_cell(tmp_path: Path) -> None:
    path = _write(tmp_path, "id,label,parent\nA,a,\nB,b,\nC,c,A|B\n")
    assert load_concept_list(path).concepts[2].parents == ("A", "B")


# --- malformed tables (reliability issue, item 3) -----------------------------------


@pytest.mark.parametrize(
    ("text", "message"),
    [
        # found by fuzzing: duplicate header names and a row longer than the header
        ("label,label,id\nnan,es-419,yes,\n", r"header names 'label' twice \(columns 1 and 2\)"),
        ("id,label\nBTX:1,taste,sweet\n", r"row 2: 3 filled cells but the header names 2"),
        ("id,label,lang\nBTX:1,taste,en\nBTX:2,smell,en,x,y\n", r"row 3: 5 filled cells"),
    ],
    ids=["duplicate-header", "longer-row", "longer-third-row"],
)
def test_load_concept_list_malformed_table_is_one_sentence(
    tmp_path: Path, text: str, message: str
) -> None:
    with pytest.raises(InputError, match=message) as caught:
        load_concept_list(_write(tmp_path, text))
    assert "\n" not in str(caught.value)


def test_load_concept_list_tolerates_empty_trailing_cells(tmp_path: Path) -> None:
    loaded = load_concept_list(_write(tmp_path, "id,label\nBTX:1,taste,,\n"))
    assert [c.id for c in loaded.concepts] == ["BTX:1"]
