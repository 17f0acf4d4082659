"""The BIO trait tagger: a linear-chain CRF (python-crfsuite) with token marginals.

:class:`TraitTagger` follows the scikit-learn estimator contract over feature
sequences (from :func:`extractor.nlp.features.sentence_attributes`, or the same features
as dicts from :func:`~extractor.nlp.features.sentence_features`) and IOB2 tags.
:func:`tag_sentences` does the plumbing from sentences, a dictionary and word clusters
(:func:`sentence_items`), so callers never build features themselves; training from
gold and silver sentences is :func:`extractor.models.tagger_training.fit_tagger`.
CRFsuite trains; tagging decodes with the trained weights in numpy
(:class:`~extractor.models.crf_decoder.CrfDecoder`, the same paths, marginals and
probabilities as CRFsuite's tagger), python-crfsuite where the decoder cannot read a model.
"""

from __future__ import annotations

import gc
import hashlib
import json
import struct
import tempfile
from collections.abc import Iterator, Mapping, Sequence
from contextlib import contextmanager
from pathlib import Path
from typing import Any, NamedTuple

import pycrfsuite
from sklearn.base import BaseEstimator

from extractor.errors import InputError, ModelError, NotFittedError
from extractor.models.crf_decoder import CrfDecoder, Decoded
from extractor.models.crf_items import Features, check_training_data, crf_tokens, seed_c_rand
from extractor.models.recall_decoding import recall_tags
from extractor.nlp.dictionary import Dictionary
from extractor.nlp.feature_rows import sentence_rows
from extractor.nlp.features import (
    Attributes,
    Clusters,
    sentence_attribute_parts,
    sentence_attributes,
)
from extractor.nlp.spans import iob_to_spans, repair_iob, spans_to_concepts, spans_to_iob
from extractor.nlp.text import tokenize
from extractor.types import TAGS, Sentence, Span

FORMAT = "trait-extractor/crf-tagger"
VERSION = 1
MODEL_FILE = "tagger.crfsuite"
PARAMS_FILE = "tagger.json"
ALGORITHMS = ("lbfgs", "l2sgd", "ap", "pa", "arow")
"""CRFsuite's training algorithms."""


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


