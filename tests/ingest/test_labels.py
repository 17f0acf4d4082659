"""Reading gold JSONL and CoNLL labels, snapping, and the all-or-nothing import."""

from __future__ import annotations

import codecs
import json
from pathlib import Path

import pytest
from seqeval.metrics.sequence_labeling import get_entities

from extractor.errors import InputError
from extractor.ingest.labels import (
    LabelImport,
    convert_legacy_lines,
    import_labels,
    parse_conll,
    parse_jsonl,
    read_labels,
    record_to_dict,
    to_gold,
)
from extractor.types import ConceptEntry, Implicit, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace


def _with_concepts(ws: Workspace, *ids: str) -> Workspace:
    store.replace_concept_list(
        ws.conn,
        kind="trait",
        path="concepts.csv",
        sha256="0" * 64,
        concepts=[ConceptEntry(i) for i in ids],
        aliases=[],
    )
    return ws


CONLL = """\
# respondent = KAL-07
# lang = en
# text = The Zanobi beans cook fast.
The O
Zanobi O
beans O
cook B-TRAIT BTX:9002 liked
fast I-TRAIT
. O

# a sentence without '# text': the tokens joined by spaces
Too O
many O
stones B-TRAIT BTX:9013 disliked
and O
weevil B-TRAIT _ disliked
holes I-TRAIT
"""


def test_conll_reads_text_respondent_and_spans() -> None:
    first, second = parse_conll(CONLL.splitlines(), source="x.conll", default_lang="fr")
    assert first.text == "The Zanobi beans cook fast."
    assert (first.respondent, first.lang, first.line) == ("KAL-07", "en", 1)
    assert first.spans == (Span(17, 26, "BTX:9002", "liked"),)
    assert second.text == "Too many stones and weevil holes"
    assert (second.respondent, second.lang, second.line) == (None, "fr", 11)
    assert second.spans == (Span(9, 15, "BTX:9013", "disliked"), Span(20, 32, None, "disliked"))


def test_conll_entities_agree_with_seqeval() -> None:
    lines = CONLL.splitlines()
    records = parse_conll(lines, source="x.conll", default_lang="en")
    blocks = [
        [ln.split() for ln in b.splitlines() if ln and not ln.startswith("#")]
        for b in CONLL.split("\n\n")
    ]
    for record, block in zip(records, blocks, strict=True):
        tokens, tags = [c[0] for c in block], [c[1] for c in block]
        # Source: seqeval's get_entities gives (type, first token, last token).
        expected = get_entities(tags)
        position, offsets = 0, []
        for token in tokens:
            start = record.text.index(token, position)
            offsets.append((start, start + len(token)))
            position = start + len(token)
        got = [(s.start, s.end) for s in record.spans]
        assert got == [(offsets[a][0], offsets[b][1]) for _, a, b in expected]


def test_conll_round_trips_through_jsonl(tmp_path: Path) -> None:
    records = parse_conll(CONLL.splitlines(), source="x.conll", default_lang="en")
    path = tmp_path / "gold.jsonl"
    path.write_text(
        "\n".join(
            json.dumps(
                {
                    "respondent": r.respondent,
                    "sentence": r.text,
                    "lang": r.lang,
                    "mentions": [s._asdict() for s in r.spans],
                    "implicit": [],
                }
            )
            for r in records
        ),
        encoding="utf-8",
    )
    again = read_labels(path, default_lang="en")
    assert [(r.text, r.spans, r.respondent) for r in again] == [
        (r.text, r.spans, r.respondent) for r in records
    ]


