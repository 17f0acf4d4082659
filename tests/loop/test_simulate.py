"""The simulated annotator: well-formed learning-curve records, nulls, determinism, plot."""

from __future__ import annotations

import json
import random
from pathlib import Path
from typing import Any

import pytest

from extractor.errors import InputError
from extractor.loop.simulate import curve_table, paired_gain, plot, simulate

KEYS = {
    "strategy",
    "budget",
    "repeat",
    "labeled_sentences",
    "labeled_tokens",
    "span_f1",
    "span_concept_f1",
    "stance_accuracy",
    "respondent_f1",
    "seconds",
}

TRAITS = ["soft grain", "short cooking", "sweet taste", "big seeds", "few stones"]
FILLERS = ["At Lomara market", "My neighbour Teodin says", "Last season", "In Vesk village"]


def toy_records(n: int, seed: int, concepts: bool = False) -> list[dict[str, Any]]:
    """Invented sentences "<filler> we like the <trait> of Zanobi." with the trait marked."""
    rng = random.Random(seed)
    out = []
    for i in range(n):
        filler = rng.choice(FILLERS)
        if i % 4 == 3:
            out.append(
                {
                    "text": f"{filler} we sold the beans.",
                    "lang": "en",
                    "spans": [],
                    "respondent": f"R{i % 7}",
                }
            )
            continue
        k = rng.randrange(len(TRAITS))
        text = f"{filler} we like the {TRAITS[k]} of Zanobi."
        start = text.index(TRAITS[k])
        span = {"start": start, "end": start + len(TRAITS[k])}
        if concepts:
            span |= {"concept": f"ZZ:{k}", "stance": "liked"}
        out.append({"text": text, "lang": "en", "spans": [span], "respondent": f"R{i % 7}"})
    return out


def run(**overrides: Any) -> dict[str, Any]:
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
    runs = results["runs"]
    assert len(runs) == 3 * 3  # strategies x budgets
    json.dumps(results)  # JSON-able
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
    (record,) = results["runs"]
    # Every trait of the toy test set is an alias, so the dictionary alone finds them,
    # with their concepts; the tagger alone gives no stance.
    assert record["span_f1"] == pytest.approx(1.0)
    assert record["span_concept_f1"] == pytest.approx(1.0)
    assert record["stance_accuracy"] is None


def test_seed_sentences_are_shared_by_strategies() -> None:
    runs = run(budgets=[5])["runs"]
    assert len({r["labeled_tokens"] for r in runs}) == 1
    assert len({r["span_f1"] for r in runs}) == 1


def test_parallel_runs_equal_serial_runs() -> None:
    def strip(results: dict[str, Any]) -> list[dict[str, Any]]:
        return [{k: v for k, v in r.items() if k != "seconds"} for r in results["runs"]]

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


def test_curve_table_and_plot(tmp_path: Path) -> None:
    results = {"runs": [
        {"strategy": "random", "budget": 10, "repeat": r, "labeled_tokens": 100 + r,
         "span_f1": f} for r, f in enumerate([0.5, 0.7])]}  # fmt: skip
    (row,) = curve_table(results)
    # Hand arithmetic: mean (0.5 + 0.7) / 2 = 0.6; sd of two values = |0.7 - 0.5| / sqrt 2.
    assert row["mean"] == pytest.approx(0.6)
    assert row["sd"] == pytest.approx(0.2 / 2**0.5)
    assert (row["min"], row["max"]) == (0.5, 0.7)
    path = plot(results, tmp_path / "curve.png")
    assert path.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


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


def test_paired_gain_pairs_repeats() -> None:
    runs = [
        {"strategy": s, "budget": 100, "repeat": r, "span_f1": f}
        for s, fs in (("random", [0.60, 0.65, 0.70]), ("default", [0.63, 0.64, 0.75]))
        for r, f in enumerate(fs)
    ]
    runs.append({"strategy": "default", "budget": 200, "repeat": 0, "span_f1": 0.8})  # no pair
    (row,) = paired_gain({"runs": runs})
    # Hand arithmetic: differences 0.03, -0.01, 0.05; mean 0.07 / 3; squared deviations
    # sum to 0.0018667, so sd = sqrt(0.0018667 / 2) = 0.030551; two of three positive.
    assert row["strategy"] == "default" and row["budget"] == 100 and row["n"] == 3
    assert row["gain"] == pytest.approx(0.07 / 3)
    assert row["sd"] == pytest.approx(0.030551, abs=1e-6)
    assert row["wins"] == 2
    assert paired_gain({"runs": runs}, baseline="absent") == []