class TraitTagger(BaseEstimator):
    """Linear-chain CRF over IOB2 tags ``O``, ``B-TRAIT``, ``I-TRAIT``.

    Args:
        c1: L1 regularisation (sparse weights).
        c2: L2 regularisation.
        max_iterations: Epochs of SGD or the perceptron, or L-BFGS iterations. 50 SGD epochs
            won CV on MAMS train but lost on test (DEVELOPERS.md, "Tagger figures").
        min_freq: Ignore features seen fewer times in training.
        all_possible_transitions: Learn weights for unseen transitions too, so that
            ``O`` -> ``I-TRAIT`` gets a negative weight.
        algorithm: CRFsuite training algorithm, one of :data:`ALGORITHMS`; ``c1`` is
            used by ``lbfgs`` only and ``c2`` by ``lbfgs`` and ``l2sgd``. The default,
            SGD with L2 (``c2=2.0``, 30 epochs), scored about 0.755 strict span F1 on
            MAMS against 0.728-0.733 for L-BFGS at the settings tried, and trains faster.
            ``c2`` 4 and 8 gained in CV on MAMS train but lost trained on 800 sentences.
            The averaged perceptron (``ap``) needs calibrating (``temperature``).
        random_state: Seed of the C library's ``rand``, which CRFsuite's SGD uses to
            shuffle, so that the same data gives the same model.
        recall_threshold: Add to the best path the tokens of TRAIT probability at least
            this (:mod:`~extractor.models.recall_decoding`; ``fit_tagger`` sets it).
        temperature: Divides every weight for marginals and path probabilities, not paths
            (:mod:`~extractor.models.tagger_calibration`); CRFsuite's tagger ignores it.
        space_axes: The model reads each word's coordinates on the pretrained space's main
            axes (``axes`` of :func:`~extractor.nlp.features.sentence_attribute_parts`);
            ``fit_tagger`` sets it while labels are few, and :func:`tag_sentences`
            builds the features to match.
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
        recall_threshold: float | None = None,
        temperature: float = 1.0,
        space_axes: bool = False,
    ) -> None:
        self.c1 = c1
        self.c2 = c2
        self.max_iterations = max_iterations
        self.min_freq = min_freq
        self.all_possible_transitions = all_possible_transitions
        self.algorithm = algorithm
        self.random_state = random_state
        self.recall_threshold = recall_threshold
        self.temperature = temperature
        self.space_axes = space_axes

    def fit(self, X: Sequence[Features], y: Sequence[Sequence[str]]) -> TraitTagger:
        """Train on feature sequences ``X`` and their IOB2 tag sequences ``y``.

        Weight a sentence by repeating it in ``X`` and ``y``.

        Raises:
            InputError: When there is nothing to train on, lengths differ or a tag is unknown.
        """
        check_training_data(X, y)
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
        seed_c_rand(self.random_state)
        # A sentence weighted by repetition is converted for CRFsuite once.
        converted: dict[int, pycrfsuite.ItemSequence] = {}
        weighted: dict[int, tuple[Attributes, dict[bytes, float]]] = {}
        for xseq, yseq in zip(X, y, strict=True):
            if len(xseq):
                if id(xseq) not in converted:
                    converted[id(xseq)] = pycrfsuite.ItemSequence(crf_tokens(xseq, weighted))
                trainer.append(converted[id(xseq)], list(yseq))
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

    @property
    def is_fitted(self) -> bool:
        """Whether :meth:`fit` (or :meth:`load`) has given the tagger a model."""
        return hasattr(self, "model_bytes_")

    def __sklearn_is_fitted__(self) -> bool:
        """Tell scikit-learn's ``check_is_fitted`` what :attr:`is_fitted` says."""
        return self.is_fitted

    def _fitted(self) -> pycrfsuite.Tagger:
        if not self.is_fitted:
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
        model never learned. Attribute tuples are decoded by the numpy decoder (bit for
        bit CRFsuite's figures); ``{name: value}`` dicts by CRFsuite.
        """
        tagger = self._fitted()
        labels = [t for t in TAGS if t in self.labels_]
        decoder = self._decoder()
        if decoder is not None:
            try:
                decoded = decoder.decode(X, temperature=self.temperature)  # type: ignore[arg-type]
            except TypeError:
                pass  # {name: value} dicts: CRFsuite reads them
            else:
                return [_tag_path(d, decoder.labels, self.recall_threshold) for d in decoded]
        out = []
        for xseq in (crf_tokens(x, {}) for x in X):
            if not len(xseq):
                out.append(TagPath([], [], 1.0))
                continue
            tagger.set(xseq)
            viterbi = tagger.tag()
            marginals = _marginals(tagger, labels, len(xseq))
            tags = recall_tags(repair_iob(viterbi), marginals, self.recall_threshold)
            out.append(TagPath(tags, marginals, tagger.probability(viterbi)))
        return out

    def _decoder(self) -> CrfDecoder | None:
        """Return the numpy decoder of the fitted model, ``None`` where it cannot read it."""
        cached = getattr(self, "_crf_decoder", None)
        if cached is None or cached[0] is not self.model_bytes_:
            try:
                decoder: CrfDecoder | None = CrfDecoder.from_model(self.model_bytes_)
            except (ValueError, struct.error, UnicodeDecodeError):
                decoder = None  # a layout this reader does not know: CRFsuite decodes
            cached = self._crf_decoder = (self.model_bytes_, decoder)
        return cached[1]

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
        meta, model = _read_saved(folder)
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


def _read_saved(folder: Path) -> tuple[dict[str, Any], bytes]:
    """Return a saved tagger's JSON metadata and model bytes, checked against each other.

    Raises:
        ModelError: When a file is missing or unreadable, of another format or version,
            or the model does not match the recorded checksum.
    """
    try:
        meta = json.loads((folder / PARAMS_FILE).read_text(encoding="utf-8"))
        model = (folder / MODEL_FILE).read_bytes()
    except (OSError, ValueError) as exc:
        raise ModelError(
            f"The tagger in {folder} cannot be read ({exc}); "
            "retrain it or pick another model version."
        ) from exc
    if not isinstance(meta, dict) or meta.get("format") != FORMAT or meta.get("version") != VERSION:
        raise ModelError(
            f"{folder / PARAMS_FILE} is not a {FORMAT} version {VERSION} file; "
            "retrain the tagger or pick another model version."
        )
    if hashlib.sha256(model).hexdigest() != meta.get("sha256"):
        raise ModelError(
            f"{folder / MODEL_FILE} does not match the checksum in {PARAMS_FILE}; "
            "it is corrupt or foreign, so retrain the tagger."
        )
    return meta, model


def _tag_path(decoded: Decoded, labels: Sequence[str], recall: float | None) -> TagPath:
    """Return a :class:`TagPath` from the numpy decoder's result, as :meth:`predict` gives it."""
    names = [labels[i] for i in decoded.path]
    rows = decoded.marginals.tolist()
    if len(labels) == len(TAGS):
        outside, begin = labels.index(TAGS[0]), labels.index(TAGS[1])
        marginals = [
            {TAGS[0]: r[outside], TAGS[1]: r[begin], TAGS[2]: max(0.0, 1.0 - r[outside] - r[begin])}
            for r in rows
        ]
    else:
        where = {t: labels.index(t) for t in TAGS if t in labels}
        marginals = [{t: (r[where[t]] if t in where else 0.0) for t in TAGS} for r in rows]
    tags = recall_tags(repair_iob(names), marginals, recall)
    return TagPath(tags, marginals, decoded.probability)


def _marginals(tagger: pycrfsuite.Tagger, labels: Sequence[str], n: int) -> list[dict[str, float]]:
    """Return each token's tag marginals; the last derived when all three tags are known."""
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
    axes: bool = False,
) -> tuple[list[tuple[int, int]], list[Any], list[Span]]:
    """Return the tokens, CRF features and dictionary matches of one sentence.

    Args:
        sentence: The sentence (text and language are used).
        dictionary: Dictionary to match, or ``None``.
        clusters: Word-cluster model, or ``None``.
        dictionary_features: Include the dictionary's tags and concepts as features.
        axes: Include the words' coordinates on the pretrained space's main axes (a
            tagger's ``space_axes``); the features are then split in two per token
            (:func:`~extractor.nlp.features.sentence_attribute_parts`).
    """
    offsets, words, matches = _tokens_and_matches(sentence, dictionary)
    use_dict = dictionary is not None and dictionary_features
    tags = spans_to_iob(offsets, matches) if use_dict else None
    concepts = spans_to_concepts(offsets, matches) if use_dict else None
    feats: list[Any]
    if axes:
        feats = sentence_attribute_parts(
            words, dict_tags=tags, dict_concepts=concepts, clusters=clusters,
            lang=sentence.lang, axes=True,
        )  # fmt: skip
    else:
        feats = sentence_attributes(
            words, dict_tags=tags, dict_concepts=concepts, clusters=clusters, lang=sentence.lang
        )
    return offsets, feats, matches