BAD_JSONL = {
    "end-beyond-text": (
        '{"sentence": "Soft beans", "mentions": [{"start": 0, "end": 40}]}',
        r"g\.jsonl, line 2: 'end' 40 is beyond the sentence's 10 characters",
    ),
    "not-json": ('{"sentence": "Soft beans", ', r"line 2: not valid JSON"),
    "mentions-missing": ('{"sentence": "Soft beans"}', r"line 2: 'mentions' must be a list"),
    "bad-stance": (
        '{"sentence": "Soft beans", "mentions": [{"start": 0, "end": 4, "stance": "x"}]}',
        r"line 2: the stance of mention 1 must be one of liked",
    ),
    "old-format": (
        '{"text": "Soft beans", "spans": []}',
        r"line 2: this line is in the label format of earlier versions; convert the file with "
        r"`traits convert-labels",
    ),
    "unknown-key": (
        '{"sentence": "Soft beans", "mentions": [], "implict": []}',
        r"line 2: unknown key 'implict'",
    ),
    "implicit-without-concept": (
        '{"sentence": "Soft beans", "mentions": [], "implicit": [{"stance": "liked"}]}',
        r"line 2: implicit trait 1 needs a 'concept'",
    ),
    "implicit-bad-stance": (
        '{"sentence": "Soft beans", "mentions": [], "implicit": [{"concept": "C:1", '
        '"stance": "sad"}]}',
        r"line 2: the stance of implicit trait 1 must be one of",
    ),
    "implicit-not-a-list": (
        '{"sentence": "Soft beans", "mentions": [], "implicit": {"concept": "C:1"}}',
        r"line 2: 'implicit' must be a list",
    ),
    # The interview readers refuse such tags (BCP 47, RFC 5646 grammar; item 14 of the
    # red team's list): so must the label reader.
    "language-not-bcp47": (
        '{"sentence": "Soft beans", "mentions": [], "lang": "klingon!!"}',
        r"line 2: language 'klingon!!' is not a BCP 47 tag of a known language",
    ),
    "language-unknown": (
        '{"sentence": "Soft beans", "mentions": [], "lang": "qzz"}',
        r"line 2: language 'qzz'",
    ),
    "metadata-not-text": (
        '{"sentence": "Soft beans", "mentions": [], "metadata": {"age": [1, 2]}}',
        r"line 2: 'metadata' must be an object of text values",
    ),
    "end-before-start": (
        '{"sentence": "Soft beans", "mentions": [{"start": 4, "end": 2}]}',
        r"line 2: 'end' 2 of mention 1 must be after 'start' 4",
    ),
    "whitespace-span": (
        '{"sentence": "Soft  beans", "mentions": [{"start": 4, "end": 6}]}',
        r"line 2: span 4-6 \(' {2}'\) covers no word",
    ),
    "overlap": (
        '{"sentence": "Soft beans", '
        '"mentions": [{"start": 0, "end": 10}, {"start": 5, "end": 10}]}',
        r"line 2: spans 0-10 and 5-10 overlap",
    ),
}


@pytest.mark.parametrize("line,message", BAD_JSONL.values(), ids=BAD_JSONL.keys())
def test_bad_jsonl_line_is_reported_by_number(line: str, message: str) -> None:
    good = '{"sentence": "Good taste", "mentions": []}'
    with pytest.raises(InputError, match=message):
        parse_jsonl([good, line], source="g.jsonl", default_lang="en")


BAD_CONLL = {
    "stray-I": ("a O\nb I-TRAIT\n", r"c\.conll, line 2: tag 'I-TRAIT' does not continue"),
    "unknown-tag": ("a X\n", r"line 1: tag 'X' must be"),
    "too-many-columns": ("a O _ _ extra\n", r"line 1: a token line needs 2 to 4 columns"),
    "token-not-in-text": (
        "# text = soft grain\nsoft O\nbeans O\n",
        r"line 3: token 'beans' is not in the '# text'",
    ),
    "bad-stance": ("\n\na B-TRAIT _ happy\n", r"line 3: stance 'happy'"),
    "bad-implicit-stance": ("# implicit = BTX:1 glad\na O\n", r"line 1: stance 'glad'"),
    "bad-language": ("# lang = klingon!!\na O\n", r"line 1: language 'klingon!!'"),
}


@pytest.mark.parametrize("text,message", BAD_CONLL.values(), ids=BAD_CONLL.keys())
def test_bad_conll_line_is_reported_by_number(text: str, message: str) -> None:
    with pytest.raises(InputError, match=message):
        parse_conll(text.splitlines(), source="c.conll", default_lang="en")


SNAPS = {
    "inside-word": ((1, 3), (0, 4)),
    "half-of-two-words": ((2, 7), (0, 10)),
    "with-trailing-space": ((5, 11), (5, 10)),
    "already-aligned": ((5, 10), (5, 10)),
}


@pytest.mark.parametrize("given,expected", SNAPS.values(), ids=SNAPS.keys())
def test_spans_snap_outwards_to_words(given: tuple[int, int], expected: tuple[int, int]) -> None:
    line = json.dumps(
        {"sentence": "Soft beans sell", "mentions": [{"start": given[0], "end": given[1]}]}
    )
    (record,) = parse_jsonl([line], source="g.jsonl", default_lang="en")
    assert (record.spans[0].start, record.spans[0].end) == expected
    assert record.snapped == int(given != expected)


def test_spans_snapping_onto_the_same_words_merge() -> None:
    line = json.dumps(
        {
            "sentence": "Seafood was fine",
            "mentions": [
                {"start": 0, "end": 7, "stance": "neutral"},
                {"start": 3, "end": 7, "stance": "liked"},
            ],
        }
    )
    (record,) = parse_jsonl([line], source="g.jsonl", default_lang="en")
    assert record.spans == (Span(0, 7, None, "neutral"),)


def test_unknown_suffix_is_refused(tmp_path: Path) -> None:
    path = tmp_path / "labels.xlsx"
    path.write_text("x", encoding="utf-8")
    with pytest.raises(InputError, match="labels.xlsx: labels must be"):
        read_labels(path, default_lang="en")


