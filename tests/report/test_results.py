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

import pandas as pd
import pytest

from extractor.report.about import RunFacts
from extractor.report.results import concept_frame, mention_frame, respondent_frame, run_facts
from extractor.types import Implicit
from extractor.workspace import store
from extractor.workspace.folder import Workspace, init_workspace
from tests.report.study import STORE_ANSWERS, VERSION, build_workspace, predicted


@pytest.fixture
def ws(tmp_path: Path) -> Iterator[Workspace]:
    """The hand-built workspace of :func:`tests.report.study.build_workspace`."""
    ws = build_workspace(tmp_path / "ws")
    yield ws
    ws.close()


def test_concept_frame_labels_in_default_language_else_first(ws: Workspace) -> None:
    frame = concept_frame(ws)
    assert list(frame.columns) == ["concept_id", "label", "parent", "parents"]
    assert frame["concept_id"].tolist() == ["BTX:0001", "BTX:0002", "BTX:0003"]
    assert frame["label"].tolist() == ["fast cooking", "résistance aux charançons", "large grain"]
    assert frame["parent"].isna().tolist() == [True, True, False]
    assert frame["parent"].iloc[2] == "BTX:0001"
    assert frame["parents"].tolist() == [(), (), ("BTX:0001",)]


def test_respondent_frame_one_row_per_respondent_with_metadata(ws: Workspace) -> None:
    frame = respondent_frame(ws)
    assert frame["respondent"].tolist() == ["KR-01", "KR-02", "FG-01"]
    assert frame["is_group"].tolist() == [False, False, True]
    # stored as woman/man; read through the metadata harmonisation as female/male
    assert frame["gender"].tolist()[:2] == ["female", "male"]
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
    answers = {i + 1: text for i, (*_, text, _) in enumerate(STORE_ANSWERS)}
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


def test_run_facts_read_the_model_and_lists(ws: Workspace) -> None:
    facts = run_facts(ws, VERSION)
    assert isinstance(facts, RunFacts)
    assert facts.model_version == VERSION
    assert facts.quality_cross_validated is None  # recorded metrics hold no such figure
    assert (facts.concept_list, facts.concept_list_sha256) == ("traits.csv", "1")
    assert (facts.respondents, facts.sentences, facts.sentences_labeled) == (3, 4, 1)
    # An ISO 8601 time in UTC, as Python's datetime.fromisoformat reads it.
    assert datetime.fromisoformat(facts.exported or "").utcoffset() == timedelta(0)


def test_run_facts_without_a_model(ws: Workspace) -> None:
    facts = run_facts(ws, None)
    assert (facts.model_version, facts.model_trained) == ("none (labels only)", None)


def test_mention_frame_shows_labeled_and_predicted_implicit_traits(ws: Workspace) -> None:
    # Sentence 4 "Nobody said much." gets a labeled implicit trait; sentence 1 a predicted one.
    store.add_label(ws.conn, 4, [], "coder-a", implicit=[Implicit("BTX:0001", "disliked")])
    rows = [{"sentence_id": 1, "mentions": [predicted(0, 17, "BTX:0003", "liked", implicit=True)]}]
    store.add_model(ws.conn, "v-implicit", "models/v002", {})
    store.store_predictions(ws.conn, "v-implicit", rows)
    frame = mention_frame(ws, "v-implicit")
    implicit = frame.loc[frame["implicit"]]
    assert implicit[["sentence_id", "concept_id", "stance", "source"]].values.tolist() == [
        [1, "BTX:0003", "liked", "predicted"],
        [4, "BTX:0001", "disliked", "person"],
    ]
    # The span of an implicit trait is its whole sentence: the sentence is the evidence.
    assert (implicit["span_text"] == implicit["sentence"]).all()
    assert not frame.loc[~frame["implicit"], "span_text"].eq(frame["sentence"]).any()
