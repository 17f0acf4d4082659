"""Reading and writing model files without pickle: JSON metadata and trusted skops files.

Every saved model of a version folder is a JSON file that names its ``format``, plus
for scikit-learn models a skops file loaded with an explicit list of trusted types.
A foreign, corrupt or swapped file raises :class:`~extractor.errors.ModelError`
instead of being loaded.
"""

from __future__ import annotations

import json
import zipfile
from pathlib import Path
from typing import Any, TypeVar

import skops.io
from sklearn.feature_extraction import DictVectorizer
from sklearn.linear_model import LogisticRegression
from sklearn.pipeline import Pipeline

from extractor.errors import ModelError


def read_meta(path: Path, fmt: str, what: str) -> dict[str, Any]:
    """Read a model's JSON metadata and check that it is a ``fmt`` file.

    Args:
        path: The JSON file.
        fmt: The ``format`` value the file must carry.
        what: What the file holds, for the message (e.g. "stance model").

    Raises:
        ModelError: The file is missing, not JSON, or of another format.
    """
    try:
        meta = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError) as exc:
        raise ModelError(
            f"No readable {what} in {path.parent} ({exc}); train one with `traits train`."
        ) from exc
    if not isinstance(meta, dict) or meta.get("format") != fmt:
        raise ModelError(f"{path} is not a {what} of this version; retrain it with `traits train`.")
    return meta


def write_meta(path: Path, meta: dict[str, Any]) -> None:
    """Write a model's JSON metadata."""
    path.write_text(json.dumps(meta, ensure_ascii=False), encoding="utf-8")


TRUSTED_TYPES = [
    "sklearn.feature_extraction._dict_vectorizer.DictVectorizer",
    "sklearn.linear_model._logistic.LogisticRegression",
    "sklearn.pipeline.Pipeline",
    "builtins.dict",
    "builtins.list",
    "builtins.str",
    "builtins.int",
    "builtins.float",
    "builtins.tuple",
    "numpy.ndarray",
    "numpy.dtype",
    "numpy.float64",
    "numpy.int64",
    "numpy.str_",
]
"""Types that :func:`load_trusted_skops` accepts in a skops file; anything else is refused."""


_T = TypeVar("_T")


def load_trusted_skops(path: Path, expected: type[_T]) -> _T:
    """Load a skops file, refusing any type outside :data:`TRUSTED_TYPES`.

    skops already refuses types it does not know to be safe unless they are listed;
    only those in :data:`TRUSTED_TYPES` are listed. A Pipeline must moreover be
    exactly a DictVectorizer followed by a LogisticRegression, the one shape this
    tool saves (shared with :mod:`extractor.models.linking`), so a swapped file is caught.

    Raises:
        ModelError: When the file is missing, unreadable, holds an untrusted type or
            is not an ``expected`` of that shape.
    """
    try:
        untrusted = skops.io.get_untrusted_types(file=path)
    except (OSError, ValueError, KeyError, zipfile.BadZipFile) as exc:
        raise ModelError(
            f"Model file {path} is missing or unreadable ({exc}); retrain it."
        ) from exc
    foreign = [t for t in untrusted if t not in TRUSTED_TYPES]
    if foreign:
        raise ModelError(
            f"Model file {path} holds types this tool does not trust ({', '.join(foreign)}); "
            "retrain the model instead of loading it."
        )
    try:
        obj = skops.io.load(path, trusted=[t for t in untrusted if t in TRUSTED_TYPES])
    except (OSError, ValueError, KeyError, TypeError, AttributeError, zipfile.BadZipFile) as exc:
        raise ModelError(f"Model file {path} cannot be read ({exc}); retrain it.") from exc
    shape_ok = isinstance(obj, expected) and (
        not isinstance(obj, Pipeline)
        or [type(step) for _, step in obj.steps] == [DictVectorizer, LogisticRegression]
    )
    if not shape_ok:
        raise ModelError(
            f"Model file {path} does not hold the {expected.__name__} this tool saves "
            "(a DictVectorizer and a LogisticRegression); retrain the model."
        )
    return obj
