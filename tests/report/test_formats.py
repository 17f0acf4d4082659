"""Tests of extractor.report.formats: CSV, JSON Lines, CoNLL IOB2 and W3C Web Annotations.

All text, varieties and trait IDs are invented.
"""

from __future__ import annotations

import csv
import json
from collections.abc import Callable
from pathlib import Path

import pandas as pd
import pytest

from extractor.errors import InputError
from extractor.ingest.labels import read_labels
from extractor.report.formats import (
    ANNO_CONTEXT,
    iob2_tags,
    write_conll,
    write_mentions_csv,
    write_mentions_jsonl,
    write_web_annotations,
)
from extractor.types import Sentence, Span

ANSWER = "We grow it a lot. Nyota cooks fast, but weevils eat it."
OFFSET = ANSWER.index("Nyota")
SENTENCE = ANSWER[OFFSET:]


def _mentions() -> pd.DataFrame:
    rows = []
    for span, concept, stance in [
        ("cooks fast", "BTX:0001", "liked"),
        ("weevils eat it", "BTX:0002", "disliked"),
        ("Nyota", None, None),
    ]:
        start = SENTENCE.index(span)
        rows.append(
            {
                "respondent": "R-0000aaaa",
                "answer_id": 41,
                "sentence_id": 7,
                "sentence": SENTENCE,
                "lang": "en",
                "start": start,
                "end": start + len(span),
                "answer_start": OFFSET + start,
                "answer_end": OFFSET + start + len(span),
                "span_text": span,
                "concept_id": concept,
                "stance": stance,
                "confidence": 0.91,
            }
        )
    return pd.DataFrame(rows)


# --- CSV and JSON Lines ----------------------------------------------------------------


def test_write_mentions_csv_quotes_commas_quotes_and_newlines(tmp_path: Path) -> None:
    tricky = 'She said "fast, really"\nand left'
    frame = pd.DataFrame({"respondent": ["R-1"], "sentence": [tricky], "start": [0]})
    out = tmp_path / "m.csv"
    assert write_mentions_csv(out, frame) == 1
    raw = out.read_bytes().decode("utf-8")
    # RFC 4180 section 2: fields with commas, quotes or line breaks are enclosed in double
    # quotes and inner quotes are doubled; records end in CRLF.
    assert '"She said ""fast, really""\nand left"' in raw
    assert raw.startswith("respondent,sentence,start\r\n")
    with out.open(newline="", encoding="utf-8") as fh:  # the csv module is the reference reader
        rows = list(csv.DictReader(fh))
    assert rows == [{"respondent": "R-1", "sentence": tricky, "start": "0"}]


def test_write_mentions_jsonl_one_object_per_line_with_null(tmp_path: Path) -> None:
    out = tmp_path / "m.jsonl"
    assert write_mentions_jsonl(out, _mentions()) == 3
    lines = out.read_text(encoding="utf-8").splitlines()
    objs = [json.loads(line) for line in lines]  # JSON Lines: each line is one JSON value
    assert len(objs) == 3
    assert objs[2]["concept_id"] is None and objs[0]["start"] == SENTENCE.index("cooks fast")
    assert isinstance(objs[0]["confidence"], float)


def test_write_mentions_csv_missing_folder(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="does not exist"):
        write_mentions_csv(tmp_path / "no" / "m.csv", _mentions())


# --- CoNLL IOB2 ----------------------------------------------------------------------


def test_iob2_tags_begin_inside_outside() -> None:
    spans = [Span(SENTENCE.index("cooks fast"), SENTENCE.index("cooks fast") + 10, "BTX:0001")]
    tags = [(tok, tag) for tok, tag, _ in iob2_tags(SENTENCE, "en", spans)]
    # IOB2 (Tjong Kim Sang & Veenstra 1999, "Representing text chunks", from memory):
    # every entity starts with B-, continues with I-.
    assert tags[:4] == [("Nyota", "O"), ("cooks", "B-TRAIT"), ("fast", "I-TRAIT"), (",", "O")]


def test_iob2_tags_adjacent_spans_both_begin() -> None:
    text = "fast cooking big seeds"
    tags = [tag for _, tag, _ in iob2_tags(text, "en", [Span(0, 12), Span(13, 22)])]
    assert tags == ["B-TRAIT", "I-TRAIT", "B-TRAIT", "I-TRAIT"]


@pytest.mark.parametrize(
    "spans", [[Span(0, 5), Span(3, 8)], [Span(0, 500)]], ids=["overlap", "outside-text"]
)
def test_iob2_tags_rejects_bad_spans(spans: list[Span]) -> None:
    with pytest.raises(InputError, match="overlap|outside"):
        iob2_tags(SENTENCE, "en", spans)


