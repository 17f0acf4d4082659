"""Learning-curve summaries: means and spreads over repeats, gains paired by repeat, the plot."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from extractor.loop.curves import (
    RunRecord,
    SimulationResults,
    curve_table,
    paired_gain,
    plot,
)

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # the PNG specification (ISO/IEC 15948), section 5.2


def _results(runs: list[RunRecord]) -> SimulationResults:
    return SimulationResults(settings=None, runs=tuple(runs))


def test_curve_table_summarises_repeats_as_numpy_does() -> None:
    f1 = [0.5, 0.7, 0.55]
    runs = [RunRecord("random", 10, r, labeled_tokens=100 + r, span_f1=f) for r, f in enumerate(f1)]
    (row,) = curve_table(_results(runs))
    # numpy is the outside reference: mean, sample standard deviation (ddof=1), extremes.
    assert (row.strategy, row.budget, row.n, row.min, row.max) == ("random", 10, 3, 0.5, 0.7)
    assert row.mean == pytest.approx(np.mean(f1))
    assert row.sd == pytest.approx(np.std(f1, ddof=1))
    assert row.labeled_tokens == pytest.approx(np.mean([100, 101, 102]))


def test_curve_table_leaves_missing_figures_out() -> None:
    runs = [RunRecord("random", 0, 0), RunRecord("random", 0, 1)]  # budget 0, no aliases
    (row,) = curve_table(_results(runs))
    assert (row.n, row.mean, row.sd, row.min, row.max) == (0, None, None, None, None)


def test_paired_gain_pairs_repeats() -> None:
    scores = {"random": [0.60, 0.65, 0.70], "default": [0.63, 0.64, 0.75]}
    runs = [RunRecord(s, 100, r, span_f1=f) for s, fs in scores.items() for r, f in enumerate(fs)]
    runs.append(RunRecord("default", 200, 0, span_f1=0.8))  # no pair
    (row,) = paired_gain(_results(runs))
    diffs = np.subtract(scores["default"], scores["random"])
    # numpy is the outside reference for the mean and sample sd (ddof=1) of the differences;
    # by hand: 0.03, -0.01, 0.05, so two of three repeats won.
    assert (row.strategy, row.budget, row.n, row.wins) == ("default", 100, 3, 2)
    assert row.gain == pytest.approx(float(np.mean(diffs)))
    assert row.sd == pytest.approx(float(np.std(diffs, ddof=1)))
    assert paired_gain(_results(runs), baseline="absent") == []


def test_results_to_dict_is_json_with_the_record_fields() -> None:
    record = RunRecord("default", 10, 0, 10, 120, 0.5, seconds=1.25)
    data = json.loads(json.dumps(_results([record]).to_dict()))
    assert data["settings"] is None
    assert data["runs"] == [
        {
            "strategy": "default",
            "budget": 10,
            "repeat": 0,
            "labeled_sentences": 10,
            "labeled_tokens": 120,
            "span_f1": 0.5,
            "span_concept_f1": None,
            "stance_accuracy": None,
            "respondent_f1": None,
            "sentence_concept_f1": None,
            "sentence_stance_accuracy": None,
            "respondent_f1_with_implicit": None,
            "span_f1_best_path": None,
            "seconds": 1.25,
        }
    ]


def test_plot_writes_a_png(tmp_path: Path) -> None:
    runs = [
        RunRecord("random", 10, r, labeled_tokens=100, span_f1=f) for r, f in enumerate([0.5, 0.7])
    ]
    path = plot(_results(runs), tmp_path / "curves" / "curve.png")
    assert path.read_bytes()[:8] == PNG_SIGNATURE
