"""Re-importing a changed concept list: what it changes is reported, labels are kept.

The lists and the answer are invented. What reached the store is read through a second
``sqlite3`` connection's ``iterdump`` (Python's standard library), which sees committed
rows only.
"""

from __future__ import annotations

import sqlite3
from pathlib import Path

import pytest

from extractor.errors import InputError
from extractor.ingest.concept_changes import Rename, SynonymChange
from extractor.ingest.intake import import_concepts
from extractor.types import AnswerRow, Span
from extractor.workspace import store
from extractor.workspace.folder import STORE_FILE, Workspace
from extractor.workspace.settings import ConceptListSettings

BEFORE = (
    "id,label,lang,synonyms,parent\n"
    "BTX:1,cooking time,en,cooks fast|quick to cook,\n"
    "BTX:2,grain size,en,big grain,\n"
    "BTX:4,taste,en,sweet,\n"
)
AFTER = (
    "id,label,lang,synonyms,parent\n"
    "BTX:1,time to cook,en,cooks fast|cooks quickly,\n"
    "BTX:3,broth thickness,en,thick broth,\n"
    "BTX:4,taste,en,sweet,\n"
)


def _list(ws: Workspace, text: str, name: str = "concepts.csv") -> Path:
    path = ws.root / name
    path.write_text(text, encoding="utf-8")
    return path


def _dump(ws: Workspace) -> list[str]:
    conn = sqlite3.connect(ws.root / STORE_FILE)
    try:
        return list(conn.iterdump())
    finally:
        conn.close()


def _label_on(ws: Workspace, concept: str) -> None:
    """Store one answer and a person's label pointing at ``concept``."""
    text = "The grain is big."
    store.add_source(
        ws.conn,
        path="answers.csv",
        sha256="0",
        kind="csv",
        options={},
        rows=[AnswerRow("KIB-01", text, "en", "column")],
        sentence_offsets=[[(0, len(text))]],
    )
    sid = store.sentences(ws.conn)[0].id
    store.add_label(ws.conn, sid, [Span(4, 9, concept=concept, stance="liked")], "amina")


def test_reimport_reports_added_removed_renamed_and_synonyms(workspace: Workspace) -> None:
    first = import_concepts(workspace, _list(workspace, BEFORE))
    assert first.changes.first
    _label_on(workspace, "BTX:2")
    report = import_concepts(workspace, _list(workspace, AFTER))
    changes = report.changes
    assert (changes.added, changes.removed) == (("BTX:3",), ("BTX:2",))
    assert changes.renamed == (Rename("BTX:1", "en", "cooking time", "time to cook"),)
    assert changes.synonyms == (
        SynonymChange("BTX:1", ("cooks quickly (en)",), ("quick to cook (en)",)),
    )
    assert changes.labels_kept == {"BTX:2": 1}


def test_reimport_keeps_labels_that_point_at_a_removed_concept(workspace: Workspace) -> None:
    import_concepts(workspace, _list(workspace, BEFORE))
    _label_on(workspace, "BTX:2")
    import_concepts(workspace, _list(workspace, AFTER))
    labels = store.current_labels(workspace.conn)
    assert [s.concept for label in labels.values() for s in label.spans] == ["BTX:2"]
    assert "BTX:2" not in {c.id for c in store.concepts(workspace.conn)}  # inactive, kept


def test_dry_run_reports_changes_and_stores_nothing(workspace: Workspace) -> None:
    import_concepts(workspace, _list(workspace, BEFORE))
    before = _dump(workspace)
    report = import_concepts(workspace, _list(workspace, AFTER, "new.csv"), dry_run=True)
    assert report.status == "checked" and report.changes.removed == ("BTX:2",)
    assert _dump(workspace) == before


@pytest.mark.parametrize(
    ("name", "text", "options"),
    [
        ("broken.obo", "format-version: 1.2\n\n[Term\nid: BTX:1\n", {}),
        ("broken.ttl", "@prefix skos: <http://www.w3.org/2004/02/skos/core#> .\n<a> skos:x\n", {}),
        ("cycle.csv", "id,label,parent\nBTX:1,a,BTX:2\nBTX:2,b,BTX:1\n", {}),
        ("root.csv", BEFORE, {"roots": ("BTX:99",)}),
        ("double.csv", "id,label,label\nBTX:1,a,b\n", {}),
    ],
    ids=["obo-stanza", "turtle-syntax", "parent-cycle", "unknown-root", "duplicate-header"],
)
def test_bad_list_changes_nothing(
    workspace: Workspace, name: str, text: str, options: dict
) -> None:
    import_concepts(workspace, _list(workspace, BEFORE))
    before = _dump(workspace)
    with pytest.raises(InputError) as caught:
        import_concepts(
            workspace, _list(workspace, text, name), options=ConceptListSettings(**options)
        )
    assert "\n" not in str(caught.value)
    assert _dump(workspace) == before


def test_same_file_with_another_root_is_imported_again(workspace: Workspace) -> None:
    path = _list(workspace, "id,label,parent\nA,a,\nB,b,A\nC,c,\n")
    import_concepts(workspace, path)
    branch = import_concepts(workspace, path, options=ConceptListSettings(roots=("A",)))
    assert (branch.status, branch.concepts, branch.changes.removed) == ("imported", 2, ("C",))
