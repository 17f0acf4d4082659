"""Linking a trait mention to a concept ID of the validated trait list, or to none.

Four scorers (:mod:`extractor.models.link_scoring`: exact, fuzzy, context and semantic) give
each candidate concept a number in ``[0, 1]``. Surface forms of the analyst's links join
the aliases, so a phrasing seen once links exactly the next time. The words of dictionary
links do not: they are an alias's by construction, except where the stemmer joins
different words ("amarillo" and the alias "amarillamiento", "yellow" and "yellowing"), and
there, with the sentence being linked among the unlabelled ones, its own words became a
form of the wrong concept, with exact, fuzzy and semantic scores of 1 (DEVELOPERS.md,
"Spans and links of the demo triples"). A small logistic *combiner* turns the four
scores into the probability that a candidate is right. With at least
:data:`MIN_COMBINER_EXAMPLES` links given by the analyst it is fitted on out-of-fold
scores of all linked examples (each fold's scorers never saw the example), so its output
is calibrated on the project's own data; below that a fixed, documented rule is used
(:data:`DEFAULT_WEIGHTS`). Dictionary links alone never fit it: they are exact alias
matches by construction, so a combiner fitted on them learns that nothing but an exact
match is right and leaves most new phrasings and other languages unlinked (DEVELOPERS.md,
"Concept lists in one language"). The best candidate below ``threshold`` leaves the
mention unlinked; :func:`choose_threshold` measures a threshold on held-out gold links.

A one-word mention is read in the phrases it makes with its neighbours
(:mod:`extractor.nlp.neighbours`). Its link must hold for the phrase with each adjacent
content word: where the linker gives that phrase the same concept with a probability below
``phrase_threshold``, the mention stays unlinked. A list alias used in another sense, or
met by a surface accident, loses its link once its neighbour is read with it ("perder
plata", "palo cuesta", "sell plates"), while a trait word keeps it ("haricot grimpant",
"stakes cost"). And where the noun phrase it stands in (the nearest content word across
determiners, prepositions and quantifiers) gives another concept a higher probability
than the mention's, at least ``threshold``, the mention takes that concept: the phrase
names the trait ("market for green maize", "tarda en la olla"). A neighbour that is itself
an alias of the list is not read: it brings a trait of its own ("Store Food"). See
DEVELOPERS.md, "Alias words in another sense" and its ninth round. The phrase is never an
alias, so what speaks for it is the context classifier (and the pretrained space): a
concept the classifier has no linked example of (the analyst's or the dictionary's) is
not checked.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Sequence
from pathlib import Path
from typing import NamedTuple

import numpy as np
import skops.io
from sklearn.base import BaseEstimator
from sklearn.linear_model import LogisticRegression
from sklearn.model_selection import KFold
from sklearn.pipeline import Pipeline

from extractor.errors import InputError, NotFittedError
from extractor.models.link_scoring import (
    TOP_K,
    Alias,
    Example,
    Scorer,
    combine,
    context_features,
    example_forms,
    fit_context,
)
from extractor.models.persist import load_trusted_skops, read_meta, write_meta
from extractor.nlp import pretrained
from extractor.nlp.dictionary import stem_word
from extractor.nlp.neighbours import neighbour_phrases
from extractor.nlp.nontrait import joins_noun_phrase
from extractor.nlp.text import tokenize
from extractor.types import Sentence, Span

MIN_COMBINER_EXAMPLES = 30
"""Analyst's links needed before the combiner is fitted rather than the default rule."""

DEFAULT_WEIGHTS = (-4.0, 5.0, 5.5, 4.0, 7.0)
"""Intercept and weights of exact, fuzzy, context and semantic in the cold-start combiner.

Set by hand (common practice for a cold start) so that an exact alias gives about
0.99, a fuzzy cosine of 0.5 alone about 0.22 (just below the default threshold),
0.6 about 0.33, and a confident context classifier lifts a weak fuzzy match over it.
The semantic weight, also by hand: alone, a translation of an alias (cosine 0.9,
score 0.75) gives about 0.78, a cosine of 0.8 (score 0.5) about 0.38, 0.75 (0.375)
about 0.2, below the threshold: a near neighbour that is no translation
("sequía"/"drought" is 0.73) needs a second score's support. It applies only below
:data:`MIN_COMBINER_EXAMPLES` links by the analyst.
"""

