"""Shared fixtures: fresh workspaces."""

from __future__ import annotations

from collections.abc import Iterator
from pathlib import Path

import pytest

from extractor.workspace.folder import Workspace, init_workspace


@pytest.fixture
def workspace(tmp_path: Path) -> Iterator[Workspace]:
    """An empty, freshly initialised workspace."""
    init_workspace(tmp_path / "ws")
    ws = Workspace.open(tmp_path / "ws")
    yield ws
    ws.close()
