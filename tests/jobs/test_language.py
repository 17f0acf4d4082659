"""Setting an answer's language makes its predictions stale, so the next export tags again."""

from __future__ import annotations

from pathlib import Path

import pytest

from extractor.ingest.intake import add_files
from extractor.jobs import tag as tag_job
from extractor.jobs.language import Selection, set_language
from extractor.workspace import store
from extractor.workspace.folder import Workspace, init_workspace


def test_predictions_of_changed_answers_are_tagged_again(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    root = tmp_path / "ws"
    init_workspace(root)
    answers = tmp_path / "answers.csv"
    # Invented answers; pt is ISO 639-1's code for Portuguese.
    answers.write_text(
        "respondent,question,answer,language\n"
        "R1,Why?,Aguenta bem a seca e dá muita raiz.,es\n"
        "R2,Why?,The roots stay firm in the ground.,en\n",
        encoding="utf-8",
    )
    tagged: list[str] = []
    monkeypatch.setattr(tag_job, "load_version", lambda ws, version: ("v1", None))
    monkeypatch.setattr(tag_job, "tag", lambda ws, models, name: tagged.append(name))
    with Workspace.open(root) as ws:
        add_files(ws, [answers])
        store.add_model(ws.conn, "v1", "models/v1", {})
        rows = [{"sentence_id": s.id, "mentions": []} for s in store.sentences(ws.conn)]
        store.store_predictions(ws.conn, "v1", rows)
        store.add_model(ws.conn, "v0", "models/v0", {})  # an older version, tagged too
        store.store_predictions(ws.conn, "v0", rows)
        assert tag_job.ensure_tagged(ws) == "v1" and tagged == []  # all tagged already
        change = set_language(ws, "pt", Selection(respondent="R1"))
        assert (change.changed, change.stale) == (1, 1)
        assert tag_job.ensure_tagged(ws) == "v1" and tagged == ["v1"]
