"""The learned stance of a trait mention: ``liked``, ``disliked``, ``wanted`` or ``neutral``.

:class:`StanceModel` is a logistic regression over the span-relative features of
:mod:`extractor.models.stance_features` plus the cue rules' own answer
(:func:`extractor.models.stance_rules.rule_stance`), so it learns how far to trust the rules,
and the pretrained encoder's vectors of the mention's own context (its clause, its
share of the sentence, its words, the two words either side, its neighbours' shares:
:mod:`extractor.models.stance_context`), so what it learns from labels in one language
carries to languages without cue words. Until it is fitted it answers with the rules alone.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from pathlib import Path

import numpy as np
import scipy.sparse as sp_sparse
import skops.io
from sklearn.base import BaseEstimator
from sklearn.feature_extraction import DictVectorizer
from sklearn.linear_model import LogisticRegression
from sklearn.pipeline import Pipeline

from extractor.errors import InputError
from extractor.models.cue_file import Cues, load_cues, packaged_cues
from extractor.models.persist import load_trusted_skops, read_meta, write_meta
from extractor.models.stance_context import DEFAULT_BLOCKS, OLD_BLOCKS, context_vectors
from extractor.models.stance_features import Codebook, stance_features
from extractor.models.stance_rules import cue_rule, rule_proba, rule_stance
from extractor.nlp import pretrained
from extractor.types import STANCES, QuestionCode, Sentence, Span

_FORMAT = "trait-extractor/stance/1"
_SKOPS_FILE = "stance.skops"
_JSON_FILE = "stance.json"


def _model_features(
    sentence: Sentence, span: Span, cues: Cues, codebook: Codebook | None
) -> dict[str, float]:
    """Return :func:`stance_features` plus the rule's answer, so the model can learn to trust it.

    The answer is named by where it came from: ``rule=liked`` when words around the
    mention decided it, ``rule_q=liked`` when only the question's lean did. The two go
    wrong in different ways: a lean alone misses statements of fact ("Charcoal is now
    1500 a bag" in reply to "what do you dislike?" is neutral), cue words confuse
    liked and disliked. On our maize labels (real answers, codebook) gold neutral is
    11 of 153 mentions the lean alone decides and 3 of 253 the words decide.
    ``rule_against_q`` marks words that decide against the question's one lean, so
    the model can learn how far such answers depart from the lean.
    """
    f = stance_features(sentence, span, cues, codebook)
    stance = rule_stance(f)[0]
    by_lean = question_only(f, stance)
    f[f"rule_q={stance}" if by_lean else f"rule={stance}"] = 1.0
    leans = {lean for key, lean in _LEANS.items() if f.get(key)}
    if not by_lean and stance != "neutral" and len(leans) == 1 and stance not in leans:
        # The words say otherwise than the question: "which variety would you try? - the
        # taste is not like Kagoma" is a fault, though most answers to it are wishes.
        f["rule_against_q"] = 1.0
    return f


_LEANS = {"q_liked": "liked", "q_disliked": "disliked", "q_wanted": "wanted"}


def question_only(features: Mapping[str, float], stance: str) -> bool:
    """Return whether :func:`rule_stance` took ``stance`` from the question's lean alone.

    True when the rules give a stance but would give none with the question unknown:
    no cue, negation, contrast or comparison around the mention decided it.

    Args:
        features: The mention's :func:`stance_features`.
        stance: What :func:`rule_stance` answers for them (the caller has it already).
    """
    if stance == "neutral":
        return False
    return cue_rule({k: v for k, v in features.items() if not k.startswith("q_")})[0] == "neutral"


class StanceModel(BaseEstimator):
    """A logistic regression over span-relative stance features.

    Until :meth:`fit` is called, :meth:`predict` and :meth:`predict_proba_many`
    answer with :func:`~extractor.models.stance_rules.rule_stance` (cold start); an unfitted
    model saves and loads too, and keeps answering with the rules.

    Args:
        C: Inverse regularisation strength of the logistic regression; 0.3 was the
            best of 0.1, 0.3 and 1.0 on the MAMS validation split (0.71 accuracy).
        max_iter: Iteration limit of the solver.
        class_weight: ``None`` or ``"balanced"``, passed to the logistic regression.
        cues_path: A user cue file merged over the packaged lexicon
            (see :func:`~extractor.models.cue_file.load_cues`).
        questions: The question codebook as plain data, question key ->
            ``{"text": ..., "direction": ...}`` (either may be missing); saved with
            the model (see :func:`codebook_params`).
        space: The pretrained space whose context vectors join the features
            (:data:`extractor.nlp.pretrained.SPACES`); ``"none"``, or a space whose
            package is missing, leaves the sparse features alone.
        dense_weight: The factor on the context vectors (unit length) beside the sparse
            features (counts): it sets how strongly the regularisation holds them back.
    """

    def __init__(
        self,
        *,
        C: float = 0.3,
        max_iter: int = 2000,
        class_weight: str | None = None,
        cues_path: str | None = None,
        questions: Mapping[str, Mapping[str, str]] | None = None,
        space: str = pretrained.DEFAULT,
        dense_weight: float = 1.0,
    ) -> None:
        self.C = C
        self.max_iter = max_iter
        self.class_weight = class_weight
        self.cues_path = cues_path
        self.questions = questions
        self.space = space
        self.dense_weight = dense_weight

    @property
    def codebook(self) -> dict[str, QuestionCode]:
        """The question codebook of :attr:`questions`, as typed entries."""
        return {
            key: QuestionCode(key, entry.get("text") or None, entry.get("direction") or None)
            for key, entry in (self.questions or {}).items()
        }

    @property
    def cues(self) -> Cues:
        """The lexicon in use: the fitted one, else loaded from ``cues_path``."""
        fitted: Cues | None = getattr(self, "cues_", None)
        if fitted is not None:
            return fitted
        cold: Cues | None = getattr(self, "_cold_cues", None)
        if cold is None:
            # Loaded once and kept, so the compiled-lexicon cache (keyed by identity) hits;
            # the packaged lexicon is one object shared by every model that uses it.
            cold = self._cold_cues = (
                packaged_cues() if self.cues_path is None else load_cues(self.cues_path)
            )
        return cold

    def fit(self, examples: Iterable[tuple[Sentence, Span, str]]) -> StanceModel:
        """Learn stance from labelled mentions.

        Args:
            examples: ``(sentence, span, stance)`` triples, stance one of :data:`STANCES`.

        Returns:
            The fitted model.

        Raises:
            InputError: When a stance is unknown or fewer than two stances occur.
        """
        examples = list(examples)
        labels = []
        for n, (_, _, stance) in enumerate(examples, start=1):
            if stance not in STANCES:
                raise InputError(
                    f"Stance example {n} has stance {stance!r}; use one of {', '.join(STANCES)}."
                )
            labels.append(stance)
        if len(set(labels)) < 2:
            raise InputError(
                "Stance training needs mentions of at least two stances; "
                f"got {sorted(set(labels))}. Label more mentions or keep the rule-based stance."
            )
        cues = load_cues(self.cues_path)
        codebook = self.codebook
        X = [_model_features(s, sp, cues, codebook) for s, sp, _ in examples]
        space = pretrained.load_space(self.space)
        self.space_ = space.name if space is not None else pretrained.NONE
        self.context_ = DEFAULT_BLOCKS
        self.dense_dim_ = len(DEFAULT_BLOCKS) * space.dim if space is not None else 0
        pipe = Pipeline(
            [
                ("vectorizer", DictVectorizer()),
                (
                    "classifier",
                    LogisticRegression(
                        C=self.C,
                        max_iter=self.max_iter,
                        class_weight=self.class_weight,
                        # A looser stop than the default: same MAMS test accuracy
                        # (0.694 vs 0.692), a third less fitting time.
                        tol=1e-3,
                    ),
                ),
            ]
        )
        sparse = pipe["vectorizer"].fit_transform(X)
        dense = self._dense([(s, sp) for s, sp, _ in examples], cues)
        pipe["classifier"].fit(self._join(sparse, dense), labels)
        self.cues_ = cues
        self.pipeline_ = pipe
        self.classes_ = [str(c) for c in pipe.classes_]
        return self

    @property
    def is_fitted(self) -> bool:
        """Whether :meth:`fit` (or :meth:`load`) has given the model learned state."""
        return hasattr(self, "pipeline_")

    def __sklearn_is_fitted__(self) -> bool:
        """Tell scikit-learn's ``check_is_fitted`` what :attr:`is_fitted` says."""
        return self.is_fitted

    def predict_proba_many(self, items: Sequence[tuple[Sentence, Span]]) -> np.ndarray:
        """Return an ``(n, 4)`` array of stance probabilities, columns in :data:`STANCES` order."""
        return self.predict_proba_blend(items, 1.0)

    def predict_proba_blend(
        self, items: Sequence[tuple[Sentence, Span]], weight: float
    ) -> np.ndarray:
        """Return ``weight`` times the learned probabilities plus the rest from the cue rules.

        One feature pass serves both; an unfitted model gives the rules alone.
        """
        cues, codebook = self.cues, self.codebook
        feats = [_model_features(s, sp, cues, codebook) for s, sp in items]
        if not feats:
            return np.zeros((0, len(STANCES)))
        if not self.is_fitted or weight <= 0.0:
            return np.vstack([rule_proba(f) for f in feats])
        sparse = self.pipeline_["vectorizer"].transform(feats)
        dense = self._dense(items, cues)
        proba = self.pipeline_["classifier"].predict_proba(self._join(sparse, dense))
        out = np.zeros((len(feats), len(STANCES)))
        for col, cls in enumerate(self.classes_):
            out[:, STANCES.index(cls)] = proba[:, col]
        if weight >= 1.0:
            return out
        rules = np.vstack([rule_proba(f) for f in feats])
        blended: np.ndarray = weight * out + (1.0 - weight) * rules
        return blended

    def _dense(self, items: Sequence[tuple[Sentence, Span]], cues: Cues) -> np.ndarray | None:
        """Return the weighted context vectors of the fitted space; ``None`` when it has none.

        A model fitted with a space whose package has since gone gets zero rows: it
        still predicts, from the sparse features alone.
        """
        name = getattr(self, "space_", pretrained.NONE)
        if name == pretrained.NONE:
            return None
        space = pretrained.load_space(name)
        if space is None:
            return np.zeros((len(items), self.dense_dim_), dtype=np.float32)
        blocks = getattr(self, "context_", OLD_BLOCKS)
        vectors: np.ndarray = context_vectors(space, items, cues, blocks) * self.dense_weight
        return vectors

    @staticmethod
    def _join(sparse: sp_sparse.spmatrix, dense: np.ndarray | None) -> sp_sparse.spmatrix:
        """Return the sparse features with the dense columns after them."""
        if dense is None:
            return sparse
        return sp_sparse.hstack([sparse, sp_sparse.csr_matrix(dense)], format="csr")

    def predict_many(self, items: Sequence[tuple[Sentence, Span]]) -> list[tuple[str, float]]:
        """Return ``(stance, probability)`` for each ``(sentence, span)``."""
        proba = self.predict_proba_many(items)
        best = proba.argmax(axis=1) if len(proba) else []
        return [(STANCES[k], float(proba[i, k])) for i, k in enumerate(best)]

    def predict(self, sentence: Sentence, span: Span) -> tuple[str, float]:
        """Return the stance of one mention and its probability."""
        return self.predict_many([(sentence, span)])[0]

    def save(self, directory: str | Path) -> None:
        """Write the model to ``directory`` as ``stance.json`` and, if fitted, ``stance.skops``.

        An unfitted model saves its parameters and cues, and loads back unfitted
        (answering with the rules), so a model version without stance labels still
        round-trips.
        """
        folder = Path(directory)
        folder.mkdir(parents=True, exist_ok=True)
        if self.is_fitted:
            skops.io.dump(self.pipeline_, folder / _SKOPS_FILE)
        elif (folder / _SKOPS_FILE).exists():
            (folder / _SKOPS_FILE).unlink()  # a stale classifier must not come back on load
        meta = {
            "format": _FORMAT,
            "params": self.get_params(),
            "classes": getattr(self, "classes_", None),
            "cues": self.cues,
            "space": getattr(self, "space_", pretrained.NONE),
            "dense_dim": getattr(self, "dense_dim_", 0),
            "context": list(getattr(self, "context_", OLD_BLOCKS)),
        }
        write_meta(folder / _JSON_FILE, meta)

    @classmethod
    def load(cls, directory: str | Path) -> StanceModel:
        """Read a model written by :meth:`save`.

        Raises:
            ModelError: When the files are missing, foreign or hold unexpected types.
        """
        folder = Path(directory)
        meta = read_meta(folder / _JSON_FILE, _FORMAT, "stance model")
        model = cls(**meta["params"])
        if meta.get("classes") is None:
            model._cold_cues = meta["cues"]  # unfitted: rules over the saved cues
            return model
        model.pipeline_ = load_trusted_skops(folder / _SKOPS_FILE, Pipeline)
        model.classes_ = list(meta["classes"])
        model.cues_ = meta["cues"]
        # Versions saved before clause vectors were features have neither key.
        model.space_ = str(meta.get("space", pretrained.NONE))
        model.dense_dim_ = int(meta.get("dense_dim", 0))
        # Versions saved before the mention's own blocks read the clause and sentence.
        model.context_ = tuple(meta.get("context", OLD_BLOCKS))
        return model


def codebook_params(codebook: Mapping[str, QuestionCode]) -> dict[str, dict[str, str]]:
    """Return a codebook as the plain ``questions`` parameter of :class:`StanceModel`."""
    return {
        key: {
            name: value for name, value in (("text", c.text), ("direction", c.direction)) if value
        }
        for key, c in codebook.items()
    }
