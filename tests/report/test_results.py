"""Tests of extractor.report.results: the store read back as mention, respondent, concept frames.

A workspace is built by hand through the store's own functions; every expected row below
is worked out from what was stored. Offsets follow the W3C Web Annotation Data Model's
TextPositionSelector (section 4.2.4): character positions, start included, end excluded,
so ``answer[answer_start:answer_end]`` must give back the span's text. All people,
varieties and trait IDs are invented.
"""

from __future__ import annotations

from collections.abc import Iterator
from datetime import datetime, timedelta
from pathlib import Path
from typing import Any

import pandas as pd
import pytest

from extractor.report.about import RunFacts
from extractor.report.results import about, concept_frame, mention_frame, respondent_frame
from extractor.types import Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace, init_workspace

ANSWERS = [
    # (respondent, metadata, is_group, answer, sentence offsets)
    ("KR-01", {"gender": "woman"}, False, "We grow Kivu Red. It cooks fast but weevils eat it.",
     [(0, 17), (18, 51)]),
    ("KR-02", {"gender": "man"}, False, "The grain is large.", [(0, 19)]),
    ("FG-01", {}, True, "Nobody said much.", [(0, 17)]),
]  # fmt: skip
CONCEPTS: list[dict[str, Any]] = [
    {"id": "BTX:0001", "parent": None, "definition": "Soft after a short time on the fire."},
    {"id": "BTX:0002", "parent": None, "definition": "Stored grain escapes weevils."},
    {"id": "BTX:0003", "parent": "BTX:0001", "definition": "Size of the dry grain."},
]
ALIASES = [
    ("BTX:0001", "fast cooking", "en"),
    ("BTX:0001", "cuisson rapide", "fr"),
    ("BTX:0002", "résistance aux charançons", "fr"),  # no English label: falls back
    ("BTX:0003", "large grain", "en"),
]
VERSION = "v001-20260101T000000"


def _predicted(start: int, end: int, concept: str | None, stance: str, **extra: Any) -> dict:
    return {
        "start": start,
        "end": end,
        "concept": concept,
        "stance": stance,
        "confidence": 0.9,
        "link_prob": 0.8,
        "stance_prob": 0.7,
        "source": "predicted",
        "variety": None,
        "ref_variety": None,
    } | extra


@pytest.fixture
def ws(tmp_path: Path) -> Iterator[Workspace]:
    """A workspace with three respondents, four sentences, predictions and one person label."""
    init_workspace(tmp_path / "ws")
    ws = Workspace.open(tmp_path / "ws")
    store.add_source(
        ws.conn,
        path="interviews.csv",
        sha256="0",
        kind="csv",
        options={},
        rows=[
            {
                "respondent": resp,
                "question": "Why do you grow it?",
                "answer": text,
                "lang": "en",
                "lang_origin": "column",
                "metadata": meta,
                "is_group": group,
            }
            for resp, meta, group, text, _ in ANSWERS
        ],
        sentence_offsets=[offsets for *_, offsets in ANSWERS],
    )
    store.replace_concept_list(
        ws.conn,
        kind="trait",
        path="traits.csv",
        sha256="1",
        concepts=CONCEPTS,
        aliases=[
            {"concept_id": c, "text": t, "lang": lang, "kind": "preferred"}
            for c, t, lang in ALIASES
        ],
    )
    store.replace_concept_list(
        ws.conn,
        kind="variety",
        path="varieties.csv",
        sha256="2",
        concepts=[{"id": "VAR:01"}],
        aliases=[{"concept_id": "VAR:01", "text": "Kivu Red", "lang": "en", "kind": "preferred"}],
    )
    store.add_model(ws.conn, VERSION, "models/v001", {"metrics": {"span": {"f1": 0.5}}})
    # Sentence IDs follow answer order: 1 "We grow Kivu Red.", 2 "It cooks fast...",
    # 3 "The grain is large.", 4 "Nobody said much."
    store.store_predictions(
        ws.conn,
        VERSION,
        [
            {"sentence_id": 1, "mentions": []},
            {
                "sentence_id": 2,
                "mentions": [
                    _predicted(3, 13, "BTX:0001", "liked", variety="VAR:01"),
                    _predicted(18, 32, "BTX:0002", "disliked", ref_variety="VAR:99"),
                ],
            },
            {"sentence_id": 3, "mentions": [_predicted(4, 18, None, "liked")]},
        ],
    )
    # A person relabels sentence 3: only "grain" is a trait, linked to large grain.
    store.add_label(ws.conn, 3, [Span(4, 9, "BTX:0003", "liked")], "coder-a")
    yield ws
    ws.close()