def _sentence_rows(
    sentence: Sentence,
    dictionary: Dictionary | None,
    clusters: Clusters | None,
    index: Mapping[bytes, int],
    axes: bool = False,
) -> tuple[list[tuple[int, int]], list[tuple[Attributes, list[int]]], list[Span]]:
    """Like :func:`sentence_items`, with the rows of the decoder's weights (see feature_rows).

    Each token gives its word's own attributes (the cached tuple) and the rows of the rest.
    """
    offsets, words, matches = _tokens_and_matches(sentence, dictionary)
    rows = sentence_rows(
        words,
        index=index,
        dict_tags=spans_to_iob(offsets, matches) if dictionary is not None else None,
        dict_concepts=spans_to_concepts(offsets, matches) if dictionary is not None else None,
        clusters=clusters,
        lang=sentence.lang,
        axes=axes,
    )
    return offsets, rows, matches


def _tokens_and_matches(
    sentence: Sentence, dictionary: Dictionary | None
) -> tuple[list[tuple[int, int]], list[str], list[Span]]:
    offsets = tokenize(sentence.text, sentence.lang)
    words = [sentence.text[s:e] for s, e in offsets]
    matches = dictionary.match_tokens(sentence.text, sentence.lang, offsets) if dictionary else []
    return offsets, words, matches


@contextmanager
def _collector_paused() -> Iterator[None]:
    """Pause Python's cyclic garbage collector while a batch builds its features.

    Features are tens of thousands of small containers per thousand sentences; each allocation
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
    decoder = tagger._decoder()
    axes = tagger.space_axes
    with _collector_paused():
        if decoder is None:
            items = [sentence_items(s, dictionary, clusters, axes=axes) for s in sentences]
            paths = tagger.predict([feats for _, feats, _ in items])
        else:
            rows = [_sentence_rows(s, dictionary, clusters, decoder.index, axes) for s in sentences]
            X = [feats for _, feats, _ in rows]
            decoded = decoder.decode(X, temperature=tagger.temperature)
            paths = [_tag_path(d, decoder.labels, tagger.recall_threshold) for d in decoded]
            items = [(offsets, [], matches) for offsets, _, matches in rows]
            # Features gone before the collector resumes: it then scans the results alone.
            del rows, decoded
        results = []
        for (offsets, _, matches), path in zip(items, paths, strict=True):
            concepts = {(m.start, m.end): m.concept for m in matches}
            spans = [
                s._replace(concept=concepts.get((s.start, s.end)))
                for s in iob_to_spans(offsets, path.tags)
            ]
            results.append(TagResult(spans, offsets, path.tags, path.marginals, path.probability))
        del items
    return results
