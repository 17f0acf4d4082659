import math

import krippendorff
import pytest
from seqeval.metrics import f1_score
from sklearn.metrics import cohen_kappa_score

from extractor.models.agreement import (
    NONE,
    agreement,
    kappa,
    mention_units,
    nominal_alpha,
)
from extractor.nlp.spans import spans_to_iob
from extractor.nlp.text import tokenize
from extractor.types import Implicit, Span

# Krippendorff, K. (2011). "Computing Krippendorff's Alpha-Reliability", Annenberg School
# for Communication, Departmental Papers 43: the worked example of four observers, twelve
# units and missing values (section C), nominal alpha = 0.743 (values typed from memory).
PUBLISHED_OBSERVERS = [
    "1 2 3 3 2 1 4 1 2 . . .",
    "1 2 3 3 2 2 4 1 2 5 . 3",
    ". 3 3 3 2 3 4 2 2 5 1 .",
    "1 2 3 3 2 4 4 1 2 5 1 .",
]


def _observers(rows):
    return [[None if v == "." else f"c{v}" for v in row.split()] for row in rows]


def test_nominal_alpha_matches_published_example():
    found = nominal_alpha(_observers(PUBLISHED_OBSERVERS))
    assert found.value == pytest.approx(0.743, abs=0.0005)
    assert found.items == 11  # unit 12 has one value only and cannot be paired


def test_nominal_alpha_matches_published_binary_example():
    # Same source, section A (two observers, binary data, no missing values): alpha = 0.095
    # (from memory).
    first = "0 1 0 0 0 0 0 0 1 0".split()
    second = "1 1 1 0 0 1 0 0 0 0".split()
    assert nominal_alpha([first, second]).value == pytest.approx(0.095, abs=0.0005)


def test_nominal_alpha_undefined_with_one_value():
    assert nominal_alpha([["a", "a"], ["a", "a"]]).value is None


def test_kappa_matches_published_example():
    # The two-reader worked example of the Wikipedia article "Cohen's kappa" (from memory):
    # 20 yes/yes, 5 yes/no, 10 no/yes, 15 no/no; kappa = 0.4.
    first = ["yes"] * 25 + ["no"] * 25
    second = ["yes"] * 20 + ["no"] * 5 + ["yes"] * 10 + ["no"] * 15
    assert kappa(first, second).value == pytest.approx(0.4)


def test_kappa_undefined_when_both_constant():
    assert kappa(["a", "a"], ["a", "a"]).value is None


SENTENCES = {
    1: "The beans cook fast and the yield is high.",
    2: "Big seeds sell well.",
    3: "No complaint.",
}
ANN = {
    "ana": {
        1: [Span(10, 19, "T:2", "liked"), Span(28, 33, "T:3", "liked")],
        2: [Span(0, 9, "T:4", "liked")],
        3: [],
    },
    "ben": {
        1: [Span(10, 19, "T:2", "liked"), Span(28, 33, "T:3", "wanted")],
        2: [Span(4, 9, "T:5", "liked")],
        3: [Span(3, 12, "T:6", "disliked")],
    },
}


def test_mention_units_group_overlapping_spans():
    units = mention_units({"ana": ANN["ana"][2], "ben": ANN["ben"][2]})
    assert units == [{"ana": Span(0, 9, "T:4", "liked"), "ben": Span(4, 9, "T:5", "liked")}]


def test_agreement_kappa_equals_scikit_learn_on_units_listed_by_hand():
    report = agreement(ANN)
    (pair,) = report.pairs
    # Units by hand: s1 "cook fast", s1 "yield", s2 "seeds", s3 "complaint" (ben only).
    ana_concepts = ["T:2", "T:3", "T:4", NONE]
    ben_concepts = ["T:2", "T:3", "T:5", "T:6"]
    ana_stances = ["liked", "liked", "liked", NONE]
    ben_stances = ["liked", "wanted", "liked", "disliked"]
    # scikit-learn's cohen_kappa_score is the outside reference.
    assert pair.concept_kappa.value == pytest.approx(cohen_kappa_score(ana_concepts, ben_concepts))
    assert pair.stance_kappa.value == pytest.approx(cohen_kappa_score(ana_stances, ben_stances))
    assert pair.concept_kappa.items == 4
    assert report.sentences == 3
    assert report.disagreements == (1, 2, 3)


def test_agreement_span_f1_equals_seqeval():
    report = agreement(ANN)
    (pair,) = report.pairs
    gold, pred = [], []
    for sid, text in SENTENCES.items():
        tokens = tokenize(text, "en")
        gold.append(spans_to_iob(tokens, ANN["ana"][sid]))
        pred.append(spans_to_iob(tokens, ANN["ben"][sid]))
    # seqeval (strict IOB2) is the outside reference for span F1.
    assert pair.span.f1 == pytest.approx(f1_score(gold, pred, mode="strict"))


def test_agreement_per_concept_counts_items():
    by_concept = {c.concept: c for c in agreement(ANN).by_concept}
    assert by_concept["T:2"].span.f1 == 1.0
    assert by_concept["T:2"].items == 2
    assert by_concept["T:4"].span.f1 == 0.0
    assert by_concept["T:4"].items == 1


def test_agreement_alpha_on_concept_matches_krippendorff_package_on_units():
    report = agreement(ANN)
    codes = {"T:2": 0, "T:3": 1, "T:4": 2, "T:5": 3, "T:6": 4, NONE: 5}
    data = [
        [codes[c] for c in ["T:2", "T:3", "T:4", NONE]],
        [codes[c] for c in ["T:2", "T:3", "T:5", "T:6"]],
    ]
    expected = krippendorff.alpha(reliability_data=data, level_of_measurement="nominal")
    assert report.concept_alpha.value is not None
    assert math.isclose(report.concept_alpha.value, expected)


def test_agreement_ignores_sentences_one_annotator_labeled():
    labels: dict[str, dict[int, list[Span]]] = {
        "ana": {1: [Span(0, 3, "T:1", "liked")]},
        "ben": {2: []},
    }
    report = agreement(labels)
    assert report.sentences == 0
    assert report.pairs == ()
    assert report.concept_alpha.value is None


def test_agreement_counts_implicit_traits_as_units_by_concept() -> None:
    implied = {"ana": {3: [Implicit("T:7", "wanted")]}, "ben": {3: [Implicit("T:7", "liked")]}}
    report = agreement(ANN, implied)
    (pair,) = report.pairs
    # The hand-listed units above, plus one implicit unit of sentence 3 (T:7 both).
    ana_concepts = ["T:2", "T:3", "T:4", NONE, "T:7"]
    ben_concepts = ["T:2", "T:3", "T:5", "T:6", "T:7"]
    ana_stances = ["liked", "liked", "liked", NONE, "wanted"]
    ben_stances = ["liked", "wanted", "liked", "disliked", "liked"]
    # scikit-learn's cohen_kappa_score is the outside reference.
    assert pair.concept_kappa.value == pytest.approx(cohen_kappa_score(ana_concepts, ben_concepts))
    assert pair.stance_kappa.value == pytest.approx(cohen_kappa_score(ana_stances, ben_stances))
    assert pair.span == agreement(ANN).pairs[0].span  # no words, so span F1 is unchanged


def test_agreement_disagreement_on_implicit_traits_alone() -> None:
    labels: dict[str, dict[int, list[Span]]] = {"ana": {1: []}, "ben": {1: []}}
    assert agreement(labels).disagreements == ()
    implied = {"ana": {1: [Implicit("T:7", "liked")]}}
    assert agreement(labels, implied).disagreements == (1,)
