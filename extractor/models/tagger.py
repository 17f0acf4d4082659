"""The BIO trait tagger: a linear-chain CRF (python-crfsuite) with token marginals.

:class:`TraitTagger` follows the scikit-learn estimator contract over feature
sequences (from :func:`extractor.nlp.features.sentence_features`) and IOB2 tags.
:func:`fit_tagger` and :func:`tag_sentences` do the plumbing from sentences, gold
spans, a dictionary and word clusters, so callers never build features themselves.

Silver data and its false negatives
-----------------------------------
Silver sentences are labelled by the dictionary, which is never complete: a trait
word it lacks is labelled ``O`` although it is a trait, and the CRF learns to miss
it. ``silver_filter`` chooses the remedy (see :data:`SILVER_FILTERS`):

* ``"all"``: every silver sentence as labelled (no remedy);
* ``"matched"``: only silver sentences with at least one dictionary match, since a
  sentence without any is as likely an unlisted trait as no trait at all;
* ``"gold-check"``: additionally drop silver sentences in which a model trained on
  the gold sentences gives a token outside the matches a TRAIT probability of at least
  ``silver_threshold`` (falls back to ``"matched"`` without gold);
* ``"self-train"`` (default): keep those sentences but add the gold model's confident
  spans to their labels (one round of self-training; falls back to ``"matched"``
  without gold).

Measured on MAMS aspect terms (200 gold train sentences, the other 4,097 train
sentences as silver from a dictionary of a random half of the train aspect terms;
strict span F1 on the test split; L-BFGS, c1=0.05, c2=0.01, 100 iterations, no
clusters): dictionary alone 0.478; gold only 0.650; gold +
silver with ``"all"`` 0.555, ``"matched"`` 0.554, ``"gold-check"`` 0.639,
``"self-train"`` 0.652. With the default SGD trainer (c2=2.0): gold only 0.659,
``"all"`` 0.545, ``"self-train"`` 0.669. Unremedied silver costs ten points or more;
self-training wins them back.

Silver sentences are featurised *without* dictionary features: their labels are the
dictionary, so the CRF would otherwise learn "dictionary says B, so B" and nothing
about the words. Gold sentences carry dictionary features, so the CRF learns from the
analyst's labels how far to trust the dictionary.
"""

from __future__ import annotations

import ctypes
import ctypes.util
import gc
import hashlib
import json
import tempfile
from collections.abc import Iterator, Mapping, Sequence
from contextlib import contextmanager
from pathlib import Path
from typing import Any, NamedTuple

import pycrfsuite

from extractor.errors import InputError, ModelError, NotFittedError
from extractor.nlp.dictionary import Dictionary
from extractor.nlp.features import Clusters, sentence_features
from extractor.nlp.spans import (
    OUTSIDE,
    iob_to_spans,
    repair_iob,
    spans_to_concepts,
    spans_to_iob,
)
from extractor.nlp.text import tokenize
from extractor.types import TAGS, Sentence, Span

FORMAT = "trait-extractor/crf-tagger"
VERSION = 1
MODEL_FILE = "tagger.crfsuite"
PARAMS_FILE = "tagger.json"
SILVER_FILTERS = ("all", "matched", "gold-check", "self-train")
ALGORITHMS = ("lbfgs", "l2sgd", "ap", "pa", "arow")
"""CRFsuite's training algorithms."""

Features = list[dict[str, str | float]]


class TagPath(NamedTuple):
    """The decoding of one sentence: best IOB2 path, token marginals, path probability."""

    tags: list[str]
    marginals: list[dict[str, float]]
    probability: float


class TagResult(NamedTuple):
    """A tagged sentence: spans, the tokens they were read from, and the model's confidence."""

    spans: list[Span]
    token_offsets: list[tuple[int, int]]
    tags: list[str]
    marginals: list[dict[str, float]]
    probability: float


