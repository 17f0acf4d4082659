"""The trained models of one version, together: dictionary, clusters, tagger, linker, stance.

:class:`TraitModels` trains them from the analyst's labels and the workspace's text,
predicts every mention of a sentence (span, concept, stance, confidences) and the traits
it states without a span (the sentence-level model, :mod:`extractor.models.sentence_traits`),
and saves and loads a model version folder without pickle:

``tagger.crfsuite`` + ``tagger.json`` (CRFsuite's own format), ``clusters.json`` +
``vectors.npy``, ``linker/``, ``stance/`` and ``sentence/`` (skops + JSON),
``aliases.json``, ``silver_aliases.json`` (answer phrases near an alias, silver only) and
``meta.json``; an older version loads without silver aliases or a sentence-level model.
"""

from __future__ import annotations

import json
import platform
from collections.abc import Mapping, Sequence
from dataclasses import asdict, dataclass, fields
from datetime import UTC, datetime
from importlib.metadata import PackageNotFoundError, version
from pathlib import Path
from typing import Any, NamedTuple

import numpy as np
from sklearn.base import BaseEstimator

from extractor.errors import ModelError, NotFittedError
from extractor.models.linking import ConceptLinker
from extractor.models.sentence_traits import SentenceTraits, anchor_span
from extractor.models.stance import StanceModel
from extractor.models.tagger import TagResult, TraitTagger, tag_sentences
from extractor.models.tagger_training import fit_tagger
from extractor.nlp.clusters import learn_clusters, load_clusters, save_clusters
from extractor.nlp.dictionary import Dictionary, build_dictionary
from extractor.nlp.pretrained import NONE
from extractor.nlp.synonyms import confident_synonyms
from extractor.types import STANCES, Implicit, Sentence, Span

Alias = tuple[str, str, str]
"""(concept_id, alias text, language)."""

META_FILE = "meta.json"
ALIASES_FILE = "aliases.json"
SILVER_FILE = "silver_aliases.json"
STANCE_PRIOR = 25
"""Labeled stances at which the learned stance model and the cue rules weigh the same.

25 rather than 50 since the model reads clause vectors: French and Spanish stance at 50
labelled demo sentences 0.757 against 0.738 (0.744 against 0.717 without their stance
words; tests/bench/stance_transfer.py, 10 draws); maize cross-validated stance 0.914 both.
"""
IMPLICIT_THRESHOLD = 0.9
"""Probability at which the sentence-level model adds a trait no mention is linked to.

Measured on the demo (tests/bench/implicit_demo.py, 5 folds by respondent): respondent-
triple F1 0.661 from mentions alone; adding implicit detections at 0.4 / 0.6 / 0.8 / 0.9
gave 0.611 / 0.641 / 0.657 / 0.659 (more triples found, more wrong ones). Only the most
certain are added; the labeling screen shows them as suggestions to confirm.
"""
LIBRARIES = ("trait-extractor", "python-crfsuite", "scikit-learn", "spacy", "skops", "numpy")


class Mention(NamedTuple):
    """A predicted mention of a sentence, with every confidence the models give."""

    start: int
    end: int
    confidence: float
    concept: str | None
    link_prob: float
    stance: str | None  # None from the tagger alone, which judges no stance
    stance_prob: float
    concept_probs: dict[str, float] | None = None
    stance_probs: dict[str, float] | None = None
    implicit: bool = False  # a trait the sentence states without a span: start 0, end its length


@dataclass(frozen=True)
class TrainingCounts:
    """What a version learned from; recorded as ``counts`` in ``meta.json``."""

    gold_sentences: int = 0
    gold_spans: int = 0
    silver_sentences: int = 0
    link_examples: int = 0
    stance_examples: int = 0
    aliases: int = 0
    silver_aliases: int = 0
    implicit_traits: int = 0
    sentence_examples: int = 0

    @classmethod
    def from_meta(cls, counts: Mapping[str, Any]) -> TrainingCounts:
        """Read the counts of a saved version (a count it does not record reads as 0)."""
        known = {f.name for f in fields(cls)}
        return cls(**{k: int(v) for k, v in counts.items() if k in known})


