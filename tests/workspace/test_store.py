"""Store: schema and migrations, transactions, append-only labels, the rows it hands out."""

from __future__ import annotations

import json
import sqlite3
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import pytest

from extractor.errors import WorkspaceError
from extractor.types import AliasEntry, AnswerRow, ConceptEntry, Implicit, Span
from extractor.workspace import store


def _rows() -> list[AnswerRow]:
    return [
        AnswerRow(
            respondent="R1",
            question="Why?",
            answer="It cooks fast. Good broth.",
            lang="en",
            lang_origin="column",
            variety=None,
            metadata={"gender": "woman"},
            sheet=None,
            row=2,
            is_group=False,
        ),
        AnswerRow(
            respondent="R2",
            question="Why?",
            answer="Trop petit.",
            lang="fr",
            lang_origin="detected",
            variety="VAR:01",
            metadata={},
            sheet=None,
            row=3,
            is_group=True,
        ),
    ]


def _add(conn: sqlite3.Connection, sha: str = "abc") -> dict:
    return store.add_source(
        conn,
        path="a.csv",
        sha256=sha,
        kind="csv",
        options={},
        rows=_rows(),
        sentence_offsets=[[(0, 14), (15, 26)], [(0, 11)]],
    )


@pytest.fixture
def conn(tmp_path: Path) -> Iterator[sqlite3.Connection]:
    c = store.connect(tmp_path / "t.sqlite", create=True)
    yield c
    c.close()


def test_connect_sets_wal_foreign_keys_and_schema_version(conn: sqlite3.Connection) -> None:
    assert conn.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    assert conn.execute("PRAGMA foreign_keys").fetchone()[0] == 1
    assert store.schema_version(conn) == store.SCHEMA_VERSION


def test_connect_refuses_newer_schema(tmp_path: Path) -> None:
    path = tmp_path / "new.sqlite"
    store.connect(path, create=True).close()
    raw = sqlite3.connect(path)
    raw.execute(f"PRAGMA user_version = {store.SCHEMA_VERSION + 1}")
    raw.close()
    with pytest.raises(WorkspaceError, match="newer"):
        store.connect(path)


def test_connect_refuses_a_file_that_is_not_a_database(tmp_path: Path) -> None:
    path = tmp_path / "junk.sqlite"
    path.write_bytes(b"this is not sqlite" * 100)
    with pytest.raises(WorkspaceError, match="is damaged or is not a trait-extractor store"):
        store.connect(path)


def test_add_source_stores_sentences_that_round_trip(conn: sqlite3.Connection) -> None:
    counts = _add(conn)
    assert counts == {"respondents": 2, "answers": 2, "sentences": 3}
    texts = [s.text for s in store.sentences(conn)]
    assert texts == ["It cooks fast.", "Good broth.", "Trop petit."]


def test_add_source_skips_answers_already_stored(conn: sqlite3.Connection) -> None:
    _add(conn)
    again = _add(conn, sha="def")
    assert again == {"respondents": 0, "answers": 0, "sentences": 0}
    assert store.counts(conn)["sentences"] == 3


def test_failed_transaction_leaves_store_unchanged(conn: sqlite3.Connection) -> None:
    _add(conn)
    before = store.counts(conn)
    with pytest.raises(RuntimeError):
        with store.transaction(conn):
            _add(conn, sha="zzz")
            raise RuntimeError("boom")
    assert store.counts(conn) == before


def test_labels_are_append_only_and_undo_retracts(conn: sqlite3.Connection) -> None:
    _add(conn)
    sid = store.sentences(conn)[0].id
    first = store.add_label(conn, sid, [Span(3, 13, "BTX:0001", "liked")], "ana")
    second = store.add_label(conn, sid, [], "ana")
    assert store.current_labels(conn)[sid].spans == []
    store.retract_label(conn, second, "ana")
    current = store.current_labels(conn)[sid]
    assert current.label_id == first
    assert current.spans == [Span(3, 13, "BTX:0001", "liked")]
    assert len(store.label_history(conn)) == 3


def test_labels_keep_implicit_traits_in_the_same_row(conn: sqlite3.Connection) -> None:
    _add(conn)
    sid = store.sentences(conn)[0].id
    traits = [Implicit("BTX:0003", "liked"), Implicit("BTX:0005")]
    store.add_label(conn, sid, [Span(3, 13, "BTX:0001", "liked")], "ana", implicit=traits)
    current = store.current_labels(conn)[sid]
    assert current.implicit == tuple(traits) and current.mentions == current.spans
    assert not current.empty
    store.add_label(conn, sid, [], "ana")
    assert store.current_labels(conn)[sid].empty
    assert len(store.label_history(conn)) == 2


