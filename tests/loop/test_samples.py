"""The evaluation sample, the stop set and the session's pool."""

from __future__ import annotations

import sqlite3
from pathlib import Path

import pytest

from extractor.loop.samples import SessionPool, SessionSettings, ensure_samples, evaluation_size
from extractor.loop.strategies import get_strategy
from extractor.types import AnswerRow
from extractor.workspace import store
from tests.fake_model import ANSWERS, build_store  # noqa: E402


@pytest.mark.parametrize(
    ("n", "fraction", "minimum", "expected"),
    [(1000, 0.1, 30, 100), (200, 0.1, 30, 30), (20, 0.1, 30, 10), (0, 0.1, 30, 0)],
    ids=["ten-percent", "at-least-thirty", "at-most-half", "empty"],
)
def test_evaluation_size_follows_fraction_minimum_and_cap(
    n: int, fraction: float, minimum: int, expected: int
) -> None:
    assert evaluation_size(n, fraction, minimum) == expected


def test_ensure_samples_creates_fixed_samples_once(conn: sqlite3.Connection) -> None:
    settings = SessionSettings(evaluation_fraction=0.1, evaluation_min=4, stop_set_size=6)
    evaluation, stop = ensure_samples(conn, settings)
    assert len(evaluation) == 4 and len(stop) == 6
    assert not set(evaluation) & set(stop)
    again = ensure_samples(
        conn, SessionSettings(seed=99, evaluation_fraction=0.1, evaluation_min=4, stop_set_size=6)
    )
    assert again == (evaluation, stop)  # another seed does not redraw
    assert store.sample_ids(conn, "evaluation") == evaluation


def test_evaluation_sample_grows_with_new_interviews(conn: sqlite3.Connection) -> None:
    settings = SessionSettings(evaluation_fraction=0.25, evaluation_min=2, stop_set_size=3)
    evaluation, stop = ensure_samples(conn, settings)
    n_before = len(store.sentences(conn))
    assert len(evaluation) == evaluation_size(n_before, 0.25, 2)
    labeled = [i for i in range(1, n_before + 1) if i not in evaluation and i not in stop][:2]
    for sentence_id in labeled:
        store.add_label(conn, sentence_id, [], "Kofi")
    # A second interview file arrives: twice as many sentences.
    more = [
        AnswerRow(
            respondent=f"TS-{100 + k}",
            question="Why?",
            answer=f"Answer {k} here.",
            lang="en",
            lang_origin="column",
            variety=None,
            metadata={},
            sheet=None,
            row=k + 2,
            is_group=False,
        )
        for k in range(n_before)
    ]
    store.add_source(
        conn,
        path="second.csv",
        sha256="second",
        kind="csv",
        options={},
        rows=more,
        sentence_offsets=[[(0, len(r.answer))] for r in more],
    )
    n_after = len(store.sentences(conn))
    grown, stop_after = ensure_samples(conn, settings)
    assert len(grown) == evaluation_size(n_after, 0.25, 2) > len(evaluation)
    assert set(evaluation) <= set(grown)  # nobody leaves the sample
    assert stop_after == stop
    added = set(grown) - set(evaluation)
    assert not added & set(stop) and not added & set(labeled)
    assert ensure_samples(conn, settings) == (grown, stop)  # stable once grown


def test_ensure_samples_is_seeded(tmp_path: Path) -> None:
    settings = SessionSettings(evaluation_min=5, stop_set_size=5, seed=3)
    first = ensure_samples(build_store(tmp_path / "a.sqlite"), settings)
    assert first == ensure_samples(build_store(tmp_path / "b.sqlite"), settings)


@pytest.mark.parametrize(
    ("strategy", "has_vectors", "has_density"),
    [
        ("least_confidence", False, False),
        ("default", True, True),
        ("norm_logprob_space_knn", True, True),
        ("norm_logprob_ngrams", True, True),
    ],
    ids=["plain", "diverse-and-dense", "pretrained-knn", "ngrams"],
)
def test_session_pool_holds_what_its_strategy_needs(
    conn: sqlite3.Connection, strategy: str, has_vectors: bool, has_density: bool
) -> None:
    settings = SessionSettings(evaluation_min=4, stop_set_size=3)
    pool = SessionPool.read(conn, settings, get_strategy(strategy))
    evaluation, stop = ensure_samples(conn, settings)
    # every sentence of the invented answers, two per answer
    assert len(pool.sentences) == sum(len(parts) for parts in ANSWERS)
    assert pool.evaluation_ids == frozenset(evaluation)
    assert [s.id for s in pool.stop] == stop
    assert set(pool.ids.tolist()) == set(pool.sentences) - set(evaluation)
    assert all(pool.ids[k] == sid for sid, k in pool.positions.items())
    assert (pool.vectors is not None, pool.density is not None) == (has_vectors, has_density)
    if pool.density is not None:
        assert len(pool.density) == len(pool.ids)
