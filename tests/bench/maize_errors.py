"""Where our maize answers' respondent triples are lost, by cause, with bounds.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/maize_errors.py [--folds 0] [--seed 0] [--list CAUSE,...]

The predictions are those of ``maize_cv.py``: at 0 labels (the default, the cold start of
every new study), or pooled over ``--folds`` folds by respondent. The causes and bounds
are those of ``demo_errors.py`` (the same code; maize has no implicit traits). A false
triple on no gold mention (``fp_no_gold_span``) is marked ``alias`` when its words are an
alias of the concept list as written: an alias word used as a plain word, or a trait the
labels left out.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
from tests import maize  # noqa: E402
from tests.bench.demo_errors import bounds, classify, summary  # noqa: E402
from tests.bench.maize_cv import predict  # noqa: E402


def main() -> None:
    """Predict our maize labels' answers and print the lost triples by cause as JSON."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--folds", type=int, default=0, help="0: no label (the default)")
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument(
        "--list", default="", help="causes whose triples are listed, comma-separated"
    )
    args = parser.parse_args()
    sentences, gold, zero, pooled = predict(args.folds, args.seed)
    pred = pooled if args.folds else zero
    lost = classify(sentences, gold, [[] for _ in sentences], pred)
    loaded = maize.load_workspace()
    aliases = {text.lower() for _, text, _ in loaded[2]} if loaded else set()
    for item in lost.get("fp_no_gold_span", []):
        item["alias"] = item["words"].lower() in aliases
    figures = summary(lost, bounds(sentences, gold, gold, pred), args.list)
    figures["fp_no_gold_span_alias"] = sum(i["alias"] for i in lost.get("fp_no_gold_span", []))
    print(json.dumps(figures, indent=1, ensure_ascii=False))


if __name__ == "__main__":
    main()
