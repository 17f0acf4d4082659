"""Linking a trait mention to a concept ID of the validated trait list, or to none.

Three scorers give each candidate concept a number in ``[0, 1]``:

* **exact**: the span equals an alias after normalisation (case-folded, Snowball
  stem per word, accents removed; :func:`extractor.nlp.dictionary.stem_word`), keyed with
  the sentence's stemmer and with the alias's own, so code-switched words still match;
* **fuzzy**: the best cosine between the span and the concept's aliases in TF-IDF
  space over character 2-4-grams inside word boundaries (any language, tolerant of
  spelling, inflection and missing accents);
* **context**: a logistic regression over the span's character n-grams, stems, and
  the words within :data:`WINDOW` tokens, trained on the linked examples.

Surface forms of linked examples join the aliases, so a phrasing seen once links
exactly the next time. A small logistic *combiner* turns the three scores into the
probability that a candidate is right. With at least :data:`MIN_COMBINER_EXAMPLES`
linked examples it is fitted on out-of-fold scores (each fold's scorers never saw
the example), so its output is calibrated on the project's own data; below that a
fixed, documented rule is used (:data:`DEFAULT_WEIGHTS`). The best candidate below
``threshold`` leaves the mention unlinked.
"""

from __future__ import annotations

import re
from collections import Counter, defaultdict
from collections.abc import Iterable, Mapping, Sequence
from functools import lru_cache
from pathlib import Path
from typing import Any, NamedTuple

import numpy as np
import skops.io
from sklearn.feature_extraction import DictVectorizer
from sklearn.feature_extraction.text import TfidfVectorizer
from sklearn.linear_model import LogisticRegression
from sklearn.model_selection import KFold
from sklearn.pipeline import Pipeline

from extractor.errors import InputError, NotFittedError
from extractor.models.persist import load_trusted_skops, read_meta, write_meta
from extractor.nlp.dictionary import stem_word
from extractor.nlp.fold import fold, fold_words
from extractor.nlp.text import primary_subtag, tokenize
from extractor.types import Sentence, Span

Alias = tuple[str, str, str]
"""(concept_id, alias text, language tag)."""

Example = tuple[Sentence, Span, "str | None"]
"""A linked mention: sentence, span and its concept (``None``: known to fit no concept)."""

WINDOW = 5
"""Tokens either side of a span whose words feed the context classifier."""

MIN_COMBINER_EXAMPLES = 30
"""Linked examples needed before the combiner is fitted rather than the default rule."""

DEFAULT_WEIGHTS = (-4.0, 5.0, 5.5, 4.0)
"""Intercept and weights of exact, fuzzy and context in the cold-start combiner.

Set by hand (common practice for a cold start) so that an exact alias gives about
0.99, a fuzzy cosine of 0.5 alone about 0.22 (just below the default threshold),
0.6 about 0.33, and a confident context classifier lifts a weak fuzzy match over it.
"""

TOP_K = 5
"""Candidates kept per mention, best first."""

_FORMAT = "trait-extractor/linker/1"
_SKOPS_FILE = "context.skops"
_JSON_FILE = "linker.json"


class LinkResult(NamedTuple):
    """The concept of a mention (``None`` when unlinked), its probability and the candidates."""

    concept: str | None
    probability: float
    candidates: list[tuple[str, float]]


# ------------------------------------------------------------------ normalisation


def _code(lang: str) -> str:
    return primary_subtag(lang) if lang else ""


@lru_cache(maxsize=1 << 16)
def alias_key(text: str, lang: str) -> str:
    """Return the exact-match key of a text: each word stemmed and folded, space-joined."""
    words = [text[s:e] for s, e in tokenize(text, lang or "xx")]
    return " ".join(stem_word(w, lang or "xx") for w in words if any(c.isalnum() for c in w))


