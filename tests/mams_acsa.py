"""Reader of the MAMS aspect-category data (open data) into the label format.

MAMS-ACSA (Jiang et al., EMNLP-IJCNLP 2019, Apache-2.0) holds English restaurant-review
sentences labeled only at the sentence level: two or more aspect categories each, with a
polarity per category, and no spans. Tests use it as an outside check of sentence-level
(implicit) trait detection and its stance. It lives outside the repository, in
``../shared/datasets/mams-acsa/`` relative to the repository root, and is never copied in.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from pathlib import Path
from typing import Any

from tests.mams import POLARITY_TO_STANCE, SPLITS

ACSA_DIR = Path(__file__).resolve().parents[1].parent / "shared" / "datasets" / "mams-acsa"
"""Where the MAMS-ACSA XML files are expected."""

CATEGORIES = ("ambience", "food", "menu", "miscellaneous", "place", "price", "service", "staff")
"""The dataset's categories (its README), used as concept IDs."""

ACSA_SKIP = f"MAMS-ACSA data not found in {ACSA_DIR} (open data, not shipped with the repository)"


def load_acsa(split: str, folder: Path | None = None) -> list[dict[str, Any]] | None:
    """Return one split as label-format dicts: no mentions, one implicit trait per category.

    Returns:
        The sentences in file order; ``None`` when the file is absent.

    Raises:
        ValueError: When ``split`` is not one of :data:`tests.mams.SPLITS`.
    """
    if split not in SPLITS:
        raise ValueError(f"MAMS split must be one of {', '.join(SPLITS)}; got {split!r}.")
    path = (folder or ACSA_DIR) / f"{split}.xml"
    if not path.is_file():
        return None
    out: list[dict[str, Any]] = []
    for n, sentence in enumerate(ET.parse(path).getroot().iter("sentence")):
        implicit = [
            {"concept": c.get("category", ""), "stance": POLARITY_TO_STANCE[c.get("polarity", "")]}
            for c in sentence.iter("aspectCategory")
        ]
        out.append(
            {
                "respondent": f"mams-{split}-{n}",
                "sentence": sentence.findtext("text") or "",
                "lang": "en",
                "mentions": [],
                "implicit": implicit,
            }
        )
    return out