def test_write_conll_layout(tmp_path: Path) -> None:
    start = SENTENCE.index("weevils")
    out = tmp_path / "gold.conll"
    write_conll(
        out, [(Sentence(7, SENTENCE, "en"), [Span(start, start + 14, "BTX:0002", "disliked")])]
    )
    lines = out.read_text(encoding="utf-8").split("\n")
    assert lines[0] == "# scheme = IOB2, one entity type: TRAIT"
    # CoNLL-U comment conventions: "# sent_id = ..." and "# text = ..." before the tokens.
    assert "# sent_id = 7" in lines and f"# text = {SENTENCE}" in lines
    assert "weevils\tB-TRAIT\tBTX:0002\tdisliked" in lines
    assert "Nyota\tO\t_\t_" in lines
    assert lines[-2:] == ["", ""]  # blank line closes the sentence, then end of file


def test_conll_round_trip_keeps_tokens_and_spans(tmp_path: Path) -> None:
    first = Sentence(7, SENTENCE, "en")
    s1 = SENTENCE.index("cooks fast")
    s2 = SENTENCE.index("weevils eat it")
    second = Sentence(8, "Mwezi-7 has large seeds.", "en")
    data = [
        (
            first,
            [Span(s1, s1 + 10, "BTX:0001", "liked"), Span(s2, s2 + 14, "BTX:0002", "disliked")],
        ),
        (second, [Span(12, 23, "BTX:0003", None)]),
    ]
    out = tmp_path / "gold.conll"
    assert write_conll(out, data) == 2
    # Read back by the import path users take (`traits import-labels`).
    back = read_labels(out, default_lang="en")
    assert [(r.text, r.lang) for r in back] == [(first.text, "en"), (second.text, "en")]
    assert list(back[0].spans) == data[0][1] and list(back[1].spans) == data[1][1]
    tokens = [
        line.split("\t")[0]
        for line in out.read_text(encoding="utf-8").splitlines()
        if line and not line.startswith("#")
    ]
    assert tokens[:3] == ["Nyota", "cooks", "fast"]


def test_reading_conll_back_rejects_bad_tag(tmp_path: Path) -> None:
    bad = tmp_path / "bad.conll"
    bad.write_text("# text = fast\nfast\tQ-TRAIT\t_\t_\n\n", encoding="utf-8")
    with pytest.raises(InputError, match="line 2"):
        read_labels(bad, default_lang="en")


# --- W3C Web Annotation ----------------------------------------------------------------


@pytest.fixture()
def collection(tmp_path: Path) -> dict:
    out = tmp_path / "anno.jsonld"
    # Every mention is written, the unlinked one as a highlight: the same count as the CSV.
    assert write_web_annotations(out, _mentions()) == len(_mentions()) == 3
    return json.loads(out.read_text(encoding="utf-8"))


def test_web_annotations_collection_shape(collection: dict) -> None:
    # Web Annotation Data Model (W3C Recommendation 2017-02-23), section 5.1: a collection
    # has the anno.jsonld @context, an IRI id, type AnnotationCollection, total and first;
    # section 5.2: a page has an id, type AnnotationPage and items.
    assert collection["@context"] == ANNO_CONTEXT == "http://www.w3.org/ns/anno.jsonld"
    assert collection["type"] == "AnnotationCollection"
    assert isinstance(collection["id"], str) and ":" in collection["id"]
    assert collection["total"] == 3
    page = collection["first"]
    assert page["type"] == "AnnotationPage" and isinstance(page["id"], str)
    assert len(page["items"]) == 3


def test_web_annotations_annotation_keys(collection: dict) -> None:
    anno = collection["first"]["items"][0]
    # Section 3.1: an Annotation has exactly one id (IRI), type "Annotation", a target;
    # section 3.3.5: motivation "classifying" is one of the defined motivations.
    assert anno["type"] == "Annotation" and anno["motivation"] == "classifying"
    assert isinstance(anno["id"], str) and anno["id"].startswith("urn:")
    # Section 3.2.4: TextualBody carries its text in "value"; 3.3.5: purpose per body.
    concept, stance = anno["body"]
    assert concept == {
        "type": "TextualBody",
        "purpose": "classifying",
        "value": "BTX:0001",
        "format": "text/plain",
    }
    assert stance["purpose"] == "tagging" and stance["value"] == "liked"


