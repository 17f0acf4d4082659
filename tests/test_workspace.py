"""Workspace creation and opening."""

from __future__ import annotations

from pathlib import Path

import pytest

from extractor.errors import WorkspaceError
from extractor.workspace import Workspace, init_workspace, load_settings


def test_init_workspace_creates_the_four_parts(tmp_path: Path) -> None:
    root = init_workspace(tmp_path / "w")
    for name in ("traits.toml", "traits.sqlite", "models", "exports"):
        assert (root / name).exists()


def test_init_workspace_points_the_demo_at_sample_interviews(tmp_path: Path) -> None:
    (tmp_path / "sample_interviews").mkdir()
    init_workspace(tmp_path)
    settings = load_settings(tmp_path / "traits.toml")
    assert settings["workspace"]["interviews"] == "sample_interviews/interviews"


def test_workspace_refuses_a_folder_that_is_not_a_workspace(tmp_path: Path) -> None:
    with pytest.raises(WorkspaceError, match="not a trait-extractor workspace"):
        Workspace(tmp_path)


def test_load_settings_reports_bad_toml(tmp_path: Path) -> None:
    path = tmp_path / "traits.toml"
    path.write_text("[tagger\nc1 = ", encoding="utf-8")
    with pytest.raises(WorkspaceError, match="not valid TOML"):
        load_settings(path)
