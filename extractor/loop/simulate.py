"""Learning curves with a simulated annotator who answers from gold labels.

:func:`simulate` replays the labeling loop for each query strategy: start from the same
seed sentences, ask for batches of ``batch_size`` sentences chosen by the strategy
(:mod:`extractor.loop.strategies`) from the current model's predictions on the pool, retrain
every ``retrain_every`` labels, and score the model on a fixed test set whenever the
number of labeled sentences reaches a budget. The annotator "answers" by revealing the
sentence's gold spans. :mod:`extractor.loop.curves` summarises and draws the curves.

Conventions
-----------
* A budget counts all labeled sentences, seed included. Repeat ``r`` draws its seed
  sentences (``seed_size``, default 10) at random with seed ``seed * 1000 + r``; every
  strategy of that repeat starts from them, so strategies differ only in what they ask.
  A strategy with a centroid cold start (``cold_start="centroids"``, as the labeling
  session's first batch) starts instead from the pool sentences nearest the k-means
  centroids of its vectors, the k-means seeded from the same generator.
  Budgets below ``seed_size`` use the first sentences of the seed.
* Budget 0 is the dictionary bootstrap alone (models trained on the concept list's
  aliases and no label). Without aliases there is nothing to train at budget 0: its
  record has every figure ``null``.
* A figure that does not apply is ``null``: ``span_concept_f1`` and ``respondent_f1``
  when the test gold has no concepts, ``stance_accuracy`` when the model gives no stance.
* ``subpool`` caps how many unlabeled pool sentences are scored after each retrain
  (a fresh random sub-pool each time; all of them when ``None``), as the labeling loop's
  ``subpool`` setting does (500 by default; see :class:`extractor.loop.samples.SessionSettings`).
* ``model="traits"`` trains the full :class:`extractor.models.bundle.TraitModels`;
  ``model="tagger"`` trains the CRF tagger alone (no linking, no stance), which is all
  that span scores need and several times faster on data without concepts.
"""

from __future__ import annotations

import os
import random
import time
from collections.abc import Mapping, Sequence
from concurrent.futures import ProcessPoolExecutor, as_completed
from dataclasses import asdict
from multiprocessing import get_context
from typing import Any, NamedTuple

import numpy as np

from extractor.child_processes import end_with_parent
from extractor.errors import InputError
from extractor.ingest.labels import LabelRecord, record_from_dict, to_gold
from extractor.loop import strategies as active
from extractor.loop.curves import RunRecord, SimulationResults, SimulationSettings
from extractor.loop.predictor import pool_item
from extractor.loop.space_vectors import centroid_picks, pool_vectors
from extractor.loop.tagger_only import MODELS, Alias, TaggerOnly, make_models
from extractor.models.metrics import SUMMARY_KEYS, predicted_mentions, score, summary
from extractor.models.sentence_metrics import sentence_scores, stated
from extractor.nlp.clusters import learn_clusters
from extractor.nlp.text import tokenize
from extractor.progress import track
from extractor.types import Implicit, Sentence, Span

SENTENCE_FIGURES = (
    "sentence_concept_f1",
    "sentence_stance_accuracy",
    "respondent_f1_with_implicit",
)
"""Figures over whole sentences, counting mentions and implicit traits."""
FIGURES = (*SUMMARY_KEYS, *SENTENCE_FIGURES, "span_f1_best_path")
Gold = list[tuple[Sentence, list[Span]]]


# --------------------------------------------------------------------------- one run


class _Shared(NamedTuple):
    pool: Gold
    test: Gold
    aliases: list[Alias]
    clusters: dict[str, Any] | None
    model: str
    model_params: dict[str, Any]
    vectors: dict[str, np.ndarray]
    density: dict[tuple[str, int], np.ndarray]
    tokens: list[int]
    implicit: dict[int, tuple[Implicit, ...]]


_SHARED: _Shared | None = None


def _init_worker(shared: _Shared, parent: int | None = None) -> None:
    """Give this process the shared data; in a worker, end it with its ``parent``."""
    global _SHARED
    _SHARED = shared
    if parent is not None:
        end_with_parent(parent)


class _Task(NamedTuple):
    strategy: str
    spec: active.Strategy
    repeat: int
    budgets: tuple[int, ...]
    seed: int
    seed_size: int
    batch_size: int
    retrain_every: int
    subpool: int | None


_Cache = dict[tuple[int, bool], Any]
"""Tagger features per sentence ID and ``space_axes``, shared by the fits of one run."""