def test_version_1_labels_gain_an_empty_implicit_list(tmp_path: Path) -> None:
    path = tmp_path / "v1.sqlite"
    raw = sqlite3.connect(path)
    raw.executescript(store.MIGRATIONS[0] + "PRAGMA user_version = 1;")
    raw.execute("INSERT INTO sources VALUES (1, 'f', 's', 'table', '{}', 'now', 1)")
    raw.execute("INSERT INTO respondents VALUES (1, 'R1', '{}', 0, 'now')")
    raw.execute(
        "INSERT INTO answers (id, respondent_id, source_id, text, lang, lang_origin, "
        "fingerprint) VALUES (1, 1, 1, 'It cooks fast.', 'en', 'column', 'x')"
    )
    raw.execute("INSERT INTO sentences VALUES (1, 1, 0, 0, 14)")
    raw.execute(
        "INSERT INTO labels (sentence_id, annotator, created_at, action, spans) "
        "VALUES (1, 'ana', 'now', 'label', '[{\"start\": 3, \"end\": 13}]')"
    )
    raw.commit()
    raw.close()
    conn = store.connect(path)
    label = store.current_labels(conn)[1]
    assert (label.spans, label.implicit) == ([Span(3, 13)], ())
    assert store.schema_version(conn) == store.SCHEMA_VERSION
    conn.close()


def test_concept_reimport_keeps_annotator_aliases(conn: sqlite3.Connection) -> None:
    concepts = [ConceptEntry("BTX:0001")]
    aliases = [AliasEntry("BTX:0001", "cooking time", "en", "preferred")]
    store.replace_concept_list(
        conn, kind="trait", path="c.csv", sha256="1", concepts=concepts, aliases=aliases
    )
    assert store.add_alias(conn, "BTX:0001", "boils quickly", "en", "ana")
    store.replace_concept_list(
        conn, kind="trait", path="c.csv", sha256="2", concepts=concepts, aliases=aliases
    )
    texts = {(a.text, a.origin) for a in store.aliases(conn)}
    assert texts == {("cooking time", "list"), ("boils quickly", "annotator")}
    assert len(store.concept_versions(conn)) == 2


def test_add_alias_refuses_unknown_concept(conn: sqlite3.Connection) -> None:
    with pytest.raises(WorkspaceError, match="not in the imported concept list"):
        store.add_alias(conn, "BTX:9999", "x", "en", "ana")


def test_counts_report_languages(conn: sqlite3.Connection) -> None:
    _add(conn)
    assert store.counts(conn)["languages"] == {"en": 2, "fr": 1}


def test_counts_group_language_tags_by_primary_language(conn: sqlite3.Connection) -> None:
    rows = [
        _rows()[1]._replace(respondent="R3", answer="Muy rico.", lang="es-419"),
        _rows()[1]._replace(respondent="R4", answer="Muy bueno.", lang="es"),
    ]
    store.add_source(
        conn,
        path="b.csv",
        sha256="x",
        kind="csv",
        options={},
        rows=rows,
        sentence_offsets=[[(0, 9)], [(0, 10)]],
    )
    found = store.counts(conn)
    assert found["languages"] == {"es": 2}
    assert found["language_tags"] == {"es-419": 1, "es": 1}


# The rows the store hands out are checked against the tables read directly with the
# standard library's sqlite3 and json modules, independently of the store's own queries.


def _raw(conn: sqlite3.Connection, query: str) -> list[tuple]:
    return [tuple(r) for r in conn.execute(query).fetchall()]


def test_sentence_context_gives_the_previous_sentence_of_the_answer(
    conn: sqlite3.Connection,
) -> None:
    _add(conn)
    second = store.sentences(conn)[1]
    context = store.sentence_context(conn, second.id)
    [(text, start, end)] = _raw(
        conn,
        "SELECT a.text, s.start, s.end FROM sentences s JOIN answers a ON a.id = s.answer_id "
        f"WHERE s.answer_id = {second.answer_id} AND s.position = 0",
    )
    assert context.previous == text[start:end] == "It cooks fast."
    assert (context.respondent, context.question, context.metadata) == (
        "R1",
        "Why?",
        {"gender": "woman"},
    )
    assert store.sentence_context(conn, store.sentences(conn)[0].id).previous is None