def _char_ngrams(text: str, low: int = 2, high: int = 4) -> list[str]:
    """Return character n-grams inside padded word boundaries (as ``char_wb`` does)."""
    out: list[str] = []
    for word in text.split():
        padded = f" {word} "
        for n in range(low, high + 1):
            out.extend(padded[i : i + n] for i in range(max(1, len(padded) - n + 1)))
    return out


def context_features(sentence: Sentence, span: Span) -> dict[str, float]:
    """Return the context-classifier features of a mention.

    Character n-grams and stems of the span (``c:``, ``s:``) and the folded words
    within :data:`WINDOW` tokens either side (``w:``), so a new phrasing of a trait
    ("boils quickly") can be linked by its neighbours ("beans", "pot", "firewood").
    """
    text = sentence.text[span.start : span.end]
    f: dict[str, float] = defaultdict(float)
    for gram in _char_ngrams(fold_words(text)):
        f["c:" + gram] += 1.0
    for stem in alias_key(text, sentence.lang).split():
        f["s:" + stem] = 1.0
    tokens = tokenize(sentence.text, sentence.lang or "xx")
    inside = [k for k, (s, e) in enumerate(tokens) if s < span.end and e > span.start]
    if inside:
        a, b = inside[0], inside[-1] + 1
        for k in list(range(max(0, a - WINDOW), a)) + list(range(b, min(len(tokens), b + WINDOW))):
            word = fold(sentence.text[tokens[k][0] : tokens[k][1]])
            if any(c.isalnum() for c in word):
                f["w:" + word] = 1.0
    return dict(f)


# ------------------------------------------------------------------ scorer


class _Scorer:
    """Exact, fuzzy and context scores of concepts for mentions (no combining)."""

    def __init__(self, forms: Sequence[Alias], context: Pipeline | None) -> None:
        # Forms sorted by concept so per-concept maxima are one reduceat.
        self.forms = sorted(set(forms), key=lambda a: (a[0], a[1], a[2]))
        self.concepts = sorted({c for c, _, _ in self.forms})
        self.context = context
        self.context_classes = [str(c) for c in context.classes_] if context is not None else []
        self._exact_own: dict[str, set[str]] = defaultdict(set)
        for concept, text, lang in self.forms:
            self._exact_own[alias_key(text, lang)].add(concept)
        self._exact_by_lang: dict[str, dict[str, set[str]]] = {}
        texts = [fold_words(t) for _, t, _ in self.forms]
        self.vectorizer = TfidfVectorizer(analyzer="char_wb", ngram_range=(2, 4))
        self.matrix = self.vectorizer.fit_transform(texts) if texts else None
        starts, seen = [], set()
        for i, (concept, _, _) in enumerate(self.forms):
            if concept not in seen:
                seen.add(concept)
                starts.append(i)
        self.starts = np.array(starts, dtype=np.int64)

    def _exact_index(self, lang: str) -> dict[str, set[str]]:
        """Return every form keyed with the stemmer of ``lang`` (built once per language)."""
        code = _code(lang)
        if code not in self._exact_by_lang:
            index: dict[str, set[str]] = defaultdict(set)
            for concept, text, _ in self.forms:
                index[alias_key(text, code)].add(concept)
            self._exact_by_lang[code] = index
        return self._exact_by_lang[code]

    def exact(self, sentence: Sentence, span: Span) -> set[str]:
        text = sentence.text[span.start : span.end]
        key = alias_key(text, sentence.lang)
        hits = set(self._exact_index(sentence.lang).get(key, set()))
        return hits | self._exact_own.get(key, set())

    def fuzzy(self, texts: Sequence[str]) -> np.ndarray:
        """Return an ``(n, concepts)`` array of the best alias cosine per concept."""
        if self.matrix is None or not texts:
            return np.zeros((len(texts), len(self.concepts)))
        sims = (self.vectorizer.transform([fold_words(t) for t in texts]) @ self.matrix.T).toarray()
        return np.maximum.reduceat(sims, self.starts, axis=1)

    def context_proba(self, features: Sequence[dict[str, float]]) -> np.ndarray | None:
        if self.context is None or not features:
            return None
        return np.asarray(self.context.predict_proba(list(features)))

    def candidates(
        self,
        items: Sequence[tuple[Sentence, Span]],
        features: Sequence[dict[str, float]] | None = None,
    ) -> list[dict[str, tuple[float, float, float]]]:
        """Return, per mention, candidate concept -> (exact, fuzzy, context) scores.

        ``features`` are the mentions' :func:`context_features` when already computed.
        """
        texts = [s.text[sp.start : sp.end] for s, sp in items]
        fuzzy = self.fuzzy(texts)
        ctx = None
        if self.context is not None:
            if features is None:
                features = [context_features(s, sp) for s, sp in items]
            ctx = self.context_proba(features)
        out = []
        col = {c: j for j, c in enumerate(self.concepts)}
        for i, (sentence, span) in enumerate(items):
            exact = self.exact(sentence, span)
            pool = set(exact)
            if len(self.concepts):
                pool.update(self.concepts[j] for j in np.argsort(-fuzzy[i])[:TOP_K])
            ctx_row: dict[str, float] = {}
            if ctx is not None:
                ctx_row = {self.context_classes[j]: float(ctx[i, j]) for j in range(ctx.shape[1])}
                pool.update(sorted(ctx_row, key=lambda c: -ctx_row[c])[:TOP_K])
            out.append(
                {
                    c: (
                        1.0 if c in exact else 0.0,
                        float(fuzzy[i, col[c]]) if c in col else 0.0,
                        ctx_row.get(c, 0.0),
                    )
                    for c in pool
                }
            )
        return out


