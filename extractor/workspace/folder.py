"""Workspaces: a folder with ``traits.toml``, ``traits.sqlite``, ``models/`` and ``exports/``.

The repository root is itself the demo workspace: when a folder holds
``sample_interviews/`` and no ``traits.toml``, :func:`init_workspace` writes settings
that point at the demo inputs.
"""

from __future__ import annotations

import copy
import sqlite3
import tomllib
from pathlib import Path
from typing import Any

from extractor.errors import WorkspaceError
from extractor.workspace import store

SETTINGS_FILE = "traits.toml"
STORE_FILE = "traits.sqlite"

DEFAULTS: dict[str, Any] = {
    "workspace": {
        "default_language": "en",
        "languages": ["en", "fr", "es"],
        "interviews": "interviews",
        "concepts": "concepts.csv",
        "varieties": "varieties.csv",
    },
    "columns": {},
    "tagger": {
        "algorithm": "l2sgd",
        "c1": 0.05,
        "c2": 2.0,
        "max_iterations": 30,
        "gold_weight": 10,
        "silver_filter": "self-train",
    },
    "linking": {"threshold": 0.25},
    "active": {
        "strategy": "default",
        "batch_size": 5,
        "retrain_every": 10,
        "evaluation_share": 0.10,
        "evaluation_min": 30,
        "stop_set_size": 500,
        "stop_kappa": 0.99,
        "stop_rounds": 3,
        "subpool": 500,
    },
    "export": {
        "group_by": ["gender", "sex", "role", "occupation", "district", "age_group"],
        "identifying_columns": ["name", "phone", "village", "address"],
        "names_file": "",
        "min_confidence": 0.0,
    },
}

_TEMPLATE = """\
# trait-extractor workspace settings. Paths are relative to this folder.

[workspace]
default_language = "en"          # BCP 47 tag used when a language cannot be told
languages = ["en", "fr", "es"]   # languages expected in the answers (for detection)
interviews = "{interviews}"      # folder that `traits run` reads new interview files from
concepts = "{concepts}"          # the validated trait concept list
varieties = "{varieties}"        # optional list of variety names

# Explicit column mapping for interview tables, when headers are not recognised:
[columns]
# respondent = "Code"
# answer = "Verbatim"
# question = "Item"
# language = "Lang"
# variety = "Variety"

[tagger]
algorithm = "l2sgd"              # CRFsuite trainer: l2sgd (default) or lbfgs (then set c1 too)
c2 = 2.0                         # L2 penalty of the CRF
max_iterations = 30              # epochs (l2sgd) or iterations (lbfgs)
gold_weight = 10                 # a labeled sentence counts this many times a silver one
silver_filter = "self-train"     # how dictionary-labeled sentences are guarded: all, matched,
                                 # gold-check or self-train (see extractor/tagger.py)

[linking]
threshold = 0.25                 # below this link probability a mention stays unlinked

[active]
strategy = "default"
batch_size = 5
retrain_every = 10               # retrain in the background after this many labels
evaluation_share = 0.10          # random evaluation sample, never queried; grows with the study
evaluation_min = 30
stop_set_size = 500
stop_kappa = 0.99                # "further labels are changing little" above this...
stop_rounds = 3                  # ...for this many successive models
subpool = 500                    # each model ranks a random sub-pool of this many (0 = all)

[export]
group_by = ["gender", "sex", "role", "occupation", "district", "age_group"]
identifying_columns = ["name", "phone", "village", "address"]
names_file = ""                  # a text file of names to screen out of pseudonymised quotes
min_confidence = 0.0
"""


def merge_settings(base: dict[str, Any], override: dict[str, Any]) -> dict[str, Any]:
    """Return ``base`` updated section by section with ``override``."""
    merged = copy.deepcopy(base)
    for key, value in override.items():
        if isinstance(value, dict) and isinstance(merged.get(key), dict):
            merged[key] = merge_settings(merged[key], value)
        else:
            merged[key] = value
    return merged


