r"""Screen what the tagger learns besides the labels, at few labels, on MAMS (open data).

Not part of the test suite. Run from the repository root:

    .venv/bin/python tests/bench/few_labels.py --sizes 100,200 --draws 4 \\
        '{}' '{"self_rounds": 1}' '{"max_iterations": 60}'

MAMS (``../shared/datasets/mams-atsa/``): word clusters (workspace and pretrained) are
learned from the text of all three splits without labels, as the tool learns them from a
workspace's answers. For each draw, a random subset of the train split (seeded by the
draw) is the labeled set and the rest of the train split is the unlabeled pool; strict
span F1 is scored on the val split, so that the test split stays for the simulation that
confirms a choice. Every setting sees the same subsets, so gains are paired by draw.

Each argument is a JSON dict: :class:`~extractor.models.tagger.TraitTagger` parameters,
plus the self-training keys of :func:`extractor.models.tagger_training.fit_tagger`, plus
two keys of this screen alone (not in the tool):

* ``"decode_threshold"``: spans read from the Viterbi path plus those of the tokens whose
  TRAIT probability (1 - P(O)) is at least this, where they overlap no Viterbi span
  (:func:`extractor.models.recall_decoding.recall_tags`). Without it the best path alone
  is read: the screen passes ``recall_threshold=None`` to ``fit_tagger`` unless the
  setting gives it, so the tool's decoding on few labels is this key's 0.3 (likewise
  ``axes_below=0`` unless given: ``{"axes_below": 1000}`` is the tool's few-label
  features, the words' coordinates on the pretrained axes that ``--axes`` sets, of
  length ``"axes_scale"``, default 1);
* ``"dense_dims"``: that many principal axes of the pretrained space's word vectors
  (centred, unit length, times ``"dense_scale"``, default 1) added to each token as
  weighted features; the tagger is then trained on the labelled sentences alone;
* ``"dense_bins"``: with ``"dense_dims"``, each dimension cut at its quantiles over the
  vocabulary into that many bins, given as ordinary attributes (``q3:1``) instead of
  the weighted features (``"dense_float"``: true keeps the weighted features too);
* ``"syntax"``: names or groups of ``tests/bench/syntax_attrs.py``, attributes from the
  tags and dependency parse of a packaged spaCy pipeline appended to every sentence's
  token attributes (training and val alike);
* ``"prior"``: a dict of :class:`Prior` settings (``{}`` for its defaults): a logistic
  regression (scikit-learn) on the words' full pretrained vectors predicts "token inside
  a span" from the labelled sentences; its out-of-fold probabilities (cross-fitted by
  sentence) are added to the labelled sentences' tokens, the probabilities of a model
  fitted on all of them to the val tokens, as weighted features (a stacked prior); the
  tagger is then trained on the labelled sentences alone, with the axes as
  ``axes_below`` says.
"""

from __future__ import annotations

import argparse
import json
import random
import statistics
import sys
import time
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

import numpy as np  # noqa: E402

from extractor.models import tagger_training  # noqa: E402
from extractor.models.crf_items import crf_tokens  # noqa: E402
from extractor.models.recall_decoding import recall_tags  # noqa: E402
from extractor.models.tagger import TagPath, TraitTagger, sentence_items  # noqa: E402
from extractor.models.tagger_training import fit_tagger  # noqa: E402
from extractor.nlp import features, pretrained  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.features import Attributes  # noqa: E402
from extractor.nlp.spans import iob_to_spans, span_prf, spans_to_iob  # noqa: E402
from extractor.nlp.text import tokenize  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402
from tests.bench import syntax_attrs  # noqa: E402
from tests.mams import load_mams  # noqa: E402

Gold = list[tuple[Sentence, list[Span]]]


def gold(split: str, first_id: int) -> Gold:
    """Return one MAMS split as sentences with their gold spans."""
    return [
        (
            Sentence(first_id + i, d["sentence"], d["lang"]),
            [Span(s["start"], s["end"]) for s in d["mentions"]],
        )
        for i, d in enumerate(load_mams(split) or [])
    ]


def recall_spans(offsets: list[tuple[int, int]], path: TagPath, threshold: float) -> list[Span]:
    """Return the Viterbi spans plus the runs of tokens with TRAIT probability >= threshold."""
    return iob_to_spans(offsets, recall_tags(path.tags, path.marginals, threshold))