def test_sentence_context_refuses_an_unknown_sentence(conn: sqlite3.Connection) -> None:
    with pytest.raises(WorkspaceError, match="Sentence 99 is not in this workspace"):
        store.sentence_context(conn, 99)


def test_respondent_metadata_is_merged_not_overwritten(conn: sqlite3.Connection) -> None:
    _add(conn)
    row = _rows()[0]._replace(answer="Soft skin.", metadata={"gender": "man", "district": "Ombala"})
    store.add_source(
        conn,
        path="b.csv",
        sha256="b",
        kind="csv",
        options={},
        rows=[row],
        sentence_offsets=[[(0, 10)]],
    )
    [(metadata,)] = _raw(conn, "SELECT metadata FROM respondents WHERE external_id = 'R1'")
    assert json.loads(metadata) == {"gender": "woman", "district": "Ombala"}


def test_model_versions_decode_meta_and_merge_metrics(conn: sqlite3.Connection) -> None:
    store.add_model(conn, "v001", "models/v001", {"metrics": {"cv": 0.5}, "counts": {"gold": 3}})
    store.set_model_metrics(conn, "v001", {"evaluation": 0.6})
    latest = store.latest_model(conn)
    [(version, path, meta, metrics)] = _raw(conn, "SELECT version, path, meta, metrics FROM models")
    assert latest == store.models(conn)[-1]
    assert latest is not None
    assert (latest.version, latest.path) == (version, path) == ("v001", "models/v001")
    assert latest.meta == json.loads(meta)
    assert latest.metrics == json.loads(metrics) == {"cv": 0.5, "evaluation": 0.6}


def test_set_model_metrics_refuses_an_unknown_version(conn: sqlite3.Connection) -> None:
    with pytest.raises(WorkspaceError, match="'v9' is not recorded"):
        store.set_model_metrics(conn, "v9", {"cv": 0.1})


def test_predictions_round_trip_per_sentence(conn: sqlite3.Connection) -> None:
    _add(conn)
    store.add_model(conn, "v001", "models/v001", {})
    ids = [s.id for s in store.sentences(conn)]
    mentions = [{"start": 3, "end": 13, "concept": "BTX:0001"}]
    rows: list[dict[str, Any]] = [
        {"sentence_id": ids[0], "path_prob": 0.8, "mentions": mentions},
        {"sentence_id": ids[1], "path_prob": None},
    ]
    assert store.store_predictions(conn, "v001", rows) == 2
    found = store.predictions(conn, "v001")
    raw_rows = _raw(conn, "SELECT sentence_id, path_prob, spans FROM predictions")
    raw = {sid: (p, json.loads(s)) for sid, p, s in raw_rows}
    assert {sid: tuple(p) for sid, p in found.items()} == raw
    assert found[ids[0]] == store.StoredPrediction(0.8, mentions)
    assert store.count_predictions(conn, "v001") == 2


def test_concept_list_versions_name_the_file_hash_and_sizes(conn: sqlite3.Connection) -> None:
    concepts = [ConceptEntry("BTX:0001", None, "Time to cook.")]
    aliases = [
        AliasEntry("BTX:0001", "cooking time", "en", "preferred"),
        AliasEntry("BTX:0001", "temps de cuisson", "fr", "preferred"),
    ]
    store.replace_concept_list(
        conn, kind="trait", path="c.csv", sha256="f00", concepts=concepts, aliases=aliases
    )
    current = store.current_concept_version(conn)
    assert current is not None
    assert [tuple(current)] == _raw(
        conn,
        "SELECT id, kind, path, sha256, imported_at, n_concepts, n_aliases FROM concept_versions",
    )
    assert (current.path, current.sha256, current.n_concepts, current.n_aliases) == (
        "c.csv",
        "f00",
        1,
        2,
    )
    assert store.current_concept_version(conn, "variety") is None
    [concept] = store.concepts(conn)
    assert concept.labels == {"en": "cooking time", "fr": "temps de cuisson"}
    assert concept.definition == "Time to cook."


def test_models_names_a_version_whose_record_is_not_json(conn: sqlite3.Connection) -> None:
    store.add_model(conn, "v003", "models/v003", {"counts": {}})
    conn.execute("UPDATE models SET meta = '{bad'")
    with pytest.raises(WorkspaceError, match=r"record of model version v003 is damaged"):
        store.models(conn)
