"""Concept list loading and validation."""

from __future__ import annotations

import codecs
from pathlib import Path

import pytest

from extractor.errors import InputError
from extractor.ingest.concepts import load_concept_list, split_synonyms


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