def test_concept_frame_labels_in_default_language_else_first(ws: Workspace) -> None:
    frame = concept_frame(ws)
    assert list(frame.columns) == ["concept_id", "label", "parent"]
    assert frame["concept_id"].tolist() == ["BTX:0001", "BTX:0002", "BTX:0003"]
    assert frame["label"].tolist() == ["fast cooking", "résistance aux charançons", "large grain"]
    assert frame["parent"].isna().tolist() == [True, True, False]
    assert frame["parent"].iloc[2] == "BTX:0001"


def test_respondent_frame_one_row_per_respondent_with_metadata(ws: Workspace) -> None:
    frame = respondent_frame(ws)
    assert frame["respondent"].tolist() == ["KR-01", "KR-02", "FG-01"]
    assert frame["is_group"].tolist() == [False, False, True]
    assert frame["gender"].tolist()[:2] == ["woman", "man"]
    assert pd.isna(frame["gender"].iloc[2])


def test_mention_frame_rows_person_label_replaces_predictions(ws: Workspace) -> None:
    frame = mention_frame(ws, VERSION)
    got = frame[["sentence_id", "span_text", "concept_id", "stance", "source"]]
    assert got.values.tolist() == [
        [2, "cooks fast", "BTX:0001", "liked", "predicted"],
        [2, "weevils eat it", "BTX:0002", "disliked", "predicted"],
        [3, "grain", "BTX:0003", "liked", "person"],  # the prediction "grain is large" is gone
    ]


def test_mention_frame_provenance_columns(ws: Workspace) -> None:
    frame = mention_frame(ws, VERSION).set_index("span_text")
    assert frame.loc["cooks fast", "model_version"] == VERSION
    assert frame.loc["cooks fast", "confidence"] == 0.9
    assert pd.isna(frame.loc["cooks fast", "annotator"])
    person = frame.loc["grain"]
    assert person["annotator"] == "coder-a" and pd.isna(person["model_version"])
    assert all(pd.isna(person[c]) for c in ("confidence", "link_prob", "stance_prob"))


def test_mention_frame_offsets_index_the_answer(ws: Workspace) -> None:
    frame = mention_frame(ws, VERSION)
    answers = {i + 1: text for i, (*_, text, _) in enumerate(ANSWERS)}
    for row in frame.to_dict("records"):
        answer = answers[row["answer_id"]]
        assert answer[row["answer_start"] : row["answer_end"]] == row["span_text"]
        assert row["sentence"][row["start"] : row["end"]] == row["span_text"]
    first = frame.iloc[0]
    assert (first["answer_start"], first["answer_end"]) == (21, 31)  # sentence starts at 18


def test_mention_frame_names_concepts_and_known_varieties(ws: Workspace) -> None:
    frame = mention_frame(ws, VERSION).set_index("span_text")
    assert frame.loc["weevils eat it", "concept_label"] == "résistance aux charançons"
    assert frame.loc["cooks fast", "variety"] == "Kivu Red (VAR:01)"
    # A variety ID not in the list is shown as given.
    assert frame.loc["weevils eat it", "ref_variety"] == "VAR:99"
    assert frame.loc["weevils eat it", "respondent"] == "KR-01"
    assert frame.loc["weevils eat it", "question"] == "Why do you grow it?"


def test_mention_frame_without_version_has_only_person_labels(ws: Workspace) -> None:
    frame = mention_frame(ws, None)
    assert frame["span_text"].tolist() == ["grain"]
    assert frame["source"].tolist() == ["person"]


def test_mention_frame_empty_workspace_has_no_rows(tmp_path: Path) -> None:
    init_workspace(tmp_path / "empty")
    with Workspace.open(tmp_path / "empty") as empty:
        assert mention_frame(empty, None).empty


def test_about_reads_the_model_and_lists(ws: Workspace) -> None:
    facts = about(ws, VERSION)
    assert isinstance(facts, RunFacts)
    assert facts.model_version == VERSION
    assert facts.quality_cross_validated is None  # recorded metrics hold no such figure
    assert (facts.concept_list, facts.concept_list_sha256) == ("traits.csv", "1")
    assert (facts.respondents, facts.sentences, facts.sentences_labeled) == (3, 4, 1)
    # An ISO 8601 time in UTC, as Python's datetime.fromisoformat reads it.
    assert datetime.fromisoformat(facts.exported or "").utcoffset() == timedelta(0)


def test_about_without_a_model(ws: Workspace) -> None:
    facts = about(ws, None)
    assert (facts.model_version, facts.model_trained) == ("none (labels only)", None)
