"""The exceptions the library raises; the command line prints them as one sentence.

Every message names the thing that is wrong (a file, a row, a column, a setting),
what is allowed, and what to do next. Library code raises; only the command line
(``extractor/cli/``) prints.
"""

from __future__ import annotations


class TraitsError(Exception):
    """Base class of every error meant to be shown to a user without a traceback."""


class InputError(TraitsError):
    """An input file, column, row or value cannot be used."""


class WorkspaceError(TraitsError):
    """The workspace folder is missing, not a workspace, or its settings are invalid."""


class ModelError(TraitsError):
    """A model is missing, unfitted, corrupt or foreign."""


class NotFittedError(ModelError):
    """A model was used before ``fit`` was called."""
