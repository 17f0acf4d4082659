"""`traits status`: the counts as a typed record, and the JSON keys scripts rely on."""

from __future__ import annotations

import csv
import dataclasses
import json
from pathlib import Path

from extractor.jobs.status import WorkspaceCounts, metadata_merges, workspace_status
from extractor.report.results import respondent_frame
from extractor.workspace import store
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


def test_metadata_renames_apply_to_stored_respondents_without_adding_again(study: Path) -> None:
    assert run("-w", str(study), "add", str(study / "interviews" / "survey.csv"))[0] == 0
    extra = study / "interviews" / "market.csv"
    extra.write_text(
        "respondent,sex,language,answer\nKB-01,F,en,It cooks fast.\nKB-02,M,en,Big grains.\n",
        encoding="utf-8",
    )
    assert run("-w", str(study), "add", str(extra))[0] == 0
    (study / "traits.toml").write_text("[metadata]\ncolumns = {}\n", encoding="utf-8")
    with Workspace.open(study) as ws:
        before = respondent_frame(ws)
    assert {"gender", "sex"} <= set(before.columns)
    # a rename given later, with no file, applies to the respondents already stored
    code, out = run("-w", str(study), "add", "--metadata", "sex=gender")
    assert code == 0 and "sex" in out
    with Workspace.open(study) as ws:
        after = respondent_frame(ws).set_index("respondent")
        merged = metadata_merges(ws)
        sources = store.sources(ws.conn)
    assert "sex" not in after.columns
    # survey.csv says woman/man, market.csv F/M: one value each
    assert after.loc["KB-01", "gender"] == after.loc["KA-01", "gender"] == "female"
    assert after.loc["KB-02", "gender"] == after.loc["KA-02", "gender"] == "male"
    assert [c.column for c in merged.columns] == ["gender"]
    assert len(sources) == 2  # nothing was added again
    code, out = run("-w", str(study), "status")
    assert code == 0 and "read as" in out and "female" in out
