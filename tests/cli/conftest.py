"""The invented study the command tests run on (shared with the job tests)."""

from __future__ import annotations

from pathlib import Path

import pytest

from tests.jobs.study import make_study


@pytest.fixture
def study(tmp_path: Path) -> Path:
    """A fresh workspace holding the study's interviews and concept list, not yet run."""
    return make_study(tmp_path / "study")
