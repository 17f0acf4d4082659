"""The invented demo study: it ingests whole, every sentence's offsets round-trip.

These are smoke checks of the demo data and of ingest on it, not evidence of quality
(quality is checked on outside data: see test_mams_tagging.py and test_stance.py).
"""

from __future__ import annotations

import json
from collections.abc import Iterator
from pathlib import Path

import pytest

from extractor.ingest.intake import add_files, import_concepts, interview_files
from extractor.jobs.add import unknown_questions
from extractor.workspace import store
from extractor.workspace.folder import Workspace, init_workspace

SAMPLE = Path(__file__).resolve().parents[1] / "sample_interviews"


@pytest.fixture(scope="module")
def demo(tmp_path_factory: pytest.TempPathFactory) -> Iterator[Workspace]:
    root = init_workspace(tmp_path_factory.mktemp("demo"))
    ws = Workspace.open(root)
    add_files(ws, interview_files(SAMPLE / "interviews"))
    import_concepts(ws, SAMPLE / "concepts.csv")
    yield ws
    ws.close()


def test_demo_has_the_size_the_study_promises(demo: Workspace) -> None:
    counts = store.counts(demo.conn)
    assert counts["respondents"] >= 48
    assert counts["sentences"] >= 500
    assert set(counts["languages"]) == {"en", "fr", "es"}
    assert counts["concepts"] >= 25
    non_english = sum(n for lang, n in counts["languages"].items() if lang != "en")
    assert non_english >= counts["sentences"] / 4


def test_every_demo_sentence_round_trips_into_its_answer(demo: Workspace) -> None:
    answers: dict[int | None, str] = {a.id: a.text for a in store.answers(demo.conn)}
    for sentence in store.sentences(demo.conn):
        answer = answers[sentence.answer_id]
        assert answer[sentence.offset : sentence.offset + len(sentence.text)] == sentence.text
        assert sentence.text == sentence.text.strip() and sentence.text


def test_readding_the_demo_changes_nothing(demo: Workspace) -> None:
    before = store.counts(demo.conn)
    reports = add_files(demo, interview_files(SAMPLE / "interviews"))
    assert {r.status for r in reports} == {"unchanged"}
    assert store.counts(demo.conn) == before


def test_demo_gold_matches_stored_sentences(demo: Workspace) -> None:
    for line in (SAMPLE / "gold.jsonl").read_text(encoding="utf-8").splitlines():
        record = json.loads(line)
        assert store.find_sentence(demo.conn, record["sentence"], record["respondent"]) is not None


def test_every_demo_question_leans_or_is_coded_open(tmp_path: Path) -> None:
    # The quick start names no question as telling stance nothing: the demo's codebook
    # marks its questions without a lean ("How do you cook it or sell it?") as open.
    (tmp_path / "sample_interviews").symlink_to(SAMPLE)
    with Workspace.open(init_workspace(tmp_path)) as ws:
        add_files(ws, interview_files(SAMPLE / "interviews"))
        assert store.questions(ws.conn)
        assert unknown_questions(ws) == ()
