"""The CRF tagger alone, as a model: what span scores need, several times faster to train.

:class:`TaggerOnly` fits and predicts like :class:`~extractor.models.bundle.TraitModels`
and returns the same :class:`~extractor.models.bundle.SentencePrediction`, but has no
linker and no stance model: a mention's concept is that of a dictionary match with
exactly its span, and it has no stance. Simulations and the peer benchmark use it.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from sklearn.base import BaseEstimator

from extractor.errors import InputError
from extractor.models.bundle import Mention, SentencePrediction, TraitModels, span_confidence
from extractor.models.tagger import TagResult, TraitTagger, sentence_items
from extractor.models.tagger_training import fit_tagger
from extractor.nlp.dictionary import Dictionary, build_dictionary
from extractor.nlp.spans import iob_to_spans
from extractor.types import Sentence, Span

Alias = tuple[str, str, str]
"""(concept_id, alias text, language)."""

MODELS = ("traits", "tagger")
"""The kinds of model :func:`make_models` builds."""


class TaggerOnly(BaseEstimator):
    """The CRF tagger of :class:`~extractor.models.bundle.TraitModels` without linker or stance.

    Features of a sentence depend only on its text, the dictionary and the clusters,
    which stay fixed during a simulation, so they are computed once per sentence ID
    (in a cache that several models of one run may share, see :meth:`fit`).

    Args:
        tagger_params: Keyword arguments of :func:`extractor.models.tagger_training.fit_tagger`.
    """

    def __init__(self, *, tagger_params: dict[str, Any] | None = None) -> None:
        self.tagger_params = tagger_params

    def fit(
        self,
        gold: Sequence[tuple[Sentence, Sequence[Span]]],
        corpus: Sequence[Sentence],
        aliases: Sequence[Alias],
        *,
        clusters: dict[str, Any] | None = None,
        feature_cache: dict[tuple[int, bool], Any] | None = None,
    ) -> TaggerOnly:
        """Train the tagger on the gold sentences (and dictionary-labeled silver ones).

        Args:
            gold: Labeled sentences with their spans.
            corpus: Sentences that dictionary matches may label as silver training data.
            aliases: The concept list's aliases; may be empty.
            clusters: Word clusters of the features.
            feature_cache: Features per sentence ID and ``space_axes`` of the tagger,
                shared with other models that use the same aliases and clusters; a fresh
                one when None.

        Raises:
            InputError: there are neither labeled sentences nor aliases.
        """
        if not gold and not aliases:
            raise InputError("The tagger needs labeled sentences or aliases to train on.")
        self.dictionary_: Dictionary | None = build_dictionary(aliases) if aliases else None
        self.clusters_ = clusters
        self.feature_cache_ = {} if feature_cache is None else feature_cache
        labeled = {s.id for s, _ in gold}
        silver = [s for s in corpus if s.id not in labeled] if aliases else []
        params = self.tagger_params or {}
        self.tagger_: TraitTagger = fit_tagger(gold, silver, self.dictionary_, clusters, **params)
        return self

    def predict(self, sentences: Sequence[Sentence]) -> list[SentencePrediction]:
        """Tag sentences; mentions carry the tagger's confidence only (no link, no stance)."""
        cache = self.feature_cache_
        axes = self.tagger_.space_axes
        for s in sentences:
            if (s.id, axes) not in cache:
                cache[s.id, axes] = sentence_items(s, self.dictionary_, self.clusters_, axes=axes)
        paths = self.tagger_.predict([cache[s.id, axes][1] for s in sentences])
        out = []
        for s, path in zip(sentences, paths, strict=True):
            offsets, _, matches = cache[s.id, axes]
            # As in tag_sentences: a span that is exactly a dictionary match takes its concept.
            concepts = {(m.start, m.end): m.concept for m in matches}
            spans = [
                sp._replace(concept=concepts.get((sp.start, sp.end)))
                for sp in iob_to_spans(offsets, path.tags)
            ]
            result = TagResult(spans, offsets, path.tags, path.marginals, path.probability)
            mentions = [
                Mention(sp.start, sp.end, span_confidence(result, sp), sp.concept, 0.0, None, 0.0)
                for sp in result.spans
            ]
            out.append(SentencePrediction(mentions, result))
        return out


def make_models(kind: str, params: Mapping[str, Any] | None = None) -> TaggerOnly | TraitModels:
    """Return an unfitted model of the given kind (one of :data:`MODELS`).

    Raises:
        InputError: ``kind`` is not one of :data:`MODELS`.
    """
    if kind == "tagger":
        return TaggerOnly(**(params or {}))
    if kind == "traits":
        return TraitModels(**(params or {}))
    raise InputError(f"The model must be one of {', '.join(MODELS)}; got {kind!r}.")