def test_to_gold_accepts_dicts_and_records() -> None:
    gold = to_gold(
        [{"sentence": "Good taste", "lang": "en", "mentions": [{"start": 5, "end": 10}]}],
        first_id=7,
    )
    assert gold[0][0].id == 7 and gold[0][1] == [Span(5, 10)]


def _jsonl(tmp_path: Path, rows: list[str]) -> Path:
    path = tmp_path / "labels.jsonl"
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    return path


ROWS = [
    json.dumps(
        {
            "respondent": "KAL-07",
            "sentence": "The Zanobi beans cook fast.",
            "lang": "en",
            "mentions": [{"start": 17, "end": 26, "concept": "BTX:9002", "stance": "liked"}],
            "implicit": [{"concept": "BTX:9003", "stance": "liked"}],
        }
    ),
    json.dumps(
        {
            "respondent": "KAL-08",
            "sentence": "We sell them at Mirelo market.",
            "lang": "en",
            "mentions": [],
        }
    ),
]


def test_import_adds_sentences_and_labels(workspace: Workspace, tmp_path: Path) -> None:
    _with_concepts(workspace, "BTX:9002", "BTX:9003")
    records = read_labels(_jsonl(tmp_path, ROWS), default_lang="en")
    counts = import_labels(
        workspace.conn, records, annotator="tester", default_lang="en", source="labels.jsonl"
    )
    assert counts == LabelImport(
        records=2, matched=0, added_sentences=2, labels=2, spans=1, snapped=0, implicit=1
    )
    labels = store.current_labels(workspace.conn)
    sentences = {s.id: s for s in store.sentences(workspace.conn)}
    by_text = {sentences[sid].text: v for sid, v in labels.items()}
    assert by_text["The Zanobi beans cook fast."].spans == [Span(17, 26, "BTX:9002", "liked")]
    assert by_text["The Zanobi beans cook fast."].implicit == (Implicit("BTX:9003", "liked"),)
    assert by_text["We sell them at Mirelo market."].empty
    assert by_text["We sell them at Mirelo market."].origin == "import"
    again = import_labels(
        workspace.conn, records, annotator="tester", default_lang="en", source="labels.jsonl"
    )
    assert (again.matched, again.added_sentences) == (2, 0)
    assert len(store.sentences(workspace.conn)) == 2


def test_bad_line_leaves_the_store_unchanged(workspace: Workspace, tmp_path: Path) -> None:
    bad = json.dumps(
        {"respondent": "KAL-09", "sentence": "Short", "mentions": [{"start": 0, "end": 40}]}
    )
    with pytest.raises(InputError, match="line 3"):
        read_labels(_jsonl(tmp_path, [*ROWS, bad]), default_lang="en")
    assert store.sentences(workspace.conn) == []
    assert store.current_labels(workspace.conn) == {}


UNKNOWN = {
    "mention": ("mentions", {"start": 0, "end": 4, "concept": "NOPE:9999", "stance": "liked"}),
    "implicit": ("implicit", {"concept": "NOPE:9999", "stance": "liked"}),
}


@pytest.mark.parametrize(("key", "item"), UNKNOWN.values(), ids=UNKNOWN.keys())
def test_import_refuses_a_concept_the_list_lacks(
    workspace: Workspace, tmp_path: Path, key: str, item: dict[str, object]
) -> None:
    # Item 14 of the red team's list: an unknown concept was stored silently.
    _with_concepts(workspace, "BTX:9002", "BTX:9003")
    bad = {"respondent": "KAL-09", "sentence": "Soft beans.", "mentions": [], key: [item]}
    records = read_labels(_jsonl(tmp_path, [*ROWS, json.dumps(bad)]), default_lang="en")
    with pytest.raises(InputError, match=r"labels.jsonl, line 3: concept 'NOPE:9999' is not in"):
        import_labels(
            workspace.conn, records, annotator="t", default_lang="en", source="labels.jsonl"
        )
    assert store.sentences(workspace.conn) == []
    assert store.current_labels(workspace.conn) == {}


def test_import_without_a_concept_list_says_to_import_it(
    workspace: Workspace, tmp_path: Path
) -> None:
    records = read_labels(_jsonl(tmp_path, ROWS), default_lang="en")
    with pytest.raises(InputError, match=r"line 1: .* no concept list yet; import it first"):
        import_labels(workspace.conn, records, annotator="t", default_lang="en", source="x")
    assert store.sentences(workspace.conn) == []


