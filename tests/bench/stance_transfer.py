"""Stance in languages without cue words: the demo with French and Spanish cues removed.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/stance_transfer.py [--repeats 10] [--labels 50]

Stance accuracy on the French and Spanish gold spans of the demo (``sample_interviews/
gold.jsonl``, invented data) when the cue lexicon lacks those languages' stance words:

- ``stance words removed``: the ``liked``, ``disliked`` and ``wanted`` lists of ``fr`` and
  ``es`` are emptied (negation, contrast, excess, resistance and question words stay);
- ``sections removed``: the whole ``fr`` and ``es`` sections are gone, and a question
  codebook gives each distinct question of the demo its direction (what a user would
  write for a survey whose questions the tool cannot read).

At 0 labels the rules answer alone. At N labels, N sentences drawn at random from the
whole demo (any language; the scored sentence is never among them) train the stance
model, blended with the rules as a model version does; ``--repeats`` draws, mean and
standard deviation. The full lexicon is shown beside it.
"""

from __future__ import annotations

import argparse
import json
import random
import sys
from pathlib import Path
from typing import Any

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

import extractor.models.stance as stance_module  # noqa: E402
from extractor.models.bundle import STANCE_PRIOR  # noqa: E402
from extractor.models.cue_file import STANCE_CATEGORIES, load_cues  # noqa: E402
from extractor.models.stance import StanceModel, codebook_params  # noqa: E402
from extractor.types import STANCES, QuestionCode, Sentence, Span  # noqa: E402

# The demo's five questions (sample_interviews/README.md), by their direction.
_DIRECTIONS = {
    "why": "likes",
    "pourquoi": "likes",
    "por qué": "likes",
    "dislike": "dislikes",
    "not like": "dislikes",
    "n'aimez pas": "dislikes",
    "ne va pas": "dislikes",
    "no le gusta": "dislikes",
    "change": "wishes",
    "changer": "wishes",
    "cambiar": "wishes",
    "cambiaria": "wishes",
    "new variety": "wishes",
    "nouvelle variété": "wishes",
    "variedad nueva": "wishes",
    "would you stock": "wishes",
}


def direction(question: str) -> str:
    """Return the direction a person would code for a demo question ("open" for cooking)."""
    low = question.lower()
    found = [d for key, d in _DIRECTIONS.items() if key in low]
    # "Which new variety would you try, and why?" is a wish; wishes win over "why".
    for wanted in ("wishes", "dislikes", "likes"):
        if wanted in found:
            return wanted
    return "open"


def demo() -> list[dict[str, Any]]:
    """Return the demo's gold sentences."""
    path = ROOT / "sample_interviews" / "gold.jsonl"
    return [json.loads(line) for line in path.read_text(encoding="utf-8").splitlines()]


def items(rows: list[dict[str, Any]]) -> list[tuple[int, Sentence, Span, str]]:
    """Return (row index, sentence, span, stance) for every mention with a stance."""
    out = []
    for n, r in enumerate(rows):
        sentence = Sentence(n, r["sentence"], r["lang"], r.get("question"))
        out += [
            (n, sentence, Span(m["start"], m["end"]), m["stance"])
            for m in r["mentions"]
            if m.get("stance")
        ]
    return out


def use_lexicon(variant: str) -> None:
    """Make the stance model read the lexicon of a variant (a user file can only add)."""
    cues = load_cues()
    for lang in ("fr", "es") if variant != "full lexicon" else ():
        if variant == "sections removed":
            cues.pop(lang, None)
        else:
            for cat in STANCE_CATEGORIES:
                cues[lang].pop(cat, None)
    stance_module.load_cues = lambda path=None: cues
    stance_module.packaged_cues = lambda: cues  # type: ignore[assignment]


def main() -> None:
    """Print the figures."""
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--repeats", type=int, default=10)
    parser.add_argument("--labels", type=int, default=50)
    args = parser.parse_args()
    rows = demo()
    every = items(rows)
    scored = [it for it in every if it[1].lang in ("fr", "es")]
    codebook = {
        r["question"]: QuestionCode(r["question"], None, direction(r["question"]))
        for r in rows
        if r.get("question")
    }
    for variant in ("full lexicon", "stance words removed", "sections removed"):
        use_lexicon(variant)
        params: dict[str, Any] = {}
        if variant == "sections removed":
            params["questions"] = codebook_params(codebook)
        model = _Replace(params)
        zero = _accuracy(StanceModel(**params), scored, 0)
        runs = []
        for repeat in range(args.repeats):
            chosen = set(random.Random(repeat).sample(range(len(rows)), args.labels))
            train = [(s, sp, y) for n, s, sp, y in every if n in chosen]
            test = [it for it in scored if it[0] not in chosen]
            fitted = model.fit(train)
            runs.append(_accuracy(fitted, test, len(train)))
        print(
            f"{variant}: fr+es stance accuracy at 0 labels {zero:.3f} ({len(scored)} spans); "
            f"at {args.labels} labelled sentences {np.mean(runs):.3f} ± {np.std(runs):.3f} "
            f"({args.repeats} draws)"
        )


class _Replace:
    """Fits a fresh stance model of the given parameters."""

    def __init__(self, params: dict[str, Any]) -> None:
        self.params = params

    def fit(self, train: list[tuple[Sentence, Span, str]]) -> StanceModel:
        return StanceModel(**self.params).fit(train)


def _accuracy(model: StanceModel, test: list[tuple[int, Sentence, Span, str]], n: int) -> float:
    proba = model.predict_proba_blend([(s, sp) for _, s, sp, _ in test], n / (n + STANCE_PRIOR))
    return float(
        np.mean(
            [STANCES[int(k)] == y for k, (*_, y) in zip(proba.argmax(axis=1), test, strict=True)]
        )
    )


if __name__ == "__main__":
    main()