PHRASE_THRESHOLD = 0.5
"""Probability below which a one-word link does not hold for the word with its neighbour.

One half: a calibrated probability below it says the phrase is more likely not the
concept (chosen by measurement; DEVELOPERS.md, "Alias words in another sense")."""

_FORMAT = "trait-extractor/linker/1"
"""Files written before the semantic score hold three weights; they load with a semantic
weight of 0 (the old behaviour) and no pretrained space."""
_SKOPS_FILE = "context.skops"
_JSON_FILE = "linker.json"

LinkScore = tuple["str | None", float, "str | None"]
"""``(best concept, its probability, gold concept)`` of one held-out mention."""


class LinkResult(NamedTuple):
    """The concept of a mention (``None`` when unlinked), its probability and the candidates."""

    concept: str | None
    probability: float
    candidates: list[tuple[str, float]]


# ------------------------------------------------------------------ linker


class ConceptLinker(BaseEstimator):
    """Links trait mentions to concept IDs from aliases and linked examples.

    Args:
        threshold: Probability below which the best candidate is not taken and the
            mention stays unlinked. 0.25 maximised linking F1 in 5-fold
            cross-validation on the demo gold (0.853 fitted, 0.837 aliases only);
            :func:`choose_threshold` measures it on a project's own gold.
        C: Inverse regularisation of the context classifier.
        folds: Folds used to fit the combiner on out-of-fold scores.
        seed: Random seed of the fold split.
        space: The pretrained space of the semantic score (a name of
            :data:`extractor.nlp.pretrained.SPACES`; ``"none"``: no semantic score).
        phrase_threshold: Probability the phrase of a one-word mention and an adjacent
            content word must keep for the mention's concept (module docstring); 0
            turns the check off.
        read_noun_phrase: Whether a one-word mention takes the concept its noun phrase
            gives more than its own (module docstring).
    """

    def __init__(
        self,
        *,
        threshold: float = 0.25,
        C: float = 1.0,
        folds: int = 5,
        seed: int = 0,
        space: str = pretrained.NONE,
        phrase_threshold: float = PHRASE_THRESHOLD,
        read_noun_phrase: bool = True,
    ) -> None:
        self.threshold = threshold
        self.C = C
        self.folds = folds
        self.seed = seed
        self.space = space
        self.phrase_threshold = phrase_threshold
        self.read_noun_phrase = read_noun_phrase

    def fit(
        self,
        examples: Iterable[Example],
        aliases: Iterable[Alias],
        *,
        gold_examples: int | None = None,
    ) -> ConceptLinker:
        """Learn from aliases and linked examples (gold links and dictionary links).

        Args:
            examples: ``(sentence, span, concept_id)``; may be empty (cold start:
                aliases alone, exact and fuzzy). A concept of ``None`` marks a mention
                known to fit no concept, a negative for the combiner.
            aliases: ``(concept_id, alias_text, lang)`` of the concept list (and the
                silver aliases, which the bundle adds).
            gold_examples: How many of the first examples the analyst linked (the rest
                are dictionary links); ``None``: all of them.

        Returns:
            The fitted linker.

        Raises:
            InputError: When there is neither an alias nor a linked example, or an
                alias has an empty concept ID or text.
        """
        alias_list = []
        for n, (concept, text, lang) in enumerate(aliases, start=1):
            if not str(concept).strip() or not str(text).strip():
                raise InputError(
                    f"Alias {n} ({concept!r}, {text!r}) is missing its concept ID or its text;"
                    " give both or remove the alias."
                )
            alias_list.append((str(concept), str(text).strip(), str(lang or "")))
        examples = list(examples)
        n_gold = len(examples) if gold_examples is None else gold_examples
        own = examples[:n_gold]  # only the analyst's links lend their words as forms
        forms = alias_list + example_forms(own)
        if not forms:
            raise InputError(
                "Linking needs at least one alias or linked example; got none."
                " Import a concept list first."
            )
        self.aliases_ = alias_list
        self.example_forms_ = example_forms(own)
        self._alias_words_by_lang: dict[str, frozenset[str]] = {}
        # Computed once: the combiner's folds reuse them.
        features = [context_features(s, sp) for s, sp, _ in examples]
        concepts = [c for _, _, c in examples]
        self.scorer_ = Scorer.build(forms, fit_context(features, concepts, self.C), self.space)
        linked = sum(1 for *_, c in examples[:n_gold] if c is not None)
        self.weights_ = (
            self._fit_combiner(examples, features, alias_list, n_gold)
            if linked >= MIN_COMBINER_EXAMPLES
            else list(DEFAULT_WEIGHTS)
        )
        return self

    def _fit_combiner(
        self,
        examples: list[Example],
        features: list[dict[str, float]],
        aliases: list[Alias],
        n_gold: int,
    ) -> list[float]:
        """Fit the combiner on out-of-fold scores, or return :data:`DEFAULT_WEIGHTS`.

        :meth:`fit` calls it only with enough links by the analyst.
        """
        rows, labels = [], []
        folds = KFold(n_splits=min(self.folds, len(examples)), shuffle=True, random_state=self.seed)
        for train_idx, test_idx in folds.split(examples):
            train = [examples[i] for i in train_idx]
            held = [examples[i] for i in test_idx]
            context = fit_context(
                [features[i] for i in train_idx], [c for _, _, c in train], self.C
            )
            own = [examples[i] for i in train_idx if i < n_gold]
            scorer = Scorer.build(aliases + example_forms(own), context, self.space)
            cands_per_item = scorer.candidates(
                [(s, sp) for s, sp, _ in held], [features[i] for i in test_idx]
            )
            for (_, _, gold), cands in zip(held, cands_per_item, strict=True):
                for concept, scores in cands.items():
                    rows.append(scores)
                    labels.append(concept == gold)
        if len(set(labels)) < 2:
            return list(DEFAULT_WEIGHTS)
        combiner = LogisticRegression(C=1.0).fit(np.array(rows), np.array(labels))
        return [float(combiner.intercept_[0]), *map(float, combiner.coef_[0])]

    @property
    def is_fitted(self) -> bool:
        """Whether :meth:`fit` (or :meth:`load`) has run."""
        return hasattr(self, "scorer_")

    def __sklearn_is_fitted__(self) -> bool:
        """Tell scikit-learn's ``check_is_fitted`` what :attr:`is_fitted` says."""
        return self.is_fitted

    def _check(self) -> None:
        if not self.is_fitted:
            raise NotFittedError(
                "The concept linker has not been fitted; call fit(examples, aliases) first."
            )

    def link_many(
        self,
        items: Sequence[tuple[Sentence, Span]],
        gold: Sequence[str | None] | None = None,
    ) -> list[LinkResult]:
        """Link many mentions at once (faster than :meth:`link` one by one).

        Args:
            items: ``(sentence, span)`` pairs.
            gold: Optional concept per item given by the analyst; a non-``None`` gold
                concept always wins, with probability 1.

        Returns:
            One :class:`LinkResult` per item.

        Raises:
            NotFittedError: When the linker has not been fitted.
            InputError: When ``gold`` is not as long as ``items``.
        """
        self._check()
        if gold is not None and len(gold) != len(items):
            raise InputError(
                f"Gold concepts must be one per mention; got {len(gold)} for {len(items)} mentions."
            )
        results = []
        for i, cands in enumerate(self.scorer_.candidates(items)):
            if gold is not None and gold[i] is not None:
                results.append(LinkResult(gold[i], 1.0, [(str(gold[i]), 1.0)]))
                continue
            scored = sorted(
                ((c, combine(self.weights_, s)) for c, s in cands.items()),
                key=lambda cp: (-cp[1], cp[0]),
            )[:TOP_K]
            best = scored[0] if scored else (None, 0.0)
            concept = best[0] if best[1] >= self.threshold else None
            results.append(LinkResult(concept, best[1], scored))
        reads = self.phrase_threshold > 0 or self.read_noun_phrase
        if reads and self.scorer_.context is not None:
            results = self._read_in_phrases(items, results, gold)
        return results

    def _read_in_phrases(
        self,
        items: Sequence[tuple[Sentence, Span]],
        results: list[LinkResult],
        gold: Sequence[str | None] | None,
    ) -> list[LinkResult]:
        """Relink or unlink one-word mentions by the phrases they make (module docstring).

        Only concepts the context classifier has seen linked are read: for another,
        nothing but the alias's spelling speaks for it, and no phrase has that spelling.
        A neighbour that is itself an alias of the list is not read.

        A mention its noun phrase relinks gets the phrase's concept and probability,
        first among its candidates; one that a phrase with an adjacent word does not
        keep is unlinked, with the lowest probability the phrases give its concept, and
        its candidates stay as they were.
        """
        known = set(self.scorer_.context_classes)
        # (item, phrase, whether it is the noun-phrase reading); the adjacent phrase is
        # often also the noun phrase's: both readings use its one score.
        checks: dict[tuple[int, Span], set[bool]] = {}
        for i, ((sentence, span), result) in enumerate(zip(items, results, strict=True)):
            if result.concept not in known or (gold is not None and gold[i] is not None):
                continue
            aliases = self._alias_words(sentence.lang)
            readings: list[tuple[bool, Callable[[str, str], bool] | None]] = []
            readings += [(False, None)] if self.phrase_threshold > 0 else []
            readings += [(True, joins_noun_phrase)] if self.read_noun_phrase else []
            for noun_phrase, across in readings:
                for wide, word in neighbour_phrases(sentence, span, across):
                    if (
                        stem_word(sentence.text[word.start : word.end], sentence.lang)
                        not in aliases
                    ):
                        checks.setdefault((i, wide), set()).add(noun_phrase)
        if not checks:
            return results
        lowest: dict[int, float] = {}
        other: dict[int, tuple[str, float]] = {}
        cands = self.scorer_.candidates([(items[i][0], wide) for i, wide in checks])
        for ((i, _), kinds), scores in zip(checks.items(), cands, strict=True):
            concept = results[i].concept
            probs = {c: combine(self.weights_, s) for c, s in scores.items()}
            held = probs.get(concept or "", 0.0)
            if False in kinds:
                lowest[i] = min(lowest.get(i, 1.0), held)
            best = max(((p, c) for c, p in probs.items() if c != concept), default=None)
            if True in kinds and best and best[0] > held and best[0] >= self.threshold:
                if best[0] > other.get(i, ("", 0.0))[1]:
                    other[i] = (best[1], best[0])
        read = list(results)
        for i, r in enumerate(results):
            if i in other:
                concept, prob = other[i]
                rest = [c for c in r.candidates if c[0] != concept]
                read[i] = LinkResult(concept, prob, [(concept, prob), *rest])
            elif lowest.get(i, 1.0) < self.phrase_threshold:
                read[i] = LinkResult(None, lowest[i], r.candidates)
        return read

    def _alias_words(self, lang: str) -> frozenset[str]:
        """Return the keys of the one-word aliases (the list's and silver ones) in ``lang``."""
        cache = self._alias_words_by_lang
        if lang not in cache:
            keys = set()
            for _, text, alias_lang in self.aliases_:
                words = tokenize(text, alias_lang or "xx")
                if len(words) == 1:
                    keys.add(stem_word(text[words[0][0] : words[0][1]], lang))
            cache[lang] = frozenset(keys)
        return cache[lang]

    def link(self, sentence: Sentence, span: Span, gold: str | None = None) -> LinkResult:
        """Link one mention; a ``gold`` concept from the analyst always wins.

        ``span.concept`` is not read: dictionary spans carry silver concepts, so the
        caller decides what is gold and passes it.
        """
        return self.link_many([(sentence, span)], None if gold is None else [gold])[0]

    def save(self, directory: str | Path) -> None:
        """Write the linker to ``directory``: ``linker.json`` and, if trained, ``context.skops``.

        Aliases and example forms go to JSON; the exact index and the fuzzy
        vectoriser are rebuilt from them on load (both are deterministic).

        Raises:
            NotFittedError: When the linker has not been fitted.
        """
        self._check()
        folder = Path(directory)
        folder.mkdir(parents=True, exist_ok=True)
        context = self.scorer_.context
        if context is not None:
            skops.io.dump(context, folder / _SKOPS_FILE)
        elif (folder / _SKOPS_FILE).exists():
            (folder / _SKOPS_FILE).unlink()  # a stale classifier must not come back on load
        meta = {
            "format": _FORMAT,
            "params": self.get_params(),
            "aliases": self.aliases_,
            "example_forms": self.example_forms_,
            "weights": self.weights_,
            "has_context": context is not None,
        }
        write_meta(folder / _JSON_FILE, meta)

    @classmethod
    def load(cls, directory: str | Path) -> ConceptLinker:
        """Read a linker written by :meth:`save`.

        Raises:
            ModelError: When the files are missing, foreign or hold untrusted types.
        """
        folder = Path(directory)
        meta = read_meta(folder / _JSON_FILE, _FORMAT, "concept linker")
        context = (
            load_trusted_skops(folder / _SKOPS_FILE, Pipeline) if meta["has_context"] else None
        )
        linker = cls(**meta["params"])
        linker.aliases_ = [tuple(a) for a in meta["aliases"]]
        linker.example_forms_ = [tuple(a) for a in meta["example_forms"]]
        linker._alias_words_by_lang = {}
        linker.scorer_ = Scorer.build(
            linker.aliases_ + linker.example_forms_, context, linker.space
        )
        weights = [float(w) for w in meta["weights"]]
        linker.weights_ = weights + [0.0] * (len(DEFAULT_WEIGHTS) - len(weights))
        return linker