class TraitTagger:
    """Linear-chain CRF over IOB2 tags ``O``, ``B-TRAIT``, ``I-TRAIT``.

    Args:
        c1: L1 regularisation (sparse weights).
        c2: L2 regularisation.
        max_iterations: Epochs of SGD, or L-BFGS iterations. 30 epochs scored 0.755 on MAMS
            test (100: 0.758, in 40% less time) and the same 0.560 span F1 in 5-fold
            cross-validation on the demo gold.
        min_freq: Ignore features seen fewer times in training.
        all_possible_transitions: Learn weights for unseen transitions too, so that
            ``O`` -> ``I-TRAIT`` gets a negative weight.
        algorithm: CRFsuite training algorithm, one of :data:`ALGORITHMS`; ``c1`` is
            used by ``lbfgs`` only and ``c2`` by ``lbfgs`` and ``l2sgd``. The default,
            SGD with L2 (``c2=2.0``, 30 epochs), scored about 0.755 strict span F1 on
            MAMS against 0.728-0.733 for L-BFGS at the settings tried, and trains faster.
        random_state: Seed of the C library's ``rand``, which CRFsuite's SGD uses to
            shuffle, so that the same data gives the same model.
    """

    def __init__(
        self,
        *,
        c1: float = 0.05,
        c2: float = 2.0,
        max_iterations: int = 30,
        min_freq: int = 0,
        all_possible_transitions: bool = True,
        algorithm: str = "l2sgd",
        random_state: int = 0,
    ) -> None:
        self.c1 = c1
        self.c2 = c2
        self.max_iterations = max_iterations
        self.min_freq = min_freq
        self.all_possible_transitions = all_possible_transitions
        self.algorithm = algorithm
        self.random_state = random_state

    def get_params(self) -> dict[str, Any]:
        """Return the constructor arguments, to record with a model version."""
        return {
            "c1": self.c1,
            "c2": self.c2,
            "max_iterations": self.max_iterations,
            "min_freq": self.min_freq,
            "all_possible_transitions": self.all_possible_transitions,
            "algorithm": self.algorithm,
            "random_state": self.random_state,
        }

    def fit(self, X: Sequence[Features], y: Sequence[Sequence[str]]) -> TraitTagger:
        """Train on feature sequences ``X`` and their IOB2 tag sequences ``y``.

        Weight a sentence by repeating it in ``X`` and ``y``.

        Raises:
            InputError: When there is nothing to train on, lengths differ or a tag is unknown.
        """
        _check_training_data(X, y)
        if self.algorithm not in ALGORITHMS:
            raise InputError(
                f"The tagger's algorithm must be one of {', '.join(ALGORITHMS)}; "
                f"got {self.algorithm!r}."
            )
        trainer = pycrfsuite.Trainer(algorithm=self.algorithm, verbose=False)
        params: dict[str, Any] = {
            "max_iterations": self.max_iterations,
            "feature.minfreq": self.min_freq,
            "feature.possible_transitions": self.all_possible_transitions,
        }
        if self.algorithm == "lbfgs":
            params["c1"] = self.c1
        if self.algorithm in ("lbfgs", "l2sgd"):
            params["c2"] = self.c2
        trainer.set_params(params)
        _seed_c_rand(self.random_state)
        for xseq, yseq in zip(X, y, strict=True):
            if len(xseq):
                trainer.append(xseq, list(yseq))
        with tempfile.TemporaryDirectory() as tmp:
            path = Path(tmp) / MODEL_FILE
            trainer.train(str(path))
            self.model_bytes_ = path.read_bytes()
        self.labels_ = self._open().labels()
        self.clusters_fingerprint_: str | None = None
        return self

    def _open(self) -> pycrfsuite.Tagger:
        tagger = pycrfsuite.Tagger()
        tagger.open_inmemory(self.model_bytes_)
        self._tagger = tagger
        return tagger

    def _fitted(self) -> pycrfsuite.Tagger:
        if not hasattr(self, "model_bytes_"):
            raise NotFittedError(
                "The trait tagger is not trained yet; "
                "call fit (or fit_tagger) or load a saved one first."
            )
        return self._tagger if hasattr(self, "_tagger") else self._open()

    def predict(self, X: Sequence[Features]) -> list[TagPath]:
        """Return the best tag path of each feature sequence, with marginals and probability.

        A stray ``I-TRAIT`` (after ``O`` or at the start) in CRFsuite's Viterbi path is
        repaired to ``B-TRAIT``. The probability is that of the Viterbi path itself, the
        model's confidence in its decision: the repaired path reads as the same spans
        (the lenient, conlleval reading of a stray ``I-``), and may even use a tag the
        model never learned.
        """
        tagger = self._fitted()
        labels = [t for t in TAGS if t in self.labels_]
        out = []
        for xseq in X:
            if not len(xseq):
                out.append(TagPath([], [], 1.0))
                continue
            tagger.set(xseq)
            viterbi = tagger.tag()
            marginals = _marginals(tagger, labels, len(xseq))
            out.append(TagPath(repair_iob(viterbi), marginals, tagger.probability(viterbi)))
        return out

    def save(self, folder: str | Path) -> None:
        """Write the CRFsuite model file and its JSON parameters into ``folder``."""
        self._fitted()
        folder = Path(folder)
        folder.mkdir(parents=True, exist_ok=True)
        (folder / MODEL_FILE).write_bytes(self.model_bytes_)
        meta = {
            "format": FORMAT,
            "version": VERSION,
            "params": self.get_params(),
            "labels": list(self.labels_),
            "clusters_fingerprint": self.clusters_fingerprint_,
            "sha256": hashlib.sha256(self.model_bytes_).hexdigest(),
        }
        (folder / PARAMS_FILE).write_text(json.dumps(meta, indent=2), encoding="utf-8")

    @classmethod
    def load(cls, folder: str | Path) -> TraitTagger:
        """Read a tagger written by :meth:`save`.

        Raises:
            ModelError: When a file is missing, corrupt, or not a trait tagger of this version.
        """
        folder = Path(folder)
        try:
            meta = json.loads((folder / PARAMS_FILE).read_text(encoding="utf-8"))
            model = (folder / MODEL_FILE).read_bytes()
        except (OSError, ValueError) as exc:
            raise ModelError(
                f"The tagger in {folder} cannot be read ({exc}); "
                "retrain it or pick another model version."
            ) from exc
        if (
            not isinstance(meta, dict)
            or meta.get("format") != FORMAT
            or meta.get("version") != VERSION
        ):
            raise ModelError(
                f"{folder / PARAMS_FILE} is not a {FORMAT} version {VERSION} file; "
                "retrain the tagger or pick another model version."
            )
        if hashlib.sha256(model).hexdigest() != meta.get("sha256"):
            raise ModelError(
                f"{folder / MODEL_FILE} does not match the checksum in {PARAMS_FILE}; "
                "it is corrupt or foreign, so retrain the tagger."
            )
        try:
            tagger = cls(**meta["params"])
        except TypeError as exc:
            raise ModelError(
                f"{folder / PARAMS_FILE} holds unknown tagger parameters ({exc}); "
                "retrain the tagger."
            ) from exc
        tagger.model_bytes_ = model
        try:
            tagger.labels_ = tagger._open().labels()
        except (ValueError, OSError) as exc:
            raise ModelError(
                f"{folder / MODEL_FILE} is not a CRFsuite model ({exc}); retrain the tagger."
            ) from exc
        if not set(tagger.labels_) <= set(TAGS):
            raise ModelError(
                f"{folder / MODEL_FILE} tags {sorted(tagger.labels_)}, not {', '.join(TAGS)}; "
                "it is a foreign model, so retrain the tagger."
            )
        tagger.clusters_fingerprint_ = meta.get("clusters_fingerprint")
        return tagger


