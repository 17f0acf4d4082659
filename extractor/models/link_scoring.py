"""The four scores a candidate concept gets for a trait mention, and their combination.

* **exact**: the span equals an alias after normalisation (case-folded, Snowball
  stem per word, accents removed; :func:`extractor.nlp.dictionary.stem_word`), keyed with
  the sentence's stemmer and with the alias's own, so code-switched words still match;
* **fuzzy**: the best cosine between the span and the concept's aliases in TF-IDF
  space over character 2-4-grams inside word boundaries (any language, tolerant of
  spelling, inflection and missing accents);
* **context**: a logistic regression over the span's character n-grams, stems, and
  the words within :data:`WINDOW` tokens, trained on the linked examples;
* **semantic**: the best cosine between the span and the concept's forms in the
  pretrained multilingual space (:mod:`extractor.nlp.pretrained`), each encoded whole,
  so "cuit vite" meets "cooks fast" and an English-only list links French answers.
  Rescaled so that :data:`SEMANTIC_FLOOR` (above what unrelated words share) is 0 and
  1 is 1. A span made of function words and verbs of liking only
  (:func:`extractor.nlp.nontrait.only_function_words`) scores 0; without the space
  (``"none"``, or its package missing) every semantic score is 0.

:func:`combine` turns the four into one probability with a logistic combiner's
weights (:class:`extractor.models.linking.ConceptLinker` chooses them).
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Sequence
from functools import lru_cache

import numpy as np
from scipy.sparse import spmatrix
from sklearn.feature_extraction import DictVectorizer
from sklearn.feature_extraction.text import TfidfVectorizer
from sklearn.linear_model import LogisticRegression
from sklearn.pipeline import Pipeline

from extractor.nlp import pretrained
from extractor.nlp.derivation import derivation_clash
from extractor.nlp.dictionary import stem_word, stemmer_language
from extractor.nlp.fold import fold, fold_words
from extractor.nlp.nontrait import names_stance_only, never_alone, only_function_words
from extractor.nlp.synonyms import SILVER_WORD_SIMILARITY
from extractor.nlp.text import primary_subtag, tokenize
from extractor.types import Sentence, Span

Alias = tuple[str, str, str]
"""(concept_id, alias text, language tag)."""

Example = tuple[Sentence, Span, "str | None"]
"""A linked mention: sentence, span and its concept (``None``: known to fit no concept)."""

Scores = tuple[float, float, float, float]
"""The exact, fuzzy, context and semantic scores of one candidate concept."""

SEMANTIC_FLOOR = 0.6
"""Cosine that maps to a semantic score of 0: in the multilingual encoder's space a
stop word and a trait word share about 0.5 ("taste" and "le": 0.55, "taste" and "the":
0.50), unrelated trait words up to about 0.55 ("colour"/"flavour" 0.54), translations
0.8-0.95 ("taste"/"goût" 0.89, "price"/"preço" 0.95; measured, tests/models). A floor
of 0.5 let "colour" add to a fuzzy near-miss with "flavour" and link to taste."""

WINDOW = 5
"""Tokens either side of a span whose words feed the context classifier."""

TOP_K = 5
"""Candidates kept per mention, best first."""


def language_code(lang: str) -> str:
    """Return the primary language subtag of a tag (``""`` for no tag)."""
    return primary_subtag(lang) if lang else ""


@lru_cache(maxsize=1 << 16)
def alias_key(text: str, lang: str) -> str:
    """Return the exact-match key of a text: each word stemmed and folded, space-joined."""
    words = [text[s:e] for s, e in tokenize(text, lang or "xx")]
    return " ".join(stem_word(w, lang or "xx") for w in words if any(c.isalnum() for c in w))


@lru_cache(maxsize=1 << 16)
def _key_words(text: str, lang: str) -> tuple[str, ...]:
    words = [text[s:e] for s, e in tokenize(text, lang or "xx")]
    return tuple(fold(w) for w in words if any(c.isalnum() for c in w))


def key_words(text: str, lang: str) -> list[str]:
    """Return the words :func:`alias_key` stems, case-folded and without accents."""
    return list(_key_words(text, lang))


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


def fit_context(
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


def example_forms(examples: Sequence[Example]) -> list[Alias]:
    """Return the surface forms of linked examples as aliases of their concepts."""
    return [(c, s.text[sp.start : sp.end], s.lang or "") for s, sp, c in examples if c is not None]


def combine(weights: Sequence[float], scores: Scores) -> float:
    """Return the combiner's probability: intercept ``weights[0]``, then one weight per score."""
    z = weights[0] + sum(w * x for w, x in zip(weights[1:], scores, strict=True))
    return float(1.0 / (1.0 + np.exp(-z)))


