"""Token features for the CRF, and the word clusters and vectors they draw on."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

import numpy as np
import pycrfsuite
import pytest

from extractor.errors import ModelError
from extractor.nlp.clusters import (
    corpus_fingerprint,
    learn_clusters,
    load_clusters,
    nearest_words,
    ppmi,
    save_clusters,
)
from extractor.nlp.features import (
    sentence_attributes,
    sentence_features,
    short_shape,
    word_shape,
)

TOKENS = ["Velora", "cooks", "fast", "in", "2", "days", "."]


def test_sentence_features_one_dict_per_token() -> None:
    feats = sentence_features(TOKENS)
    assert len(feats) == len(TOKENS)
    assert all(isinstance(v, str | float) for f in feats for v in f.values())


def test_sentence_features_word_forms_and_affixes() -> None:
    f = sentence_features(["Épaisseur"], lang="fr")[0]
    assert (f["w"], f["lw"], f["n"]) == ("Épaisseur", "épaisseur", "epaisseur")
    assert (f["p1"], f["p4"], f["s1"], f["s4"]) == ("é", "épai", "r", "seur")


def test_sentence_features_stem_depends_on_language() -> None:
    assert sentence_features(["cooking"], lang="en")[0]["st"] == "cook"
    assert sentence_features(["cooking"], lang="")[0]["st"] == "cooking"


def test_sentence_features_position_and_window() -> None:
    feats = sentence_features(TOKENS)
    assert "BOS" in feats[0] and "EOS" not in feats[0]
    assert "EOS" in feats[-1]
    assert feats[0]["-1lw"] == "<pad>" and feats[0]["1lw"] == "cooks" and feats[0]["2lw"] == "fast"
    assert feats[3]["-2lw"] == "cooks" and feats[3]["1lw"] == "2"


def test_sentence_features_flags() -> None:
    feats = sentence_features(TOKENS)
    assert "title" in feats[0] and "digit" in feats[4] and "punct" in feats[6]
    assert "digit" not in feats[1] and "punct" not in feats[1]


def test_sentence_features_dictionary_tags_and_concepts() -> None:
    feats = sentence_features(
        ["cooking", "time", "is", "long"],
        dict_tags=["B-TRAIT", "I-TRAIT", "O", "O"],
        dict_concepts=["TX:0002", "TX:0002", None, None],
    )
    assert (feats[0]["d"], feats[1]["d"], feats[2]["d"]) == ("B-TRAIT", "I-TRAIT", "O")
    assert feats[1]["dc"] == "TX:0002" and "dc" not in feats[2]
    assert feats[2]["-1d"] == "I-TRAIT" and feats[2]["-2d"] == "B-TRAIT"


def test_sentence_features_without_dictionary_has_no_dictionary_features() -> None:
    assert not any(
        k == "d" or k.endswith("d") and k[:-1].lstrip("-").isdigit()
        for k in sentence_features(TOKENS)[2]
    )


def test_sentence_features_cluster_ids() -> None:
    clusters = {"clusters": {"velora": [3, 17, 101]}, "fingerprint": "x"}
    feats = sentence_features(["VELORA", "cooks"], clusters=clusters)
    assert (feats[0]["c0"], feats[0]["c1"], feats[0]["c2"]) == ("3", "17", "101")
    assert feats[1]["-1c"] == "3" and "c0" not in feats[1]


# A hand-made cluster model: workspace clusters at 2 levels, nearest frequent words, and
# pretrained-space clusters.
SMALL_MODEL = {
    "clusters": {"red": [1, 5], "pods": [2, 7]},
    "neighbours": {"red": ["white"], "fast": ["10:30"]},
    "pretrained": {"clusters": {"red": [3, 9], "pods": [4, 8]}},
    "fingerprint": "hand-made",
}


def test_sentence_features_all_of_one_token() -> None:
    feats = sentence_features(
        ["Red", "pods"],
        dict_tags=["O", "B-TRAIT"],
        dict_concepts=[None, "TX:0009"],
        clusters=SMALL_MODEL,
        lang="en",
    )
    assert feats[1] == {
        "bias": 1.0, "w": "pods", "lw": "pods", "n": "pods", "st": "pod",
        "sh": "xxxx", "ssh": "x", "p1": "p", "s1": "s", "p2": "po", "s2": "ds",
        "p3": "pod", "s3": "ods", "p4": "pods", "s4": "pods",
        "c0": "2", "c1": "7", "x0": "4", "x1": "8", "-1x": "3",
        "d": "B-TRAIT", "dc": "TX:0009", "EOS": 1.0,
        "-2lw": "<pad>", "-1lw": "red", "-1c": "1", "-1d": "O",
        "1lw": "<pad>", "2lw": "<pad>",
        "-1lw|lw": "red|pods", "-1c|c": "1|2", "-1c|lw": "1|pods", "-1s3": "red",
    }  # fmt: skip
    assert feats[0]["nn=white"] == 1.0 and feats[0]["+1x"] == "4" and feats[0]["1c"] == "2"
    assert (feats[0]["lw|+1lw"], feats[0]["lw|+1c"], feats[0]["+1s3"]) == (
        "red|pods",
        "red|2",
        "ods",
    )


def test_sentence_attributes_are_the_features_crfsuite_reads_from_the_dicts() -> None:
    # Outside check: python-crfsuite's own conversion (ItemSequence) turns the readable
    # dicts and the attributes the tagger passes into the same weighted attributes.
    words = ["Velora", "cooks", "fast", "10:30", "nn=x:y", "é", "."]
    for clusters in (None, SMALL_MODEL):
        attributes = sentence_attributes(words, dict_tags=["O"] * 7, clusters=clusters, lang="fr")
        dicts = sentence_features(words, dict_tags=["O"] * 7, clusters=clusters, lang="fr")
        assert pycrfsuite.ItemSequence(attributes).items() == pycrfsuite.ItemSequence(dicts).items()


@pytest.mark.parametrize(
    ("word", "shape", "short"),
    [("Velora", "Xxxxxx", "Xx"), ("TX-12", "XX-dd", "X-d"), ("ñame", "xxxx", "x")],
    ids=["title", "code", "accented"],
)
def test_word_shape_and_short_shape(word: str, shape: str, short: str) -> None:
    assert (word_shape(word), short_shape(word)) == (shape, short)


# --- clusters ----------------------------------------------------------------------

# An invented corpus where colour words share contexts, and so do body-part-free crop
# parts; the two groups never share contexts.
COLOURS = ["red", "white", "yellow", "purple", "brown", "orange"]
PARTS = ["tuber", "leaf", "stem", "root", "pod", "husk"]


def toy_corpus() -> list[tuple[str, str]]:
    texts = []
    for i, c in enumerate(COLOURS * 6):
        texts.append((f"the grain colour is {c} and bright after drying", "en"))
        texts.append((f"a very {c} colour we like in Nandor {i % 3}", "en"))
    for i, p in enumerate(PARTS * 6):
        texts.append((f"the {p} rots when stored wet in the granary", "en"))
        texts.append((f"cut the {p} early before it rots, said Amali {i % 3}", "en"))
    return texts


@pytest.fixture(scope="module")
def toy_model() -> dict[str, Any]:
    return learn_clusters(toy_corpus(), dims=16, granularities=(2, 4))


def test_ppmi_matches_hand_computed_value() -> None:
    # Outside check: PMI(w, c) = log(P(w,c) / (P(w) P(c))) (Church & Hanks 1990, from
    # memory); with alpha=1 and counts [[2, 1], [1, 0]]: log((2/4) / ((3/4)*(3/4))) < 0,
    # log((1/4) / ((3/4)*(1/4))) = log(4/3) > 0, so only the off-diagonal is positive.
    from scipy import sparse

    weights = ppmi(sparse.csr_matrix(np.array([[2.0, 1.0], [1.0, 0.0]])), alpha=1.0).toarray()
    assert weights[0, 0] == 0.0 and weights[1, 1] == 0.0
    assert weights[0, 1] == pytest.approx(np.log(4 / 3))


def test_learn_clusters_groups_words_sharing_contexts(toy_model: dict[str, Any]) -> None:
    coarse = {w: toy_model["clusters"][w][0] for w in COLOURS + PARTS}
    assert len({coarse[w] for w in COLOURS}) == 1
    assert len({coarse[w] for w in PARTS}) == 1
    assert coarse["red"] != coarse["tuber"]


def test_nearest_words_finds_same_group(toy_model: dict[str, Any]) -> None:
    near = [w for w, _ in nearest_words(toy_model, "Yellow", 3)]
    assert set(near) <= set(COLOURS)
    assert nearest_words(toy_model, "unknownword", 3) == []


def test_learn_clusters_neighbours_are_frequent_similar_words(toy_model: dict[str, Any]) -> None:
    assert set(toy_model["neighbours"]["red"]) <= set(COLOURS) - {"red"} | {"colour"}
    feats = sentence_features(["Red"], clusters=toy_model)[0]
    assert {k for k in feats if k.startswith("nn=")} == {
        f"nn={w}" for w in toy_model["neighbours"]["red"]
    }


def test_learn_clusters_is_json_serialisable_and_deterministic(toy_model: dict[str, Any]) -> None:
    again = learn_clusters(toy_corpus(), dims=16, granularities=(2, 4))
    assert json.loads(json.dumps(toy_model)) == json.loads(json.dumps(again))


def test_learn_clusters_small_corpus_gives_empty_model() -> None:
    model = learn_clusters([("one short answer", "en")])
    assert model["clusters"] == {} and nearest_words(model, "short", 2) == []


def test_corpus_fingerprint_ignores_order_but_sees_growth() -> None:
    corpus = toy_corpus()
    assert corpus_fingerprint(corpus) == corpus_fingerprint(corpus[::-1])
    assert corpus_fingerprint(corpus) != corpus_fingerprint([*corpus, ("a new answer", "en")])


def test_save_and_load_clusters_round_trip(toy_model: dict[str, Any], tmp_path: Path) -> None:
    save_clusters(toy_model, tmp_path)
    loaded = load_clusters(tmp_path)
    assert loaded["clusters"] == toy_model["clusters"]
    before, after = nearest_words(toy_model, "red", 3), nearest_words(loaded, "red", 3)
    assert {w for w, _ in after} == {w for w, _ in before}
    assert [s for _, s in after] == pytest.approx([s for _, s in before], abs=1e-3)


def test_load_clusters_refuses_foreign_file(tmp_path: Path) -> None:
    (tmp_path / "clusters.json").write_text('{"format": "something-else"}', encoding="utf-8")
    np.save(tmp_path / "vectors.npy", np.zeros((0, 2)))
    with pytest.raises(ModelError, match="not a"):
        load_clusters(tmp_path)


def test_load_clusters_refuses_missing_files(tmp_path: Path) -> None:
    with pytest.raises(ModelError, match="cannot be read"):
        load_clusters(tmp_path)
