"""Learning curves with a simulated annotator who answers from gold labels.

:func:`simulate` replays the labeling loop for each query strategy: start from the same
seed sentences, ask for batches of ``batch_size`` sentences chosen by the strategy
(:mod:`extractor.loop.strategies`) from the current model's predictions on the pool, retrain
every ``retrain_every`` labels, and score the model on a fixed test set whenever the
number of labeled sentences reaches a budget. The annotator "answers" by revealing the
sentence's gold spans. :func:`plot` draws the curves.

Conventions
-----------
* A budget counts all labeled sentences, seed included. Repeat ``r`` draws its seed
  sentences (``seed_size``, default 10) at random with seed ``seed * 1000 + r``; every
  strategy of that repeat starts from them, so strategies differ only in what they ask.
  Budgets below ``seed_size`` use the first sentences of the seed.
* Budget 0 is the dictionary bootstrap alone (models trained on the concept list's
  aliases and no label). Without aliases there is nothing to train at budget 0: its
  record has every figure ``null``.
* A figure that does not apply is ``null``: ``span_concept_f1`` and ``respondent_f1``
  when the test gold has no concepts, ``stance_accuracy`` when the model gives no stance.
* ``subpool`` caps how many unlabeled pool sentences are scored after each retrain
  (a fresh random sub-pool each time; all of them when ``None``), as the labeling loop's
  ``subpool`` setting does (500 by default; see :class:`extractor.loop.session.SessionSettings`).
* ``model="traits"`` trains the full :class:`extractor.models.bundle.TraitModels`;
  ``model="tagger"`` trains the CRF tagger alone (no linking, no stance), which is all
  that span scores need and several times faster on data without concepts.
"""

from __future__ import annotations

import random
import statistics
import time
from collections.abc import Mapping, Sequence
from concurrent.futures import ProcessPoolExecutor, as_completed
from multiprocessing import get_context
from pathlib import Path
from typing import Any, NamedTuple

import numpy as np

from extractor.errors import InputError
from extractor.ingest.labels import LabelRecord, to_gold
from extractor.loop import strategies as active
from extractor.models.bundle import span_confidence
from extractor.models.metrics import SUMMARY_KEYS, predicted_mentions, score, summary
from extractor.models.tagger import TagResult, sentence_items
from extractor.models.tagger_training import fit_tagger
from extractor.nlp.spans import iob_to_spans
from extractor.progress import track
from extractor.types import Sentence, Span

Alias = tuple[str, str, str]
MODELS = ("traits", "tagger")
FIGURES = SUMMARY_KEYS


# --------------------------------------------------------------------------- tagger alone


class PlainMention(NamedTuple):
    """A mention from the tagger alone: no linker and no stance.

    Its concept is that of a dictionary match with exactly its span, else ``None``.
    """

    start: int
    end: int
    confidence: float
    concept: str | None = None
    link_prob: float = 0.0
    stance: str | None = None
    stance_prob: float = 0.0


class PlainPrediction(NamedTuple):
    """The tagger-alone counterpart of ``modeling.SentencePrediction``."""

    mentions: list[PlainMention]
    tagged: TagResult


