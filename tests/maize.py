"""Reader of the maize concept-testing verbatims (open data) and of our labels on them.

The dataset (``../shared/datasets/maize-concept-testing/``, CC BY 4.0; Donovan et al.,
Experimental Agriculture 2025, replication data doi 10.5281/zenodo.15063837) holds 4,800
real farmer answers to two questions: why a seed-product concept was preferred most
(``reason_preferred``) and why one was preferred least (``reason_lesspreferred``). It
carries no trait labels and is never copied into the repository.

``tests/maize_labels.jsonl`` holds labels we made ourselves on 300 of its answers (75 per
question and country, drawn at random with pandas ``sample(75, random_state=12)`` per
group): one line per answer, naming the dataset row (0-based, header excluded), its
respondent and question, the first 12 hex digits of the SHA-1 of the answer, and the
spans as character offsets into the answer, with a concept of ``tests/maize_concepts.csv``
(our own list and IDs, written after reading answers) and a stance. No answer text is
stored: :func:`load_maize_gold` cuts it from the dataset in place.

How the labels were made: one person read each of the 300 answers with its question and
marked every trait expression (the trait with its value words, negation and
intensifiers outside, as in ``sample_interviews/README.md``), its concept, and its
stance: *liked* when the trait is given as a merit, *disliked* when given as a fault or
a reason to reject (a use the farmer has no need for counts: "I have no animals"),
*wanted* for a stated need or preference for something else ("prefers dry maize"),
*neutral* when the trait is mentioned without a judgement ("yield is similar").
Answers naming no trait ("it is similar to what I plant") have no spans. The stance was
read from the answer; the question was read too, as a person would, which is why
answers to ``reason_lesspreferred`` are mostly disliked.
"""

from __future__ import annotations

import csv
import hashlib
import json
from pathlib import Path
from typing import Any

from extractor.ingest.concepts import load_concept_list
from extractor.types import QuestionCode, Sentence

MAIZE_DIR = (
    Path(__file__).resolve().parents[1].parent / "shared" / "datasets" / "maize-concept-testing"
)
"""Where the dataset is expected."""

LABELS = Path(__file__).with_name("maize_labels.jsonl")
"""Our labels: dataset row, offsets, concept and stance; no text."""

CONCEPTS = Path(__file__).with_name("maize_concepts.csv")
"""Our maize trait concept list (English, IDs ``MZT:01``...)."""

SKIP_REASON = f"maize verbatims not found in {MAIZE_DIR} (open data, not shipped)"

CODEBOOK = {
    "reason_preferred": QuestionCode(
        "reason_preferred", "Why did you prefer this seed product most?", "likes"
    ),
    "reason_lesspreferred": QuestionCode(
        "reason_lesspreferred", "Why did you prefer this seed product least?", "dislikes"
    ),
}
"""The question codebook a user would write for this survey (our wording of the questions)."""

DIRECTION_STANCE = {"reason_preferred": "liked", "reason_lesspreferred": "disliked"}
"""The stance an answer's question asks for."""


def load_answers(folder: Path | None = None) -> list[dict[str, str]] | None:
    """Return the dataset's ``answers_long.csv`` rows in file order, or None when absent."""
    path = (folder or MAIZE_DIR) / "answers_long.csv"
    if not path.is_file():
        return None
    with path.open(encoding="utf-8", newline="") as handle:
        return list(csv.DictReader(handle))


def load_maize_gold(folder: Path | None = None) -> list[dict[str, Any]] | None:
    """Return our labelled answers as gold records, their text cut from the dataset.

    Returns:
        ``[{"text", "lang", "question", "respondent", "row", "spans"}]`` in label-file
        order, ``None`` when the dataset is absent.

    Raises:
        ValueError: When a labelled row no longer matches the dataset (another version).
    """
    answers = load_answers(folder)
    if answers is None:
        return None
    out = []
    for line in LABELS.read_text(encoding="utf-8").splitlines():
        entry = json.loads(line)
        row = answers[entry["row"]]
        text = row["answer"]
        digest = hashlib.sha1(text.encode("utf-8")).hexdigest()[:12]
        if (row["respondent"], row["question"], digest) != (
            entry["respondent"],
            entry["question"],
            entry["answer_sha1"],
        ):
            raise ValueError(f"maize row {entry['row']} differs from the labelled version")
        out.append(
            {
                "text": text,
                "lang": "en",
                "question": row["question"],
                "respondent": row["respondent"],
                "row": entry["row"],
                "spans": entry["spans"],
            }
        )
    return out


def load_workspace(
    folder: Path | None = None,
) -> tuple[list[Sentence], list[dict[str, Any]], list[tuple[str, str, str]]] | None:
    """Return what a study of these answers would hold, or None when the dataset is absent.

    Returns:
        Every answer as one sentence (ID = dataset row, question, respondent), our labelled
        answers (:func:`load_maize_gold`) and our concept list's aliases
        ``(concept_id, text, lang)``.
    """
    answers = load_answers(folder)
    gold = load_maize_gold(folder)
    if answers is None or gold is None:
        return None
    corpus = [
        Sentence(n, row["answer"], "en", row["question"], row["respondent"])
        for n, row in enumerate(answers)
    ]
    aliases = [(a.concept_id, a.text, a.lang) for a in load_concept_list(CONCEPTS).aliases]
    return corpus, gold, aliases
