"""Tests of extractor.models.stance: the learned stance model, its persistence, a MAMS check."""

from __future__ import annotations

import time
from collections import Counter
from pathlib import Path

import numpy as np
import pytest
from sklearn.base import clone

from extractor.errors import InputError, ModelError
from extractor.models.stance import StanceModel, _model_features, codebook_params, question_only
from extractor.models.stance_features import stance_features
from extractor.models.stance_rules import rule_stance
from extractor.types import STANCES, Sentence, Span
from tests import maize
from tests.mams import SKIP_REASON, load_mams
from tests.models.toy import CUES
from tests.models.toy import mention as _mention

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
    train, test = load_mams("train"), load_mams("test")
    if train is None or test is None:
        pytest.skip(SKIP_REASON)

    def triples(rows: list[dict]) -> list[tuple[Sentence, Span, str]]:
        return [
            (
                Sentence(id=n, text=row["sentence"], lang="en"),
                Span(s["start"], s["end"]),
                s["stance"],
            )
            for n, row in enumerate(rows)
            for s in row["mentions"]
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


def test_stance_model_clone_gives_an_unfitted_copy_with_the_same_params() -> None:
    # scikit-learn's clone is the outside reference for the estimator contract: it
    # rebuilds an estimator from get_params() alone and checks that __init__ stored them.
    model = StanceModel(C=2.0, class_weight="balanced").fit(_examples())
    copy = clone(model)
    assert copy is not model
    assert copy.get_params() == {
        "C": 2.0,
        "class_weight": "balanced",
        "cues_path": None,
        "max_iter": 2000,
        "questions": None,
        "space": "use-m3",
        "dense_weight": 1.0,
    }
    assert model.is_fitted and not copy.is_fitted


# ------------------------------------------------------------------ maize verbatims (outside check)


def test_stance_with_a_question_codebook_agrees_with_our_labels_on_real_maize_answers() -> None:
    # Real farmer answers (maize concept testing, Kenya and Uganda, CC BY 4.0; read in
    # place by tests/maize.py, which says how we labelled 300 of them). No stance label
    # is given to the model: gold spans, the cue rules, and the survey's two field-name
    # questions given a direction in a codebook. Measured: 0.80 with it, 0.48 without.
    gold = maize.load_maize_gold()
    if gold is None:
        pytest.skip(maize.SKIP_REASON)
    items = [
        (Sentence(n, g["text"], "en", g["question"]), Span(s["start"], s["end"]), s["stance"])
        for n, g in enumerate(gold)
        for s in g["spans"]
    ]

    def accuracy(model: StanceModel) -> float:
        predicted = model.predict_many([(s, sp) for s, sp, _ in items])
        return float(np.mean([p[0] == y for p, (_, _, y) in zip(predicted, items, strict=True)]))

    with_codebook = accuracy(StanceModel(questions=codebook_params(maize.CODEBOOK)))
    without = accuracy(StanceModel())
    assert with_codebook >= 0.75
    assert with_codebook >= without + 0.2


def test_the_cue_rules_read_our_labels_on_real_maize_answers() -> None:
    # Real farmer answers (maize concept testing, Kenya and Uganda, CC BY 4.0; read in
    # place by tests/maize.py, which says how we labelled 300 of them): the cold-start
    # rules with the two-question codebook, on the 406 gold spans. Measured 0.911;
    # 0.889 before a negation ended at a resistance word ("not resistant to drought and
    # diseases") and "not sure" / "similar" read as neutral (tests/bench/maize_errors.py
    # lists what is still lost).
    gold = maize.load_maize_gold()
    if gold is None:
        pytest.skip(maize.SKIP_REASON)
    right = total = 0
    for n, g in enumerate(gold):
        sentence = Sentence(n, g["text"], "en", g["question"])
        for s in g["spans"]:
            f = stance_features(sentence, Span(s["start"], s["end"]), CUES, maize.CODEBOOK)
            right += rule_stance(f)[0] == s["stance"]
            total += 1
    assert total == 406
    assert right / total >= 0.90


def test_the_question_alone_decides_where_neutral_mentions_hide_in_real_maize_answers() -> None:
    # Real farmer answers (maize concept testing, CC BY 4.0; our labels, tests/maize.py).
    # The model reads the rule's answer as rule_q=... when the question's lean alone gave
    # it (stance.question_only): that is where statements of fact, neutral in gold, are
    # (measured: 11 of 153 against 3 of 253 decided by words around the mention; since
    # "not sure" and "similar" read as neutral, 6 of 152 against 3 of 249, leaving out
    # the mentions the words read as neutral).
    gold = maize.load_maize_gold()
    if gold is None:
        pytest.skip(maize.SKIP_REASON)
    by_source: dict[bool, Counter[str]] = {True: Counter(), False: Counter()}
    for n, g in enumerate(gold):
        sentence = Sentence(n, g["text"], "en", g["question"])
        for s in g["spans"]:
            f = stance_features(sentence, Span(s["start"], s["end"]), CUES, maize.CODEBOOK)
            stance = rule_stance(f)[0]
            if stance != "neutral":
                by_source[question_only(f, stance)][s["stance"]] += 1

    def neutral_share(counts: Counter[str]) -> float:
        return counts["neutral"] / sum(counts.values())

    assert sum(by_source[True].values()) >= 100 and sum(by_source[False].values()) >= 100
    assert neutral_share(by_source[True]) >= 3 * neutral_share(by_source[False])


def test_model_features_name_the_rule_by_its_source() -> None:
    asked = "What do you dislike about it?"
    fact = _model_features(
        *_mention("Charcoal is now 1500 a bag.", "Charcoal", "en", asked), CUES, {}
    )
    judged = _model_features(*_mention("The taste is poor.", "taste", "en", asked), CUES, {})
    assert fact.get("rule_q=disliked") == 1.0 and "rule=disliked" not in fact
    assert judged.get("rule=disliked") == 1.0 and not any(k.startswith("rule_q=") for k in judged)
