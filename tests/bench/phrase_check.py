"""The linker's phrase check on real farmer answers with few labels, off and on, paired.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/phrase_check.py [--seeds 0,1,2]

A one-word link must hold for the phrase the word makes with an adjacent content word
(:mod:`extractor.models.linking`, ``phrase_threshold``). What keeps a phrase linked is the
context classifier and the combiner fitted on the analyst's links, so the check is at its
weakest just above the combiner's 30 links. This bench reads the maize concept-testing
verbatims in place (``../shared/datasets/``, CC BY 4.0; never copied) with our labels on
300 answers (``tests/maize.py``): for each seed the labelled answers are split into 5 folds
by respondent, the models are trained on one fold's labels (about 60 answers, 80 links)
with all 4,800 answers as unlabelled text, and predict the other four folds twice, with
the phrase readings off (``phrase_threshold`` 0, ``read_noun_phrase`` false) and on (the
defaults); the same models, so the two figures differ only by the links the readings take
away or change. ``maize_cv.py`` gives the figures
at 0 labels and with 4 folds of labels.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.models.bundle import TraitModels  # noqa: E402
from extractor.models.stance import codebook_params  # noqa: E402
from extractor.models.validation import group_folds  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.types import Span  # noqa: E402
from tests import maize  # noqa: E402
from tests.bench.maize_cv import scores  # noqa: E402


def main() -> None:
    """Train on one fold per seed, predict the rest with the check off and on, print JSON."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seeds", default="0,1,2")
    args = parser.parse_args()
    loaded = maize.load_workspace()
    if loaded is None:
        sys.exit(maize.SKIP_REASON)
    corpus, labelled, aliases = loaded
    params = {"questions": codebook_params(maize.CODEBOOK)}
    clusters = learn_clusters([(s.text, s.lang) for s in corpus], seed=0)
    gold = [(corpus[g["row"]], [Span(**sp) for sp in g["spans"]]) for g in labelled]
    out: list[dict[str, Any]] = []
    for seed in (int(s) for s in args.seeds.split(",")):
        folds = group_folds([s.respondent or "" for s, _ in gold], 5, seed)
        train = set(folds[0])
        test = [i for i in range(len(gold)) if i not in train]
        models = TraitModels(stance_params=params).fit(
            [gold[i] for i in sorted(train)], corpus, aliases, clusters=clusters
        )
        sentences = [gold[i][0] for i in test]
        spans = [list(gold[i][1]) for i in test]
        row: dict[str, Any] = {"seed": seed, "labelled_answers": len(train)}
        default = models.linker_.phrase_threshold
        for name, threshold, noun_phrase in (("off", 0.0, False), ("on", default, True)):
            models.linker_.phrase_threshold = threshold
            models.linker_.read_noun_phrase = noun_phrase
            predicted = [
                [Span(m.start, m.end, m.concept, m.stance) for m in p.mentions]
                for p in models.predict(sentences)
            ]
            got = scores(sentences, spans, predicted)
            row[name] = {
                "span_concept_f1": round(got["span_concept"]["f1"], 4),
                "respondent_triples_f1": round(got["respondent_triples"]["f1"], 4),
                "linked": sum(1 for ms in predicted for m in ms if m.concept),
            }
        out.append(row)
        print(json.dumps(row), flush=True)


if __name__ == "__main__":
    main()