class Scorer:
    """Exact, fuzzy and context scores of concepts for mentions (no combining).

    Build with :meth:`build`; the exact index of another language is built on first use.
    """

    def __init__(
        self,
        *,
        forms: list[Alias],
        concepts: list[str],
        context: Pipeline | None,
        context_classes: list[str],
        exact_own: dict[str, set[str]],
        vectorizer: TfidfVectorizer,
        matrix: spmatrix | None,
        starts: np.ndarray,
        space: str = pretrained.NONE,
        shared: dict[str, np.ndarray] | None = None,
        shared_surfaces: dict[str, tuple[str, ...]] | None = None,
    ) -> None:
        self.forms = forms
        self.concepts = concepts
        self.context = context
        self.context_classes = context_classes
        self.exact_own = exact_own
        self.vectorizer = vectorizer
        self.matrix = matrix
        self.starts = starts
        self.space = space
        self.shared = shared or {}
        self.shared_surfaces = shared_surfaces or {}
        self._exact_by_lang: dict[str, dict[str, set[str]]] = {}
        self._forms_of: dict[str, list[tuple[str, str]]] | None = None
        self._form_vectors: np.ndarray | None = None
        self._shared_vectors: np.ndarray | None = None

    @classmethod
    def build(
        cls, forms: Sequence[Alias], context: Pipeline | None, space: str = pretrained.NONE
    ) -> Scorer:
        """Index the alias forms for exact, fuzzy and semantic scores, beside a context classifier.

        ``space`` names the pretrained space of the semantic score; its form vectors are
        computed on first use.
        """
        # Forms sorted by concept so per-concept maxima are one reduceat.
        ordered = sorted(set(forms), key=lambda a: (a[0], a[1], a[2]))
        exact_own: dict[str, set[str]] = defaultdict(set)
        for concept, text, lang in ordered:
            exact_own[alias_key(text, lang)].add(concept)
        shared, surfaces = shared_words(ordered)
        texts = [fold_words(t) for _, t, _ in ordered]
        vectorizer = TfidfVectorizer(analyzer="char_wb", ngram_range=(2, 4))
        matrix = vectorizer.fit_transform(texts) if texts else None
        starts, seen = [], set()
        for i, (concept, _, _) in enumerate(ordered):
            if concept not in seen:
                seen.add(concept)
                starts.append(i)
        return cls(
            forms=ordered,
            concepts=sorted({c for c, _, _ in ordered}),
            context=context,
            context_classes=[str(c) for c in context.classes_] if context is not None else [],
            exact_own=exact_own,
            vectorizer=vectorizer,
            matrix=matrix,
            starts=np.array(starts, dtype=np.int64),
            space=space,
            shared=shared,
            shared_surfaces=surfaces,
        )

    def _exact_index(self, lang: str) -> dict[str, set[str]]:
        """Return every form keyed with the stemmer of ``lang`` (built once per language)."""
        code = language_code(lang)
        if code not in self._exact_by_lang:
            index: dict[str, set[str]] = defaultdict(set)
            for concept, text, _ in self.forms:
                index[alias_key(text, code)].add(concept)
            self._exact_by_lang[code] = index
        return self._exact_by_lang[code]

    def exact(self, sentence: Sentence, span: Span) -> set[str]:
        """Return the concepts one of whose forms equals the span after normalisation.

        A form that meets the span by a stem only, where one word carries a derivational
        suffix the other lacks ("amarillo", "amarillamiento"), is no exact match
        (:func:`extractor.nlp.derivation.derivation_clash`).
        """
        text = sentence.text[span.start : span.end]
        key = alias_key(text, sentence.lang)
        hits = set(self._exact_index(sentence.lang).get(key, set()))
        hits |= self.exact_own.get(key, set())
        if hits:
            words = key_words(text, sentence.lang)
            hits = {c for c in hits if self._same_words(words, key, c, sentence.lang)}
        tokens = tokenize(sentence.text, sentence.lang or "xx")
        inside = [k for k, (s, e) in enumerate(tokens) if s < span.end and e > span.start]
        if len(inside) == 1:
            words = [sentence.text[s:e] for s, e in tokens]
            forms = [t for c, t, _ in self.forms if c in hits]
            if never_alone(words, inside[0], sentence.lang, forms):
                return set()  # a verb of liking, or an infinitive meeting a noun by its stem
        return hits

    def _same_words(self, words: list[str], key: str, concept: str, lang: str) -> bool:
        """Return whether a form of ``concept`` keyed ``key`` meets ``words`` as the same words.

        As in dictionary matching (:mod:`extractor.nlp.dictionary`): a form written as the
        words are always does; by the stem alone, not when a process-noun suffix differs.
        """
        if self._forms_of is None:
            self._forms_of = defaultdict(list)
            for c, form, form_lang in self.forms:
                self._forms_of[c].append((form, form_lang))
        code = stemmer_language(lang)
        for form, form_lang in self._forms_of[concept]:
            own = stemmer_language(form_lang)
            theirs = key_words(form, lang)
            if theirs == words:
                return True
            if own != code and alias_key(form, form_lang) == key:
                return True  # met by its own stemmer: a code-switched word, as before
            if alias_key(form, lang) == key and (
                len(theirs) != len(words)
                or not derivation_clash(words, theirs, key.split(), lang, alias_native=own == code)
            ):
                return True
        return False

    def fuzzy(
        self, texts: Sequence[str], ignore: Sequence[np.ndarray | None] | None = None
    ) -> np.ndarray:
        """Return an ``(n, concepts)`` array of the best alias cosine per concept.

        ``ignore`` holds, per text, the forms left out of its maxima (:meth:`ignored`).
        """
        if self.matrix is None or not texts:
            return np.zeros((len(texts), len(self.concepts)))
        sims = (self.vectorizer.transform([fold_words(t) for t in texts]) @ self.matrix.T).toarray()
        for i, left_out in enumerate(ignore or ()):
            if left_out is not None:
                sims[i, left_out] = 0.0
        result: np.ndarray = np.maximum.reduceat(sims, self.starts, axis=1)
        return result

    def ignored(self, items: Sequence[tuple[Sentence, Span]]) -> list[np.ndarray | None]:
        """Return, per mention, the forms its fuzzy and semantic scores leave out.

        A one-word mention whose word is a shared word of the forms (:func:`shared_words`:
        "roots" of "big roots", "root yield" and "root necrosis") is not scored against
        the forms that hold it: it names what they share (the plant part), and meets each
        of them as closely as the others, by their letters and in the pretrained space,
        which reads a phrase by its head noun. Its other forms, and the context
        classifier, still count.
        """
        out: list[np.ndarray | None] = []
        pending: list[tuple[int, str]] = []
        for i, (sentence, span) in enumerate(items):
            text = sentence.text[span.start : span.end]
            key = alias_key(text, sentence.lang)
            out.append(self.shared.get(key) if key and " " not in key else None)
            if key and " " not in key and key not in self.shared:
                pending.append((i, text))
        loaded = pretrained.load_space(self.space) if pending and self.shared else None
        if loaded is None:
            return out
        # In another language ("raízes" for "roots"): the word's nearest in the space is
        # a shared word, at a single word's silver-alias cosine, nearer than any form.
        if self._shared_vectors is None:
            words = [w for k in sorted(self.shared_surfaces) for w in self.shared_surfaces[k]]
            self._shared_vectors = loaded.words(words)
        keys = [k for k in sorted(self.shared_surfaces) for _ in self.shared_surfaces[k]]
        if self._form_vectors is None:
            self._form_vectors = loaded.words([t for _, t, _ in self.forms])
        spans = loaded.words([text for _, text in pending])
        to_shared = spans @ self._shared_vectors.T
        to_forms = (spans @ self._form_vectors.T).max(axis=1)
        for row, (i, _) in enumerate(pending):
            j = int(np.argmax(to_shared[row]))
            if to_shared[row, j] >= SILVER_WORD_SIMILARITY and to_shared[row, j] > to_forms[row]:
                out[i] = self.shared[keys[j]]
        return out

    def semantic(
        self,
        items: Sequence[tuple[Sentence, Span]],
        ignore: Sequence[np.ndarray | None] | None = None,
    ) -> np.ndarray:
        """Return an ``(n, concepts)`` array of the best rescaled cosine per concept (see above).

        ``ignore`` holds, per mention, the forms left out of its maxima (:meth:`ignored`).
        """
        out = np.zeros((len(items), len(self.concepts)))
        loaded = pretrained.load_space(self.space) if self.forms else None
        if loaded is None or not items:
            return out
        if self._form_vectors is None:
            self._form_vectors = loaded.words([t for _, t, _ in self.forms])
        texts = [s.text[sp.start : sp.end] for s, sp in items]
        keep = [
            i
            for i, ((s, _), text) in enumerate(zip(items, texts, strict=True))
            if not only_function_words(
                [text[a:b] for a, b in tokenize(text, s.lang or "xx")], s.lang
            )
        ]
        if not keep:
            return out
        spans = loaded.words([texts[i] for i in keep])
        sims = spans @ self._form_vectors.T
        for row, i in enumerate(keep):
            left_out = ignore[i] if ignore else None
            if left_out is not None:
                sims[row, left_out] = -1.0
        best = np.maximum.reduceat(sims, self.starts, axis=1)
        out[keep] = np.clip((best - SEMANTIC_FLOOR) / (1.0 - SEMANTIC_FLOOR), 0.0, 1.0)
        return out

    def context_proba(self, features: Sequence[dict[str, float]]) -> np.ndarray | None:
        """Return the context classifier's probabilities, or ``None`` without one."""
        if self.context is None or not features:
            return None
        return np.asarray(self.context.predict_proba(list(features)))

    def candidates(
        self,
        items: Sequence[tuple[Sentence, Span]],
        features: Sequence[dict[str, float]] | None = None,
    ) -> list[dict[str, Scores]]:
        """Return, per mention, candidate concept -> (exact, fuzzy, context, semantic) scores.

        ``features`` are the mentions' :func:`context_features` when already computed.
        """
        ignore = self.ignored(items)
        fuzzy = self.fuzzy([s.text[sp.start : sp.end] for s, sp in items], ignore)
        semantic = self.semantic(items, ignore)
        ctx = None
        if self.context is not None:
            if features is None:
                features = [context_features(s, sp) for s, sp in items]
            ctx = self.context_proba(features)
        col = {c: j for j, c in enumerate(self.concepts)}
        out: list[dict[str, Scores]] = []
        for i, (sentence, span) in enumerate(items):
            if _stance_only(sentence, span):
                out.append({})  # "want", "I want": no trait, whatever its letters share
                continue
            exact = self.exact(sentence, span)
            pool = set(exact)
            if len(self.concepts):
                pool.update(self.concepts[j] for j in np.argsort(-fuzzy[i])[:TOP_K])
                pool.update(
                    self.concepts[j] for j in np.argsort(-semantic[i])[:TOP_K] if semantic[i, j] > 0
                )
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
                        float(semantic[i, col[c]]) if c in col else 0.0,
                    )
                    for c in sorted(pool)  # sets iterate by hash: sort, so every run fits alike
                }
            )
        return out


