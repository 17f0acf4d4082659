"""Learning curves from gold label files (`traits simulate`): read, simulate, write, plot."""

from __future__ import annotations

import json
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from extractor.ingest.concepts import load_concept_list
from extractor.ingest.labels import read_labels
from extractor.loop.curves import CurveRow, GainRow, curve_table, paired_gain, plot
from extractor.loop.simulate import simulate


@dataclass(frozen=True)
class SimulationReport:
    """A simulation's summary tables and the files it wrote."""

    curve: Sequence[CurveRow]
    """Span F1 per strategy and budget, over repeats (see ``loop.curves.curve_table``)."""
    gains: Sequence[GainRow]
    """Gain over random, paired by repeat (:func:`~extractor.loop.curves.paired_gain`)."""
    out: Path
    plot: Path | None


def simulate_files(
    pool: Path,
    test: Path,
    *,
    out: Path,
    concepts: Path | None = None,
    lang: str = "en",
    strategies: Sequence[str] = ("default", "random"),
    budgets: Sequence[int] = (0, 50, 100, 200),
    repeats: int = 3,
    seed: int = 0,
    batch_size: int = 5,
    jobs: int = 1,
    model: str = "traits",
    subpool: int | None = 500,
    plot_to: Path | None = None,
) -> SimulationReport:
    """Simulate labeling ``pool`` and scoring on ``test``; write the results as JSON to ``out``.

    Args:
        pool: gold labels the simulated annotator answers from.
        test: gold labels to score on.
        out: where the full results go (JSON).
        concepts: a concept list whose aliases the models start from.
        lang: language of records that name none.
        strategies: query strategy names.
        budgets: numbers of labeled sentences to score at.
        repeats: runs per strategy, each from its own seed sentences.
        seed: the random seed of the first repeat.
        batch_size: sentences queried together.
        jobs: runs in parallel.
        model: ``traits`` (every model) or ``tagger`` (the tagger alone).
        subpool: unlabeled sentences ranked after each retrain (None: the whole pool).
        plot_to: where to draw the learning curves (PNG), if anywhere.
    """
    pool_records = read_labels(pool, default_lang=lang)
    test_records = read_labels(test, default_lang=lang)
    aliases = []
    if concepts is not None:
        loaded = load_concept_list(concepts, default_lang=lang)
        aliases = [(a.concept_id, a.text, a.lang) for a in loaded.aliases]
    results = simulate(
        pool_records,
        test_records,
        aliases,
        strategies=strategies,
        budgets=budgets,
        repeats=repeats,
        seed=seed,
        batch_size=batch_size,
        jobs=jobs,
        model=model,
        subpool=subpool,
    )
    out.write_text(json.dumps(results.to_dict(), indent=1), encoding="utf-8")
    if plot_to is not None:
        plot(results, plot_to)
    return SimulationReport(curve_table(results), paired_gain(results), out, plot_to)