class SentencePrediction(NamedTuple):
    """Everything the models say about one sentence.

    ``mentions`` have quote spans; ``implicit`` are the concepts the sentence-level model
    detects that no mention of the sentence is linked to (``Mention.implicit`` is true,
    the span is the whole sentence, ``confidence`` and ``link_prob`` its probability).
    """

    mentions: list[Mention]
    tagged: TagResult
    implicit: list[Mention] = []  # noqa: RUF012 -- NamedTuple default; never mutated
    concept_probs: dict[str, float] = {}  # noqa: RUF012 -- the sentence model's, every concept


def library_versions() -> dict[str, str]:
    """Return the versions of the libraries a model version depends on."""
    found = {"python": platform.python_version()}
    for name in LIBRARIES:
        try:
            found[name] = version(name)
        except PackageNotFoundError:
            found[name] = "not installed"
    return found


def span_confidence(tagged: TagResult, span: Span) -> float:
    """Return the tagger's confidence in a span: the lowest marginal of its tokens' tags."""
    probs = [
        marginal.get(tag, 0.0)
        for (s, e), tag, marginal in zip(
            tagged.token_offsets, tagged.tags, tagged.marginals, strict=True
        )
        if s < span.end and e > span.start
    ]
    return min(probs) if probs else 0.0