def test_old_label_files_convert_and_read_back_the_same() -> None:
    old = [
        '{"respondent": "KAL-07", "text": "The Zanobi beans cook fast.", "lang": "en", '
        '"question": "Why?", "spans": [{"start": 17, "end": 26, "concept": "BTX:9002", '
        '"stance": "liked"}]}',
        "",
        '{"text": "No trait here.", "spans": []}',
    ]
    new = convert_legacy_lines(old, source="old.jsonl")
    assert [json.loads(line) for line in new] == [
        {
            "respondent": "KAL-07",
            "sentence": "The Zanobi beans cook fast.",
            "lang": "en",
            "mentions": [{"start": 17, "end": 26, "concept": "BTX:9002", "stance": "liked"}],
            "implicit": [],
            "question": "Why?",
        },
        {"sentence": "No trait here.", "mentions": [], "implicit": []},
    ]
    (first, second) = parse_jsonl(new, source="new.jsonl", default_lang="en")
    assert first.spans == (Span(17, 26, "BTX:9002", "liked"),) and first.question == "Why?"
    assert second.spans == () and second.implicit == ()


def test_converter_names_the_bad_line() -> None:
    with pytest.raises(InputError, match=r"old.jsonl, line 2: 'end' 40 is beyond"):
        convert_legacy_lines(
            ['{"text": "Ok", "spans": []}', '{"text": "Ok", "spans": [{"start": 0, "end": 40}]}'],
            source="old.jsonl",
        )


def test_label_format_round_trips_implicit_and_metadata() -> None:
    line = json.dumps(
        {
            "respondent": "KAL-07",
            "sentence": "My children finish the plate.",
            "lang": "EN",
            "mentions": [],
            "implicit": [{"concept": "BTX:9003", "stance": "liked"}],
            "variety": "Zanobi",
            "metadata": {"gender": "female", "age": 41},
        }
    )
    (record,) = parse_jsonl([line], source="g.jsonl", default_lang="fr")
    assert record.lang == "en"  # BCP 47 conventional case (RFC 5646 section 2.1.1)
    assert record.implicit == (Implicit("BTX:9003", "liked"),)
    assert record.metadata == {"gender": "female", "age": "41"}
    again = parse_jsonl([json.dumps(record_to_dict(record))], source="g", default_lang="fr")
    assert again == [record]


def test_conll_reads_implicit_lines() -> None:
    text = "# implicit = BTX:9003 liked\n# implicit = BTX:9005 _\nThey O\nfinish O\n"
    (record,) = parse_conll(text.splitlines(), source="c.conll", default_lang="en")
    assert record.implicit == (Implicit("BTX:9003", "liked"), Implicit("BTX:9005"))
    assert record.spans == ()


def test_import_is_all_or_nothing(workspace: Workspace, tmp_path: Path) -> None:
    _with_concepts(workspace, "BTX:9002", "BTX:9003")
    records = read_labels(_jsonl(tmp_path, ROWS), default_lang="en")
    orphan = records[1]._replace(respondent=None, text="Nobody said this here.", line=9)
    with pytest.raises(InputError, match="labels.jsonl, line 9: the sentence is not in the"):
        import_labels(
            workspace.conn,
            [records[0], orphan],
            annotator="tester",
            default_lang="en",
            source="labels.jsonl",
        )
    assert store.sentences(workspace.conn) == []
    assert store.current_labels(workspace.conn) == {}
    assert store.sources(workspace.conn) == []


def test_reads_what_interchange_writes(tmp_path: Path) -> None:
    from extractor.report.formats import write_conll
    from extractor.types import Sentence

    gold = [
        (
            Sentence(1, "The Zanobi beans cook fast, really.", "en"),
            [Span(17, 26, "BTX:9002", "liked")],
        ),
        (Sentence(2, "Hard to cook", "fr"), [Span(0, 4, None, "disliked")]),
    ]
    write_conll(tmp_path / "out.conll", gold)
    records = read_labels(tmp_path / "out.conll", default_lang="en")
    assert [(r.text, r.lang, list(r.spans)) for r in records] == [
        (s.text, s.lang, spans) for s, spans in gold
    ]


@pytest.mark.parametrize(
    ("bom", "codec"),
    [(codecs.BOM_UTF16_LE, "utf-16-le"), (codecs.BOM_UTF16_BE, "utf-16-be")],
    ids=["utf16-le", "utf16-be"],
)
def test_conll_file_with_a_utf16_byte_order_mark_is_read(
    tmp_path: Path, bom: bytes, codec: str
) -> None:
    # A spreadsheet's "Unicode text" is UTF-16 with a BOM (Python's codecs.BOM_UTF16_*,
    # the signatures of the Unicode FAQ on BOMs), tab separated like CoNLL columns.
    path = tmp_path / "gold.tsv"
    tabbed = [ln if ln.startswith("#") else ln.replace(" ", "\t") for ln in CONLL.splitlines()]
    path.write_bytes(bom + "\r\n".join(tabbed).encode(codec))
    expected = parse_conll(CONLL.splitlines(), source="gold.tsv", default_lang="en")
    assert read_labels(path, default_lang="en") == expected
