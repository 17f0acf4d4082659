"""Shared fixtures: paths to the demo inputs and the outside datasets, and fresh workspaces."""

from __future__ import annotations

from pathlib import Path

import pytest

from extractor.workspace import Workspace, init_workspace

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "sample_interviews"
# The open datasets sit beside the repository (see each one's README); never copied in.
DATASETS = ROOT.parent / "shared" / "datasets"


@pytest.fixture
def workspace(tmp_path: Path) -> Workspace:
    """An empty, freshly initialised workspace."""
    init_workspace(tmp_path / "ws")
    ws = Workspace(tmp_path / "ws")
    yield ws
    ws.close()