class TraitModels(BaseEstimator):
    """The models of one version; build with :meth:`train` or :meth:`load`.

    Follows the scikit-learn estimator contract: the constructor only stores its
    arguments and :meth:`fit` learns, so ``sklearn.base.clone`` gives an unfitted copy.

    Args:
        tagger_params: Keyword arguments of :func:`extractor.models.tagger_training.fit_tagger`.
        link_threshold: Link probability below which a mention stays unlinked.
        seed: Random seed of the word clusters.
        stance_params: Keyword arguments of :class:`~extractor.models.stance.StanceModel`
            (a user cue file, the question codebook).
        silver_synonyms: Whether confident candidate synonyms join the silver dictionary.
    """

    def __init__(
        self,
        *,
        tagger_params: dict[str, Any] | None = None,
        link_threshold: float = 0.25,
        seed: int = 0,
        stance_params: dict[str, Any] | None = None,
        silver_synonyms: bool = True,
    ) -> None:
        self.tagger_params = tagger_params
        self.link_threshold = link_threshold
        self.seed = seed
        self.stance_params = stance_params
        self.silver_synonyms = silver_synonyms

    @classmethod
    def train(
        cls,
        gold: Sequence[tuple[Sentence, Sequence[Span]]],
        corpus: Sequence[Sentence],
        aliases: Sequence[Alias],
        *,
        tagger_params: dict[str, Any] | None = None,
        link_threshold: float = 0.25,
        seed: int = 0,
        clusters: dict[str, Any] | None = None,
        held_out: frozenset[int] = frozenset(),
        implicit: Mapping[int, Sequence[Implicit]] | None = None,
    ) -> TraitModels:
        """Return models of the given parameters fitted on the data (see :meth:`fit`)."""
        models = cls(tagger_params=tagger_params, link_threshold=link_threshold, seed=seed)
        return models.fit(
            gold, corpus, aliases, clusters=clusters, held_out=held_out, implicit=implicit
        )

    # ------------------------------------------------------------------ training

    def fit(
        self,
        gold: Sequence[tuple[Sentence, Sequence[Span]]],
        corpus: Sequence[Sentence],
        aliases: Sequence[Alias],
        *,
        clusters: dict[str, Any] | None = None,
        held_out: frozenset[int] = frozenset(),
        implicit: Mapping[int, Sequence[Implicit]] | None = None,
    ) -> TraitModels:
        """Train every model.

        Args:
            gold: Labeled sentences with their spans (concept and stance optional).
            corpus: Every sentence of the workspace: unlabeled text for the clusters and
                the silver (dictionary-labeled) training sentences.
            aliases: The concept list's aliases.
            clusters: Word clusters to reuse (when the corpus has not changed).
            held_out: IDs of sentences kept out of training entirely (the labeled part of
                the evaluation sample), not even as silver sentences.
            implicit: Per labeled sentence ID, the traits it states without a span.
        """
        if not gold and not aliases:
            raise ModelError(
                "There is nothing to train on: import a concept list with "
                "`traits concepts import FILE` or label sentences with `traits label`."
            )
        self.aliases_ = list(aliases)
        self.clusters_ = clusters or learn_clusters(
            [(s.text, s.lang) for s in corpus], seed=self.seed
        )
        space = self.clusters_.get("pretrained", {}).get("space", NONE)
        texts = [(s.text, s.lang) for s in corpus] if self.silver_synonyms else []
        self.silver_aliases_ = confident_synonyms(space, self.aliases_, texts)
        listed = self.aliases_ + self.silver_aliases_
        self.dictionary_: Dictionary | None = build_dictionary(listed) if listed else None
        labeled = {s.id for s, _ in gold} | held_out
        silver = [s for s in corpus if s.id not in labeled]
        self.tagger_ = fit_tagger(
            gold, silver, self.dictionary_, self.clusters_, **(self.tagger_params or {})
        )
        link_examples = [(s, sp, sp.concept) for s, spans in gold for sp in spans if sp.concept]
        gold_links = len(link_examples)  # the linker's combiner is fitted on these only
        if self.dictionary_ is not None:
            for sentence, matches in zip(silver, self.dictionary_.match_many(silver), strict=True):
                link_examples += [(sentence, m, m.concept) for m in matches if m.concept]
        linker = ConceptLinker(threshold=self.link_threshold, space=space)
        self.linker_ = linker.fit(link_examples, listed, gold_examples=gold_links)
        implicit = implicit or {}
        self.sentence_ = self._fit_sentence_traits(gold, implicit)
        stance_examples = [(s, sp, sp.stance) for s, spans in gold for sp in spans if sp.stance]
        stance_examples += [
            (s, self._anchor(s, trait.concept), trait.stance)
            for s, _ in gold
            for trait in implicit.get(s.id, ())
            if trait.stance
        ]
        self.stance_ = StanceModel(**(self.stance_params or {}))
        if len({label for _, _, label in stance_examples}) >= 2:
            self.stance_.fit(stance_examples)
        self.counts_ = TrainingCounts(
            gold_sentences=len(gold),
            gold_spans=sum(len(spans) for _, spans in gold),
            silver_sentences=len(silver),
            link_examples=len(link_examples),
            stance_examples=len(stance_examples),
            aliases=len(aliases),
            silver_aliases=len(self.silver_aliases_),
            implicit_traits=sum(len(implicit.get(s.id, ())) for s, _ in gold),
            sentence_examples=len(gold) if self.sentence_.is_fitted else 0,
        )
        return self

    def _fit_sentence_traits(
        self,
        gold: Sequence[tuple[Sentence, Sequence[Span]]],
        implicit: Mapping[int, Sequence[Implicit]],
    ) -> SentenceTraits:
        """Fit the sentence-level model on every labeled sentence, if any states a concept.

        A sentence states the concepts of its mentions and its implicit traits; a sentence
        labeled "no trait here" is a negative for every concept.
        """
        model = SentenceTraits()
        stated = [
            {sp.concept for sp in spans if sp.concept} | {t.concept for t in implicit.get(s.id, ())}
            for s, spans in gold
        ]
        if any(stated) and len(gold) >= 2:
            model.fit(
                [s for s, _ in gold], stated, dictionary=self.dictionary_, clusters=self.clusters_
            )
        self._weights: dict[str, dict[str, float]] = {}
        return model

    def _anchor(self, sentence: Sentence, concept: str) -> Span:
        """Return the words the stance of an implicit trait is judged on (see anchor_span)."""
        if concept not in self._weights:
            fitted = self.sentence_.is_fitted and concept in self.sentence_.classes_
            self._weights[concept] = self.sentence_.word_weights(concept) if fitted else {}
        return anchor_span(sentence, concept, self._weights[concept], self.dictionary_)

    def _check(self) -> None:
        if not hasattr(self, "tagger_"):
            raise NotFittedError("The models are not trained yet; call fit() or load() first.")

    # ------------------------------------------------------------------ prediction

    def predict(
        self,
        sentences: Sequence[Sentence],
        gold_concepts: dict[int, dict[tuple[int, int], str]] | None = None,
    ) -> list[SentencePrediction]:
        """Find, link and judge every mention of the sentences.

        Args:
            sentences: Sentences to read.
            gold_concepts: Optional per sentence ID, concepts a person gave to spans; they
                always win over the linker.
        """
        self._check()
        tagged = tag_sentences(self.tagger_, sentences, self.dictionary_, self.clusters_)
        items = [
            (s, span) for s, result in zip(sentences, tagged, strict=True) for span in result.spans
        ]
        given = [
            (gold_concepts or {}).get(s.id, {}).get((span.start, span.end)) for s, span in items
        ]
        links = self.linker_.link_many(items, given) if items else []
        stance_probs = self._stance_proba(items)
        out = []
        k = 0
        for result in tagged:
            mentions = []
            for span in result.spans:
                link, probs = links[k], stance_probs[k]
                k += 1
                best = int(probs.argmax())
                mentions.append(
                    Mention(
                        span.start,
                        span.end,
                        span_confidence(result, span),
                        link.concept,
                        float(link.probability),
                        STANCES[best],
                        float(probs[best]),
                        dict(link.candidates),
                        {stance: float(p) for stance, p in zip(STANCES, probs, strict=True)},
                    )
                )
            out.append(SentencePrediction(mentions, result))
        return self._with_implicit(sentences, out)

    def _with_implicit(
        self, sentences: Sequence[Sentence], predictions: list[SentencePrediction]
    ) -> list[SentencePrediction]:
        """Add the concepts the sentence-level model detects that no mention is linked to."""
        if not getattr(self, "sentence_", None) or not self.sentence_.is_fitted or not sentences:
            return predictions
        proba = self.sentence_.predict_proba(
            sentences, dictionary=self.dictionary_, clusters=self.clusters_
        )
        found = []
        for sentence, prediction, detected in zip(
            sentences, predictions, self.sentence_.detected(proba), strict=True
        ):
            linked = {m.concept for m in prediction.mentions if m.concept}
            found += [
                (sentence, c, p) for c, p in detected if c not in linked and p >= IMPLICIT_THRESHOLD
            ]
        classes = self.sentence_.classes_
        predictions = [
            p._replace(concept_probs={c: float(x) for c, x in zip(classes, row, strict=True)})
            for p, row in zip(predictions, proba, strict=True)
        ]
        if not found:
            return predictions
        self._weights = getattr(self, "_weights", {})
        items = [(s, self._anchor(s, c)) for s, c, _ in found]
        stance_probs = self._stance_proba(items)
        extra: dict[int, list[Mention]] = {}
        for (sentence, concept, p), probs in zip(found, stance_probs, strict=True):
            best = int(probs.argmax())
            extra.setdefault(sentence.id, []).append(
                Mention(
                    0,
                    len(sentence.text),
                    p,
                    concept,
                    p,
                    STANCES[best],
                    float(probs[best]),
                    {concept: p},
                    {st: float(q) for st, q in zip(STANCES, probs, strict=True)},
                    implicit=True,
                )  # fmt: skip
            )
        return [
            prediction._replace(implicit=extra.get(sentence.id, []))
            for sentence, prediction in zip(sentences, predictions, strict=True)
        ]

    def _stance_proba(self, items: Sequence[tuple[Sentence, Span]]) -> np.ndarray:
        """Blend the learned stance model with the cue rules by how much it has learned from.

        With n labeled stances the model gets weight n / (n + STANCE_PRIOR): a dozen
        labels cannot overrule the cue lexicon, a few hundred mostly do.
        """
        if not items:
            return np.zeros((0, len(STANCES)))
        n = self.counts_.stance_examples
        return self.stance_.predict_proba_blend(items, n / (n + STANCE_PRIOR))

    # ------------------------------------------------------------------ persistence

    def meta(self) -> dict[str, Any]:
        """Return what ``meta.json`` records about this version."""
        self._check()
        return {
            "created_at": datetime.now(UTC).isoformat(timespec="seconds"),
            "counts": asdict(self.counts_),
            "parameters": {
                "tagger": self.tagger_.get_params()
                | {
                    k: v
                    for k, v in (self.tagger_params or {}).items()
                    if k in ("gold_weight", "silver_filter", "silver_threshold")
                },
                "link_threshold": self.link_threshold,
                "seed": self.seed,
            },
            "libraries": library_versions(),
            "clusters_fingerprint": self.clusters_.get("fingerprint"),
        }

    def save(self, folder: Path, extra_meta: dict[str, Any] | None = None) -> dict[str, Any]:
        """Write the version folder and return its meta."""
        self._check()
        folder.mkdir(parents=True, exist_ok=True)
        self.tagger_.save(folder)
        save_clusters(self.clusters_, folder)
        self.linker_.save(folder / "linker")
        self.stance_.save(folder / "stance")
        self.sentence_.save(folder / "sentence")
        for name, rows in ((ALIASES_FILE, self.aliases_), (SILVER_FILE, self.silver_aliases_)):
            (folder / name).write_text(
                json.dumps([list(a) for a in rows], ensure_ascii=False), encoding="utf-8"
            )
        meta = self.meta() | (extra_meta or {})
        (folder / META_FILE).write_text(
            json.dumps(meta, indent=2, ensure_ascii=False), encoding="utf-8"
        )
        return meta

    @classmethod
    def load(cls, folder: Path) -> TraitModels:
        """Read a version folder written by :meth:`save`.

        Raises:
            ModelError: a file is missing, corrupt or foreign.
        """
        meta = _read_json(folder, META_FILE)
        aliases = _aliases(_read_json(folder, ALIASES_FILE))
        silver = (
            _aliases(_read_json(folder, SILVER_FILE)) if (folder / SILVER_FILE).is_file() else []
        )
        params = meta.get("parameters", {}) if isinstance(meta, dict) else None
        counts = meta.get("counts", {}) if isinstance(meta, dict) else None
        counts_ok = isinstance(counts, dict) and all(isinstance(v, int) for v in counts.values())
        if aliases is None or silver is None or not isinstance(params, dict) or not counts_ok:
            raise ModelError(
                f"Model version {folder.name} ({folder}) has a damaged {META_FILE}, "
                f"{ALIASES_FILE} or {SILVER_FILE} (not the shape this tool writes); train a new "
                "version with `traits train`."
            )
        models = cls(link_threshold=params.get("link_threshold", 0.25), seed=params.get("seed", 0))
        models.aliases_, models.silver_aliases_ = aliases, silver
        listed = aliases + silver
        models.dictionary_ = build_dictionary(listed) if listed else None
        models.clusters_ = load_clusters(folder)
        models.tagger_ = TraitTagger.load(folder)
        models.tagger_.clusters_fingerprint_ = models.clusters_.get("fingerprint")
        models.linker_ = ConceptLinker.load(folder / "linker")
        models.stance_ = StanceModel.load(folder / "stance")
        sentence_folder = folder / "sentence"
        models.sentence_ = (
            SentenceTraits.load(sentence_folder) if sentence_folder.is_dir() else SentenceTraits()
        )
        models.counts_ = TrainingCounts.from_meta(counts or {})
        return models


def _aliases(listed: Any) -> list[Alias] | None:
    """Return the aliases of ``aliases.json`` (rows of three texts), None for another shape."""
    if not isinstance(listed, list):
        return None
    rows = [row for row in listed if isinstance(row, list) and len(row) == 3]
    if len(rows) != len(listed) or not all(isinstance(v, str) for row in rows for v in row):
        return None
    return [(c, t, lang) for c, t, lang in rows]


def _read_json(folder: Path, name: str) -> Any:
    """Read one JSON file of a version folder, naming the version when it cannot be read."""
    try:
        return json.loads((folder / name).read_text(encoding="utf-8"))
    except (OSError, ValueError) as exc:
        raise ModelError(
            f"Model version {folder.name} ({folder}) has no readable {name} "
            f"({type(exc).__name__}); train a new version with `traits train`."
        ) from exc
