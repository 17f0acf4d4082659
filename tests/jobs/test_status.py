"""`traits status`: the counts as a typed record, and the JSON keys scripts rely on."""

from __future__ import annotations

import csv
import dataclasses
import json
from pathlib import Path

from extractor.jobs.status import WorkspaceCounts, workspace_status
from extractor.workspace.folder import Workspace
from tests.jobs.study import run

# the keys `traits status --json` has always printed; scripts read them
STATUS_KEYS = {
    "sources",
    "respondents",
    "answers",
    "sentences",
    "languages",
    "language_tags",
    "concepts",
    "aliases",
    "varieties",
    "labels",
    "models",
}


def test_status_counts_what_the_interview_file_holds(study: Path) -> None:
    assert run("-w", str(study), "add", str(study / "interviews" / "survey.csv"))[0] == 0
    # the standard library's CSV reader is the reference for what the file holds
    with (study / "interviews" / "survey.csv").open(encoding="utf-8", newline="") as handle:
        rows = list(csv.DictReader(handle))
    with Workspace.open(study) as ws:
        counts = workspace_status(ws)
    assert isinstance(counts, WorkspaceCounts)
    assert counts.respondents == len({r["respondent"] for r in rows})
    assert counts.answers == len(rows)
    assert counts.sources == 1 and counts.models == 0 and counts.labels == 0
    assert dict(counts.languages) == {"en": counts.sentences}


def test_status_json_keeps_its_keys(study: Path) -> None:
    assert {f.name for f in dataclasses.fields(WorkspaceCounts)} == STATUS_KEYS
    code, out = run("-w", str(study), "status", "--json")
    assert code == 0
    assert set(json.loads(out)) == STATUS_KEYS
