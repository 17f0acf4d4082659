"""The labeling session: samples, order, storing, undo, resume and background retraining."""

from __future__ import annotations

import sqlite3
import time
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from sklearn.cluster import KMeans

from extractor.errors import InputError
from extractor.loop.items import Item
from extractor.loop.samples import SessionSettings, ensure_samples
from extractor.loop.session import Session
from extractor.types import Span
from extractor.workspace import store

# The fake model sits beside the tests; this works whether or not tests/ is a package.
from tests.fake_model import FakeModel, build_store, fake_retrain  # noqa: E402

NO_EVAL = SessionSettings(evaluation_fraction=0.0, evaluation_min=0, stop_set_size=8)


def _session(conn: sqlite3.Connection, **kwargs: Any) -> Session:
    options: dict[str, Any] = {
        "annotator": "Ama",
        "strategy": "least_confidence",
        "batch_size": 4,
        "predictor": FakeModel(),
        "settings": NO_EVAL,
    } | kwargs
    return Session.open(conn, **options)


def _ask(session: Session) -> Item:
    """Return the next item; the tests that call this know one is left."""
    item = session.next()
    assert item is not None
    return item


def test_session_never_asks_evaluation_sentences_by_default(conn: sqlite3.Connection) -> None:
    session = _session(conn, settings=SessionSettings(evaluation_min=5, stop_set_size=0))
    evaluation = set(store.sample_ids(conn, "evaluation"))
    asked = []
    while (item := session.next()) is not None:
        asked.append(item.sentence.id)
        session.submit(item.sentence.id, [])
    assert len(asked) == 15
    assert not evaluation & set(asked)


def test_session_offers_only_unlabeled_evaluation_sentences_on_request(
    conn: sqlite3.Connection,
) -> None:
    ensure_samples(conn, SessionSettings(evaluation_min=5, stop_set_size=0))
    evaluation = store.sample_ids(conn, "evaluation")
    store.add_label(conn, evaluation[0], [], "Kofi")
    session = _session(
        conn, settings=SessionSettings(offer_evaluation=True, evaluation_min=5, stop_set_size=0)
    )
    asked = []
    while (item := session.next()) is not None:
        assert item.in_evaluation
        asked.append(item.sentence.id)
        session.skip(item.sentence.id)
    assert sorted(asked) == evaluation[1:]


# --------------------------------------------------------------------------- order and storing


def test_next_follows_strategy_order(conn: sqlite3.Connection) -> None:
    # The fake model's path probability rises with the ID: least confidence asks 1, 2, 3...
    session = _session(conn)
    asked = []
    for _ in range(6):
        item = _ask(session)
        asked.append(item.sentence.id)
        session.submit(item.sentence.id, item.suggestion)
    assert asked == [1, 2, 3, 4, 5, 6]


def test_each_model_ranks_a_random_subpool(tmp_path: Path) -> None:
    def first_batch(conn: sqlite3.Connection, subpool: int | None) -> list[int]:
        settings = SessionSettings(
            evaluation_fraction=0.0, evaluation_min=0, stop_set_size=0, subpool=subpool
        )
        session = _session(conn, settings=settings)  # least confidence, batches of 4
        asked = []
        for _ in range(4):
            item = _ask(session)
            asked.append(item.sentence.id)
            session.submit(item.sentence.id, item.suggestion)
        return asked

    whole = first_batch(build_store(tmp_path / "a.sqlite"), None)
    assert whole == [1, 2, 3, 4]  # the least confident of the whole pool
    sub = first_batch(build_store(tmp_path / "b.sqlite"), 4)
    assert sub == sorted(sub) and len(set(sub)) == 4  # ranked, within a drawn sub-pool
    assert sub != whole
    assert first_batch(build_store(tmp_path / "c.sqlite"), 4) == sub  # seeded


def test_next_carries_suggestion_and_context(conn: sqlite3.Connection) -> None:
    item = _ask(_session(conn))
    assert item.sentence.text == "Zamaro Red cooks fast on the fire."
    assert item.suggestion == (Span(11, 21, "BTX:0002", "liked"),)
    assert item.origin == "model"
    assert item.context.question == "Why do you grow this bean?"
    assert item.context.metadata["district"] == "Tinsoka"


def test_next_at_cold_start_shows_every_sentence_without_suggestion(
    conn: sqlite3.Connection,
) -> None:
    session = _session(conn, predictor=None, strategy="default")
    seen = set()
    while (item := session.next()) is not None:
        assert item.suggestion == () and item.origin == "none"
        seen.add(item.sentence.id)
        session.submit(item.sentence.id, [])
    assert seen == set(range(1, 21))


