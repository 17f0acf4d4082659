"""Learning curves: the records a simulation makes, their summaries and their plot.

:func:`extractor.loop.simulate.simulate` returns :class:`SimulationResults`: one
:class:`RunRecord` per strategy, repeat and budget. :func:`curve_table` summarises a
figure over repeats, :func:`paired_gain` compares each strategy with a baseline repeat
by repeat, and :func:`plot` draws the curves.
"""

from __future__ import annotations

import dataclasses
import statistics
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any


@dataclass(frozen=True)
class RunRecord:
    """The figures of one strategy's run, in one repeat, at one budget.

    Attributes:
        strategy: the strategy's name.
        budget: labeled sentences (seed included) at which the model was scored.
        repeat: the repeat number.
        labeled_sentences: sentences labeled so far.
        labeled_tokens: their tokens.
        span_f1: strict span F1 on the test set.
        span_concept_f1: span and concept F1 (None when the test gold has no concepts).
        stance_accuracy: stance accuracy (None when the model gives no stance).
        respondent_f1: per-respondent concept F1 (None when the test gold has no concepts).
        sentence_concept_f1: micro F1 of the concepts each test sentence states, from
            mentions and implicit traits together (:mod:`extractor.models.sentence_metrics`).
        sentence_stance_accuracy: stance accuracy on the sentence concepts found.
        respondent_f1_with_implicit: respondent-triple F1 counting mentions and implicit
            traits (None when the test gold has no concepts).
        span_f1_best_path: strict span F1 of the tagger's best path alone, where the
            model decodes for recall on few labels (:mod:`extractor.models.recall_decoding`;
            None where it does not).
        seconds: the run's time up to this budget.
    """

    strategy: str
    budget: int
    repeat: int
    labeled_sentences: int = 0
    labeled_tokens: int = 0
    span_f1: float | None = None
    span_concept_f1: float | None = None
    stance_accuracy: float | None = None
    respondent_f1: float | None = None
    sentence_concept_f1: float | None = None
    sentence_stance_accuracy: float | None = None
    respondent_f1_with_implicit: float | None = None
    span_f1_best_path: float | None = None
    seconds: float = 0.0

    def figure(self, name: str) -> float | None:
        """Return the figure called ``name`` (``"span_f1"``...)."""
        value = getattr(self, name)
        return None if value is None else float(value)


@dataclass(frozen=True)
class SimulationSettings:
    """What a simulation was run with, recorded beside its runs."""

    strategies: list[str]
    budgets: list[int]
    repeats: int
    seed: int
    batch_size: int
    retrain_every: int
    seed_size: int
    subpool: int | None
    model: str
    model_params: dict[str, Any]
    pool_size: int
    test_size: int
    aliases: int
    strategy_settings: dict[str, dict[str, Any]] = field(default_factory=dict)


@dataclass(frozen=True)
class SimulationResults:
    """A simulation's settings and every run record."""

    settings: SimulationSettings | None
    runs: tuple[RunRecord, ...]

    def to_dict(self) -> dict[str, Any]:
        """Return the results as JSON-ready data: ``{"settings": {...}, "runs": [{...}]}``."""
        settings = None if self.settings is None else dataclasses.asdict(self.settings)
        return {"settings": settings, "runs": [dataclasses.asdict(r) for r in self.runs]}


@dataclass(frozen=True)
class CurveRow:
    """One figure's summary over repeats, for one strategy at one budget."""

    strategy: str
    budget: int
    n: int
    mean: float | None
    sd: float | None
    min: float | None
    max: float | None
    labeled_tokens: float


@dataclass(frozen=True)
class GainRow:
    """A strategy's gain over the baseline at one budget, paired by repeat.

    Attributes:
        strategy: the strategy.
        budget: the budget.
        n: repeats where both were scored.
        gain: mean difference of the figure (strategy minus baseline).
        sd: standard deviation of the differences.
        wins: repeats where the strategy did better.
    """

    strategy: str
    budget: int
    n: int
    gain: float
    sd: float
    wins: int


def curve_table(results: SimulationResults, figure: str = "span_f1") -> list[CurveRow]:
    """Return mean, sd, min and max of a figure per strategy and budget, over repeats."""
    groups: dict[tuple[str, int], list[RunRecord]] = {}
    for run in results.runs:
        groups.setdefault((run.strategy, run.budget), []).append(run)
    rows = []
    for (strategy, budget), runs in sorted(groups.items()):
        values = [v for v in (r.figure(figure) for r in runs) if v is not None]
        rows.append(
            CurveRow(
                strategy=strategy,
                budget=budget,
                n=len(values),
                mean=statistics.fmean(values) if values else None,
                sd=statistics.stdev(values) if len(values) > 1 else (0.0 if values else None),
                min=min(values) if values else None,
                max=max(values) if values else None,
                labeled_tokens=statistics.fmean(r.labeled_tokens for r in runs),
            )
        )
    return rows


def paired_gain(
    results: SimulationResults, *, baseline: str = "random", figure: str = "span_f1"
) -> list[GainRow]:
    """Return each strategy's gain over ``baseline`` per budget, paired by repeat.

    Repeat ``r`` of every strategy starts from the same seed sentences, so the difference
    ``figure(strategy, r) - figure(baseline, r)`` removes the luck of the seed draw that both
    share; its mean over repeats is the gain, its standard deviation the spread, and
    ``wins`` counts repeats where the strategy did better. Empty when ``baseline`` was not run.
    """
    values: dict[tuple[str, int, int], float] = {}
    for r in results.runs:
        value = r.figure(figure)
        if value is not None:
            values[(r.strategy, r.budget, r.repeat)] = value
    pairs: dict[tuple[str, int], list[float]] = {}
    for (strategy, budget, repeat), value in sorted(values.items()):
        base = values.get((baseline, budget, repeat))
        if strategy != baseline and base is not None:
            pairs.setdefault((strategy, budget), []).append(value - base)
    return [
        GainRow(
            strategy=strategy,
            budget=budget,
            n=len(diffs),
            gain=statistics.fmean(diffs),
            sd=statistics.stdev(diffs) if len(diffs) > 1 else 0.0,
            wins=sum(d > 0 for d in diffs),
        )
        for (strategy, budget), diffs in sorted(pairs.items())
    ]


def plot(results: SimulationResults, path: Path, *, figure: str = "span_f1") -> Path:
    """Draw the figure against labeled sentences and against labeled tokens, to ``path``.

    One line per strategy (mean over repeats) with a min-max band.
    """
    # matplotlib is slow to import and only needed here
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    rows = [r for r in curve_table(results, figure) if r.mean is not None]
    fig, axes = plt.subplots(1, 2, figsize=(11, 4.2), sharey=True)
    for strategy in sorted({r.strategy for r in rows}):
        mine = _by_budget(rows, strategy)
        for ax, x_key in zip(axes, ("budget", "labeled_tokens"), strict=True):
            xs = [getattr(r, x_key) for r in mine]
            ax.plot(xs, [r.mean for r in mine], marker="o", label=strategy)
            ax.fill_between(xs, [r.min for r in mine], [r.max for r in mine], alpha=0.15)
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


def _by_budget(rows: Sequence[CurveRow], strategy: str) -> list[CurveRow]:
    return sorted((r for r in rows if r.strategy == strategy), key=lambda r: r.budget)
