"""The question codebook: what each survey question asks for, read from a small CSV.

Survey exports name their questions by field names (``reason_preferred``,
``q5_dislike``), not by their wording, so the question's cue words never reach the
stance model. A codebook gives each question key its wording and the direction it
asks for::

    question,text,direction
    reason_preferred,Why did you prefer this seed product?,likes
    q5_dislike,,dislikes
    q9_other,Anything else?,open

``direction`` is one of :data:`~extractor.types.DIRECTIONS` (or empty when only the
text is given); ``text`` may be empty. The stance model reads the direction as
evidence, never as the answer (:mod:`extractor.models.stance_features`).
"""

from __future__ import annotations

import csv
import io
from pathlib import Path

from extractor.errors import InputError
from extractor.ingest.decode import decode_text, sniff_delimiter
from extractor.types import DIRECTIONS, QuestionCode

COLUMNS = ("question", "text", "direction")
"""The codebook's columns; ``question`` is required, the others optional."""


def read_codebook(path: Path) -> dict[str, QuestionCode]:
    """Return the codebook of a CSV (or TSV) file, keyed by question.

    Raises:
        InputError: The file cannot be read, has no ``question`` column, names an unknown
            direction, or repeats a question (one sentence naming file, row and column).
    """
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise InputError(f"Question codebook {path} cannot be read ({exc.strerror}).") from exc
    text, _, _ = decode_text(data, path)
    rows = list(csv.reader(io.StringIO(text, newline=""), delimiter=sniff_delimiter(text)))
    if not rows:
        raise InputError(
            f"Question codebook {path} is empty; give it the header {','.join(COLUMNS)}."
        )
    header = [cell.strip().lower() for cell in rows[0]]
    if "question" not in header:
        raise InputError(
            f"Question codebook {path} has no 'question' column (its header is "
            f"{', '.join(rows[0]) or 'empty'}); use the columns {', '.join(COLUMNS)}."
        )
    col = {name: header.index(name) for name in COLUMNS if name in header}
    out: dict[str, QuestionCode] = {}
    for number, row in enumerate(rows[1:], start=2):
        cells = {name: (row[i].strip() if i < len(row) else "") for name, i in col.items()}
        key = cells["question"]
        if not key:
            continue
        direction = cells.get("direction", "").lower() or None
        if direction is not None and direction not in DIRECTIONS:
            raise InputError(
                f"Question codebook {path}, row {number}, column 'direction': "
                f"{cells['direction']!r} is not one of {', '.join(DIRECTIONS)}; fix the cell."
            )
        if key in out:
            raise InputError(
                f"Question codebook {path}, row {number}: question {key!r} is given twice; "
                "keep one row per question."
            )
        out[key] = QuestionCode(key, cells.get("text") or None, direction)
    return out