def _fit(shared: _Shared, labeled: Sequence[int], cache: _Cache) -> Any:
    gold = [shared.pool[i] for i in labeled]
    corpus = [s for s, _ in shared.pool] + [s for s, _ in shared.test]
    model = make_models(shared.model, shared.model_params)
    if isinstance(model, TaggerOnly):
        return model.fit(
            gold, corpus, shared.aliases, clusters=shared.clusters, feature_cache=cache
        )
    return model.fit(
        gold, corpus, shared.aliases, clusters=shared.clusters, implicit=shared.implicit
    )


def _record(
    task: _Task,
    budget: int,
    labeled: Sequence[int],
    figures: Mapping[str, Any],
    shared: _Shared,
    started: float,
) -> RunRecord:
    return RunRecord(
        strategy=task.strategy,
        budget=budget,
        repeat=task.repeat,
        labeled_sentences=len(labeled),
        labeled_tokens=sum(shared.tokens[i] for i in labeled),
        **{k: figures.get(k) for k in FIGURES},
        seconds=round(time.perf_counter() - started, 2),
    )


def _figures(model: Any, shared: _Shared) -> dict[str, Any]:
    sentences = [s for s, _ in shared.test]
    preds = model.predict(sentences)
    figures = asdict(summary(score(shared.test, predicted_mentions(preds))))
    whole = sentence_scores(
        sentences,
        [stated(spans, shared.implicit.get(s.id, ())) for s, spans in shared.test],
        [stated([*p.mentions, *getattr(p, "implicit", [])]) for p in preds],
    )
    states_concepts = whole.concept.gold > 0
    return figures | {
        "sentence_concept_f1": whole.concept.f1 if states_concepts else None,
        "sentence_stance_accuracy": whole.stance_accuracy,
        "respondent_f1_with_implicit": None if whole.respondent is None else whole.respondent.f1,
        "span_f1_best_path": _best_path_f1(model, shared),
    }


def _best_path_f1(model: Any, shared: _Shared) -> float | None:
    """Return the span F1 of the tagger's best path alone, if the model decodes for recall."""
    tagger = getattr(model, "tagger_", None)
    threshold = getattr(tagger, "recall_threshold", None)
    if tagger is None or threshold is None:
        return None
    tagger.recall_threshold = None
    try:
        preds = model.predict([s for s, _ in shared.test])
    finally:
        tagger.recall_threshold = threshold
    return summary(score(shared.test, predicted_mentions(preds))).span_f1


def _seed_records(
    task: _Task, shared: _Shared, seed_set: list[int], cache: _Cache, started: float
) -> list[RunRecord]:
    """Score budget 0 (dictionary alone) and the budgets the seed sentences reach."""
    records = []
    if 0 in task.budgets:
        figures = (
            _figures(_fit(shared, [], cache), shared) if shared.aliases else dict.fromkeys(FIGURES)
        )
        records.append(_record(task, 0, [], figures, shared, started))
    for budget in sorted(task.budgets):
        if 0 < budget <= len(seed_set):
            model = _fit(shared, seed_set[:budget], cache)
            records.append(
                _record(task, budget, seed_set[:budget], _figures(model, shared), shared, started)
            )
    return records


def _run(task: _Task) -> list[RunRecord]:
    shared = _SHARED
    if shared is None:
        raise InputError("The simulation worker was started without its data.")
    started = time.perf_counter()
    strategy = task.spec
    rng = random.Random(task.seed * 1000 + task.repeat)
    order = list(range(len(shared.pool)))
    rng.shuffle(order)
    budgets = sorted(task.budgets)
    top = budgets[-1]
    vectors = shared.vectors.get(strategy.vectors)
    if strategy.cold_start == "centroids" and vectors is not None:
        labeled = centroid_picks(vectors, min(task.seed_size, top), seed=rng.randrange(1 << 30))
    else:
        labeled = order[: min(task.seed_size, top)]
    cache: _Cache = {}
    records = _seed_records(task, shared, labeled, cache, started)
    if not labeled:
        return records
    model = _fit(shared, labeled, cache)
    since, stale, round_no = 0, True, 0
    scored: list[int] = []
    scores = np.zeros(0)
    while len(labeled) < min(top, len(shared.pool)):
        if stale:
            scored, scores = _score_pool(model, shared, labeled, strategy, rng, task.subpool)
            stale = False
        next_budget = min(b for b in budgets if b > len(labeled))
        taken = set(labeled)
        picked = active.select(
            scores,
            vectors[scored] if vectors is not None else None,
            min(task.batch_size, next_budget - len(labeled)),
            diversity=strategy.diversity,
            exclude={k for k, i in enumerate(scored) if i in taken},
            labeled_vectors=vectors[labeled] if vectors is not None else None,
            seed=task.seed * 1000 + task.repeat * 100 + round_no,
        )
        round_no += 1
        if not picked:  # the sub-pool is used up before the model changed
            stale = True
            continue
        labeled = labeled + [scored[k] for k in picked]
        since += len(picked)
        if len(labeled) in budgets or since >= task.retrain_every:
            model = _fit(shared, labeled, cache)
            since, stale = 0, True
            if len(labeled) in budgets:
                figures = _figures(model, shared)
                records.append(_record(task, len(labeled), labeled, figures, shared, started))
    return records


