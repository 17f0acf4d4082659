"""The numpy decoder against python-crfsuite's own tagger (the reference library).

MAMS aspect terms (Jiang et al., EMNLP-IJCNLP 2019, Apache-2.0; read from
``../shared/datasets/mams-atsa/``) and the demo's gold sentences: a tagger trained on some
sentences decodes others; the best paths, every token marginal and the path probability
must equal, bit for bit, what python-crfsuite's ``Tagger`` gives for the same model and
attributes (``set``, ``tag``, ``marginal``, ``probability``).
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

import pycrfsuite
import pytest

from extractor.models.crf_decoder import CrfDecoder
from extractor.models.crf_items import crf_tokens
from extractor.models.tagger import TraitTagger, _sentence_rows, sentence_items
from extractor.nlp.clusters import learn_clusters
from extractor.nlp.dictionary import build_dictionary
from extractor.nlp.features import AxisBlock, SplitAttributes, sentence_attribute_parts
from extractor.nlp.spans import spans_to_concepts, spans_to_iob
from extractor.nlp.text import tokenize
from extractor.types import TAGS, Sentence, Span
from tests.mams import SKIP_REASON, load_mams

ROOT = Path(__file__).resolve().parents[2]


def _reference(model: bytes, X: list[Any]) -> list[tuple]:
    crf = pycrfsuite.Tagger()
    crf.open_inmemory(model)
    labels = crf.labels()
    out: list[tuple] = []
    for xseq in X:
        if not xseq:
            out.append(([], [], 1.0))
            continue
        crf.set(xseq)
        path = crf.tag()
        marginals = [[crf.marginal(y, t) for y in labels] for t in range(len(xseq))]
        out.append((path, marginals, crf.probability(path)))
    return out


def _parts(sentence: Sentence, dictionary: object, clusters: object) -> list[SplitAttributes]:
    offsets = tokenize(sentence.text, sentence.lang)
    matches = dictionary.match_tokens(sentence.text, sentence.lang, offsets)  # type: ignore[attr-defined]
    return sentence_attribute_parts(
        [sentence.text[a:b] for a, b in offsets],
        dict_tags=spans_to_iob(offsets, matches),
        dict_concepts=spans_to_concepts(offsets, matches),
        clusters=clusters,  # type: ignore[arg-type]
        lang=sentence.lang,
    )


def _decoded(decoder: CrfDecoder, X: list) -> list[tuple]:
    return [
        ([decoder.labels[i] for i in d.path], d.marginals.tolist(), d.probability)
        for d in decoder.decode(X)
    ]


@pytest.fixture(scope="module")
def mams_case() -> tuple[TraitTagger, list[Sentence], object, object]:
    train, test = load_mams("train"), load_mams("test")
    if train is None or test is None:
        pytest.skip(SKIP_REASON)
    demo = [
        json.loads(line)
        for line in (ROOT / "sample_interviews" / "gold.jsonl").read_text("utf-8").splitlines()
    ]
    sentences = [Sentence(i, d["sentence"], d["lang"]) for i, d in enumerate(train[:300] + demo)]
    clusters = learn_clusters([(s.text, s.lang) for s in sentences], space="none")
    dictionary = build_dictionary(
        [(f"T{n}", r["sentence"][m["start"] : m["end"]], r["lang"]) for n, r in enumerate(demo)
         for m in r["mentions"]]
    )  # fmt: skip
    gold = [[Span(m["start"], m["end"]) for m in d["mentions"]] for d in train[:300] + demo]
    items = [sentence_items(s, dictionary, clusters) for s in sentences]
    tagger = TraitTagger().fit(
        [f for _, f, _ in items],
        [spans_to_iob(o, g) for (o, _, _), g in zip(items, gold, strict=True)],
    )
    unseen = [Sentence(10_000 + i, d["sentence"], d["lang"]) for i, d in enumerate(test[:400])]
    return tagger, unseen, dictionary, clusters


def test_decoder_equals_crfsuite_bit_for_bit_on_mams(mams_case: tuple) -> None:
    tagger, unseen, dictionary, clusters = mams_case
    decoder = CrfDecoder.from_model(tagger.model_bytes_)
    flat = [sentence_items(s, dictionary, clusters)[1] for s in unseen]
    split = [_parts(s, dictionary, clusters) for s in unseen]
    rows = [_sentence_rows(s, dictionary, clusters, decoder.index)[1] for s in unseen]
    for x in (flat, split, rows):
        x.insert(5, [])  # an empty sentence decodes to nothing, probability 1
    expected = _reference(tagger.model_bytes_, flat)
    assert _decoded(decoder, flat) == expected
    assert _decoded(decoder, split) == expected
    assert _decoded(decoder, rows) == expected
    # Twice over, so that the cached sums of the words' own attributes are used as well.
    assert _decoded(decoder, rows) == expected
    # The check saw traits: the reference tags some tokens B-TRAIT.
    assert sum(path.count(TAGS[1]) for path, _, _ in expected) > 100


def test_rows_are_the_rows_of_the_attributes(mams_case: tuple) -> None:
    tagger, unseen, dictionary, clusters = mams_case
    decoder = CrfDecoder.from_model(tagger.model_bytes_)
    index = decoder.index
    tokens = 0
    for s in unseen:
        parts = _parts(s, dictionary, clusters)
        rows = _sentence_rows(s, dictionary, clusters, index)[1]
        assert [own for own, _ in rows] == [own for own, _ in parts]
        assert [r for _, r in rows] == [[index[a] for a in rest] for _, rest in parts]
        tokens += len(parts)
    assert tokens > 5000


def test_predict_gives_crfsuites_marginals_and_probability(mams_case: tuple) -> None:
    tagger, unseen, dictionary, clusters = mams_case
    flat = [sentence_items(s, dictionary, clusters)[1] for s in unseen[:50]]
    expected = _reference(tagger.model_bytes_, flat)
    labels = pycrfsuite.Tagger()
    labels.open_inmemory(tagger.model_bytes_)
    order = labels.labels()
    for path, (tags, marginals, probability) in zip(tagger.predict(flat), expected, strict=True):
        assert path.probability == probability
        for got, want in zip(path.marginals, marginals, strict=True):
            assert got[TAGS[0]] == want[order.index(TAGS[0])]
            assert got[TAGS[1]] == want[order.index(TAGS[1])]
        assert len(path.tags) == len(tags)


def test_dict_features_are_decoded_by_crfsuite() -> None:
    X: list[list[dict[str, str | float]]] = [[{"w": "sweet", "BOS": 1.0}, {"w": "taste"}]] * 4
    tagger = TraitTagger().fit(X, [["B-TRAIT", "I-TRAIT"]] * 4)
    (path,) = tagger.predict(X[:1])
    assert path.tags == ["B-TRAIT", "I-TRAIT"]


def test_decoder_refuses_bytes_that_are_no_crfsuite_model() -> None:
    with pytest.raises(ValueError, match="CRFsuite"):
        CrfDecoder.from_model(b"not a model at all, but long enough for a header....")


@pytest.fixture(scope="module")
def axes_case() -> tuple[TraitTagger, list[Sentence], object, object]:
    """A tagger trained with each word's main-axis coordinates (a block of weighted attributes).

    The coordinates are the first 16 of the workspace vectors learned from the text, so
    the check needs no pretrained space; what is checked is how weights times values are
    summed, against CRFsuite's own tagger given the same ``{name: value}`` dicts.
    """
    train, test = load_mams("train"), load_mams("test")
    if train is None or test is None:
        pytest.skip(SKIP_REASON)
    sentences = [Sentence(i, d["sentence"], d["lang"]) for i, d in enumerate(train[:300])]
    unseen = [Sentence(10_000 + i, d["sentence"], d["lang"]) for i, d in enumerate(test[:300])]
    clusters = learn_clusters([(s.text, s.lang) for s in sentences + unseen], space="none")
    places = {
        w: [round(float(v), 4) for v in vector[:16]]
        for w, vector in zip(clusters["words"], clusters["vectors"], strict=True)
    }
    clusters["pretrained"] = {**clusters["pretrained"], "axes": places}
    dictionary = build_dictionary([("T1", "food", "en"), ("T2", "service", "en")])
    gold = [[Span(m["start"], m["end"]) for m in d["mentions"]] for d in train[:300]]
    items = [sentence_items(s, dictionary, clusters, axes=True) for s in sentences]
    tagger = TraitTagger(space_axes=True).fit(
        [f for _, f, _ in items],
        [spans_to_iob(o, g) for (o, _, _), g in zip(items, gold, strict=True)],
    )
    return tagger, unseen, dictionary, clusters


def test_axis_blocks_are_weighed_as_crfsuite_weighs_them(axes_case: tuple) -> None:
    tagger, unseen, dictionary, clusters = axes_case
    split = [sentence_items(s, dictionary, clusters, axes=True)[1] for s in unseen]
    blocks = [own[-1] for x in split for own, _ in x if own and isinstance(own[-1], AxisBlock)]
    assert len(blocks) > 2000  # most tokens carry a block
    weights = pycrfsuite.Tagger()
    weights.open_inmemory(tagger.model_bytes_)
    learned = weights.info().state_features
    assert sum(1 for (name, _), w in learned.items() if name.startswith("v") and w) >= 16
    decoder = CrfDecoder.from_model(tagger.model_bytes_)
    rows = [_sentence_rows(s, dictionary, clusters, decoder.index, True)[1] for s in unseen]
    assert [[own for own, _ in x] for x in rows] == [[own for own, _ in x] for x in split]
    # CRFsuite's tagger reads the same tokens as {name: value} dicts, block last in the own part.
    expected = _reference(tagger.model_bytes_, [crf_tokens(x, {}) for x in split])
    assert _decoded(decoder, split) == expected
    assert _decoded(decoder, rows) == expected
    assert _decoded(decoder, rows) == expected  # the cached sums of the own parts
    paths = tagger.predict(split)
    assert [p.probability for p in paths] == [p for _, _, p in expected]
    # The block does weigh: without it the same model decodes other probabilities.
    plain = [sentence_items(s, dictionary, clusters)[1] for s in unseen]
    assert _decoded(decoder, plain) != expected


def test_axis_block_elsewhere_is_left_to_crfsuite(axes_case: tuple) -> None:
    tagger, unseen, dictionary, clusters = axes_case
    own, rest = sentence_items(unseen[0], dictionary, clusters, axes=True)[1][0]
    decoder = CrfDecoder.from_model(tagger.model_bytes_)
    with pytest.raises(TypeError):
        decoder.decode([[own + rest]])  # a whole token: the block is not where it is weighed