def _seed_c_rand(seed: int) -> None:
    """Seed the C library's ``rand``; where no C library can be loaded, do nothing."""
    name = ctypes.util.find_library("c") or ctypes.util.find_library("msvcrt")
    try:
        libc = ctypes.CDLL(name)
        libc.srand(ctypes.c_uint(seed & 0xFFFFFFFF))
    except (OSError, AttributeError, TypeError):
        # Training still works, only without bit-for-bit reproducibility.
        return


def _check_training_data(X: Sequence[Features], y: Sequence[Sequence[str]]) -> None:
    if len(X) != len(y):
        raise InputError(
            f"Training needs one tag sequence per sentence; "
            f"got {len(X)} sentences and {len(y)} tag sequences."
        )
    if not any(len(x) for x in X):
        raise InputError(
            "There are no tokens to train the tagger on; label or import some sentences first."
        )
    for n, (xseq, yseq) in enumerate(zip(X, y, strict=True)):
        if len(xseq) != len(yseq):
            raise InputError(
                f"Training sentence {n} has {len(xseq)} tokens but {len(yseq)} tags; "
                "give one tag per token."
            )
        unknown = set(yseq) - set(TAGS)
        if unknown:
            raise InputError(
                f"Training sentence {n} has tags {sorted(unknown)}; allowed are {', '.join(TAGS)}."
            )


