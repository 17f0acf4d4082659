"""`traits run` detects languages among the concept list's languages, even on a first run."""

from __future__ import annotations

from pathlib import Path

import pytest

from extractor.jobs import run as run_job
from extractor.workspace import store
from extractor.workspace.folder import Workspace, init_workspace


class _Stop(Exception):
    """Raised in place of training: the test only needs what run stored before it."""


def _no_training(*args: object, **kwargs: object) -> None:
    raise _Stop


def test_first_run_detects_the_concept_lists_languages(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    root = tmp_path / "trial"
    init_workspace(root)
    (root / "interviews").mkdir(exist_ok=True)
    # Invented answers; the codes are ISO 639-1's for Portuguese and Swahili.
    (root / "interviews" / "trial.csv").write_text(
        "respondent,question,answer\n"
        "R1,Why?,Aguenta bem a seca e dá muita raiz.\n"
        "R2,Why?,Não gosto porque apodrece logo depois da colheita.\n"
        "R3,Why?,Sipendi kwa sababu mizizi inaoza haraka.\n"
        "R4,Why?,Nataka aina inayostahimili ukame.\n",
        encoding="utf-8",
    )
    with Workspace.open(root) as ws:
        ws.path("concepts").write_text(
            "id,label,lang,synonyms,parent,definition\n"
            "CSV:01,drought tolerance,en,tolerates drought,,\n"
            "CSV:01,tolerância à seca,pt,aguenta a seca,,\n"
            "CSV:01,kustahimili ukame,sw,inastahimili ukame,,\n",
            encoding="utf-8",
        )
        monkeypatch.setattr(run_job, "train_and_tag", _no_training)
        with pytest.raises(_Stop):
            run_job.run(ws)
        assert store.counts(ws.conn)["languages"] == {"pt": 2, "sw": 2}