def _score_pool(
    model: Any,
    shared: _Shared,
    labeled: Sequence[int],
    strategy: active.Strategy,
    rng: random.Random,
    subpool: int | None,
) -> tuple[list[int], np.ndarray]:
    taken = set(labeled)
    unlabeled = [i for i in range(len(shared.pool)) if i not in taken]
    if subpool is not None and len(unlabeled) > subpool:
        unlabeled = sorted(rng.sample(unlabeled, subpool))
    if strategy.score is active.random_score:
        return unlabeled, np.zeros(len(unlabeled))  # nothing to predict
    preds = model.predict([shared.pool[i][0] for i in unlabeled])
    scores = strategy.score([pool_item(p) for p in preds])
    whole = shared.density.get((strategy.vectors, strategy.density_k))
    dens = whole[unlabeled] if whole is not None else None
    return unlabeled, active.weigh_by_density(scores, dens, strategy.density_beta)


# --------------------------------------------------------------------------- public


def simulate(
    pool: Sequence[LabelRecord | Mapping[str, Any]],
    test: Sequence[LabelRecord | Mapping[str, Any]],
    aliases: Sequence[Alias],
    *,
    strategies: Sequence[str],
    budgets: Sequence[int],
    repeats: int,
    seed: int,
    batch_size: int = 5,
    retrain_every: int = 10,
    jobs: int = 1,
    seed_size: int = 10,
    subpool: int | None = 500,
    model: str = "traits",
    model_params: dict[str, Any] | None = None,
    clusters: dict[str, Any] | None = None,
) -> SimulationResults:
    """Replay the labeling loop with a simulated annotator and record learning curves.

    Args:
        pool: Labeled records the simulated annotator answers from (gold-format dicts or
            :class:`~extractor.ingest.labels.LabelRecord`).
        test: Labeled records the models are scored on; never queried.
        aliases: The concept list's aliases ``(concept_id, text, lang)``; may be empty.
        strategies: Names in :data:`extractor.loop.strategies.STRATEGIES`.
        budgets: Numbers of labeled sentences (seed included) at which to score.
        repeats: Independent repeats (different seed sentences and tie-breaking).
        seed: Base random seed.
        batch_size: Sentences asked per query.
        retrain_every: Retrain after this many new labels (and at every budget).
        jobs: Worker processes; above 1, runs go to a ``ProcessPoolExecutor``.
        seed_size: Random sentences labeled before the first query.
        subpool: Size of the random sub-pool scored after each retrain (None = all).
        model: ``"traits"`` (full models) or ``"tagger"`` (tagger alone).
        model_params: Keyword arguments of the model.
        clusters: Word clusters to reuse; learned from pool and test text when None.

    Returns:
        The settings and one :class:`~extractor.loop.curves.RunRecord` per strategy,
        repeat and budget; a record's ``seconds`` is its run's time up to that budget.

    Raises:
        InputError: A strategy or model is unknown, or a number is out of range.
    """
    chosen = [active.get_strategy(n) for n in strategies]
    _check_numbers(model, subpool, budgets, repeats, batch_size, retrain_every)
    pool, test = _as_records(pool, "pool"), _as_records(test, "test")
    pool_gold = to_gold(pool, first_id=0)
    test_gold = to_gold(test, first_id=len(pool_gold))
    shared = _share(pool_gold, test_gold, aliases, chosen, model, model_params, clusters, seed)
    shared = shared._replace(
        implicit={
            first + n: record.implicit
            for first, records in ((0, pool), (len(pool_gold), test))
            for n, record in enumerate(records)
            if record.implicit
        }
    )
    settings = SimulationSettings(
        strategies=list(strategies),
        budgets=sorted(set(budgets)),
        repeats=repeats,
        seed=seed,
        batch_size=batch_size,
        retrain_every=retrain_every,
        seed_size=seed_size,
        subpool=subpool,
        model=model,
        model_params=model_params or {},
        pool_size=len(pool_gold),
        test_size=len(test_gold),
        aliases=len(aliases),
        strategy_settings={n: _describe(s) for n, s in zip(strategies, chosen, strict=True)},
    )
    return SimulationResults(settings, tuple(_run_all(_tasks(settings, chosen), shared, jobs)))


