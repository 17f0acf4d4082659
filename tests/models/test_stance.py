"""Tests of extractor.models.stance: cue lexicon, NegEx-style negation, rules, model, MAMS check."""

from __future__ import annotations

import json
import time
from collections import Counter
from pathlib import Path

import numpy as np
import pytest

from extractor.errors import InputError, ModelError
from extractor.models.stance import StanceModel, load_cues, rule_stance, stance_features
from extractor.types import STANCES, Sentence, Span

CUES = load_cues()


def _mention(
    text: str, term: str, lang: str = "en", question: str | None = None, nth: int = 0
) -> tuple[Sentence, Span]:
    """Build a sentence and the span of the ``nth`` occurrence of ``term`` in it."""
    start = -1
    for _ in range(nth + 1):
        start = text.index(term, start + 1)
    return Sentence(id=0, text=text, lang=lang, question=question), Span(start, start + len(term))


def _features(text: str, term: str, lang: str = "en", question: str | None = None) -> dict:
    sentence, span = _mention(text, term, lang, question)
    return stance_features(sentence, span, CUES)


# ------------------------------------------------------------------ cue lexicon


def test_load_cues_has_three_languages_and_documents_its_shape() -> None:
    assert {"en", "fr", "es"} <= set(CUES)
    assert "negation_pre" in CUES["fr"] and "wanted" in CUES["es"]
    assert "_comment" in json.loads(
        Path("extractor/models/data/stance_cues.json").read_text("utf-8")
    )


def test_load_cues_merges_user_file_over_packaged(tmp_path: Path) -> None:
    user = tmp_path / "cues.json"
    user.write_text(json.dumps({"en": {"liked": ["zingy"]}, "sw": {"liked": ["tamu"]}}), "utf-8")
    cues = load_cues(user)
    assert "zingy" in cues["en"]["liked"] and "good" in cues["en"]["liked"]
    assert cues["sw"]["liked"] == ["tamu"]
    features = stance_features(*_mention("Its flavour is zingy.", "flavour"), cues)
    assert rule_stance(features)[0] == "liked"


@pytest.mark.parametrize(
    ("content", "message"),
    [
        ("{not json", "not readable JSON"),
        (json.dumps({"en": {"lovely_words": ["x"]}}), "category 'lovely_words'"),
        (json.dumps({"en": {"liked": "good"}}), "must be a list"),
    ],
    ids=["broken-json", "unknown-category", "not-a-list"],
)
def test_load_cues_rejects_bad_user_file(tmp_path: Path, content: str, message: str) -> None:
    user = tmp_path / "cues.json"
    user.write_text(content, "utf-8")
    with pytest.raises(InputError, match=message):
        load_cues(user)


def test_load_cues_missing_file_raises(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="does not exist"):
        load_cues(tmp_path / "nope.json")


# ------------------------------------------------------------------ negation (NegEx)
# Triggers below come from the NegEx lists (Chapman et al., 2001, J Biomed Inform
# 34:301-310), recalled from memory: pre-negation "no", "not", "denies", "without",
# "no evidence of"; post-negation "unlikely", "free"; pseudo-negation "no increase",
# "not only"; termination "but"; scope of five words.


@pytest.mark.parametrize(
    ("text", "term", "negated"),
    [
        ("The field showed no rot this season.", "rot", True),
        ("The farmer denies any rot in the store.", "rot", True),
        ("We harvested it without pests.", "pests", True),
        ("There is no evidence of weevils in the sacks.", "weevils", True),
        ("Pod shattering is unlikely with Tembala.", "Pod shattering", True),
        ("The seed stays weevil free.", "weevil", True),
        ("There was no increase in yield.", "yield", False),
        ("It is not only the taste that we value.", "taste", False),
        ("No rot in the store but the pods split.", "pods", False),
        ("No rot in the store but the pods split.", "rot", True),
        ("It is not true that after three long dry seasons the pods split.", "pods", False),
    ],
    ids=[
        "pre-no",
        "pre-denies",
        "pre-without",
        "pre-no-evidence-of",
        "post-unlikely",
        "post-free",
        "pseudo-no-increase",
        "pseudo-not-only",
        "termination-but-after",
        "termination-but-before",
        "beyond-five-word-scope",
    ],
)
def test_stance_features_negation_scope_follows_negex(text: str, term: str, negated: bool) -> None:
    assert bool(_features(text, term).get("span_negated")) is negated


@pytest.mark.parametrize(
    ("text", "term", "lang"),
    [
        ("Le grain ne pourrit pas au grenier.", "pourrit", "fr"),
        ("Sans charançons, même après six mois.", "charançons", "fr"),
        ("El grano no se pudre en el granero.", "se pudre", "es"),
        ("Sin gorgojos en el almacén.", "gorgojos", "es"),
    ],
    ids=["fr-ne-pas", "fr-sans", "es-no", "es-sin"],
)
def test_stance_features_negation_in_french_and_spanish(text: str, term: str, lang: str) -> None:
    assert _features(text, term, lang).get("span_negated")


