"""Workspace creation and opening."""

from __future__ import annotations

from pathlib import Path

import pytest

from extractor.errors import WorkspaceError
from extractor.workspace.folder import Workspace, init_workspace, load_settings


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


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ('[active]\nsubpool = "many"\n', r"\[active\] subpool must be a whole number"),
        ("[active]\nbatch_size = -5\n", r"\[active\] batch_size must be a whole number"),
        ("[linking]\nthreshold = 1.5\n", r"\[linking\] threshold must be between 0 and 1"),
        ("[tagger]\nc2 = true\n", r"\[tagger\] c2 must be a number"),
        ('[export]\ngroup_by = "gender"\n', r"\[export\] group_by must be a list of texts"),
        ("active = 3\n", r"\[active\] must be a section"),
        ("[tagger]\nmax_iteration = 50\n", r"\[tagger\] has no setting 'max_iteration'"),
    ],
    ids=[
        "text-for-number",
        "negative",
        "share-above-one",
        "bool-for-float",
        "text-for-list",
        "value-for-section",
        "misspelt-key",
    ],
)
def test_load_settings_names_a_bad_value(tmp_path: Path, text: str, message: str) -> None:
    path = tmp_path / "traits.toml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(WorkspaceError, match=message) as caught:
        load_settings(path)
    assert "traits.toml" in str(caught.value) and "delete" in str(caught.value)


def test_load_settings_accepts_whole_numbers_for_decimals(tmp_path: Path) -> None:
    path = tmp_path / "traits.toml"
    path.write_text("[tagger]\nc2 = 1\n[active]\nsubpool = 0\n", encoding="utf-8")
    settings = load_settings(path)
    assert settings["tagger"]["c2"] == 1 and settings["active"]["subpool"] == 0


def test_bad_setting_is_one_sentence_on_the_command_line(tmp_path: Path) -> None:
    import io

    from rich.console import Console

    from extractor.cli.main import main

    root = init_workspace(tmp_path / "w")
    (root / "traits.toml").write_text('[active]\nretrain_every = "often"\n', encoding="utf-8")
    out = io.StringIO()
    code = main(["-w", str(root), "status"], console=Console(file=out, width=200))
    assert code != 0
    assert "retrain_every" in out.getvalue() and "Traceback" not in out.getvalue()
