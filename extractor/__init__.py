"""trait-extractor: preferred, disliked and wanted crop traits from verbatim interview answers.

The public surface is re-exported here as modules land; everything the ``traits``
command does can be done from Python through these functions.
"""

from extractor.errors import InputError, ModelError, TraitsError, WorkspaceError
from extractor.types import STANCES, TAGS, Sentence, Span

__version__ = "0.1.0"

__all__ = [
    "STANCES",
    "TAGS",
    "InputError",
    "ModelError",
    "Sentence",
    "Span",
    "TraitsError",
    "WorkspaceError",
    "__version__",
]
