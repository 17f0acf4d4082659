"""Stance settings chosen on MAMS train alone: 3-fold cross-validation grouped by sentence.

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/stance_cv.py [--blocks clause,sentence DEFAULT ALL] \
        [--C 0.3] [--weight 1.0]

MAMS (Jiang et al., EMNLP-IJCNLP 2019, Apache-2.0; read in place from
``../shared/datasets/mams-atsa/``). The train split's gold spans are cut into three
folds by sentence (scikit-learn ``GroupKFold``), so the mentions of one sentence are
never on both sides; the test split is never read. Features are those of
:class:`~extractor.models.stance.StanceModel` (its sparse features and the blocks of
:func:`~extractor.models.stance_context.context_vectors`, computed once over every train
sentence with all its mentions), fitted with the same logistic regression. ``ALL`` names
every block of :data:`~extractor.models.stance_context.BLOCKS`, ``DEFAULT`` those of
:data:`~extractor.models.stance_context.DEFAULT_BLOCKS`. Prints mean accuracy
and the three folds per setting.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np
import scipy.sparse as sp_sparse
from sklearn.feature_extraction import DictVectorizer
from sklearn.linear_model import LogisticRegression
from sklearn.model_selection import GroupKFold

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.models.cue_file import packaged_cues  # noqa: E402
from extractor.models.stance import _model_features  # noqa: E402
from extractor.models.stance_context import (  # noqa: E402
    BLOCKS,
    DEFAULT_BLOCKS,
    context_vectors,
)
from extractor.nlp import pretrained  # noqa: E402
from tests.bench.mams_stance import triples  # noqa: E402


def main() -> None:
    """Print the figures."""
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--blocks", nargs="+", default=["clause,sentence", "DEFAULT", "ALL"])
    parser.add_argument("--C", nargs="+", type=float, default=[0.3])
    parser.add_argument("--weight", nargs="+", type=float, default=[1.0])
    args = parser.parse_args()
    train = triples("train")
    space = pretrained.load_space()
    if space is None:
        sys.exit(f"The pretrained space {pretrained.DEFAULT!r} is not installed.")
    cues = packaged_cues()
    started = time.perf_counter()
    sparse = [_model_features(s, sp, cues, None) for s, sp, _ in train]
    dense = context_vectors(space, [(s, sp) for s, sp, _ in train], cues)
    print(f"MAMS train {len(train)} spans; features in {time.perf_counter() - started:.0f} s")
    labels = np.array([y for *_, y in train])
    groups = np.array([s.id for s, _, _ in train])
    folds = list(GroupKFold(3).split(sparse, labels, groups))
    for spec in args.blocks:
        named = {"ALL": BLOCKS, "DEFAULT": DEFAULT_BLOCKS}
        names = named.get(spec, tuple(spec.split(",")))
        cols = np.hstack(
            [
                np.arange(BLOCKS.index(n) * space.dim, (BLOCKS.index(n) + 1) * space.dim)
                for n in names
            ]
        )
        for C in args.C:
            for weight in args.weight:
                accuracies = []
                for fit, held in folds:
                    vectorizer = DictVectorizer()
                    X_fit = sp_sparse.hstack(
                        [vectorizer.fit_transform([sparse[i] for i in fit]),
                         sp_sparse.csr_matrix(dense[np.ix_(fit, cols)] * weight)], format="csr"
                    )  # fmt: skip
                    X_held = sp_sparse.hstack(
                        [vectorizer.transform([sparse[i] for i in held]),
                         sp_sparse.csr_matrix(dense[np.ix_(held, cols)] * weight)], format="csr"
                    )  # fmt: skip
                    # The logistic regression of StanceModel.fit, with its settings.
                    model = LogisticRegression(C=C, max_iter=2000, tol=1e-3)
                    model.fit(X_fit, labels[fit])
                    accuracies.append(float(np.mean(model.predict(X_held) == labels[held])))
                print(
                    f"blocks {'+'.join(names)} C {C} weight {weight}: "
                    f"CV accuracy {np.mean(accuracies):.4f} "
                    f"(folds {' '.join(f'{a:.4f}' for a in accuracies)})",
                    flush=True,
                )


if __name__ == "__main__":
    main()