class Dense:
    """Principal axes of the pretrained word vectors of a vocabulary, as weighted features."""

    def __init__(
        self, words: set[str], dims: int, scale: float, bins: int = 0, keep_float: bool = False
    ) -> None:
        space = pretrained.load_space()
        if space is None:
            sys.exit("dense_dims needs the pretrained space, which did not load.")
        vocab = sorted(words)
        vectors = space.words(vocab)
        vectors = vectors - vectors.mean(axis=0)
        _, _, axes = np.linalg.svd(vectors - vectors.mean(axis=0), full_matrices=False)
        rows = vectors @ axes[:dims].T
        rows = rows / np.linalg.norm(rows, axis=1, keepdims=True) * scale
        self.rows = dict(zip(vocab, rows.tolist(), strict=True))
        self.bins: dict[str, list[str]] = {}
        self.keep_float = keep_float or not bins
        if bins:
            cuts = np.quantile(rows, np.arange(1, bins) / bins, axis=0)  # (bins-1) x dims
            codes = (rows[:, None, :] > cuts[None, :, :]).sum(axis=1)
            self.bins = {
                w: [f"q{k}:{c}" for k, c in enumerate(row)]
                for w, row in zip(vocab, codes.tolist(), strict=True)
            }

    def features(self, words: list[str], attributes: list[Attributes]) -> list[dict[str, float]]:
        """Return each token's attributes (weight 1) and its dense dimensions."""
        out = []
        for word, attrs in zip(words, attributes, strict=True):
            row = {a.decode(): 1.0 for a in attrs}
            if self.keep_float:
                row.update({f"v{k}": v for k, v in enumerate(self.rows[word.lower()])})
            row.update({a: 1.0 for a in self.bins.get(word.lower(), ())})
            out.append(row)
        return out


class Prior:
    """A stacked word-level prior: logistic regression on pretrained word vectors (screen only).

    Settings: ``C`` (inverse regularisation, default 1), ``context`` (1: the vectors of
    the tokens either side are concatenated to the token's own), ``dims`` (0: the full
    vectors; else the centred vectors projected on that many main axes), ``folds`` (5),
    ``outputs`` (any of ``"p"``: the probability; ``"logit"``: the logit / 4, clipped to
    +-2; ``"nbr"``: the probabilities of the tokens at -1 and +1; ``"bins"``: the
    probability as one of three indicators cut at 0.2 and 0.5), ``scale`` (multiplies
    the floats, default 1), ``balanced`` (class weights balanced), ``target`` (``"span"``
    inside vs outside; ``"bio"``: three classes, giving P(B) and P(I) as ``pb``/``pi``).
    """

    def __init__(self, words: set[str], settings: dict[str, Any]) -> None:
        space = pretrained.load_space()
        if space is None:
            sys.exit("prior needs the pretrained space, which did not load.")
        vocab = sorted(words)
        matrix = space.words(vocab).astype(np.float64)
        dims = int(settings.get("dims", 0))
        if dims:
            matrix = pretrained.reduced(matrix - matrix.mean(axis=0), dims).astype(np.float64)
        self.index = {w: i for i, w in enumerate(vocab)}
        self.matrix = np.vstack([matrix, np.zeros((1, matrix.shape[1]))])  # last row: padding
        self.C = float(settings.get("C", 1.0))
        self.context = int(settings.get("context", 0))
        self.folds = int(settings.get("folds", 5))
        self.outputs = list(settings.get("outputs", ["p"]))
        self.scale = float(settings.get("scale", 1.0))
        self.balanced = bool(settings.get("balanced", False))
        self.target = settings.get("target", "span")

    def rows(self, words: list[str]) -> np.ndarray:
        """Return the LR input rows of one sentence's tokens."""
        ids = [self.index[w.lower()] for w in words]
        own = self.matrix[ids]
        if not self.context:
            return own
        pad = len(self.matrix) - 1
        prev = self.matrix[[pad] + ids[:-1]]
        nxt = self.matrix[ids[1:] + [pad]]
        return np.hstack([prev, own, nxt])

    def _model(self, X: np.ndarray, y: np.ndarray) -> Any:
        from sklearn.linear_model import LogisticRegression  # noqa: PLC0415

        weight = "balanced" if self.balanced else None
        return LogisticRegression(C=self.C, max_iter=2000, class_weight=weight).fit(X, y)

    def _labels(self, tags: list[str]) -> list[int]:
        if self.target == "bio":
            return [{"O": 0, "B-TRAIT": 1, "I-TRAIT": 2}[t] for t in tags]
        return [int(t != "O") for t in tags]

    def _probs(self, model: Any, X: np.ndarray) -> np.ndarray:
        """Return P(inside) per row (and P(B), P(I) for ``"bio"``)."""
        proba = model.predict_proba(X)
        classes = list(model.classes_)
        out = np.zeros((len(X), 3))
        for k, c in enumerate(classes):
            out[:, c] = proba[:, k]
        if self.target != "bio":
            return out[:, 1:2]
        return np.column_stack([out[:, 1] + out[:, 2], out[:, 1], out[:, 2]])

    def fit_score(
        self, labeled: list[tuple[list[str], list[str]]], others: list[list[str]]
    ) -> tuple[list[np.ndarray], list[np.ndarray]]:
        """Return out-of-fold probabilities of the labelled sentences, full-fit ones of others."""
        rows = [self.rows(w) for w, _ in labeled]
        ys = [np.asarray(self._labels(t)) for _, t in labeled]
        oof: list[np.ndarray] = [np.zeros((len(r), 1)) for r in rows]
        for fold in range(self.folds):
            train = [i for i in range(len(rows)) if i % self.folds != fold]
            held = [i for i in range(len(rows)) if i % self.folds == fold]
            model = self._model(
                np.vstack([rows[i] for i in train]), np.concatenate([ys[i] for i in train])
            )
            for i in held:
                oof[i] = self._probs(model, rows[i])
        model = self._model(np.vstack(rows), np.concatenate(ys))
        return oof, [self._probs(model, self.rows(w)) for w in others]

    def features(self, probs: np.ndarray) -> list[dict[bytes, float]]:
        """Return each token's prior features."""
        p = np.clip(probs[:, 0], 1e-6, 1 - 1e-6)
        out: list[dict[bytes, float]] = []
        for i, value in enumerate(p):
            row: dict[bytes, float] = {}
            if "p" in self.outputs:
                row[b"sp"] = self.scale * float(value)
            if "logit" in self.outputs:
                row[b"sl"] = self.scale * float(np.clip(np.log(value / (1 - value)) / 4, -2, 2))
            if "nbr" in self.outputs:
                if i > 0:
                    row[b"-1sp"] = self.scale * float(p[i - 1])
                if i + 1 < len(p):
                    row[b"+1sp"] = self.scale * float(p[i + 1])
            if "bins" in self.outputs:
                row[f"sb:{int(value >= 0.2) + int(value >= 0.5)}".encode()] = 1.0
            if "bi" in self.outputs and probs.shape[1] == 3:
                row[b"pb"] = self.scale * float(probs[i, 1])
                row[b"pi"] = self.scale * float(probs[i, 2])
            out.append(row)
        return out