def _stance_only(sentence: Sentence, span: Span) -> bool:
    """Whether the span holds a verb of liking and function words only (never linked)."""
    tokens = tokenize(sentence.text, sentence.lang or "xx")
    inside = [k for k, (s, e) in enumerate(tokens) if s < span.end and e > span.start]
    if not inside:
        return False
    words = [sentence.text[s:e] for s, e in tokens]
    return names_stance_only(words, inside[0], inside[-1] + 1, sentence.lang)


def shared_words(
    forms: Sequence[Alias],
) -> tuple[dict[str, np.ndarray], dict[str, tuple[str, ...]]]:
    """Return each shared word's key with the indices of the forms that hold it, and its spellings.

    A shared word is a word (:func:`alias_key`, keyed with its form's language) of the
    forms of two concepts or more that is no form of one word itself: "root" of "root
    yield", "big roots" and "root necrosis", "resistance" of "drought resistance" and
    "disease resistance". See :meth:`Scorer.ignored`.
    """
    concepts_of: dict[str, set[str]] = defaultdict(set)
    forms_of: dict[str, list[int]] = defaultdict(list)
    spelling: dict[str, set[str]] = defaultdict(set)
    whole: set[str] = set()
    for j, (concept, text, lang) in enumerate(forms):
        words = [text[a:b] for a, b in tokenize(text, lang or "xx")]
        keys = [stem_word(w, lang or "xx") for w in words if any(c.isalnum() for c in w)]
        if len(keys) == 1:
            whole.add(keys[0])
        for word, key in zip([w for w in words if any(c.isalnum() for c in w)], keys, strict=True):
            concepts_of[key].add(concept)
            if j not in forms_of[key]:
                forms_of[key].append(j)
            spelling[key].add(fold(word))
    chosen = [w for w, cs in concepts_of.items() if len(cs) >= 2 and w not in whole]
    return (
        {w: np.array(forms_of[w], dtype=np.int64) for w in chosen},
        {w: tuple(sorted(spelling[w])) for w in chosen},
    )