class TaggerOnly:
    """The CRF tagger of :class:`~extractor.models.bundle.TraitModels` without linker or stance.

    Features of a sentence depend only on its text, the dictionary and the clusters,
    which stay fixed during a simulation, so they are computed once per sentence ID.

    Args:
        tagger_params: Keyword arguments of :func:`extractor.models.tagger_training.fit_tagger`.
    """

    def __init__(self, *, tagger_params: dict[str, Any] | None = None) -> None:
        self.tagger_params = tagger_params or {}
        self._cache: dict[int, Any] = {}

    def fit(
        self,
        gold: Sequence[tuple[Sentence, Sequence[Span]]],
        corpus: Sequence[Sentence],
        aliases: Sequence[Alias],
        *,
        clusters: dict[str, Any] | None = None,
    ) -> TaggerOnly:
        """Train the tagger on the gold sentences (and dictionary-labeled silver ones)."""
        from extractor.nlp.dictionary import build_dictionary

        if not gold and not aliases:
            raise InputError("The tagger needs labeled sentences or aliases to train on.")
        self.dictionary_ = build_dictionary(aliases) if aliases else None
        self.clusters_ = clusters
        labeled = {s.id for s, _ in gold}
        silver = [s for s in corpus if s.id not in labeled] if aliases else []
        self.tagger_ = fit_tagger(gold, silver, self.dictionary_, clusters, **self.tagger_params)
        return self

    def share_cache(self, cache: dict[int, Any]) -> TaggerOnly:
        """Use a feature cache shared with other instances (same dictionary and clusters)."""
        self._cache = cache
        return self

    def predict(self, sentences: Sequence[Sentence]) -> list[PlainPrediction]:
        """Tag sentences; mentions carry the tagger's confidence only."""
        for s in sentences:
            if s.id not in self._cache:
                self._cache[s.id] = sentence_items(s, self.dictionary_, self.clusters_)
        paths = self.tagger_.predict([self._cache[s.id][1] for s in sentences])
        out = []
        for s, path in zip(sentences, paths, strict=True):
            offsets, _, matches = self._cache[s.id]
            # As in tag_sentences: a span that is exactly a dictionary match takes its concept.
            concepts = {(m.start, m.end): m.concept for m in matches}
            spans = [
                sp._replace(concept=concepts.get((sp.start, sp.end)))
                for sp in iob_to_spans(offsets, path.tags)
            ]
            result = TagResult(spans, offsets, path.tags, path.marginals, path.probability)
            out.append(
                PlainPrediction(
                    [
                        PlainMention(sp.start, sp.end, span_confidence(result, sp), sp.concept)
                        for sp in result.spans
                    ],
                    result,
                )
            )
        return out


def make_models(kind: str, params: Mapping[str, Any] | None = None) -> Any:
    """Return an unfitted model of the given kind (one of :data:`MODELS`).

    Raises:
        InputError: ``kind`` is not one of :data:`MODELS`.
    """
    if kind == "tagger":
        return TaggerOnly(**(params or {}))
    if kind == "traits":
        from extractor.models.bundle import TraitModels

        return TraitModels(**(params or {}))
    raise InputError(f"The model must be one of {', '.join(MODELS)}; got {kind!r}.")


# --------------------------------------------------------------------------- one run


def pool_item(prediction: Any) -> active.PoolItem:
    """Return what the query strategies need from one model prediction."""
    tagged = prediction.tagged
    link = [
        {m.concept or "(unlinked)": float(m.link_prob)}
        for m in prediction.mentions
        if m.concept is not None or m.link_prob
    ]
    stance = [{m.stance: float(m.stance_prob)} for m in prediction.mentions if m.stance]
    return active.PoolItem(
        marginals=tagged.marginals,
        path_prob=float(tagged.probability),
        n_tokens=len(tagged.token_offsets),
        link_dists=link,
        stance_dists=stance,
    )


class _Shared(NamedTuple):
    pool: list[tuple[Sentence, list[Span]]]
    test: list[tuple[Sentence, list[Span]]]
    aliases: list[Alias]
    clusters: dict[str, Any] | None
    model: str
    model_params: dict[str, Any]
    vectors: np.ndarray | None
    density: np.ndarray | None
    tokens: list[int]


_SHARED: _Shared | None = None


def _init_worker(shared: _Shared) -> None:
    global _SHARED
    _SHARED = shared


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


def _fit(shared: _Shared, labeled: Sequence[int], cache: dict[int, Any]) -> Any:
    model = make_models(shared.model, shared.model_params)
    if isinstance(model, TaggerOnly):
        model.share_cache(cache)
    gold = [shared.pool[i] for i in labeled]
    corpus = [s for s, _ in shared.pool] + [s for s, _ in shared.test]
    return model.fit(gold, corpus, shared.aliases, clusters=shared.clusters)


def _record(
    task: _Task,
    budget: int,
    labeled: Sequence[int],
    figures: Mapping[str, Any],
    shared: _Shared,
    started: float,
) -> dict[str, Any]:
    return {
        "strategy": task.strategy, "budget": budget, "repeat": task.repeat,
        "labeled_sentences": len(labeled),
        "labeled_tokens": sum(shared.tokens[i] for i in labeled),
        **{k: figures.get(k) for k in FIGURES},
        "seconds": round(time.perf_counter() - started, 2),
    }  # fmt: skip


def _figures(model: Any, shared: _Shared) -> dict[str, Any]:
    preds = model.predict([s for s, _ in shared.test])
    return summary(score(shared.test, predicted_mentions(preds)))