def with_prior(feats: Any, extra: list[dict[bytes, float]]) -> list[dict[Any, float]]:
    """Return a sentence's tokens as ``{name: value}`` dicts with the prior's features added."""
    out = []
    for token, add in zip(crf_tokens(feats, {}), extra, strict=True):
        row: dict[Any, float] = (
            dict(token) if isinstance(token, dict) else dict.fromkeys(token, 1.0)
        )
        row.update(add)
        out.append(row)
    return out


def with_syntax(names: list[str], parses: dict[str, syntax_attrs.Parse]) -> Any:
    """Return ``sentence_items`` with the syntax attributes of templates ``names`` appended."""

    def items(sentence: Sentence, *args: Any, **kwargs: Any) -> Any:
        offsets, feats, matches = sentence_items(sentence, *args, **kwargs)
        extra = syntax_attrs.attributes(parses[sentence.text], names)
        if kwargs.get("axes"):
            feats = [(own, rest + e) for (own, rest), e in zip(feats, extra, strict=True)]
        else:
            feats = [f + e for f, e in zip(feats, extra, strict=True)]
        return offsets, feats, matches

    return items


def word_list(sentence: Sentence, offsets: list[tuple[int, int]]) -> list[str]:
    """Return the sentence's tokens as text."""
    return [sentence.text[a:b] for a, b in offsets]


