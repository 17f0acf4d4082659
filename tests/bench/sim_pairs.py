r"""Paired figures of a ``traits simulate`` results file: decodings and strategies, by repeat.

Not part of the test suite. Run from the repository root on the JSON that
``traits simulate --out`` wrote:

    .venv/bin/python tests/bench/sim_pairs.py mams.json [--against random]

Prints one JSON line per strategy and budget: span F1 mean and sd over repeats; the
gain in points of the tool's decoding over the tagger's best path alone
(``span_f1_best_path``: both read from the same model, trained on the same labels, so
the pairing is exact; absent where the model did not decode for recall); and the gain
over the ``--against`` strategy's same repeat, with the tool's decoding and with the best
path alone. A gain is its mean, sd, repeats won and worst repeat.

``--baseline OTHER.json`` also pairs each strategy with the same strategy's same repeat in
another results file (``vs_baseline``), e.g. a model change against the main branch's run
of the same command: repeats draw their seed sentences from the same seeds, so the pairing
holds by repeat (exactly for ``random``, whose picks do not depend on the model).
"""

from __future__ import annotations

import argparse
import json
import statistics
from pathlib import Path
from typing import Any


def paired(new: list[float], old: list[float]) -> dict[str, Any]:
    """Return the mean gain in points, its sd, repeats won and the worst repeat's gain."""
    gains = [100 * (a - b) for a, b in zip(new, old, strict=True)]
    return {
        "gain_pt": round(statistics.fmean(gains), 2),
        "sd_pt": round(statistics.stdev(gains), 2) if len(gains) > 1 else 0.0,
        "won": sum(g > 0 for g in gains),
        "worst_pt": round(min(gains), 2),
    }


def main() -> None:
    """Print the paired figures of every strategy and budget."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("results", help="JSON written by traits simulate --out")
    parser.add_argument("--against", default="random", help="strategy to pair with")
    parser.add_argument("--baseline", help="another results file to pair with, by repeat")
    args = parser.parse_args()
    table = _table(args.results)
    baseline = _table(args.baseline) if args.baseline else {}
    for (strategy, budget), by_repeat in sorted(table.items()):
        repeats = sorted(by_repeat)
        f1 = [by_repeat[r]["span_f1"] or 0.0 for r in repeats]
        path = [by_repeat[r].get("span_f1_best_path") for r in repeats]
        best = [p if p is not None else f for p, f in zip(path, f1, strict=True)]
        line: dict[str, Any] = {
            "strategy": strategy,
            "budget": budget,
            "n": len(repeats),
            "f1": round(statistics.fmean(f1), 4),
            "sd": round(statistics.stdev(f1), 4) if len(f1) > 1 else 0.0,
            "f1_best_path": round(statistics.fmean(best), 4),
        }
        if any(p is not None for p in path):
            line["decoding_gain"] = paired(f1, best)
        other = table.get((args.against, budget))
        if strategy != args.against and other and sorted(other) == repeats:
            base = [other[r]["span_f1"] or 0.0 for r in repeats]
            base_path = [
                other[r].get("span_f1_best_path") or other[r]["span_f1"] or 0.0 for r in repeats
            ]
            line["vs_" + args.against] = paired(f1, base)
            line["vs_" + args.against + "_best_path"] = paired(best, base_path)
        before = baseline.get((strategy, budget))
        if before and sorted(before) == repeats:
            line["baseline_f1"] = round(
                statistics.fmean(before[r]["span_f1"] or 0.0 for r in repeats), 4
            )
            line["vs_baseline"] = paired(f1, [before[r]["span_f1"] or 0.0 for r in repeats])
            before_path = [
                before[r].get("span_f1_best_path") or before[r]["span_f1"] or 0.0 for r in repeats
            ]
            line["vs_baseline_best_path"] = paired(best, before_path)
        print(json.dumps(line))


def _table(path: str) -> dict[tuple[str, int], dict[int, dict[str, Any]]]:
    """Return a results file's runs by strategy and budget, then by repeat."""
    table: dict[tuple[str, int], dict[int, dict[str, Any]]] = {}
    for run in json.loads(Path(path).read_text(encoding="utf-8"))["runs"]:
        table.setdefault((run["strategy"], run["budget"]), {})[run["repeat"]] = run
    return table


if __name__ == "__main__":
    main()
