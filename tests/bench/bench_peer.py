"""Peer comparison: our CRF tagger against spaCy's own trainable NER, on the same labels.

Both learn from exactly the same randomly drawn MAMS training sentences (50, 100 and 200,
nested, three repeats) and are scored with the same strict span F1 on the MAMS test
split. Spans are first snapped to spaCy's blank English tokens (as ``traits
import-labels`` does), so both see identical, token-aligned gold; the few training
sentences whose aspect terms nest inside one another are left out.

* ours: the tagger alone (:class:`extractor.loop.tagger_only.TaggerOnly`, no concept list),
  with word clusters learned once from the MAMS sentences' unlabeled text (their cost is
  reported separately: it is paid once per corpus, not per training).
* spaCy: ``spacy.blank("en")`` + the ``ner`` pipe with its default CPU model,
  ``nlp.initialize`` on the training examples, ``--epochs`` passes of ``nlp.update``
  over shuffled minibatches (size 8, dropout 0.2).

Run: ``python tests/bench/bench_peer.py /tmp/peer.json [--epochs 30] [--repeats 3]``.
Needs the MAMS data beside the repository (see ``tests/mams.py``).
"""

from __future__ import annotations

import argparse
import json
import random
import statistics
import sys
import time
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.errors import InputError  # noqa: E402
from extractor.ingest.labels import LabelRecord, records_from_dicts, to_gold  # noqa: E402
from extractor.loop.tagger_only import TaggerOnly  # noqa: E402
from extractor.models.metrics import predicted_mentions, score  # noqa: E402
from extractor.nlp.clusters import learn_clusters, load_clusters  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402
from tests.mams import SKIP_REASON, load_mams  # noqa: E402

BUDGETS = (50, 100, 200)


def valid_records(rows: list[dict[str, Any]]) -> list[LabelRecord]:
    """Return the rows as snapped records, leaving out those with nested spans."""
    out = []
    for row in rows:
        try:
            out += records_from_dicts([row])
        except InputError:
            continue
    return out


def train_spacy(train: list[tuple[str, list[tuple[int, int]]]], epochs: int, seed: int) -> Any:
    """Train spaCy's NER from scratch on ``(text, [(start, end)])`` pairs."""
    import spacy
    from spacy.pipeline import EntityRecognizer
    from spacy.training import Example
    from spacy.util import fix_random_seed, minibatch

    fix_random_seed(seed)
    nlp = spacy.blank("en")
    ner = nlp.add_pipe("ner")
    # add_pipe is typed as returning any component; the "ner" factory makes this one.
    if not isinstance(ner, EntityRecognizer):
        raise TypeError(f"spaCy's 'ner' factory made a {type(ner).__name__}")
    ner.add_label("TRAIT")
    examples = [
        Example.from_dict(nlp.make_doc(text), {"entities": [(s, e, "TRAIT") for s, e in spans]})
        for text, spans in train
    ]
    optimizer = nlp.initialize(lambda: examples)
    rng = random.Random(seed)
    for _ in range(epochs):
        rng.shuffle(examples)
        for batch in minibatch(examples, size=8):
            nlp.update(batch, drop=0.2, sgd=optimizer)
    return nlp


def spacy_mentions(nlp: Any, texts: list[str]) -> list[list[Span]]:
    """Return spaCy's entities of each text as spans."""
    return [[Span(e.start_char, e.end_char) for e in doc.ents] for doc in nlp.pipe(texts)]


