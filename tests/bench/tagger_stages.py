"""Where tagging spends its time: each stage of ``tag_sentences`` timed in turn.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/tagger_stages.py [--size 5000] [--repeats 3] [--space use-m3]

Same synthetic corpus, dictionary, clusters and training as ``bench_tagger.py``. Per
repeat it prints CPU seconds of tokenizing, dictionary matching, IOB tags, features (as
tagging builds them: a word's own attributes and the rows of the rest in the model's
weights), the numpy decoder that tagging uses (``decoder``), and
for comparison python-crfsuite's tagger (set, Viterbi, marginals, path probability) with
the real attributes and with empty items (CRFsuite's per-token floor), then
``tag_sentences`` end to end.
"""

from __future__ import annotations

import argparse
import gc
import json
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.models.tagger import _marginals, tag_sentences  # noqa: E402
from extractor.models.tagger_training import fit_tagger  # noqa: E402
from extractor.nlp import pretrained  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.dictionary import build_dictionary  # noqa: E402
from extractor.nlp.feature_rows import sentence_rows  # noqa: E402
from extractor.nlp.features import Attributes, sentence_attributes  # noqa: E402
from extractor.nlp.spans import spans_to_concepts, spans_to_iob  # noqa: E402
from extractor.nlp.text import tokenize  # noqa: E402
from extractor.types import TAGS, Sentence, Span  # noqa: E402
from tests.bench import bench_tagger as bench  # noqa: E402


def main() -> None:
    """Print one JSON line of stage times per repeat."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--size", type=int, default=5000)
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--space", default=pretrained.DEFAULT, choices=sorted(pretrained.SPACES))
    args = parser.parse_args()
    records = bench.demo_gold()
    dictionary = build_dictionary(bench.demo_aliases())
    gold = [
        (
            Sentence(id=-(i + 1), text=r["sentence"], lang=r["lang"]),
            [Span(s["start"], s["end"], s.get("concept"), s.get("stance")) for s in r["mentions"]],
        )
        for i, r in enumerate(records[:100])
    ]
    corpus = bench.synthetic(records, args.size)
    clusters = learn_clusters([(s.text, s.lang) for s in corpus], space=args.space)
    tagger = fit_tagger(gold, bench.synthetic(records, 1900, seed=1), dictionary, clusters)
    crf = tagger._fitted()
    decoder = tagger._decoder()
    if decoder is None:
        raise SystemExit("The numpy decoder could not read the model.")
    gc.disable()  # as tag_sentences does
    for _ in range(args.repeats):
        times: dict[str, float] = {}

        def tick(stage: str, start: float, times: dict[str, float] = times) -> None:
            times[stage] = times.get(stage, 0.0) + time.process_time() - start

        rows: list[list[tuple[Attributes, list[int]]]] = []
        X: list[list[Attributes]] = []
        for s in corpus:
            t0 = time.process_time()
            offsets = tokenize(s.text, s.lang)
            tick("tokenize", t0)
            t0 = time.process_time()
            matches = dictionary.match_tokens(s.text, s.lang, offsets)
            tick("dictionary", t0)
            t0 = time.process_time()
            words = [s.text[a:b] for a, b in offsets]
            tags, concepts = spans_to_iob(offsets, matches), spans_to_concepts(offsets, matches)
            tick("iob_tags", t0)
            t0 = time.process_time()
            rows.append(
                sentence_rows(
                    words,
                    index=decoder.index,
                    dict_tags=tags,
                    dict_concepts=concepts,
                    clusters=clusters,
                    lang=s.lang,
                )
            )
            tick("features", t0)
            X.append(  # what CRFsuite reads, for its stages below (not timed)
                sentence_attributes(
                    words, dict_tags=tags, dict_concepts=concepts, clusters=clusters, lang=s.lang
                )
            )
        t0 = time.process_time()
        decoder.decode(rows)
        tick("decoder", t0)
        empty: list[list[Attributes]] = [[()] * len(x) for x in X]
        for stage, data in (("crfsuite_empty_items", empty), ("crfsuite", X)):
            t0 = time.process_time()
            for xseq in data:
                crf.set(xseq)
                path = crf.tag()
                _marginals(crf, TAGS, len(xseq))
                crf.probability(path)
            tick(stage, t0)
        t0 = time.process_time()
        tag_sentences(tagger, corpus, dictionary, clusters)
        tick("tag_sentences", t0)
        tokens = sum(map(len, X))
        row = {k: round(v, 3) for k, v in times.items()}
        row |= {
            "sentences_per_s": round(args.size / times["tag_sentences"]),
            "tokens": tokens,
            "attributes_per_token": round(sum(len(a) for x in X for a in x) / tokens, 1),
        }
        print(json.dumps(row), flush=True)


if __name__ == "__main__":
    main()