def _fit_context(
    features: Sequence[dict[str, float]], concepts: Sequence[str | None], C: float
) -> Pipeline | None:
    """Fit the context classifier, or return ``None`` with fewer than two linked concepts."""
    pairs = [(f, c) for f, c in zip(features, concepts, strict=True) if c is not None]
    if len({c for _, c in pairs}) < 2:
        return None
    # tol 1e-3: a looser stop than the default changes no prediction on the demo gold
    # and makes fitting (run once per combiner fold) several times faster.
    classifier = LogisticRegression(C=C, max_iter=500, tol=1e-3)
    pipe = Pipeline([("vectorizer", DictVectorizer()), ("classifier", classifier)])
    pipe.fit([f for f, _ in pairs], [c for _, c in pairs])
    return pipe


def _example_forms(examples: Sequence[Example]) -> list[Alias]:
    return [(c, s.text[sp.start : sp.end], s.lang or "") for s, sp, c in examples if c is not None]


def _combine(weights: Sequence[float], scores: tuple[float, float, float]) -> float:
    z = weights[0] + sum(w * x for w, x in zip(weights[1:], scores, strict=True))
    return float(1.0 / (1.0 + np.exp(-z)))


# ------------------------------------------------------------------ linker


class ConceptLinker:
    """Links trait mentions to concept IDs from aliases and linked examples.

    Args:
        threshold: Probability below which the best candidate is not taken and the
            mention stays unlinked. 0.25 maximised linking F1 in 5-fold
            cross-validation on the demo gold (0.853 fitted, 0.837 aliases only);
            :func:`choose_threshold` measures it on a project's own gold.
        C: Inverse regularisation of the context classifier.
        folds: Folds used to fit the combiner on out-of-fold scores.
        seed: Random seed of the fold split.
    """

    def __init__(
        self, *, threshold: float = 0.25, C: float = 1.0, folds: int = 5, seed: int = 0
    ) -> None:
        self.threshold = threshold
        self.C = C
        self.folds = folds
        self.seed = seed

    def get_params(self) -> dict[str, Any]:
        """Return the constructor arguments, to record with each saved model."""
        return {"threshold": self.threshold, "C": self.C, "folds": self.folds, "seed": self.seed}

    def fit(self, examples: Iterable[Example], aliases: Iterable[Alias]) -> ConceptLinker:
        """Learn from aliases and linked examples (gold links and dictionary links).

        Args:
            examples: ``(sentence, span, concept_id)``; may be empty (cold start:
                aliases alone, exact and fuzzy). A concept of ``None`` marks a mention
                known to fit no concept, a negative for the combiner.
            aliases: ``(concept_id, alias_text, lang)`` of the concept list.

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
        forms = alias_list + _example_forms(examples)
        if not forms:
            raise InputError(
                "Linking needs at least one alias or linked example; got none."
                " Import a concept list first."
            )
        self.aliases_ = alias_list
        self.example_forms_ = _example_forms(examples)
        # Computed once: the combiner's folds reuse them.
        features = [context_features(s, sp) for s, sp, _ in examples]
        concepts = [c for _, _, c in examples]
        self.scorer_ = _Scorer(forms, _fit_context(features, concepts, self.C))
        self.weights_ = self._fit_combiner(examples, features, alias_list)
        return self

    def _fit_combiner(
        self, examples: list[Example], features: list[dict[str, float]], aliases: list[Alias]
    ) -> list[float]:
        """Fit the combiner on out-of-fold scores, or return :data:`DEFAULT_WEIGHTS`."""
        linked = sum(1 for *_, c in examples if c is not None)
        if linked < MIN_COMBINER_EXAMPLES:
            return list(DEFAULT_WEIGHTS)
        rows, labels = [], []
        folds = KFold(n_splits=min(self.folds, len(examples)), shuffle=True, random_state=self.seed)
        for train_idx, test_idx in folds.split(examples):
            train = [examples[i] for i in train_idx]
            held = [examples[i] for i in test_idx]
            context = _fit_context(
                [features[i] for i in train_idx], [c for _, _, c in train], self.C
            )
            scorer = _Scorer(aliases + _example_forms(train), context)
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
                ((c, _combine(self.weights_, s)) for c, s in cands.items()),
                key=lambda cp: (-cp[1], cp[0]),
            )[:TOP_K]
            best = scored[0] if scored else (None, 0.0)
            concept = best[0] if best[1] >= self.threshold else None
            results.append(LinkResult(concept, best[1], scored))
        return results

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
        linker.scorer_ = _Scorer(linker.aliases_ + linker.example_forms_, context)
        linker.weights_ = [float(w) for w in meta["weights"]]
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


def link_scores(
    linker: ConceptLinker, examples: Sequence[Example]
) -> list[tuple[str | None, float, str | None]]:
    """Return ``(best_concept, probability, gold)`` per example, ignoring the threshold."""
    results = linker.link_many([(s, sp) for s, sp, _ in examples])
    return [
        (r.candidates[0][0] if r.candidates else None, r.probability, gold)
        for r, (_, _, gold) in zip(results, examples, strict=True)
    ]


def linking_quality(
    scores: Sequence[tuple[str | None, float, str | None]], threshold: float, metric: str = "f1"
) -> float:
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


# ------------------------------------------------------------------ suggestions


def suggest_terms(
    unlinked: Sequence[tuple[Sentence, Span]],
    linker: ConceptLinker,
    vectors: Mapping[str, Any] | None = None,
    *,
    min_count: int = 2,
    k: int = 3,
) -> list[dict[str, Any]]:
    """Rank frequent unlinked mention texts as candidate new aliases or concepts.

    Mentions are grouped by their normalised text (:func:`alias_key`). Groups seen at
    least ``min_count`` times are returned, most frequent first, for ``traits concepts
    suggest``.

    Args:
        unlinked: Mentions the linker left unlinked.
        linker: A fitted linker, whose scorer proposes the nearest concepts.
        vectors: A word-cluster model from :func:`extractor.nlp.clusters.learn_clusters`;
            when given, concepts are also ranked by the cosine between the mean word
            vector of the term and that of each concept's aliases.
        min_count: Fewest mentions for a term to be suggested.
        k: Nearest concepts per term, per method.

    Returns:
        One dict per term: ``term`` (most common written form), ``key``, ``lang``
        (most common), ``count``, ``examples`` (up to 3 sentence texts),
        ``nearest`` (``[(concept, probability)]`` by the linker) and ``nearest_by_vectors``
        (``[(concept, cosine)]``, empty without vectors or known words).
    """
    groups: dict[str, list[tuple[Sentence, Span]]] = defaultdict(list)
    for sentence, span in unlinked:
        key = alias_key(sentence.text[span.start : span.end], sentence.lang)
        if key:
            groups[key].append((sentence, span))
    frequent = sorted(
        ((key, items) for key, items in groups.items() if len(items) >= min_count),
        key=lambda kv: (-len(kv[1]), kv[0]),
    )
    concept_vecs = _concept_vectors(linker, vectors) if vectors else {}
    fast_vectors = _fast(vectors) if vectors else None
    out = []
    for key, items in frequent:
        forms = Counter(s.text[sp.start : sp.end] for s, sp in items)
        langs = Counter(_code(s.lang) for s, _ in items)
        examples: list[str] = []
        for s, _ in items:
            if s.text not in examples:
                examples.append(s.text)
        # Score each occurrence and average: the context differs per sentence.
        totals: dict[str, float] = defaultdict(float)
        for result in linker.link_many(items):
            for concept, prob in result.candidates:
                totals[concept] += prob / len(items)
        nearest = sorted(totals.items(), key=lambda cp: (-cp[1], cp[0]))[:k]
        term = forms.most_common(1)[0][0]
        by_vec: list[tuple[str, float]] = []
        if concept_vecs and fast_vectors is not None:
            vec = _mean_vector(fast_vectors, term)
            if vec is not None:
                sims = {c: float(vec @ v) for c, v in concept_vecs.items()}
                by_vec = sorted(sims.items(), key=lambda cp: (-cp[1], cp[0]))[:k]
        out.append(
            {
                "term": term,
                "key": key,
                "lang": langs.most_common(1)[0][0],
                "count": len(items),
                "examples": examples[:3],
                "nearest": [(c, round(p, 4)) for c, p in nearest],
                "nearest_by_vectors": [(c, round(s, 4)) for c, s in by_vec],
            }
        )
    return out


def _mean_vector(model: Mapping[str, Any], text: str) -> np.ndarray | None:
    """Return the unit mean vector of the words of ``text`` known to the model, or ``None``."""
    index = model.get("_index")
    if index is None:
        index = {w: i for i, w in enumerate(model.get("words") or [])}
    vectors = np.asarray(model.get("vectors", []), dtype=np.float32)
    rows = [index[w] for w in (fold(t) for t in re.findall(r"\w+", text)) if w in index]
    if not rows or vectors.size == 0:
        return None
    mean = vectors[rows].mean(axis=0)
    norm = float(np.linalg.norm(mean))
    return mean / norm if norm > 0 else None


def _fast(model: Mapping[str, Any]) -> dict[str, Any]:
    """Return the model with its word index and vector array built once, not per lookup."""
    return {
        **model,
        "_index": {w: i for i, w in enumerate(model.get("words") or [])},
        "vectors": np.asarray(model.get("vectors", []), dtype=np.float32),
    }


def _concept_vectors(linker: ConceptLinker, model: Mapping[str, Any]) -> dict[str, np.ndarray]:
    """Return each concept's unit mean vector over the words of its aliases."""
    words = model.get("words") or []
    if not words:
        return {}
    fast = _fast(model)
    per_concept: dict[str, list[np.ndarray]] = defaultdict(list)
    for concept, text, _ in linker.aliases_:
        vec = _mean_vector(fast, text)
        if vec is not None:
            per_concept[concept].append(vec)
    out = {}
    for concept, vecs in per_concept.items():
        mean = np.mean(vecs, axis=0)
        norm = float(np.linalg.norm(mean))
        if norm > 0:
            out[concept] = mean / norm
    return out
