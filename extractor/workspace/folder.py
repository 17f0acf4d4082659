"""Workspaces: a folder with ``traits.toml``, ``traits.sqlite``, ``models/`` and ``exports/``.

A new workspace also gets the ``interviews/`` folder `traits run` reads new files from.

The repository root is itself the demo workspace: when a folder holds
``sample_interviews/`` and no ``traits.toml``, :func:`init_workspace` writes settings
that point at the demo inputs.
"""

from __future__ import annotations

import dataclasses
import sqlite3
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

from extractor.errors import WorkspaceError
from extractor.workspace import store
from extractor.workspace.settings import Settings, load_settings, render_template

SETTINGS_FILE = "traits.toml"
STORE_FILE = "traits.sqlite"

DEMO_INPUTS = "sample_interviews"
"""The folder whose presence makes :func:`init_workspace` point the settings at the demo."""


def is_workspace(root: Path) -> bool:
    """Return True when ``root`` holds a workspace's settings and store."""
    return (root / SETTINGS_FILE).is_file() and (root / STORE_FILE).is_file()


@dataclass(frozen=True)
class WorkspaceCreation:
    """What `traits init` found or made: the folder, and whether it was a workspace already."""

    root: Path
    existed: bool


def create_workspace(root: Path) -> WorkspaceCreation:
    """Make ``root`` a workspace, or leave an existing workspace exactly as it is."""
    if is_workspace(root):
        return WorkspaceCreation(root, existed=True)
    return WorkspaceCreation(init_workspace(root), existed=False)


def init_workspace(root: Path) -> Path:
    """Create a workspace in ``root`` (idempotent: existing files are kept).

    New settings come with the folder they read interviews from (``interviews/``).
    """
    root.mkdir(parents=True, exist_ok=True)
    settings_path = root / SETTINGS_FILE
    if not settings_path.exists():
        settings = Settings()
        if (root / DEMO_INPUTS).is_dir():
            where = settings.workspace
            demo = dataclasses.replace(
                where,
                interviews=f"{DEMO_INPUTS}/{where.interviews}",
                concepts=f"{DEMO_INPUTS}/{where.concepts}",
                varieties=f"{DEMO_INPUTS}/{where.varieties}",
                questions=f"{DEMO_INPUTS}/{where.questions}",
            )
            settings = dataclasses.replace(settings, workspace=demo)
        settings_path.write_text(render_template(settings), encoding="utf-8")
        (root / settings.workspace.interviews).mkdir(parents=True, exist_ok=True)
    for folder in ("models", "exports"):
        (root / folder).mkdir(exist_ok=True)
    store.connect(root / STORE_FILE, create=True).close()
    return root


@dataclass(frozen=True, eq=False)
class Workspace:
    """An open workspace: its folder, settings and store connection.

    Open one with :meth:`open`; close it (or use it as a context manager) when done.
    """

    root: Path
    settings: Settings
    conn: sqlite3.Connection

    @classmethod
    def open(cls, root: Path) -> Workspace:
        """Read the settings of the workspace in ``root`` and connect to its store.

        Raises:
            WorkspaceError: ``root`` is not a workspace, or its settings or store are bad.
        """
        if not root.is_dir():
            raise WorkspaceError(f"{root} is not a folder; create a workspace with `traits init`.")
        if not is_workspace(root):
            raise WorkspaceError(
                f"{root} is not a trait-extractor workspace (no {SETTINGS_FILE} and "
                f"{STORE_FILE}); run `traits init {root}` first."
            )
        settings = load_settings(root / SETTINGS_FILE)
        return cls(root=root, settings=settings, conn=store.connect(root / STORE_FILE))

    def path(
        self, setting: Literal["interviews", "concepts", "varieties", "questions", "stance_cues"]
    ) -> Path:
        """Return a path setting of ``[workspace]`` as a Path inside the workspace."""
        return self.root / str(getattr(self.settings.workspace, setting))

    @property
    def models_dir(self) -> Path:
        """The folder of saved model versions."""
        return self.root / "models"

    @property
    def exports_dir(self) -> Path:
        """The folder exports are written to."""
        return self.root / "exports"

    def close(self) -> None:
        """Close the store connection."""
        self.conn.close()

    def __enter__(self) -> Workspace:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()