def _run(task: _Task) -> list[dict[str, Any]]:
    shared = _SHARED
    if shared is None:
        raise InputError("The simulation worker was started without its data.")
    started = time.perf_counter()
    strategy = task.spec
    rng = random.Random(task.seed * 1000 + task.repeat)
    order = list(range(len(shared.pool)))
    rng.shuffle(order)
    seed_set = order[: task.seed_size]
    budgets = sorted(task.budgets)
    cache: dict[int, Any] = {}
    records = []
    if 0 in budgets:
        figures = (
            _figures(_fit(shared, [], cache), shared) if shared.aliases else dict.fromkeys(FIGURES)
        )
        records.append(_record(task, 0, [], figures, shared, started))
    top = budgets[-1]
    labeled = seed_set[: min(task.seed_size, top)]
    for budget in budgets:
        if 0 < budget <= len(labeled):
            model = _fit(shared, labeled[:budget], cache)
            records.append(
                _record(task, budget, labeled[:budget], _figures(model, shared), shared, started)
            )
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
        want = min(task.batch_size, next_budget - len(labeled))
        taken = set(labeled)
        exclude = {k for k, i in enumerate(scored) if i in taken}
        vectors = shared.vectors[scored] if shared.vectors is not None else None
        labeled_vectors = shared.vectors[labeled] if shared.vectors is not None else None
        picked = active.select(
            scores,
            vectors,
            want,
            diversity=strategy.diversity,
            exclude=exclude,
            labeled_vectors=labeled_vectors,
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
                records.append(
                    _record(task, len(labeled), labeled, _figures(model, shared), shared, started)
                )
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
    dens = shared.density[unlabeled] if shared.density is not None else None
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
) -> dict[str, Any]:
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
        ``{"settings": {...}, "runs": [{"strategy", "budget", "repeat",
        "labeled_sentences", "labeled_tokens", "span_f1", "span_concept_f1",
        "stance_accuracy", "respondent_f1", "seconds"}]}``; ``seconds`` is the run's
        time up to that budget.

    Raises:
        InputError: A strategy or model is unknown, or a number is out of range.
    """
    chosen = [active.get_strategy(n) for n in strategies]
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
    pool_gold = to_gold(pool, first_id=0)
    test_gold = to_gold(test, first_id=len(pool_gold))
    if clusters is None:
        from extractor.nlp.clusters import learn_clusters

        clusters = learn_clusters([(s.text, s.lang) for s, _ in pool_gold + test_gold], seed=seed)
    need_vectors = any(s.diversity or s.density_beta for s in chosen)
    vectors = (
        active.sentence_vectors([s.text for s, _ in pool_gold], seed=seed) if need_vectors else None
    )
    dens = (
        active.density(vectors)
        if vectors is not None and any(s.density_beta for s in chosen)
        else None
    )
    from extractor.nlp.text import tokenize

    shared = _Shared(
        pool_gold,
        test_gold,
        list(aliases),
        clusters,
        model,
        model_params or {},
        vectors,
        dens,
        [len(tokenize(s.text, s.lang)) for s, _ in pool_gold],
    )
    tasks = [
        _Task(
            name,
            spec,
            r,
            tuple(sorted(set(budgets))),
            seed,
            seed_size,
            batch_size,
            retrain_every,
            subpool,
        )
        for r in range(repeats)
        for name, spec in zip(strategies, chosen, strict=True)
    ]
    results: list[list[dict[str, Any]]] = [[] for _ in tasks]
    if jobs > 1:
        # "spawn", not fork: a forked child inherits the parent's BLAS/OpenMP thread
        # state (k-means, SVD) and can hang on its first threaded call.
        with ProcessPoolExecutor(
            max_workers=jobs,
            mp_context=get_context("spawn"),
            initializer=_init_worker,
            initargs=(shared,),
        ) as executor:
            futures = {executor.submit(_run, t): k for k, t in enumerate(tasks)}
            for future in track(as_completed(futures), "Simulating runs", len(tasks)):
                results[futures[future]] = future.result()
    else:
        _init_worker(shared)
        for k, t in track(enumerate(tasks), "Simulating runs", len(tasks)):
            results[k] = _run(t)
    settings = {
        "strategies": list(strategies), "budgets": sorted(set(budgets)), "repeats": repeats,
        "seed": seed, "batch_size": batch_size, "retrain_every": retrain_every,
        "seed_size": seed_size, "subpool": subpool, "model": model,
        "model_params": model_params or {}, "pool_size": len(pool_gold),
        "test_size": len(test_gold), "aliases": len(aliases),
        "strategy_settings": {n: _describe(s) for n, s in zip(strategies, chosen, strict=True)},
    }  # fmt: skip
    return {"settings": settings, "runs": [r for rs in results for r in rs]}


def _describe(strategy: active.Strategy) -> dict[str, Any]:
    return {
        "score": getattr(strategy.score, "__name__", repr(strategy.score)),
        "density_beta": strategy.density_beta,
        "diversity": strategy.diversity,
    }


def curve_table(results: Mapping[str, Any], figure: str = "span_f1") -> list[dict[str, Any]]:
    """Return mean, sd, min and max of a figure per strategy and budget, over repeats."""
    groups: dict[tuple[str, int], list[dict[str, Any]]] = {}
    for run in results["runs"]:
        groups.setdefault((run["strategy"], run["budget"]), []).append(run)
    rows = []
    for (strategy, budget), runs in sorted(groups.items()):
        values = [r[figure] for r in runs if r[figure] is not None]
        rows.append({
            "strategy": strategy, "budget": budget, "n": len(values),
            "mean": statistics.fmean(values) if values else None,
            "sd": statistics.stdev(values) if len(values) > 1 else (0.0 if values else None),
            "min": min(values) if values else None, "max": max(values) if values else None,
            "labeled_tokens": statistics.fmean(r["labeled_tokens"] for r in runs),
        })  # fmt: skip
    return rows


def paired_gain(
    results: Mapping[str, Any], *, baseline: str = "random", figure: str = "span_f1"
) -> list[dict[str, Any]]:
    """Return each strategy's gain over ``baseline`` per budget, paired by repeat.

    Repeat ``r`` of every strategy starts from the same seed sentences, so the difference
    ``figure(strategy, r) - figure(baseline, r)`` removes the luck of the seed draw that both
    share; its mean over repeats is the gain, its standard deviation the spread, and
    ``wins`` counts repeats where the strategy did better. Empty when ``baseline`` was not run.
    """
    values: dict[tuple[str, int, int], float] = {
        (r["strategy"], r["budget"], r["repeat"]): r[figure]
        for r in results["runs"]
        if r.get(figure) is not None
    }
    pairs: dict[tuple[str, int], list[float]] = {}
    for (strategy, budget, repeat), value in sorted(values.items()):
        base = values.get((baseline, budget, repeat))
        if strategy != baseline and base is not None:
            pairs.setdefault((strategy, budget), []).append(value - base)
    return [{
        "strategy": strategy, "budget": budget, "n": len(diffs),
        "gain": statistics.fmean(diffs),
        "sd": statistics.stdev(diffs) if len(diffs) > 1 else 0.0,
        "wins": sum(d > 0 for d in diffs),
    } for (strategy, budget), diffs in sorted(pairs.items())]  # fmt: skip


def plot(results: Mapping[str, Any], path: Path, *, figure: str = "span_f1") -> Path:
    """Draw the figure against labeled sentences and against labeled tokens, to ``path``.

    One line per strategy (mean over repeats) with a min-max band.
    """
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    rows = [r for r in curve_table(results, figure) if r["mean"] is not None]
    fig, axes = plt.subplots(1, 2, figsize=(11, 4.2), sharey=True)
    for strategy in sorted({r["strategy"] for r in rows}):
        mine = sorted((r for r in rows if r["strategy"] == strategy), key=lambda r: r["budget"])
        for ax, x_key in zip(axes, ("budget", "labeled_tokens"), strict=True):
            xs = [r[x_key] for r in mine]
            ax.plot(xs, [r["mean"] for r in mine], marker="o", label=strategy)
            ax.fill_between(xs, [r["min"] for r in mine], [r["max"] for r in mine], alpha=0.15)
    axes[0].set_xlabel("labeled sentences")
    axes[1].set_xlabel("labeled tokens (mean over repeats)")
    axes[0].set_ylabel(figure.replace("_", " "))
    axes[1].legend(loc="lower right", fontsize="small")
    fig.suptitle("Learning curves: mean over repeats, band = min to max")
    fig.tight_layout()
    path.parent.mkdir(parents=True, exist_ok=True)
    fig.savefig(path, dpi=120)
    plt.close(fig)
    return path