def _as_records(items: Sequence[LabelRecord | Mapping[str, Any]], source: str) -> list[LabelRecord]:
    """Return label-format dicts as checked records (records stay as they are)."""
    return [
        item
        if isinstance(item, LabelRecord)
        else record_from_dict(item, source=source, line=n, default_lang="en")
        for n, item in enumerate(items, start=1)
    ]


def _tasks(settings: SimulationSettings, chosen: Sequence[active.Strategy]) -> list[_Task]:
    """Return one run per repeat and strategy, repeat by repeat."""
    return [
        _Task(
            name,
            spec,
            r,
            tuple(settings.budgets),
            settings.seed,
            settings.seed_size,
            settings.batch_size,
            settings.retrain_every,
            settings.subpool,
        )
        for r in range(settings.repeats)
        for name, spec in zip(settings.strategies, chosen, strict=True)
    ]


def _check_numbers(
    model: str,
    subpool: int | None,
    budgets: Sequence[int],
    repeats: int,
    batch_size: int,
    retrain_every: int,
) -> None:
    if model not in MODELS:
        raise InputError(f"The model must be one of {', '.join(MODELS)}; got {model!r}.")
    if subpool is not None and subpool < 1:
        raise InputError(f"The sub-pool must hold at least 1 sentence; got {subpool}.")
    if not budgets or min(budgets) < 0 or repeats < 1 or batch_size < 1 or retrain_every < 1:
        raise InputError(
            "Budgets must be given and not negative, and repeats, batch size and retrain "
            f"interval at least 1; got budgets {list(budgets)}, repeats {repeats}, batch size "
            f"{batch_size}, retrain every {retrain_every}."
        )


def _share(
    pool_gold: Gold,
    test_gold: Gold,
    aliases: Sequence[Alias],
    chosen: Sequence[active.Strategy],
    model: str,
    model_params: dict[str, Any] | None,
    clusters: dict[str, Any] | None,
    seed: int,
) -> _Shared:
    """Return what every run reads: the data, clusters, vectors, density and token counts."""
    if clusters is None:
        clusters = learn_clusters([(s.text, s.lang) for s, _ in pool_gold + test_gold], seed=seed)
    texts, langs = [s.text for s, _ in pool_gold], [s.lang for s, _ in pool_gold]
    needed = {s.vectors for s in chosen if s.diversity or s.density_beta}
    needed |= {s.vectors for s in chosen if s.cold_start != "density"}
    vectors = {kind: pool_vectors(texts, langs, kind=kind, seed=seed) for kind in sorted(needed)}
    dens = {
        (s.vectors, s.density_k): active.strategy_density(vectors[s.vectors], s)
        for s in chosen
        if s.density_beta
    }
    return _Shared(
        pool_gold,
        test_gold,
        list(aliases),
        clusters,
        model,
        model_params or {},
        vectors,
        dens,
        [len(tokenize(s.text, s.lang)) for s, _ in pool_gold],
        {},
    )


def _run_all(tasks: Sequence[_Task], shared: _Shared, jobs: int) -> list[RunRecord]:
    """Run every task, in worker processes when ``jobs`` is above 1; records in task order."""
    results: list[list[RunRecord]] = [[] for _ in tasks]
    if jobs > 1:
        # "spawn", not fork: a forked child inherits the parent's BLAS/OpenMP thread
        # state (k-means, SVD) and can hang on its first threaded call.
        with ProcessPoolExecutor(
            max_workers=jobs,
            mp_context=get_context("spawn"),
            initializer=_init_worker,
            initargs=(shared, os.getpid()),
        ) as executor:
            futures = {executor.submit(_run, t): k for k, t in enumerate(tasks)}
            for future in track(as_completed(futures), "Simulating runs", len(tasks)):
                results[futures[future]] = future.result()
    else:
        _init_worker(shared)
        for k, t in track(enumerate(tasks), "Simulating runs", len(tasks)):
            results[k] = _run(t)
    return [r for rs in results for r in rs]


def _describe(strategy: active.Strategy) -> dict[str, Any]:
    return {
        "score": getattr(strategy.score, "__name__", repr(strategy.score)),
        "density_beta": strategy.density_beta,
        "diversity": strategy.diversity,
        "vectors": strategy.vectors,
        "density_k": strategy.density_k,
        "cold_start": strategy.cold_start,
    }