def test_centroid_cold_start_asks_one_sentence_nearest_each_kmeans_centroid_first(
    conn: sqlite3.Connection,
) -> None:
    session = _session(conn, predictor=None, strategy="norm_logprob_space_centroids")
    asked = []
    for _ in range(4):
        item = _ask(session)
        asked.append(item.sentence.id)
        session.submit(item.sentence.id, [])
    vectors = session.pool.pool_vectors
    # scikit-learn's KMeans with the session's seed; each asked sentence is the member
    # nearest its cluster's centroid, one per cluster.
    km = KMeans(n_clusters=4, random_state=NO_EVAL.seed, n_init=1).fit(vectors)
    rows = [session.pool.positions[sid] for sid in asked]
    assert sorted(km.labels_[rows].tolist()) == [0, 1, 2, 3]
    for row in rows:
        members = np.flatnonzero(km.labels_ == km.labels_[row])
        distance = np.linalg.norm(vectors[members] - km.cluster_centers_[km.labels_[row]], axis=1)
        assert row == members[np.argmin(distance)]


def test_submit_stores_spans_concepts_stances_and_annotator(conn: sqlite3.Connection) -> None:
    session = _session(conn)
    spans = [Span(4, 11, "BTX:0015", "disliked")]
    label_id = session.submit(2, spans)
    stored = store.current_labels(conn)[2]
    assert stored.label_id == label_id
    assert stored.spans == spans
    assert stored.annotator == "Ama"


@pytest.mark.parametrize(
    ("spans", "message"),
    [
        ([Span(0, 99)], "does not fit"),
        ([Span(5, 5)], "does not fit"),
        ([Span(0, 4, "BTX:0002", "happy")], "stance must be one of"),
    ],
    ids=["past-end", "empty", "unknown-stance"],
)
def test_submit_rejects_bad_spans(conn: sqlite3.Connection, spans, message) -> None:
    with pytest.raises(InputError, match=message):
        _session(conn).submit(1, spans)
    assert store.current_labels(conn) == {}


def test_skip_is_remembered_for_that_annotator_only(conn: sqlite3.Connection) -> None:
    _session(conn).skip(1)
    assert _ask(_session(conn)).sentence.id == 2
    assert _ask(_session(conn, annotator="Kofi")).sentence.id == 1


def test_resumed_session_never_asks_labeled_sentences(conn: sqlite3.Connection) -> None:
    first = _session(conn)
    for _ in range(3):
        item = _ask(first)
        first.submit(item.sentence.id, [])
    first.quit()
    second = _session(conn, annotator="Kofi")
    assert _ask(second).sentence.id == 4
    assert second.total_labels == 3


def test_undo_retracts_and_asks_the_sentence_again_with_the_old_answer(
    conn: sqlite3.Connection,
) -> None:
    session = _session(conn)
    spans = [Span(4, 11, "BTX:0015", "disliked")]
    session.submit(2, spans)
    assert session.undo() == 2
    assert 2 not in store.current_labels(conn)
    assert [r["action"] for r in store.label_history(conn)] == ["label", "retract"]
    item = _ask(session)
    assert item.sentence.id == 2
    assert item.suggestion == tuple(spans) and item.origin == "previous"
    assert session.labeled_this_session == 0


def test_undo_reaches_labels_of_an_earlier_session(conn: sqlite3.Connection) -> None:
    _session(conn).submit(5, [])
    assert _session(conn).undo() == 5


def test_undo_with_nothing_to_undo_returns_none(conn: sqlite3.Connection) -> None:
    store.add_label(conn, 1, [], "Kofi")
    assert _session(conn).undo() is None
    assert 1 in store.current_labels(conn)


@pytest.mark.parametrize(
    ("kwargs", "message"),
    [
        ({"annotator": "  "}, "annotator name must not be empty"),
        ({"batch_size": 0}, "batch size must be at least 1"),
        ({"strategy": "loudest"}, "strategy must be one of"),
    ],
    ids=["no-annotator", "zero-batch", "unknown-strategy"],
)
def test_session_rejects_bad_settings(conn: sqlite3.Connection, kwargs, message) -> None:
    with pytest.raises(InputError, match=message):
        _session(conn, **kwargs)


# --------------------------------------------------------------------------- retraining


