"""The models of one version together: the estimator contract, train, predict, save and load."""

from __future__ import annotations

from pathlib import Path

import pytest
from sklearn.base import clone

from extractor.errors import ModelError, NotFittedError
from extractor.models import bundle
from extractor.models.bundle import Mention, SentencePrediction, TraitModels
from extractor.nlp import pretrained
from extractor.nlp.clusters import learn_clusters
from extractor.types import STANCES, Implicit, Sentence, Span

# Invented trait IDs and answers about an invented variety (Velora).
ALIASES = [("TX:01", "cooking time", "en"), ("TX:02", "seed size", "en")]
CORPUS = [
    Sentence(i, text, "en")
    for i, text in enumerate(
        [
            "The cooking time of Velora is short .",
            "We like the seed size of Velora .",
            "The seed size is too small for the market .",
            "I wish the cooking time were shorter .",
            "We planted it after the rains .",
            "My neighbour sells it in town .",
        ]
    )
]
GOLD = [(CORPUS[0], [Span(4, 16, "TX:01", "liked")]), (CORPUS[4], [])]


def test_clone_gives_unfitted_models_with_the_same_params() -> None:
    # scikit-learn's clone is the outside reference for the estimator contract: it
    # rebuilds an estimator from get_params() alone and checks that __init__ stored them.
    models = TraitModels(tagger_params={"gold_weight": 3}, link_threshold=0.4, seed=2)
    copy = clone(models)
    assert copy.get_params() == {
        "link_threshold": 0.4,
        "seed": 2,
        "silver_synonyms": True,
        "stance_params": None,
        "tagger_params": {"gold_weight": 3},
    }
    assert copy.tagger_params is not models.tagger_params


def test_predict_before_training_raises() -> None:
    with pytest.raises(NotFittedError, match="not trained"):
        TraitModels().predict(CORPUS[:1])


@pytest.fixture(scope="module")
def trained() -> TraitModels:
    return TraitModels.train(GOLD, CORPUS, ALIASES, tagger_params={"max_iterations": 20})


def test_train_finds_linked_mentions_with_a_stance_distribution(trained: TraitModels) -> None:
    (prediction,) = trained.predict([CORPUS[1]])
    assert isinstance(prediction, SentencePrediction)
    assert [(m.start, m.end, m.concept) for m in prediction.mentions] == [(12, 21, "TX:02")]
    mention = prediction.mentions[0]
    assert isinstance(mention, Mention) and mention.stance in STANCES
    assert mention.stance_probs is not None
    assert sum(mention.stance_probs.values()) == pytest.approx(1.0)


def test_save_load_round_trip_predicts_the_same(trained: TraitModels, tmp_path: Path) -> None:
    trained.save(tmp_path / "v1")
    loaded = TraitModels.load(tmp_path / "v1")
    assert [p.mentions for p in loaded.predict(CORPUS)] == [
        p.mentions for p in trained.predict(CORPUS)
    ]
    assert loaded.aliases_ == ALIASES
    # Hand count: two labeled sentences with one span, two aliases.
    assert loaded.counts_ == trained.counts_
    assert (trained.counts_.gold_sentences, trained.counts_.gold_spans) == (2, 1)
    assert trained.counts_.aliases == 2


@pytest.mark.parametrize(
    ("name", "text"),
    [
        ("meta.json", "[]"),
        ("meta.json", '{"parameters": 5}'),
        ("meta.json", '{"counts": []}'),
        ("aliases.json", '{"a": 1}'),
        ("aliases.json", '[["TX:01", "fast", ["en"]]]'),
        ("aliases.json", "[[1, 2, 3]]"),
        ("meta.json", "{bad"),
    ],
    ids=[
        "meta-list",
        "parameters-number",
        "counts-list",
        "aliases-object",
        "aliases-nested",
        "aliases-numbers",
        "meta-not-json",
    ],  # fmt: skip
)
def test_load_refuses_a_wrong_shaped_file_naming_the_version(
    trained: TraitModels, tmp_path: Path, name: str, text: str
) -> None:
    trained.save(tmp_path / "v7")
    (tmp_path / "v7" / name).write_text(text, encoding="utf-8")
    with pytest.raises(ModelError, match=rf"Model version v7 .*{name}.*`traits train`"):
        TraitModels.load(tmp_path / "v7")


