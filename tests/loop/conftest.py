"""A store of invented interviews for the labeling-loop tests (see tests/fake_model.py)."""

from __future__ import annotations

import sqlite3
from collections.abc import Iterator
from pathlib import Path

import pytest

from tests.fake_model import build_store  # noqa: E402


@pytest.fixture
def conn(tmp_path: Path) -> Iterator[sqlite3.Connection]:
    c = build_store(tmp_path / "traits.sqlite")
    yield c
    c.close()