def test_retrain_runs_in_background_without_blocking_submit(conn: sqlite3.Connection) -> None:
    retrain = fake_retrain(delay=0.5)
    settings = SessionSettings(
        evaluation_fraction=0, evaluation_min=0, stop_set_size=8, retrain_every=3
    )
    session = _session(conn, retrain=retrain, settings=settings)
    slowest = 0.0
    for _ in range(3):
        item = _ask(session)
        started = time.perf_counter()
        session.submit(item.sentence.id, [])
        session.next()
        slowest = max(slowest, time.perf_counter() - started)
    assert session.retraining
    assert slowest < 0.2
    assert session.wait_for_model(timeout=10)
    assert session.model_version == 2
    assert retrain.seen == [3]
    assert len(session.kappas) == 1


def test_retrain_receives_no_evaluation_labels(conn: sqlite3.Connection) -> None:
    ensure_samples(conn, SessionSettings(evaluation_min=4, stop_set_size=0))
    for sid in store.sample_ids(conn, "evaluation"):
        store.add_label(conn, sid, [], "Kofi")
    retrain = fake_retrain()
    session = _session(conn, retrain=retrain, settings=SessionSettings(retrain_every=1))
    item = _ask(session)
    session.submit(item.sentence.id, [])
    session.wait_for_model(timeout=10)
    assert retrain.seen == [1]


def test_kappa_tracks_change_between_successive_models(conn: sqlite3.Connection) -> None:
    settings = SessionSettings(
        evaluation_fraction=0, evaluation_min=0, stop_set_size=10, retrain_every=1, kappa_rounds=2
    )
    changing = fake_retrain(flip_every=3)
    session = _session(conn, retrain=changing, settings=settings)
    for _ in range(3):
        item = _ask(session)
        session.submit(item.sentence.id, [])
        session.wait_for_model(timeout=10)
    # The first retrain changes the tags (kappa < 1); later models agree with it.
    assert session.kappas[0] < 0.9
    assert session.kappas[1:] == [1.0, 1.0]
    assert session.stop_signal


def test_failed_retrain_keeps_the_old_model(conn: sqlite3.Connection) -> None:
    def broken(data):
        raise RuntimeError("out of memory")

    session = _session(conn, retrain=broken, settings=SessionSettings(retrain_every=1))
    item = _ask(session)
    session.submit(item.sentence.id, [])
    session.wait_for_model(timeout=10)
    assert session.last_error == "out of memory"
    assert session.model_version == 1
    assert session.next() is not None


def test_new_model_reranks_the_queue(conn: sqlite3.Connection) -> None:
    # The new model is least sure about high IDs, so the next question jumps there.
    def retrain(data):
        return FakeModel(path_prob=lambda s: 1.0 / (s.id + 1))

    session = _session(conn, retrain=retrain, settings=SessionSettings(retrain_every=1))
    item = _ask(session)
    session.submit(item.sentence.id, [])
    session.wait_for_model(timeout=10)
    assert _ask(session).sentence.id == 20


@pytest.mark.parametrize("strategy", ["default", "least_confidence"], ids=["diverse", "plain"])
def test_session_over_empty_store_has_nothing_to_ask(tmp_path: Path, strategy: str) -> None:
    conn = store.connect(tmp_path / "empty.sqlite", create=True)
    session = Session.open(conn, annotator="Ama", strategy=strategy, predictor=FakeModel())
    assert session.next() is None
    assert session.quit().labeled == 0


def test_two_live_sessions_are_never_handed_the_same_sentence(tmp_path: Path) -> None:
    path = tmp_path / "two.sqlite"
    first = build_store(path)
    second = store.connect(path)
    settings = SessionSettings(evaluation_fraction=0.0, evaluation_min=0, stop_set_size=0)
    ama = Session.open(first, annotator="Ama", strategy="random", batch_size=3, settings=settings)
    baraka = Session.open(
        second, annotator="Baraka", strategy="random", batch_size=3, settings=settings
    )
    shown: dict[str, list[int]] = {"Ama": [], "Baraka": []}
    for _ in range(4):  # each looks at a sentence, skips it, and the other looks too
        for session in (ama, baraka):
            item = session.next()
            assert item is not None
            shown[session.annotator].append(item.sentence.id)
            session.submit(item.sentence.id, [])
    assert not set(shown["Ama"]) & set(shown["Baraka"])
    held = baraka.next()
    assert held is not None
    ama_next = ama.next()
    assert ama_next is not None and ama_next.sentence.id != held.sentence.id
    ama.quit()
    baraka.quit()
    first.close()
    second.close()
