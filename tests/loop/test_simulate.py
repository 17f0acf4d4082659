"""The simulated annotator: well-formed learning-curve records, nulls, determinism."""

from __future__ import annotations

import dataclasses
import json
import random
from typing import Any

import pytest
from sklearn.cluster import KMeans

from extractor.errors import InputError
from extractor.loop.curves import SimulationResults
from extractor.loop.simulate import simulate
from extractor.loop.space_vectors import centroid_picks, pool_vectors
from extractor.nlp.text import tokenize

KEYS = {
    "strategy",
    "budget",
    "repeat",
    "labeled_sentences",
    "labeled_tokens",
    "span_f1",
    "span_concept_f1",
    "stance_accuracy",
    "sentence_concept_f1",
    "sentence_stance_accuracy",
    "respondent_f1_with_implicit",
    "span_f1_best_path",
    "respondent_f1",
    "seconds",
}

TRAITS = ["soft grain", "short cooking", "sweet taste", "big seeds", "few stones"]
FILLERS = ["At Lomara market", "My neighbour Teodin says", "Last season", "In Vesk village"]


def toy_records(n: int, seed: int, concepts: bool = False) -> list[dict[str, Any]]:
    """Invented sentences "<filler> we like the <trait> of Zanobi." with the trait marked."""
    rng = random.Random(seed)
    out: list[dict[str, Any]] = []
    for i in range(n):
        filler = rng.choice(FILLERS)
        if i % 4 == 3:
            out.append(
                {
                    "sentence": f"{filler} we sold the beans.",
                    "lang": "en",
                    "mentions": [],
                    "respondent": f"R{i % 7}",
                }
            )
            continue
        k = rng.randrange(len(TRAITS))
        text = f"{filler} we like the {TRAITS[k]} of Zanobi."
        start = text.index(TRAITS[k])
        span: dict[str, Any] = {"start": start, "end": start + len(TRAITS[k])}
        if concepts:
            span |= {"concept": f"ZZ:{k}", "stance": "liked"}
        out.append({"sentence": text, "lang": "en", "mentions": [span], "respondent": f"R{i % 7}"})
    return out


def run(**overrides: Any) -> SimulationResults:
    settings: dict[str, Any] = dict(
        strategies=["random", "least_confidence", "default"],
        budgets=[0, 10, 15],
        repeats=1,
        seed=0,
        batch_size=5,
        retrain_every=5,
        seed_size=5,
        model="tagger",
        clusters={},
    )
    settings |= overrides
    return simulate(toy_records(40, 1), toy_records(12, 2), [], **settings)


def test_records_are_well_formed_with_nulls() -> None:
    results = run()
    runs = results.to_dict()["runs"]
    assert len(runs) == 3 * 3  # strategies x budgets
    json.dumps(results.to_dict())  # JSON-able
    for record in runs:
        assert set(record) == KEYS
        assert record["labeled_sentences"] == record["budget"]
        assert record["span_concept_f1"] is None and record["respondent_f1"] is None
        assert record["stance_accuracy"] is None
        if record["budget"] == 0:  # no aliases: nothing to train at budget 0
            assert record["span_f1"] is None and record["labeled_tokens"] == 0
        else:
            assert 0.0 <= record["span_f1"] <= 1.0 and record["labeled_tokens"] > 0


def test_budget_zero_is_the_dictionary_with_aliases() -> None:
    aliases = [(f"ZZ:{k}", t, "en") for k, t in enumerate(TRAITS)]
    results = simulate(
        toy_records(30, 1, True),
        toy_records(12, 2, True),
        aliases,
        strategies=["random"],
        budgets=[0],
        repeats=1,
        seed=0,
        model="tagger",
        clusters={},
    )
    (record,) = results.runs
    # Every trait of the toy test set is an alias, so the dictionary alone finds them,
    # with their concepts; the tagger alone gives no stance.
    assert record.span_f1 == pytest.approx(1.0)
    assert record.span_concept_f1 == pytest.approx(1.0)
    assert record.stance_accuracy is None


def test_seed_sentences_are_shared_by_strategies_with_a_random_start() -> None:
    runs = run(budgets=[5], strategies=["random", "least_confidence", "norm_logprob_ngrams"]).runs
    assert len({r.labeled_tokens for r in runs}) == 1
    assert len({r.span_f1 for r in runs}) == 1


def test_centroid_cold_start_seeds_with_the_sentences_nearest_the_centroids() -> None:
    pool, test = toy_records(40, 1), toy_records(12, 2)
    runs = simulate(
        pool, test, [], strategies=["norm_logprob_space_centroids"], budgets=[5], repeats=2,
        seed=0, seed_size=5, model="tagger", clusters={},
    ).runs  # fmt: skip
    texts = [r["sentence"] for r in pool]
    vectors = pool_vectors(texts, ["en"] * len(texts), kind="pretrained")
    tokens = [len(tokenize(t, "en")) for t in texts]
    # Each repeat draws its own k-means seed, and the seed sentences are one per cluster.
    for record in runs:
        rng = random.Random(record.repeat)  # seed 0: the repeat's generator, as in a run
        rng.shuffle(list(range(len(pool))))  # the random start's order, drawn first
        seed = rng.randrange(1 << 30)
        picks = centroid_picks(vectors, 5, seed=seed)
        assert record.labeled_tokens == sum(tokens[i] for i in picks)
        labels = KMeans(n_clusters=5, random_state=seed, n_init=1).fit(vectors).labels_
        assert sorted(labels[picks].tolist()) == [0, 1, 2, 3, 4]


def test_parallel_runs_equal_serial_runs() -> None:
    def strip(results: SimulationResults) -> list[Any]:
        return [dataclasses.replace(r, seconds=0.0) for r in results.runs]

    serial = run(strategies=["random", "default"], budgets=[10])
    parallel = run(strategies=["random", "default"], budgets=[10], jobs=2)
    assert strip(serial) == strip(parallel)


@pytest.mark.parametrize(
    "overrides,message",
    [
        ({"strategies": ["loudest"]}, "strategy must be one of"),
        ({"model": "bert"}, "model must be one of"),
        ({"budgets": [-1]}, "Budgets must be given and not negative"),
        ({"subpool": -1}, "sub-pool must hold at least 1"),
    ],
    ids=["unknown-strategy", "unknown-model", "negative-budget", "negative-subpool"],
)
def test_bad_settings_are_refused(overrides: dict[str, Any], message: str) -> None:
    with pytest.raises(InputError, match=message):
        run(**overrides)


def test_progress_bar_counts_the_runs() -> None:
    from io import StringIO

    from rich.console import Console

    from extractor import progress

    out = StringIO()
    progress.enable(Console(file=out, force_terminal=True, width=100))
    try:
        run(strategies=["random", "default"], budgets=[10], repeats=2)
    finally:
        progress.enable(None)
    shown = out.getvalue()
    assert "Simulating runs" in shown
    assert "4/4" in shown  # strategies x repeats