def one_run(
    train: list[tuple[Sentence, list[Span]]],
    test_gold: list[tuple[Sentence, list[Span]]],
    clusters: Any,
    *,
    epochs: int,
    repeat: int,
) -> dict[str, Any]:
    """Train both taggers on the same sentences; return their F1 and training seconds."""
    started = time.perf_counter()
    ours = TaggerOnly().fit(train, [], [], clusters=clusters)
    ours_train = time.perf_counter() - started
    ours_f1 = score(test_gold, predicted_mentions(ours.predict([s for s, _ in test_gold]))).span.f1
    started = time.perf_counter()
    nlp = train_spacy(
        [(s.text, [(sp.start, sp.end) for sp in spans]) for s, spans in train],
        epochs,
        seed=repeat,
    )
    spacy_train = time.perf_counter() - started
    spacy_f1 = score(test_gold, spacy_mentions(nlp, [s.text for s, _ in test_gold])).span.f1
    return {
        "repeat": repeat,
        "budget": len(train),
        "ours_f1": ours_f1,
        "ours_train_seconds": round(ours_train, 2),
        "spacy_f1": spacy_f1,
        "spacy_train_seconds": round(spacy_train, 2),
    }


def summary_table(rows: list[dict[str, Any]], budgets: list[int]) -> list[dict[str, Any]]:
    """Return, per budget, the mean and standard deviation of each figure over repeats."""
    table = []
    for budget in budgets:
        runs = [r for r in rows if r["budget"] == budget]
        line: dict[str, Any] = {"budget": budget}
        for key in ("ours_f1", "ours_train_seconds", "spacy_f1", "spacy_train_seconds"):
            values = [r[key] for r in runs]
            sd = statistics.stdev(values) if len(values) > 1 else 0.0
            line[key] = (statistics.fmean(values), sd)
        table.append(line)
    return table


def main(argv: list[str] | None = None) -> int:
    """Run the comparison, print a table and write the JSON."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out", type=Path, help="where to write the JSON results")
    parser.add_argument("--epochs", type=int, default=30)
    parser.add_argument("--budgets", type=int, nargs="+", default=list(BUDGETS))
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--clusters", type=Path, help="reuse clusters saved in this folder")
    args = parser.parse_args(argv)
    train_rows, test_rows = load_mams("train"), load_mams("test")
    if train_rows is None or test_rows is None:
        print(SKIP_REASON)
        return 1
    pool, test = valid_records(train_rows), valid_records(test_rows)
    pool_gold = to_gold(pool)
    test_gold = to_gold(test, first_id=len(pool_gold))
    started = time.perf_counter()
    how = "learned once"
    if args.clusters is not None:
        how = f"loaded from {args.clusters}"
        clusters = load_clusters(args.clusters)
    else:
        clusters = learn_clusters([(s.text, s.lang) for s, _ in pool_gold + test_gold], seed=0)
    cluster_seconds = time.perf_counter() - started
    rows = []
    budgets = args.budgets
    for repeat in range(args.repeats):
        order = random.Random(repeat).sample(range(len(pool_gold)), max(budgets))
        for budget in budgets:
            train = [pool_gold[i] for i in order[:budget]]
            rows.append(one_run(train, test_gold, clusters, epochs=args.epochs, repeat=repeat))
            print(json.dumps(rows[-1]), flush=True)
    print(
        f"\nMAMS test ({len(test_gold)} sentences), strict span F1, mean (sd) over "
        f"{args.repeats} repeats; clusters {how} in {cluster_seconds:.0f} s"
    )
    print(f"{'budget':>6}  {'ours F1':>14}  {'ours s':>7}  {'spaCy F1':>14}  {'spaCy s':>7}")
    table = summary_table(rows, budgets)
    for line in table:
        print(
            f"{line['budget']:>6}  {line['ours_f1'][0]:.3f} ({line['ours_f1'][1]:.3f})  "
            f"{line['ours_train_seconds'][0]:>7.1f}  {line['spacy_f1'][0]:.3f} "
            f"({line['spacy_f1'][1]:.3f})  {line['spacy_train_seconds'][0]:>7.1f}"
        )
    args.out.write_text(json.dumps({
        "settings": {"epochs": args.epochs, "repeats": args.repeats, "budgets": budgets,
                     "train_pool": len(pool_gold), "test": len(test_gold),
                     "cluster_seconds": round(cluster_seconds, 1)},
        "runs": rows, "table": table}, indent=1), encoding="utf-8")  # fmt: skip
    return 0


if __name__ == "__main__":
    sys.exit(main())