def main() -> None:
    """Print one JSON line per setting and size: F1 per draw and paired gain over the first."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("settings", nargs="+", help="JSON dicts of fit_tagger parameters")
    parser.add_argument("--sizes", default="100,200")
    parser.add_argument("--draws", type=int, default=4)
    parser.add_argument("--pool", type=int, default=0, help="unlabeled pool size (0: all)")
    parser.add_argument("--axes", type=int, default=16, help="main axes of the clusters")
    args = parser.parse_args()
    if load_mams("train") is None:
        sys.exit("MAMS is not in ../shared/datasets/mams-atsa/; see tests/mams.py.")
    train = gold("train", 0)
    val = gold("val", len(train))
    test_text = [(d["sentence"], d["lang"]) for d in load_mams("test") or []]
    clusters = learn_clusters(
        [(s.text, s.lang) for s, _ in train + val] + test_text, space_axes=args.axes
    )
    settings = [json.loads(raw) for raw in args.settings]
    parses: dict[str, syntax_attrs.Parse] = {}
    if any(p.get("syntax") for p in settings):
        parses = syntax_attrs.parse([(s.text, s.lang) for s, _ in train + val] + test_text)
    words = {s.text[a:b].lower() for s, _ in train + val for a, b in tokenize(s.text, s.lang)}
    base: dict[tuple[int, int], float] = {}
    for raw in args.settings:
        params: dict[str, Any] = json.loads(raw)
        threshold = params.pop("decode_threshold", None)
        params.setdefault("recall_threshold", None)
        params.setdefault("axes_below", 0)
        dims, scale = params.pop("dense_dims", 0), params.pop("dense_scale", 1.0)
        bins, keep = params.pop("dense_bins", 0), params.pop("dense_float", False)
        features.AXES_SCALE = params.pop("axes_scale", 1.0)
        features._featurizer_in_use = features._Featurizer(None)  # words made afresh
        names = syntax_attrs.expand(params.pop("syntax", []))
        prior_settings = params.pop("prior", None)
        prior = Prior(words, prior_settings) if prior_settings is not None else None
        items = with_syntax(names, parses) if names else sentence_items
        tagger_training.sentence_items = items  # fit_tagger's features
        val_items = [items(s, None, clusters)[:2] for s, _ in val]
        val_axes = [items(s, None, clusters, axes=True)[1] for s, _ in val]
        val_words = [word_list(s, o) for (s, _), (o, _) in zip(val, val_items, strict=True)]
        dense = Dense(words, dims, scale, bins, keep) if dims else None
        val_X: list[Any] = [f for _, f in val_items]
        if dense is not None:
            val_X = [
                dense.features(word_list(s, o), f)
                for (s, _), (o, f) in zip(val, val_items, strict=True)
            ]
        for size in (int(x) for x in args.sizes.split(",")):
            scores, seconds = [], []
            for draw in range(args.draws):
                order = list(range(len(train)))
                random.Random(draw).shuffle(order)
                labeled = [train[i] for i in order[:size]]
                rest = [train[i][0] for i in order[size:]]
                if args.pool:
                    rest = rest[: args.pool]
                started = time.process_time()
                axes_on = 0 < size < params["axes_below"]
                if prior is not None:
                    lab_items = [items(s, None, clusters, axes=axes_on)[:2] for s, _ in labeled]
                    lab_words = [
                        word_list(s, o) for (s, _), (o, _) in zip(labeled, lab_items, strict=True)
                    ]
                    y = [
                        spans_to_iob(o, g)
                        for (o, _), (_, g) in zip(lab_items, labeled, strict=True)
                    ]
                    oof, val_probs = prior.fit_score(
                        list(zip(lab_words, y, strict=True)), val_words
                    )
                    X = [
                        with_prior(f, prior.features(p))
                        for (_, f), p in zip(lab_items, oof, strict=True)
                    ]
                    own = {k: v for k, v in params.items() if k != "axes_below"}
                    tagger = TraitTagger(**own).fit(X, y)
                    seconds.append(time.process_time() - started)
                    base_val = val_axes if axes_on else [f for _, f in val_items]
                    paths = tagger.predict(
                        [
                            with_prior(f, prior.features(p))
                            for f, p in zip(base_val, val_probs, strict=True)
                        ]
                    )
                elif dense is None:
                    tagger = fit_tagger(labeled, rest, None, clusters, **params)
                else:
                    X, y = [], []
                    for s, spans in labeled:
                        offsets, feats, _ = sentence_items(s, None, clusters)
                        X.append(dense.features(word_list(s, offsets), feats))
                        y.append(spans_to_iob(offsets, spans))
                    own = {k: v for k, v in params.items() if k != "axes_below"}
                    tagger = TraitTagger(**own).fit(X, y)
                if prior is None:
                    seconds.append(time.process_time() - started)
                    paths = tagger.predict(val_axes if tagger.space_axes else val_X)
                pred = [
                    iob_to_spans(o, p.tags) if threshold is None else recall_spans(o, p, threshold)
                    for (o, _), p in zip(val_items, paths, strict=True)
                ]
                scores.append(span_prf([g for _, g in val], pred).f1)
                if raw == args.settings[0]:
                    base[(size, draw)] = scores[-1]
            gains = [100 * (s - base[(size, d)]) for d, s in enumerate(scores)]
            row = {
                "params": json.loads(raw),
                "size": size,
                "f1": round(statistics.fmean(scores), 4),
                "sd": round(statistics.stdev(scores), 4) if len(scores) > 1 else 0.0,
                "gain_pt": round(statistics.fmean(gains), 2),
                "wins": sum(g > 0 for g in gains),
                "draws": [round(s, 4) for s in scores],
                "cpu_s": round(statistics.fmean(seconds), 1),
            }
            print(json.dumps(row), flush=True)


if __name__ == "__main__":
    main()
