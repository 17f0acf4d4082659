"""Leases: two live labeling sessions never hold the same sentence; labels of both are kept."""

from __future__ import annotations

import sqlite3
from collections.abc import Iterator
from pathlib import Path

import pytest

from extractor.types import Span
from extractor.workspace import store
from tests.fake_model import build_store


@pytest.fixture
def conns(tmp_path: Path) -> Iterator[tuple[sqlite3.Connection, sqlite3.Connection]]:
    path = tmp_path / "traits.sqlite"
    first = build_store(path)
    second = store.connect(path)
    yield first, second
    first.close()
    second.close()


def test_a_sentence_held_by_one_session_is_refused_to_another(
    conns: tuple[sqlite3.Connection, sqlite3.Connection],
) -> None:
    a, b = conns
    assert store.claim_sentence(a, 1, "ama:1", ttl_s=600)
    assert store.claim_sentence(a, 1, "ama:1", ttl_s=600)  # renewing one's own lease
    assert not store.claim_sentence(b, 1, "baraka:2", ttl_s=600)
    assert store.claim_sentence(b, 2, "baraka:2", ttl_s=600)
    assert store.held_elsewhere(b, "baraka:2") == {1}


def test_a_lease_expires_and_can_be_released(
    conns: tuple[sqlite3.Connection, sqlite3.Connection],
) -> None:
    a, b = conns
    assert store.claim_sentence(a, 1, "ama:1", ttl_s=-1)  # a killed session's lease, run out
    assert store.claim_sentence(b, 1, "baraka:2", ttl_s=600)
    store.release_sentences(b, "baraka:2")
    assert store.claim_sentence(a, 1, "ama:1", ttl_s=600)


def test_a_labeled_sentence_is_not_handed_out_again(
    conns: tuple[sqlite3.Connection, sqlite3.Connection],
) -> None:
    a, b = conns
    store.add_label(a, 3, [], "ama")
    assert not store.claim_sentence(b, 3, "baraka:2", ttl_s=600)


def test_two_annotators_labels_are_both_kept_and_their_disagreement_recorded(
    conns: tuple[sqlite3.Connection, sqlite3.Connection],
) -> None:
    a, b = conns
    store.add_label(a, 1, [Span(0, 4, "BTX:0001", "liked")], "ama")
    store.add_label(b, 1, [], "baraka")
    store.add_label(a, 2, [Span(0, 4, "BTX:0001", "liked")], "ama")
    store.add_label(b, 2, [Span(0, 4, "BTX:0001", "liked")], "baraka")  # they agree
    per_annotator = store.labels_by_annotator(a)
    assert per_annotator[(1, "ama")].spans == [Span(0, 4, "BTX:0001", "liked")]
    assert per_annotator[(1, "baraka")].spans == []
    found = store.disagreements(a)
    assert [d.sentence_id for d in found] == [1]
    assert {label.annotator for label in found[0].labels} == {"ama", "baraka"}