def _marginals(tagger: pycrfsuite.Tagger, labels: Sequence[str], n: int) -> list[dict[str, float]]:
    """Return each token's tag marginals; with all three tags known, the last is derived.

    Marginals of one token sum to one, so two calls into CRFsuite per token suffice
    (they are a large share of tagging time).
    """
    if len(labels) == len(TAGS):
        out = []
        for i in range(n):
            outside, begin = tagger.marginal(TAGS[0], i), tagger.marginal(TAGS[1], i)
            out.append({TAGS[0]: outside, TAGS[1]: begin, TAGS[2]: max(0.0, 1.0 - outside - begin)})
        return out
    return [{t: (tagger.marginal(t, i) if t in labels else 0.0) for t in TAGS} for i in range(n)]


# --- plumbing from sentences ----------------------------------------------------------


def sentence_items(
    sentence: Sentence,
    dictionary: Dictionary | None,
    clusters: Clusters | None,
    *,
    dictionary_features: bool = True,
) -> tuple[list[tuple[int, int]], Features, list[Span]]:
    """Return the tokens, CRF features and dictionary matches of one sentence.

    Args:
        sentence: The sentence (text and language are used).
        dictionary: Dictionary to match, or ``None``.
        clusters: Word-cluster model, or ``None``.
        dictionary_features: Include the dictionary's tags and concepts as features.
    """
    offsets = tokenize(sentence.text, sentence.lang)
    words = [sentence.text[s:e] for s, e in offsets]
    matches = dictionary.match_tokens(sentence.text, sentence.lang, offsets) if dictionary else []
    use_dict = dictionary is not None and dictionary_features
    feats = sentence_features(
        words,
        dict_tags=spans_to_iob(offsets, matches) if use_dict else None,
        dict_concepts=spans_to_concepts(offsets, matches) if use_dict else None,
        clusters=clusters,
        lang=sentence.lang,
    )
    return offsets, feats, matches


def _overlaps(span: Span, others: Sequence[Span]) -> bool:
    return any(span.start < o.end and o.start < span.end for o in others)


def fit_tagger(
    gold: Sequence[tuple[Sentence, Sequence[Span]]],
    silver_sentences: Sequence[Sentence],
    dictionary: Dictionary | None,
    clusters: Clusters | None,
    *,
    gold_weight: int = 10,
    silver_filter: str = "self-train",
    silver_threshold: float = 0.5,
    **params: Any,
) -> TraitTagger:
    """Train a tagger from gold-labelled sentences and dictionary-labelled silver sentences.

    Args:
        gold: Sentences with the analyst's spans (an empty list means "none").
        silver_sentences: Unlabelled sentences, labelled by ``dictionary`` (ignored without one).
        dictionary: The concept dictionary, or ``None``.
        clusters: Word-cluster model, or ``None``.
        gold_weight: Each gold sentence counts this many times a silver one (it is
            repeated; without silver sentences it is not). 10 rather than 3 lifted the
            demo's learning curve (span F1 at 100 and 200 labels, tagger alone, 3
            repeats: random .493/.518 and the default strategy .526/.541, against
            .478/.512 and .492/.522 with 3).
        silver_filter: How to guard against the dictionary's false negatives, one of
            :data:`SILVER_FILTERS` (see the module docstring).
        silver_threshold: TRAIT probability above which the gold model disagrees with an ``O``.
        **params: Arguments of :class:`TraitTagger`.

    Returns:
        The fitted tagger, remembering the clusters' fingerprint.

    Raises:
        InputError: When ``silver_filter`` or ``gold_weight`` is invalid, or nothing is
            left to train on.
    """
    if silver_filter not in SILVER_FILTERS:
        raise InputError(
            f"silver_filter must be one of {', '.join(SILVER_FILTERS)}; got {silver_filter!r}."
        )
    if gold_weight < 1:
        raise InputError(f"gold_weight must be a whole number of at least 1; got {gold_weight!r}.")
    X: list[Features] = []
    y: list[list[str]] = []
    for sentence, spans in gold:
        offsets, feats, _ = sentence_items(sentence, dictionary, clusters)
        tags = spans_to_iob(offsets, spans)
        X += [feats] * gold_weight
        y += [tags] * gold_weight
    sx: list[Features] = []
    sy: list[list[str]] = []
    if dictionary is not None and silver_sentences:
        sx, sy = _silver(
            silver_sentences, dictionary, clusters, X, y, silver_filter, silver_threshold, params
        )
    if not sx:
        # The weight is relative to silver sentences; without any, repeating the gold
        # ones would only change the SGD schedule, which max_iterations controls.
        X, y = X[::gold_weight], y[::gold_weight]
    tagger = TraitTagger(**params).fit(X + sx, y + sy)
    tagger.clusters_fingerprint_ = clusters.get("fingerprint") if clusters else None
    return tagger