@pytest.mark.parametrize(
    "data",
    [
        bytes(range(256)) * 4,
        # an .npy header announcing an object array, which numpy loads only by unpickling
        b"\x93NUMPY\x01\x00v\x00{'descr': '|O', 'fortran_order': False, 'shape': (1,), }"
        + b" " * 43
        + b"\n"
        + bytes(64),
    ],
    ids=["random-bytes", "object-array"],
)
def test_load_never_relays_advice_to_unpickle(
    trained: TraitModels, tmp_path: Path, data: bytes
) -> None:
    trained.save(tmp_path / "v8")
    (tmp_path / "v8" / "vectors.npy").write_bytes(data)
    with pytest.raises(ModelError) as caught:
        TraitModels.load(tmp_path / "v8")
    message = str(caught.value)
    assert "model version v8" in message and "`traits train`" in message
    assert "pickle" not in message


# Invented: "finish the plate" states taste (TX:03) with no phrase naming it.
PLATES = [
    Sentence(20 + i, text, "en")
    for i, text in enumerate(
        [
            "My children finish the plate of Velora .",
            "The children always finish the plate .",
            "Everybody finishes the plate at home .",
            "We planted Velora after the rains .",
            "My neighbour sells Velora in town .",
            "The children finish the plate quickly .",
        ]
    )
]
PLATE_GOLD: list[tuple[Sentence, list[Span]]] = [(s, []) for s in PLATES[:5]]
PLATE_IMPLICIT = {s.id: [Implicit("TX:03", "liked")] for s in PLATES[:3]}


@pytest.fixture(scope="module")
def with_implicit() -> TraitModels:
    return TraitModels.train(
        PLATE_GOLD,
        CORPUS + PLATES,
        [*ALIASES, ("TX:03", "taste", "en")],
        tagger_params={"max_iterations": 20},
        implicit=PLATE_IMPLICIT,
    )


def test_implicit_labels_give_implicit_predictions(
    with_implicit: TraitModels, monkeypatch: pytest.MonkeyPatch
) -> None:
    unseen, unrelated = PLATES[5], CORPUS[5]
    monkeypatch.setattr(bundle, "IMPLICIT_THRESHOLD", 1.01)
    assert with_implicit.predict([unseen])[0].implicit == []  # below the bar: none added
    monkeypatch.setattr(bundle, "IMPLICIT_THRESHOLD", 0.4)
    found, none = with_implicit.predict([unseen, unrelated])
    assert [(m.concept, m.implicit, m.start, m.end) for m in found.implicit] == [
        ("TX:03", True, 0, len(unseen.text))
    ]
    assert found.implicit[0].stance in STANCES and 0 < found.implicit[0].confidence <= 1
    assert none.implicit == [] and all(not m.implicit for m in found.mentions)
    assert with_implicit.counts_.implicit_traits == 3


def test_implicit_model_survives_save_and_load(
    with_implicit: TraitModels, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setattr(bundle, "IMPLICIT_THRESHOLD", 0.4)
    with_implicit.save(tmp_path / "v")
    again = TraitModels.load(tmp_path / "v")
    (before,) = with_implicit.predict([PLATES[5]])
    (after,) = again.predict([PLATES[5]])
    assert after.implicit == before.implicit


# French answers for an English-only list; "temps de cuisson" is "cooking time"
# (translation from memory).
FRENCH = [
    Sentence(100 + i, text, "fr")
    for i, text in enumerate(
        [
            "Le temps de cuisson de Velora est court .",
            "La taille des grains est bonne .",
            "La taille des grains est trop petite pour le marché .",
            "Nous avons semé après les pluies .",
        ]
    )
]


@pytest.mark.skipif(
    not pretrained.installed(pretrained.DEFAULT), reason="the pretrained space is not installed"
)
def test_english_only_list_finds_french_mentions_and_keeps_its_silver_aliases(
    tmp_path: Path,
) -> None:
    clusters = learn_clusters([(s.text, s.lang) for s in CORPUS + FRENCH], space=pretrained.DEFAULT)
    models = TraitModels(tagger_params={"max_iterations": 20})
    models.fit([], CORPUS + FRENCH, ALIASES, clusters=clusters)
    assert ("TX:01", "temps de cuisson", "fr") in models.silver_aliases_
    assert all(lang == "fr" for _, _, lang in models.silver_aliases_)
    models.save(tmp_path)
    loaded = TraitModels.load(tmp_path)
    assert loaded.silver_aliases_ == models.silver_aliases_
    assert loaded.aliases_ == ALIASES  # the list itself is unchanged
    (prediction,) = loaded.predict([Sentence(200, "Le temps de cuisson est long .", "fr")])
    assert [(m.start, m.end, m.concept) for m in prediction.mentions] == [(3, 19, "TX:01")]


def test_version_saved_without_silver_aliases_loads_with_none(
    trained: TraitModels, tmp_path: Path
) -> None:
    trained.save(tmp_path)
    (tmp_path / bundle.SILVER_FILE).unlink()
    assert TraitModels.load(tmp_path).silver_aliases_ == []
