r"""Write the pool and test files that `traits simulate` was run on to choose the default strategy.

Usage::

    .venv/bin/python tests/bench/sim_data.py OUT_FOLDER

writes, in the gold JSON Lines format that ``traits simulate`` and ``traits import-labels`` read:

* ``mams_train.jsonl`` and ``mams_test.jsonl``: the MAMS aspect-term data (open data in
  ``../shared/datasets/mams-atsa/``, never copied into the repository), one record per
  sentence, each its own respondent. A span overlapping an earlier one in the same sentence is
  dropped (IOB2 cannot hold both); the count is printed.
* ``demo_pool.jsonl`` and ``demo_test.jsonl``: the invented demo's ``gold.jsonl`` split by
  respondent, 80% of respondents to the pool, with a seeded shuffle, so that no respondent's
  answers are on both sides.

Then, for example::

    traits simulate --pool OUT/mams_train.jsonl --test OUT/mams_test.jsonl --model tagger \\
        --repeats 10 --jobs 2 --out mams.json --plot mams.png
"""

from __future__ import annotations

import argparse
import json
import random
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from tests.mams import SKIP_REASON, load_mams  # noqa: E402


def non_overlapping(spans: list[dict]) -> tuple[list[dict], int]:
    """Return the spans (sorted by start) minus those overlapping an earlier one; and how many."""
    kept, end, dropped = [], -1, 0
    for span in spans:
        if span["start"] < end:
            dropped += 1
            continue
        kept.append(span)
        end = span["end"]
    return kept, dropped


def write_mams(out: Path) -> None:
    """Write the MAMS train and test splits as gold JSON Lines."""
    for split in ("train", "test"):
        records = load_mams(split)
        if records is None:
            raise SystemExit(SKIP_REASON)
        dropped = 0
        with (out / f"mams_{split}.jsonl").open("w", encoding="utf-8") as f:
            for i, record in enumerate(records):
                spans, n = non_overlapping(record["mentions"])
                dropped += n
                row = {"respondent": f"mams-{split}-{i}", **record, "mentions": spans}
                f.write(json.dumps(row) + "\n")
        print(f"mams_{split}.jsonl: {len(records)} sentences, {dropped} overlapping spans dropped")


def write_demo(out: Path, *, share: float = 0.8, seed: int = 0) -> None:
    """Split the demo gold by respondent into a pool and a test file."""
    lines = (ROOT / "sample_interviews" / "gold.jsonl").read_text(encoding="utf-8").splitlines()
    gold = [json.loads(line) for line in lines if line.strip()]
    respondents = sorted({g["respondent"] for g in gold})
    random.Random(seed).shuffle(respondents)
    pool = set(respondents[: round(share * len(respondents))])
    with (
        (out / "demo_pool.jsonl").open("w", encoding="utf-8") as fp,
        (out / "demo_test.jsonl").open("w", encoding="utf-8") as ft,
    ):
        for g in gold:
            (fp if g["respondent"] in pool else ft).write(json.dumps(g, ensure_ascii=False) + "\n")
    n_pool = sum(g["respondent"] in pool for g in gold)
    print(
        f"demo: {len(pool)} of {len(respondents)} respondents to the pool; "
        f"{n_pool} pool and {len(gold) - n_pool} test sentences"
    )


def main() -> None:
    """Write the four files into the folder given on the command line."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out", type=Path, help="folder to write the four files into")
    args = parser.parse_args()
    args.out.mkdir(parents=True, exist_ok=True)
    write_mams(args.out)
    write_demo(args.out)


if __name__ == "__main__":
    main()