def _silver(
    sentences: Sequence[Sentence],
    dictionary: Dictionary,
    clusters: Clusters | None,
    gold_X: list[Features],
    gold_y: list[list[str]],
    silver_filter: str,
    threshold: float,
    params: Mapping[str, Any],
) -> tuple[list[Features], list[list[str]]]:
    """Return features and dictionary labels of the silver sentences kept by the filter."""
    items = [sentence_items(s, dictionary, clusters, dictionary_features=False) for s in sentences]
    if silver_filter == "all":
        return [f for _, f, _ in items], [spans_to_iob(o, m) for o, _, m in items]
    items = [item for item in items if item[2]]
    has_gold_traits = any(t != OUTSIDE for tags in gold_y for t in tags)
    if silver_filter == "matched" or not has_gold_traits or not items:
        return [f for _, f, _ in items], [spans_to_iob(o, m) for o, _, m in items]
    # The gold model must judge silver sentences from the same features they will be
    # trained on (without dictionary features), so it is trained without them too.
    gold_only = [
        [{k: v for k, v in tok.items() if not _is_dict_feature(k)} for tok in seq] for seq in gold_X
    ]
    judge = TraitTagger(**params).fit(gold_only, gold_y)
    X, y = [], []
    for (offsets, feats, matches), path in zip(
        items, judge.predict([f for _, f, _ in items]), strict=True
    ):
        confident = [
            span
            for span in iob_to_spans(offsets, path.tags)
            if not _overlaps(span, matches)
            and _span_trait_prob(offsets, span, path.marginals) >= threshold
        ]
        if confident and silver_filter == "gold-check":
            continue
        X.append(feats)
        y.append(spans_to_iob(offsets, list(matches) + confident))
    return X, y


def _is_dict_feature(name: str) -> bool:
    return name in ("d", "dc") or (name.endswith("d") and name[:-1].lstrip("+-").isdigit())


def _span_trait_prob(
    offsets: Sequence[tuple[int, int]], span: Span, marginals: Sequence[Mapping[str, float]]
) -> float:
    """Return the lowest TRAIT probability (1 - P(O)) among the span's tokens."""
    probs = [
        1.0 - m["O"]
        for (s, e), m in zip(offsets, marginals, strict=True)
        if s < span.end and e > span.start
    ]
    return min(probs) if probs else 0.0


@contextmanager
def _collector_paused() -> Iterator[None]:
    """Pause Python's cyclic garbage collector while a batch builds its feature dicts.

    Features are tens of thousands of small dicts per thousand sentences; each allocation
    burst triggers collections that rescan the whole heap (clusters, corpus, models), which
    cost a fifth to a third of the tagging time, and varied from run to run. The dicts hold
    no reference cycles, so reference counting frees them; the collector resumes after.
    """
    was_enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_enabled:
            gc.enable()


def tag_sentences(
    tagger: TraitTagger,
    sentences: Sequence[Sentence],
    dictionary: Dictionary | None,
    clusters: Clusters | None,
) -> list[TagResult]:
    """Tag sentences with a fitted tagger, giving spans, tokens, marginals and path probability.

    A predicted span that coincides exactly with a dictionary match takes its concept;
    others have no concept (linking decides).

    Raises:
        NotFittedError: When the tagger is not trained.
        ModelError: When ``clusters`` differ from the clusters the tagger was trained with.
    """
    tagger._fitted()
    expected = getattr(tagger, "clusters_fingerprint_", None)
    given = clusters.get("fingerprint") if clusters else None
    if expected is not None and given != expected:
        raise ModelError(
            f"The tagger was trained with word clusters {expected} but got {given}; "
            "pass the clusters saved with the tagger's model version."
        )
    with _collector_paused():
        items = [sentence_items(s, dictionary, clusters) for s in sentences]
        paths = tagger.predict([feats for _, feats, _ in items])
    results = []
    for (offsets, _, matches), path in zip(items, paths, strict=True):
        concepts = {(m.start, m.end): m.concept for m in matches}
        spans = [
            s._replace(concept=concepts.get((s.start, s.end)))
            for s in iob_to_spans(offsets, path.tags)
        ]
        results.append(TagResult(spans, offsets, path.tags, path.marginals, path.probability))
    return results