def test_web_annotations_selectors_point_at_the_span(collection: dict) -> None:
    target = collection["first"]["items"][0]["target"]
    assert target["source"] == "urn:traits:answer:41"
    quote, position = target["selector"]
    # Section 4.2.4 TextQuoteSelector: exact (required), prefix, suffix.
    assert quote["type"] == "TextQuoteSelector"
    assert quote["prefix"] + quote["exact"] + quote["suffix"] in ANSWER
    assert quote["exact"] == "cooks fast" and quote["prefix"].endswith("Nyota ")
    # Section 4.2.6 TextPositionSelector: start inclusive, end exclusive, in the source text.
    assert position["type"] == "TextPositionSelector"
    assert ANSWER[position["start"] : position["end"]] == "cooks fast"


def test_web_annotations_select_the_whole_sentence_of_an_implicit_trait(tmp_path: Path) -> None:
    row = _mentions().iloc[0].to_dict() | {"implicit": True, "start": 0, "end": len(SENTENCE)}
    row |= {"answer_start": OFFSET, "answer_end": OFFSET + len(SENTENCE)}
    out = tmp_path / "anno.jsonld"
    assert write_web_annotations(out, pd.DataFrame([row])) == 1
    (anno,) = json.loads(out.read_text(encoding="utf-8"))["first"]["items"]
    quote, position = anno["target"]["selector"]
    # Section 4.2.4: a TextQuoteSelector needs only "exact"; here it is the sentence.
    assert quote == {"type": "TextQuoteSelector", "exact": SENTENCE}
    assert ANSWER[position["start"] : position["end"]] == SENTENCE
    assert anno["body"][0]["value"] == "BTX:0001"


def test_web_annotations_source_uri_is_configurable(tmp_path: Path) -> None:
    out = tmp_path / "anno.jsonld"
    write_web_annotations(out, _mentions(), lambda row: f"urn:study:x:{row['sentence_id']}")
    items = json.loads(out.read_text(encoding="utf-8"))["first"]["items"]
    assert {a["target"]["source"] for a in items} == {"urn:study:x:7"}
    assert "R-0000aaaa" not in out.read_text(encoding="utf-8")  # no respondent ID leaks


def test_web_annotations_missing_column(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="answer_id"):
        write_web_annotations(tmp_path / "a.jsonld", _mentions().drop(columns=["answer_id"]))


# OWASP, "CSV Injection": a cell starting with =, +, -, @, tab or carriage return is
# read as a formula by spreadsheet programs; prefix it with a single quote.
@pytest.mark.parametrize(
    "text",
    [
        '=HYPERLINK("http://example.invalid","more")',
        "+254 cooks fast",
        "-2+3",
        "@SUM(A1)",
        "\tsweet",
        "\rsweet",
    ],
    ids=["equals", "plus", "minus", "at", "tab", "cr"],
)
def test_write_mentions_csv_neutralises_cells_a_spreadsheet_reads_as_formulas(
    tmp_path: Path, text: str
) -> None:
    frame = pd.DataFrame({"sentence": [text], "span_text": ["sweet"]})
    out = tmp_path / "m.csv"
    write_mentions_csv(out, frame)
    with out.open(newline="", encoding="utf-8") as fh:  # the csv module is the reference reader
        rows = list(csv.DictReader(fh))
    assert rows == [{"sentence": "'" + text, "span_text": "sweet"}]


def test_write_mentions_csv_keeps_negative_numbers_in_numeric_columns(tmp_path: Path) -> None:
    frame = pd.DataFrame(
        {"sentence": ["-too bitter"], "offset": [-3], "score": [-0.25], "note": [None]}
    )
    out = tmp_path / "m.csv"
    write_mentions_csv(out, frame)
    with out.open(newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    # Numbers are not formulas (OWASP, "CSV Injection", concerns text that a spreadsheet
    # evaluates); only the text cell gets the quote.
    assert rows == [{"sentence": "'-too bitter", "offset": "-3", "score": "-0.25", "note": ""}]


# --- atomic writes: a failure mid-write keeps the previous export ----------------------


def _failing_write(self: object, *args: object, **kwargs: object) -> None:
    raise OSError(28, "No space left on device")


@pytest.mark.parametrize(
    "writer",
    [write_mentions_csv, write_mentions_jsonl, write_web_annotations],
    ids=["csv", "jsonl", "jsonld"],
)
def test_mention_writers_keep_the_previous_file_when_the_disk_fills(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, writer: Callable[..., int]
) -> None:
    out = tmp_path / "mentions.out"
    writer(out, _mentions())
    before = out.read_bytes()
    monkeypatch.setattr(json, "dump", _failing_write)
    monkeypatch.setattr(json, "dumps", _failing_write)
    monkeypatch.setattr(pd.DataFrame, "to_csv", _failing_write)
    with pytest.raises(InputError, match=r"mentions\.out.*unchanged"):
        writer(out, _mentions())
    assert out.read_bytes() == before
    assert [p.name for p in tmp_path.iterdir()] == ["mentions.out"]