# ------------------------------------------------------------------ threshold


def choose_threshold(
    linker: ConceptLinker, held_out: Sequence[Example], *, metric: str = "f1"
) -> float:
    """Return the threshold that maximises linking quality on held-out gold links.

    Every distinct best-candidate probability is tried as a threshold (a mention is
    linked when its probability is at least the threshold); ties go to the lowest.

    Args:
        linker: A fitted linker (its own threshold is ignored and left unchanged).
        held_out: ``(sentence, span, gold_concept_or_None)`` not used in fitting.
        metric: ``"f1"`` (precision over links made, recall over gold links) or
            ``"accuracy"`` (the concept or ``None`` is right).

    Returns:
        The chosen threshold, in ``[0, 1]``.

    Raises:
        InputError: When ``held_out`` is empty or ``metric`` is unknown.
    """
    if metric not in ("f1", "accuracy"):
        raise InputError(f"The 'metric' must be 'f1' or 'accuracy'; got {metric!r}.")
    if not held_out:
        raise InputError("Choosing a threshold needs held-out gold links; got none.")
    results = link_scores(linker, held_out)
    best_t, best_v = 0.0, -1.0
    for t in sorted({0.0, *(p for _, p, _ in results)}):
        value = linking_quality(results, t, metric)
        if value > best_v + 1e-12:
            best_t, best_v = t, value
    return float(best_t)


def link_scores(linker: ConceptLinker, examples: Sequence[Example]) -> list[LinkScore]:
    """Return ``(best_concept, probability, gold)`` per example, ignoring the threshold."""
    results = linker.link_many([(s, sp) for s, sp, _ in examples])
    return [
        (r.candidates[0][0] if r.candidates else None, r.probability, gold)
        for r, (_, _, gold) in zip(results, examples, strict=True)
    ]


def linking_quality(scores: Sequence[LinkScore], threshold: float, metric: str = "f1") -> float:
    """Return F1 or accuracy of :func:`link_scores` output at a threshold."""
    predicted = [(c if p >= threshold else None, gold) for c, p, gold in scores]
    if metric == "accuracy":
        return sum(c == g for c, g in predicted) / len(predicted)
    made = sum(c is not None for c, _ in predicted)
    wanted = sum(g is not None for _, g in predicted)
    right = sum(c is not None and c == g for c, g in predicted)
    if not made or not wanted or not right:
        return 0.0
    precision, recall = right / made, right / wanted
    return 2 * precision * recall / (precision + recall)
