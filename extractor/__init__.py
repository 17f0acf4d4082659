"""trait-extractor: preferred, disliked and wanted crop traits from verbatim interview answers.

Everything the ``traits`` command does can be done from Python. The public surface:

- workspaces: :func:`init_workspace`, :class:`Workspace`;
- the whole job and its steps: :func:`add_files`, :func:`import_concepts`, :func:`train`,
  :func:`tag`, :func:`run`, :func:`export_workbook`, :func:`evaluate_workspace`;
- the models: :class:`TraitModels` (all of one version together), and its parts
  :func:`build_dictionary`, :func:`learn_clusters`, :class:`TraitTagger`,
  :class:`ConceptLinker`, :class:`StanceModel`; strict :func:`span_prf`;
- labeling: :func:`run_console` over a :class:`Session`, query :data:`STRATEGIES`;
- value types: :class:`Sentence`, :class:`Span`, :class:`Implicit`, :data:`STANCES`,
  :data:`TAGS`;
- errors: :class:`TraitsError` and its subclasses.

Submodules are imported on first use, so ``import extractor`` stays cheap.
"""

from __future__ import annotations

from importlib import import_module
from typing import Any

from extractor.errors import InputError, ModelError, NotFittedError, TraitsError, WorkspaceError
from extractor.types import STANCES, TAGS, Implicit, Sentence, Span

__version__ = "0.1.0"

_LAZY = {
    "init_workspace": "extractor.workspace.folder",
    "Workspace": "extractor.workspace.folder",
    "add_files": "extractor.ingest.intake",
    "import_concepts": "extractor.ingest.intake",
    "train": "extractor.jobs.train",
    "tag": "extractor.jobs.tag",
    "run": "extractor.jobs.run",
    "evaluate_workspace": "extractor.jobs.evaluate",
    "export_workbook": "extractor.jobs.export",
    "TraitModels": "extractor.models.bundle",
    "build_dictionary": "extractor.nlp.dictionary",
    "learn_clusters": "extractor.nlp.clusters",
    "TraitTagger": "extractor.models.tagger",
    "ConceptLinker": "extractor.models.linking",
    "StanceModel": "extractor.models.stance",
    "span_prf": "extractor.nlp.spans",
    "STRATEGIES": "extractor.loop.strategies",
    "run_console": "extractor.cli.screen",
    "Session": "extractor.loop.session",
}

__all__ = [
    "STANCES",
    "TAGS",
    "Implicit",
    "InputError",
    "ModelError",
    "NotFittedError",
    "Sentence",
    "Span",
    "TraitsError",
    "WorkspaceError",
    "__version__",
    *_LAZY,
]


def __getattr__(name: str) -> Any:
    """Import a public name from its module on first use."""
    if name in _LAZY:
        return getattr(import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'extractor' has no attribute {name!r}")