def test_stance_features_sin_embargo_is_not_negation() -> None:
    # "sin embargo" (however) holds the trigger "sin" but negates nothing.
    features = _features("Sin embargo el sabor es bueno.", "sabor", "es")
    assert not features.get("span_negated")
    assert features.get("after_contrast")


# ------------------------------------------------------------------ span words are not evidence


def test_stance_features_never_include_the_span_words() -> None:
    features = _features("People say the bitterness is welcome in the sauce.", "bitterness")
    assert not any("bitterness" in key for key in features)


def test_stance_features_same_context_gives_same_features_whatever_the_trait() -> None:
    # Bitterness can be welcome: the trait word must not move the stance.
    bitter = _features("We really like the bitterness of Tembala.", "bitterness")
    sweet = _features("We really like the sweetness of Tembala.", "sweetness")
    assert bitter == sweet


# ------------------------------------------------------------------ cold-start rules


@pytest.mark.parametrize(
    ("text", "term", "lang", "question", "expected"),
    [
        ("It does not rot in the store.", "rot", "en", None, "liked"),
        ("The seeds are too small.", "small", "en", None, "disliked"),
        ("Les grains sont trop petits.", "petits", "fr", None, "disliked"),
        ("Los granos son demasiado pequeños.", "pequeños", "es", None, "disliked"),
        ("I wish the pods were longer.", "pods", "en", None, "wanted"),
        ("J'aimerais une cuisson plus rapide.", "cuisson", "fr", None, "wanted"),
        ("Il faudrait des grains plus gros.", "grains", "fr", None, "wanted"),
        ("Ojalá el grano fuera más grande.", "grano", "es", None, "wanted"),
        ("Quisiera un sabor más dulce.", "sabor", "es", None, "wanted"),
        ("The taste is good but the pods split.", "taste", "en", None, "liked"),
        ("The taste is good but the pods split.", "pods", "en", None, "disliked"),
        ("Le goût est bon mais la cuisson est lente.", "cuisson", "fr", None, "disliked"),
        (
            "El sabor es bueno pero tarda en cocinarse.",
            "tarda en cocinarse",
            "es",
            None,
            "disliked",
        ),
        ("Its taste is not good.", "taste", "en", None, "disliked"),
        ("Its seeds are bigger than those of Kivuli.", "seeds", "en", None, "liked"),
        ("Small seeds.", "seeds", "en", "What do you dislike about Ruvaro?", "disliked"),
        ("Small seeds.", "seeds", "en", "What would you change in Ruvaro?", "wanted"),
        ("Small seeds.", "seeds", "en", "Why do you grow Ruvaro?", "liked"),
        ("Small seeds.", "seeds", "en", None, "neutral"),
        ("Des grains rouges.", "grains", "fr", "Qu'est-ce que vous n'aimez pas ?", "disliked"),
    ],
    ids=[
        "negated-fault",
        "excess-en",
        "excess-fr",
        "excess-es",
        "wish-en",
        "wish-fr",
        "il-faudrait",
        "ojala",
        "quisiera",
        "contrast-first-side",
        "contrast-second-side",
        "contrast-fr",
        "contrast-es",
        "negated-cue",
        "comparison",
        "question-dislike",
        "question-change",
        "question-why-grow",
        "no-cue",
        "question-fr-negated-like",
    ],
)
def test_rule_stance_reads_cues(
    text: str, term: str, lang: str, question: str | None, expected: str
) -> None:
    stance, confidence = rule_stance(_features(text, term, lang, question))
    assert stance == expected
    assert 0.0 < confidence < 1.0


def test_rule_stance_is_more_confident_with_a_cue_than_from_the_question_alone() -> None:
    cue = rule_stance(_features("The seeds are too small.", "seeds"))[1]
    question = rule_stance(_features("Small seeds.", "seeds", question="What do you dislike?"))[1]
    assert cue > question


# ------------------------------------------------------------------ model

_TRAIN = [
    ("The taste is good and sweet.", "taste", "liked"),
    ("We love the colour of Tembala.", "colour", "liked"),
    ("The yield is excellent here.", "yield", "liked"),
    ("Buyers like the big seeds.", "big seeds", "liked"),
    ("The pods are poor this year.", "pods", "disliked"),
    ("The cooking time is terrible.", "cooking time", "disliked"),
    ("Weevils are a problem in storage.", "Weevils", "disliked"),
    ("I hate the hard skin.", "hard skin", "disliked"),
    ("I wish the plant were taller.", "plant", "wanted"),
    ("We would like bigger seeds.", "bigger seeds", "wanted"),
    ("Breeders should give us early maturity.", "early maturity", "wanted"),
    ("We need drought tolerance.", "drought tolerance", "wanted"),
    ("The seed colour is red.", "seed colour", "neutral"),
    ("We plant it in March.", "plant", "neutral"),
    ("The pods are harvested by hand.", "pods", "neutral"),
    ("My neighbour grows it for the market.", "market", "neutral"),
]


def _examples() -> list[tuple[Sentence, Span, str]]:
    out = []
    for n, (text, term, stance) in enumerate(_TRAIN):
        sentence, span = _mention(text, term)
        out.append((sentence._replace(id=n), span, stance))
    return out


