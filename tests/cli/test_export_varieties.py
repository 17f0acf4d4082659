"""`traits export`: mentions a person labeled are attributed to varieties as predictions are.

The workspace is built by hand through the store's own functions: one respondent names
the variety "Kivu Red" in the first sentence of an answer; the model's mention in the
second sentence carries that variety (as tagging stores it), and a person labeled the
third sentence. Variety attribution (:mod:`extractor.models.variety`) gives a mention the
nearest variety named before it in its answer, so both mentions are about Kivu Red and
the respondent has one row in "Traits per respondent". All names and IDs are invented.
"""

from __future__ import annotations

from pathlib import Path

import openpyxl

from extractor.types import AliasEntry, AnswerRow, ConceptEntry, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace, init_workspace
from tests.jobs.study import run
from tests.report.study import predicted

ANSWER = "We grow Kivu Red. It cooks fast. Weevils eat it."
OFFSETS = [(0, 17), (18, 32), (33, 48)]
VERSION = "v001-20260101T000000"


def _workspace(root: Path) -> Path:
    init_workspace(root)
    ws = Workspace.open(root)
    store.add_source(
        ws.conn,
        path="interviews.csv",
        sha256="0",
        kind="csv",
        options={},
        rows=[
            AnswerRow(
                respondent="KR-07",
                question="Why do you grow it?",
                answer=ANSWER,
                lang="en",
                lang_origin="column",
                metadata={"gender": "woman"},
                is_group=False,
            )
        ],
        sentence_offsets=[OFFSETS],
    )
    store.replace_concept_list(
        ws.conn,
        kind="trait",
        path="traits.csv",
        sha256="1",
        concepts=[ConceptEntry("BTX:0001"), ConceptEntry("BTX:0002")],
        aliases=[
            AliasEntry("BTX:0001", "fast cooking", "en", "preferred"),
            AliasEntry("BTX:0002", "weevil damage", "en", "preferred"),
        ],
    )
    store.replace_concept_list(
        ws.conn,
        kind="variety",
        path="varieties.csv",
        sha256="2",
        concepts=[ConceptEntry("VAR:01")],
        aliases=[AliasEntry("VAR:01", "Kivu Red", "en", "preferred")],
    )
    store.add_model(ws.conn, VERSION, "models/v001", {})
    store.store_predictions(
        ws.conn,
        VERSION,
        [
            {"sentence_id": 1, "mentions": []},
            {
                "sentence_id": 2,
                "mentions": [predicted(3, 13, "BTX:0001", "liked", variety="VAR:01")],
            },
            {"sentence_id": 3, "mentions": [predicted(0, 7, None, "neutral")]},
        ],
    )
    store.add_label(ws.conn, 3, [Span(0, 14, "BTX:0002", "disliked")], "coder-b")
    ws.close()
    return root


def test_export_person_labeled_mention_keeps_the_variety_of_its_answer(tmp_path: Path) -> None:
    root = _workspace(tmp_path / "ws")
    out = tmp_path / "traits.xlsx"
    code, printed = run("-w", str(root), "export", "--out", str(out))
    assert code == 0, printed
    sheet = openpyxl.load_workbook(out)["Traits per respondent"]
    header, *rows = [list(r) for r in sheet.iter_rows(values_only=True)]
    table = [dict(zip(header, r, strict=True)) for r in rows if r[0] == "KR-07"]
    assert len(table) == 1, table
    (row,) = table
    assert row["Variety"] == "Kivu Red (VAR:01)"
    assert row["Mentions"] == 2
    assert "BTX:0001" in row["Liked"] and "BTX:0002" in row["Disliked"]
    evidence = openpyxl.load_workbook(out)["Mentions"]
    header, *rows = [list(r) for r in evidence.iter_rows(values_only=True)]
    person = [
        dict(zip(header, r, strict=True)) for r in rows if r[header.index("Source")] == "person"
    ]
    assert [r["Variety"] for r in person] == ["Kivu Red (VAR:01)"]