def load_settings(path: Path) -> dict[str, Any]:
    """Read ``traits.toml`` over the defaults."""
    try:
        with path.open("rb") as handle:
            found = tomllib.load(handle)
    except tomllib.TOMLDecodeError as exc:
        raise WorkspaceError(f"{path} is not valid TOML ({exc}); fix the line it names.") from exc
    settings = merge_settings(DEFAULTS, found)
    check_settings(settings, path)
    return settings


_FRACTIONS = {"evaluation_share", "stop_kappa", "threshold", "min_confidence"}
"""Settings that are shares or probabilities, between 0 and 1."""


def _setting_problem(key: str, value: Any, default: Any) -> str | None:
    """Return what is wrong with a setting's value, judged by its default's type, or None."""
    if isinstance(default, bool):
        return None if isinstance(value, bool) else "must be true or false"
    if isinstance(default, int):
        if isinstance(value, bool) or not isinstance(value, int) or value < 0:
            return "must be a whole number, 0 or more"
        return None
    if isinstance(default, float):
        if isinstance(value, bool) or not isinstance(value, int | float) or value < 0:
            return "must be a number, 0 or more"
        if key in _FRACTIONS and value > 1:
            return "must be between 0 and 1"
        return None
    if isinstance(default, str):
        return None if isinstance(value, str) else "must be text in quotes"
    if isinstance(default, list):
        ok = isinstance(value, list) and all(isinstance(v, str) for v in value)
        return None if ok else 'must be a list of texts, like ["gender", "role"]'
    return None


def check_settings(settings: dict[str, Any], path: Path) -> None:
    """Check every known setting's type and range.

    Raises:
        WorkspaceError: One sentence naming the file, section and key, and what to do.
    """
    for section, defaults in DEFAULTS.items():
        values = settings.get(section)
        if not isinstance(values, dict):
            raise WorkspaceError(
                f"{path}: [{section}] must be a section of settings, not a single value; "
                "fix it, or delete it to use the defaults."
            )
        unknown = sorted(set(values) - set(defaults)) if defaults else []
        if unknown:
            raise WorkspaceError(
                f"{path}: [{section}] has no setting {unknown[0]!r}; the settings there are "
                f"{', '.join(defaults)}. Fix the name or delete the line."
            )
        for key, default in defaults.items():
            problem = _setting_problem(key, values.get(key), default)
            if problem:
                raise WorkspaceError(
                    f"{path}: [{section}] {key} {problem} (got {values.get(key)!r}); fix it, "
                    f"or delete the line to use the default {default!r}."
                )


def is_workspace(root: Path) -> bool:
    """Return True when ``root`` holds a workspace's settings and store."""
    return (root / SETTINGS_FILE).is_file() and (root / STORE_FILE).is_file()


def init_workspace(root: Path) -> Path:
    """Create a workspace in ``root`` (idempotent: existing files are kept)."""
    root.mkdir(parents=True, exist_ok=True)
    settings = root / SETTINGS_FILE
    if not settings.exists():
        demo = (root / "sample_interviews").is_dir()
        settings.write_text(
            _TEMPLATE.format(
                interviews="sample_interviews/interviews" if demo else "interviews",
                concepts="sample_interviews/concepts.csv" if demo else "concepts.csv",
                varieties="sample_interviews/varieties.csv" if demo else "varieties.csv",
            ),
            encoding="utf-8",
        )
    for folder in ("models", "exports"):
        (root / folder).mkdir(exist_ok=True)
    store.connect(root / STORE_FILE, create=True).close()
    return root


class Workspace:
    """An open workspace: its folder, settings and store connection."""

    def __init__(self, root: Path) -> None:
        if not root.is_dir():
            raise WorkspaceError(f"{root} is not a folder; create a workspace with `traits init`.")
        if not is_workspace(root):
            raise WorkspaceError(
                f"{root} is not a trait-extractor workspace (no {SETTINGS_FILE} and "
                f"{STORE_FILE}); run `traits init {root}` first."
            )
        self.root = root
        self.settings = load_settings(root / SETTINGS_FILE)
        self.conn: sqlite3.Connection = store.connect(root / STORE_FILE)

    def path(self, setting: str) -> Path:
        """Return a workspace path setting (``interviews``, ``concepts``...) as a Path."""
        return self.root / str(self.settings["workspace"][setting])

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