def test_stance_model_unfitted_answers_with_rules() -> None:
    sentence, span = _mention("It does not rot in the store.", "rot")
    stance, prob = StanceModel().predict(sentence, span)
    assert stance == rule_stance(stance_features(sentence, span, CUES))[0] == "liked"
    assert prob == pytest.approx(rule_stance(stance_features(sentence, span, CUES))[1])


def test_stance_model_fit_returns_self_and_learns() -> None:
    model = StanceModel(C=10.0)
    assert model.fit(_examples()) is model
    assert set(model.classes_) == set(STANCES)
    predictions = model.predict_many([(s, sp) for s, sp, _ in _examples()])
    accuracy = np.mean([p[0] == y for p, (_, _, y) in zip(predictions, _examples(), strict=True)])
    assert accuracy >= 0.9


def test_stance_model_proba_rows_sum_to_one_in_stances_order() -> None:
    model = StanceModel().fit(_examples())
    proba = model.predict_proba_many([(s, sp) for s, sp, _ in _examples()[:3]])
    assert proba.shape == (3, len(STANCES))
    np.testing.assert_allclose(proba.sum(axis=1), 1.0)


def test_stance_model_save_load_round_trip(tmp_path: Path) -> None:
    model = StanceModel(C=2.0).fit(_examples())
    model.save(tmp_path / "m")
    loaded = StanceModel.load(tmp_path / "m")
    items = [(s, sp) for s, sp, _ in _examples()]
    np.testing.assert_allclose(loaded.predict_proba_many(items), model.predict_proba_many(items))
    assert loaded.get_params() == model.get_params()


def test_stance_model_save_unfitted_round_trips_as_rules(tmp_path: Path) -> None:
    StanceModel().save(tmp_path / "m")
    loaded = StanceModel.load(tmp_path / "m")
    assert not loaded.is_fitted
    sentence, span = _mention("The seeds are too small.", "seeds")
    assert loaded.predict(sentence, span)[0] == "disliked"


def test_stance_model_load_missing_raises(tmp_path: Path) -> None:
    with pytest.raises(ModelError, match="No readable stance model"):
        StanceModel.load(tmp_path)


@pytest.mark.parametrize(
    ("labels", "message"),
    [(["liked", "liked"], "at least two stances"), (["liked", "happy"], "stance 'happy'")],
    ids=["one-stance", "unknown-stance"],
)
def test_stance_model_fit_rejects_bad_labels(labels: list[str], message: str) -> None:
    examples = [(s, sp, label) for (s, sp, _), label in zip(_examples(), labels, strict=False)]
    with pytest.raises(InputError, match=message):
        StanceModel().fit(examples)


# ------------------------------------------------------------------ MAMS (outside check)


@pytest.mark.slow
def test_stance_model_beats_majority_on_mams_by_15_points() -> None:
    # MAMS aspect-term sentiment (Jiang et al., EMNLP-IJCNLP 2019, Apache-2.0): every
    # sentence holds aspects of different polarities, so only span-relative features
    # can beat the majority class. Positive/negative/neutral read as liked/disliked/neutral.
    mams = pytest.importorskip("mams", reason="tests/mams.py (the MAMS reader) is absent")
    train, test = mams.load_mams("train"), mams.load_mams("test")
    if train is None or test is None:
        pytest.skip(mams.SKIP_REASON)

    def triples(rows: list[dict]) -> list[tuple[Sentence, Span, str]]:
        return [
            (Sentence(id=n, text=row["text"], lang="en"), Span(s["start"], s["end"]), s["stance"])
            for n, row in enumerate(rows)
            for s in row["spans"]
        ]

    started = time.perf_counter()
    model = StanceModel().fit(triples(train))
    gold = triples(test)
    predicted = model.predict_many([(s, sp) for s, sp, _ in gold])
    accuracy = float(np.mean([p[0] == y for p, (_, _, y) in zip(predicted, gold, strict=True)]))
    majority = Counter(y for _, _, y in gold).most_common(1)[0][1] / len(gold)
    print(
        f"MAMS test: accuracy {accuracy:.3f}, majority {majority:.3f}, "
        f"{time.perf_counter() - started:.1f} s"
    )
    assert accuracy >= majority + 0.15


def test_stance_model_load_refuses_a_swapped_model_file(tmp_path: Path) -> None:
    import skops.io
    from sklearn.linear_model import LogisticRegression
    from sklearn.pipeline import Pipeline
    from sklearn.preprocessing import StandardScaler

    StanceModel().fit(_examples()).save(tmp_path / "m")
    # A file swapped for one holding a type outside the trusted list must not load.
    foreign = Pipeline([("scale", StandardScaler()), ("lr", LogisticRegression())])
    foreign.fit([[0.0], [1.0]], ["liked", "disliked"])
    skops.io.dump(foreign, tmp_path / "m" / "stance.skops")
    with pytest.raises(ModelError, match="does not hold the Pipeline this tool saves"):
        StanceModel.load(tmp_path / "m")
