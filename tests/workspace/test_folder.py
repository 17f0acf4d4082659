"""Workspace creation and opening."""

from __future__ import annotations

from pathlib import Path

import pytest

from extractor.errors import WorkspaceError
from extractor.workspace.folder import Workspace, init_workspace, is_workspace
from extractor.workspace.settings import Settings


def test_init_workspace_creates_the_four_parts(tmp_path: Path) -> None:
    root = init_workspace(tmp_path / "w")
    for name in ("traits.toml", "traits.sqlite", "models", "exports"):
        assert (root / name).exists()
    assert is_workspace(root)


def test_init_workspace_keeps_existing_settings(tmp_path: Path) -> None:
    root = init_workspace(tmp_path / "w")
    (root / "traits.toml").write_text("[linking]\nthreshold = 0.5\n", encoding="utf-8")
    init_workspace(root)
    assert (root / "traits.toml").read_text(encoding="utf-8") == "[linking]\nthreshold = 0.5\n"


def test_init_workspace_points_the_demo_at_sample_interviews(tmp_path: Path) -> None:
    (tmp_path / "sample_interviews").mkdir()
    init_workspace(tmp_path)
    with Workspace.open(tmp_path) as ws:
        assert ws.settings.workspace.interviews == "sample_interviews/interviews"
        assert ws.path("concepts") == tmp_path / "sample_interviews" / "concepts.csv"
        assert ws.path("questions") == tmp_path / "sample_interviews" / "questions.csv"


def test_workspace_open_reads_settings_and_connects(tmp_path: Path) -> None:
    root = init_workspace(tmp_path / "w")
    with Workspace.open(root) as ws:
        assert ws.settings == Settings()
        assert ws.conn.execute("PRAGMA foreign_keys").fetchone()[0] == 1
        assert ws.path("interviews") == root / "interviews"


def test_workspace_refuses_a_folder_that_is_not_a_workspace(tmp_path: Path) -> None:
    with pytest.raises(WorkspaceError, match="not a trait-extractor workspace"):
        Workspace.open(tmp_path)


def test_workspace_refuses_a_missing_folder(tmp_path: Path) -> None:
    with pytest.raises(WorkspaceError, match="is not a folder"):
        Workspace.open(tmp_path / "absent")


def test_bad_setting_is_one_sentence_on_the_command_line(tmp_path: Path) -> None:
    # imported here so that a broken command line fails this test only
    import io

    from rich.console import Console

    from extractor.cli.main import main

    root = init_workspace(tmp_path / "w")
    (root / "traits.toml").write_text('[active]\nretrain_every = "often"\n', encoding="utf-8")
    out = io.StringIO()
    code = main(["-w", str(root), "status"], console=Console(file=out, width=200))
    assert code != 0
    assert "retrain_every" in out.getvalue() and "Traceback" not in out.getvalue()


def _traits(*argv: str) -> tuple[int, str]:
    import io

    from rich.console import Console

    from extractor.cli.main import main

    out = io.StringIO()
    code = main(list(argv), console=Console(file=out, width=200, force_terminal=False))
    return code, out.getvalue()


def test_init_makes_the_interviews_folder_traits_run_reads(tmp_path: Path) -> None:
    code, out = _traits("init", str(tmp_path / "w"))
    assert code == 0, out
    assert (tmp_path / "w" / "interviews").is_dir()
    with Workspace.open(tmp_path / "w") as ws:
        assert ws.path("interviews").is_dir()


def test_init_on_an_existing_workspace_says_so_and_changes_nothing(tmp_path: Path) -> None:
    root = tmp_path / "w"
    assert _traits("init", str(root))[0] == 0
    settings = root / "traits.toml"
    settings.write_bytes(settings.read_bytes() + b"# my own note\n")
    (root / "exports").rmdir()
    before = {p.relative_to(root): p.read_bytes() for p in root.rglob("*") if p.is_file()}
    code, out = _traits("init", str(root))
    assert code == 0, out
    assert "already" in out and "Workspace ready" not in out
    after = {p.relative_to(root): p.read_bytes() for p in root.rglob("*") if p.is_file()}
    assert after == before
    assert not (root / "exports").exists()  # not even a missing folder is put back
