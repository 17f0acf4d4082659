"""The stance cue file: the packaged lexicon, a user's file merged over it, and its checks.

The lexicon maps a language code to categories of cue strings (see the ``_comment`` of
``extractor/models/data/stance_cues.json``); :mod:`extractor.models.cues` matches it in
sentences.
"""

from __future__ import annotations

import json
from functools import lru_cache
from pathlib import Path
from typing import Any

from extractor.errors import InputError
from extractor.nlp.text import primary_subtag

CUES_PATH = Path(__file__).parent / "data" / "stance_cues.json"
"""The packaged cue lexicon."""

CUE_CATEGORIES = (
    "liked", "disliked", "wanted", "negation_pre", "negation_post", "pseudo_negation",
    "resistance_pre", "resistance_post",
    "termination", "contrast", "clause_break", "excess", "comparative", "comparative_less",
    "comparison_marker", "coordinator", "question_liked", "question_disliked", "question_wanted",
    "question_reason", "indifference", "preference", "relative", "restrictive", "conditional",
    "condition",
)  # fmt: skip
"""The categories a language section of the cue lexicon may hold."""

Cues = dict[str, Any]
"""A loaded cue lexicon: language code -> category -> list of cue strings, plus ``_settings``."""

STANCE_CATEGORIES = ("liked", "disliked", "wanted")
"""The cue categories that carry a stance (the others mark negation, clauses, comparisons)."""


def load_cues(path: str | Path | None = None) -> Cues:
    """Return the packaged cue lexicon, with a user's cue file merged over it.

    Args:
        path: A JSON file of the same shape as ``extractor/models/data/stance_cues.json``
            (see its ``_comment``); its lists are appended to the packaged lists of
            the same language and category, new languages are added, and its
            ``_settings`` override the packaged ones. ``None`` gives the packaged lexicon.

    Returns:
        The merged lexicon.

    Raises:
        InputError: When the user file is missing, not JSON, or not of that shape.
    """
    cues = _read_cues(CUES_PATH)
    if path is None:
        return cues
    user = _read_cues(Path(path))
    merged: Cues = {k: v for k, v in cues.items() if k != "_comment"}
    merged["_settings"] = {**cues.get("_settings", {}), **user.get("_settings", {})}
    for lang, section in user.items():
        if lang.startswith("_"):
            continue
        target = {cat: list(words) for cat, words in merged.get(lang, {}).items()}
        for cat, words in section.items():
            target[cat] = target.get(cat, []) + [w for w in words if w not in target.get(cat, [])]
        merged[lang] = target
    return merged


@lru_cache(maxsize=1)
def packaged_cues() -> Cues:
    """Return the packaged lexicon, loaded once and shared (treat it as read-only)."""
    return load_cues()


def _read_cues(path: Path) -> Cues:
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError as exc:
        raise InputError(
            f"Cue file {path} does not exist; give the path of a JSON cue file."
        ) from exc
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise InputError(
            f"Cue file {path} is not readable JSON ({exc}); fix it or remove the option."
        ) from exc
    if not isinstance(data, dict):
        raise InputError(
            f"Cue file {path} must hold a JSON object of languages; got {type(data).__name__}."
        )
    for lang, section in data.items():
        if not lang.startswith("_"):
            _check_section(path, lang, section)
    settings = data.get("_settings", {})
    if not isinstance(settings, dict):
        raise InputError(f"Cue file {path}: _settings must map setting names to values.")
    concord = settings.get("negative_concord", [])
    if not isinstance(concord, list) or not all(isinstance(c, str) for c in concord):
        raise InputError(
            f"Cue file {path}: _settings.negative_concord must be a list of language codes."
        )
    return data


def _check_section(path: Path, lang: str, section: Any) -> None:
    """Raise when one language section is not categories mapped to lists of cue strings."""
    if not isinstance(section, dict):
        raise InputError(
            f"Cue file {path}: language {lang!r} must map categories to lists of cue strings."
        )
    for cat, words in section.items():
        if cat not in CUE_CATEGORIES:
            raise InputError(
                f"Cue file {path}: category {cat!r} of language {lang!r} is unknown; "
                f"use one of {', '.join(CUE_CATEGORIES)}."
            )
        if not isinstance(words, list) or not all(isinstance(w, str) and w.strip() for w in words):
            raise InputError(f"Cue file {path}: {lang}.{cat} must be a list of non-empty strings.")


def has_stance_cues(cues: Cues, lang: str) -> bool:
    """Return whether a lexicon holds stance words (liked, disliked or wanted) for a language."""
    section = cues.get(primary_subtag(lang) if lang else "", {})
    return any(section.get(cat) for cat in STANCE_CATEGORIES)
