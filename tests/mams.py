"""Reader of the MAMS aspect-term data (open data) into the tests' gold format.

MAMS (Jiang et al., EMNLP-IJCNLP 2019, Apache-2.0) holds English restaurant-review
sentences with aspect-term spans and a polarity each; tests use it as an outside check
of span tagging and stance. It lives outside the repository, in
``../shared/datasets/mams-atsa/`` relative to the repository root, and is never copied in.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from pathlib import Path
from typing import Any

import pytest

from extractor.types import Sentence, Span

MAMS_DIR = Path(__file__).resolve().parents[1].parent / "shared" / "datasets" / "mams-atsa"
"""Where the MAMS XML files are expected."""

SPLITS = ("train", "val", "test")
POLARITY_TO_STANCE = {"positive": "liked", "negative": "disliked", "neutral": "neutral"}
"""MAMS polarities mapped to our stances."""

SKIP_REASON = f"MAMS data not found in {MAMS_DIR} (open data, not shipped with the repository)"


def load_mams(split: str, folder: Path | None = None) -> list[dict[str, Any]] | None:
    """Return one split of MAMS in the label format (``sentence``, ``lang``, ``mentions``).

    Args:
        split: ``"train"``, ``"val"`` or ``"test"``.
        folder: Folder of the XML files (default :data:`MAMS_DIR`).

    Returns:
        The sentences in file order, spans sorted by start; ``None`` when the file is absent.

    Raises:
        ValueError: When ``split`` is not one of :data:`SPLITS`.
    """
    if split not in SPLITS:
        raise ValueError(f"MAMS split must be one of {', '.join(SPLITS)}; got {split!r}.")
    path = (folder or MAMS_DIR) / f"{split}.xml"
    if not path.is_file():
        return None
    out: list[dict[str, Any]] = []
    for sentence in ET.parse(path).getroot().iter("sentence"):
        text = sentence.findtext("text") or ""
        spans: list[dict[str, Any]] = [
            {
                "start": int(term.get("from", "0")),
                "end": int(term.get("to", "0")),
                "stance": POLARITY_TO_STANCE[term.get("polarity", "neutral")],
            }
            for term in sentence.iter("aspectTerm")
        ]
        out.append(
            {
                "sentence": text,
                "lang": "en",
                "mentions": sorted(spans, key=lambda s: (s["start"], s["end"])),
            }
        )
    return out


def mams_pairs(split: str, n: int | None = None) -> list[tuple[Sentence, list[Span]]]:
    """Return the first ``n`` sentences of a split (all by default) with their gold spans.

    Skips the calling test when the MAMS files are absent.
    """
    data = load_mams(split)
    if data is None:
        pytest.skip(SKIP_REASON)
    return [
        (Sentence(i, d["sentence"], d["lang"]), [Span(s["start"], s["end"]) for s in d["mentions"]])
        for i, d in enumerate(data[:n])
    ]


def mams_texts() -> list[tuple[str, str]]:
    """Return the text and language of every sentence of all splits, as clusters learn them.

    The benches learn their word clusters from the text of all three splits, as a
    workspace learns them from all its answers (labels are not read).
    """
    return [(d["sentence"], d["lang"]) for s in SPLITS for d in load_mams(s) or []]
