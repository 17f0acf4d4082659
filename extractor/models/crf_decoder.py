"""Decoding with a trained CRFsuite model in numpy, a batch of sentences at a time.

python-crfsuite hands each token's attributes to CRFsuite one string at a time (copied,
then looked up in the model's string table); at about 40 attributes per token that was
half of the tagging time. :class:`CrfDecoder` reads the model's weights once from
CRFsuite's own model file and does what CRFsuite's tagger does, over all sentences of a
batch together:

* state scores: per token, the weights of its attributes added one attribute after the
  other, in the token's order (unknown attributes add nothing);
* the best path by Viterbi (the first best predecessor wins a tie, as in CRFsuite);
* token marginals by scaled forward-backward, the path's score, and the log partition
  function from the scale factors, in CRFsuite's order of floating-point operations.

So paths, marginals and probabilities equal python-crfsuite's (tests compare them on open
data). Exponentials are the C library's (:func:`_exp`), as CRFsuite's are: numpy's own
``exp`` is vectorised on CPUs with AVX-512 and differs from it in the last bit, which
made marginals differ by about 1e-15 from one kind of machine to the next.

A ``temperature`` T other than 1 divides every state and transition score by T before
marginals and probabilities are computed (calibration, see
:mod:`~extractor.models.tagger_calibration`); the best path is found on the scores as
trained, so it never changes.

The model file layout read here is that of CRFsuite's ``crf1d`` model writer (a 48-byte
header, the label and attribute string tables, and a feature array of ``type, source,
destination, weight``); a file of another layout raises ``ValueError`` and the caller
decodes with python-crfsuite instead.
"""

from __future__ import annotations

import math
import struct
from collections.abc import Iterable, Mapping, Sequence
from itertools import chain
from typing import Any, NamedTuple

import numpy as np

from extractor.nlp.features import AxisBlock


def _exp(values: np.ndarray) -> np.ndarray:
    """``exp`` of every value by the C library's ``exp``, the one CRFsuite calls."""
    flat = np.fromiter(map(math.exp, values.ravel().tolist()), float, count=values.size)
    return flat.reshape(values.shape)


_HEADER = struct.Struct("<4sI4sI8I")
_CQDB_HEADER = struct.Struct("<4s5I")
_CQDB_DATA = 24 + 256 * 8  # records follow the chunk header and 256 hash-table references
_RECORD = struct.Struct("<II")
_FEATURE = np.dtype([("type", "<u4"), ("src", "<u4"), ("dst", "<u4"), ("weight", "<f8")])
_STATE, _TRANSITION = 0, 1


Token = Sequence[bytes] | tuple[Sequence[bytes], Sequence[bytes] | list[int]]
"""One token's attribute names, whole or split in two (a word's own part, then the rest,
as names or as rows of the weight table)."""

_HEAD_LIMIT = 1 << 16
"""First parts of split tokens whose weight sums are kept before the cache starts afresh."""


def _places(counts: np.ndarray, total: int) -> np.ndarray:
    """Return each element's place within its group, for groups of ``counts`` elements."""
    return np.arange(total) - np.repeat(np.cumsum(counts) - counts, counts)


def _split(
    tokens: list[Token],
) -> tuple[Sequence[Sequence[bytes]], Sequence[Sequence[bytes]]] | None:
    """Return the first and second parts of tokens all split in two, ``None`` otherwise."""
    try:
        heads, rests = zip(*tokens, strict=True)
    except ValueError:
        return None
    if set(map(type, heads)) != {tuple} or len(set(map(type, rests))) != 1:
        return None
    return heads, rests


class Decoded(NamedTuple):
    """One sentence decoded: label indices of the best path, marginals, path probability."""

    path: list[int]
    marginals: np.ndarray  # tokens x labels, in the model's label order
    probability: float


class _Index(dict[bytes, int]):
    """Attribute name -> row of the weight matrix; unknown names give the row of zeros.

    A word's block of main-axis coordinates (:class:`~extractor.nlp.features.AxisBlock`)
    is no name: it is weighed where it ends a token's first part (see
    :meth:`CrfDecoder._state_scores`), anywhere else it raises ``TypeError``, so that the
    caller decodes with CRFsuite.
    """

    zero: int

    def __missing__(self, key: bytes | str) -> int:
        if isinstance(key, str):
            return self.get(key.encode(), self.zero)
        if isinstance(key, AxisBlock):
            raise TypeError("a block of main-axis coordinates must end a token's first part")
        return self.zero


def _strings(buffer: bytes, offset: int, count: int) -> dict[int, str]:
    """Return ``id -> string`` of a CRFsuite string table (CQDB chunk) at ``offset``."""
    chunk, _, _, byteorder, _, _ = _CQDB_HEADER.unpack_from(buffer, offset)
    if chunk != b"CQDB" or byteorder != 0x62445371:
        raise ValueError("not a CRFsuite string table")
    out = {}
    at = offset + _CQDB_DATA
    for _ in range(count):
        key_id, size = _RECORD.unpack_from(buffer, at)
        at += _RECORD.size
        out[key_id] = buffer[at : at + size - 1].decode()
        at += size
    return out


class CrfDecoder:
    """The labels, attribute weights and transition weights of a CRFsuite model, for decoding.

    Build it with :meth:`from_model` from the bytes of a model file.
    """

    def __init__(self, labels: list[str], index: _Index, state: np.ndarray, trans: np.ndarray):
        self.labels = labels
        self._index = index
        self._state = state  # (attributes + 1) x labels; the last row is zeros
        self._trans = trans  # labels x labels, from -> to
        self._exp_trans = _exp(trans)
        self._row_of: dict[int, int] = {}  # id of a first part -> its row in _head_sums
        self._head_parts: list[Sequence[bytes]] = []  # keeps those parts alive
        self._head_sums = np.zeros((0, len(labels)))

    @property
    def index(self) -> Mapping[bytes, int]:
        """Attribute bytes -> row of the weight table; unknown attributes give a row of zeros."""
        return self._index

    @classmethod
    def from_model(cls, model: bytes) -> CrfDecoder:
        """Read a CRFsuite model file's labels and weights.

        Raises:
            ValueError: When the bytes are not a CRFsuite linear-chain model of the layout
                this reader knows.
        """
        if len(model) < _HEADER.size:
            raise ValueError("too short for a CRFsuite model")
        magic, _, kind, _, _, n_labels, n_attrs, off_feat, off_labels, off_attrs, _, _ = (
            _HEADER.unpack_from(model)
        )
        if magic != b"lCRF" or kind != b"FOMC":
            raise ValueError("not a CRFsuite linear-chain model")
        names = _strings(model, off_labels, n_labels)
        attrs = _strings(model, off_attrs, n_attrs)
        if sorted(names) != list(range(n_labels)) or sorted(attrs) != list(range(n_attrs)):
            raise ValueError("the model's string tables are not numbered 0..n-1")
        # The header's feature count is left 0 by CRFsuite's writer; the chunk has it.
        chunk, size, count = struct.unpack_from("<4sII", model, off_feat)
        if chunk != b"FEAT" or size != 12 + _FEATURE.itemsize * count:
            raise ValueError("the model's feature chunk is missing")
        features = np.frombuffer(model, dtype=_FEATURE, count=count, offset=off_feat + 12)
        state = np.zeros((n_attrs + 1, n_labels))
        trans = np.zeros((n_labels, n_labels))
        for kind_code, matrix in ((_STATE, state), (_TRANSITION, trans)):
            chosen = features[features["type"] == kind_code]
            matrix[chosen["src"].astype(np.intp), chosen["dst"].astype(np.intp)] = chosen["weight"]
        index = _Index({name.encode(): aid for aid, name in attrs.items()})
        index.zero = n_attrs
        return cls([names[i] for i in range(n_labels)], index, state, trans)

    def decode(self, X: Sequence[Sequence[Token]], *, temperature: float = 1.0) -> list[Decoded]:
        """Decode sentences given as attribute names per token (python-crfsuite's weight-1 form).

        A token is a tuple of attribute names, or such a tuple split in two
        (:data:`~extractor.nlp.features.SplitAttributes`). An empty sentence gives an
        empty path and probability 1. ``temperature`` divides all scores for the marginals
        and the path probability (1: CRFsuite's figures, bit for bit).
        """
        if not temperature > 0.0 or math.isinf(temperature):
            raise ValueError(f"the temperature must be a positive number; got {temperature!r}")
        lengths = np.array([len(x) for x in X], dtype=np.intp)
        out = [Decoded([], np.zeros((0, len(self.labels))), 1.0)] * len(X)
        if not lengths.sum():
            return out
        state = self._state_scores(X)
        # Sentences longest first: at every position the sentences still going are a prefix.
        order = np.argsort(-lengths, kind="stable")
        starts = (np.cumsum(lengths) - lengths)[order]
        ends = lengths[order]
        live = [int(np.count_nonzero(ends > t)) for t in range(int(ends[0]))]
        rows = [starts[:n] + t for t, n in enumerate(live)]
        paths = self._viterbi(state, rows, live, len(X))
        score = self._path_scores(state, paths, rows, live)
        exp_trans = self._exp_trans
        if temperature != 1.0:
            state = state / temperature
            exp_trans = _exp(self._trans / temperature)
            score = score / temperature
        alpha, beta, scale = self._forward_backward(_exp(state), exp_trans, rows, live)
        marginals = alpha * beta / scale[:, None]
        log_scale = [math.log(v) for v in scale.tolist()]
        for k, s in enumerate(order.tolist()):
            first, n = int(starts[k]), int(ends[k])
            if not n:
                continue
            log_sum = 0.0
            for value in log_scale[first : first + n]:  # in turn, as CRFsuite sums them
                log_sum += value
            log_norm = -log_sum
            out[s] = Decoded(
                paths[first : first + n].tolist(),
                marginals[first : first + n],
                math.exp(float(score[k]) - log_norm),
            )
        return out

    def _state_scores(self, X: Sequence[Sequence[Token]]) -> np.ndarray:
        """Return every token's state scores (tokens of all sentences in turn x labels).

        A token split in two (:data:`~extractor.nlp.features.SplitAttributes`) starts from
        the cached sum of its first part's weights: CRFsuite adds weights one attribute
        after the other, so the sum over the first part is where it stands before the rest.
        """
        if len(self._row_of) >= _HEAD_LIMIT:
            self._row_of.clear()
            self._head_parts.clear()
            self._head_sums = np.zeros((0, len(self.labels)))
        tokens = list(chain.from_iterable(X))
        split = _split(tokens)
        if split is None:
            if set(map(type, tokens)) - {tuple, list}:
                raise TypeError("tokens must be tuples of attribute names")
            rests: Sequence[Sequence[bytes]] = tokens  # type: ignore[assignment]
            heads: Sequence[Sequence[bytes]] = [()] * len(tokens)
        else:
            heads, rests = split
        # First parts are known by identity; the cache holds each one, so its id stays its own.
        rows = list(map(self._row_of.get, map(id, heads)))
        if None in rows:
            fresh: list[Sequence[bytes]] = []
            for k, row in enumerate(rows):
                if row is None:
                    head = heads[k]
                    row = self._row_of.get(id(head))
                    if row is None:
                        row = self._row_of[id(head)] = len(self._head_parts)
                        self._head_parts.append(head)
                        fresh.append(head)
                    rows[k] = row
            sums = self._head_weights(fresh)
            self._head_sums = np.concatenate([self._head_sums, sums])
        scores = self._head_sums[np.array(rows, dtype=np.intp)]
        return self._add_weights(scores, rests, as_rows=bool(rests) and isinstance(rests[0], list))

    def _head_weights(self, heads: list[Sequence[bytes]]) -> np.ndarray:
        """Return the weight sums of tokens' first parts, a final axis block weighed too.

        The block's coordinates come after the part's other attributes, each weight times
        its value, in the block's order: where CRFsuite reads them in the same order from
        the token's ``{name: value}`` dict, it adds ``weight * value`` in turn.
        """
        blocks = [k for k, head in enumerate(heads) if head and type(head[-1]) is AxisBlock]
        if not blocks:
            return self._add_weights(np.zeros((len(heads), len(self.labels))), heads)
        plain = list(heads)
        for k in blocks:
            plain[k] = heads[k][:-1]
        sums = self._add_weights(np.zeros((len(heads), len(self.labels))), plain)
        width = max(len(heads[k][-1].names) for k in blocks)  # type: ignore[attr-defined]
        values = np.zeros((len(blocks), width))
        rows = np.full((len(blocks), width), self._index.zero, dtype=np.intp)
        for j, k in enumerate(blocks):
            block: AxisBlock = heads[k][-1]  # type: ignore[assignment]
            values[j, : len(block.values)] = block.values
            rows[j, : len(block.names)] = [self._index[n] for n in block.names]
        picked = np.array(blocks, dtype=np.intp)
        part = sums[picked]
        for a in range(width):
            part += self._state[rows[:, a]] * values[:, a, None]
        sums[picked] = part
        return sums

    def _add_weights(
        self,
        scores: np.ndarray,
        attributes: Sequence[Sequence[bytes]] | Sequence[list[int]],
        *,
        as_rows: bool = False,
    ) -> np.ndarray:
        """Add to each row of ``scores`` the weights of its attributes, one after the other.

        With ``as_rows`` the attributes are given as rows of the weight table already
        (:func:`~extractor.nlp.feature_rows.sentence_rows` with :attr:`index`).
        """
        counts = np.fromiter(map(len, attributes), dtype=np.intp, count=len(attributes))
        total = int(counts.sum())
        if not total:
            return scores
        items: Iterable[Any] = chain.from_iterable(attributes)
        flat = np.array(list(items if as_rows else map(self._index.__getitem__, items)))
        # One column per attribute place, the row of zeros after a token's last attribute:
        # adding the columns in turn adds each token's weights in CRFsuite's order.
        width = int(counts.max())
        table = np.full((len(counts), width), self._index.zero, dtype=np.intp)
        table[np.repeat(np.arange(len(counts)), counts), _places(counts, total)] = flat
        for k in range(width):
            scores += self._state[table[:, k]]
        return scores

    def _viterbi(
        self, state: np.ndarray, rows: list[np.ndarray], live: list[int], n_sentences: int
    ) -> np.ndarray:
        """Return the best label of every token (token order of ``state``)."""
        trans = self._trans
        cur = state[rows[0]]
        back: list[np.ndarray] = []
        last = np.zeros(n_sentences, dtype=np.intp)  # best final label, by length rank
        for t in range(1, len(rows) + 1):
            n = live[t] if t < len(rows) else 0
            # Sentences that end at position t - 1 take their best final label.
            last[n : live[t - 1]] = cur[n:].argmax(axis=1)
            if not n:
                break
            cand = cur[:n, :, None] + trans[None, :, :]  # from i (axis 1) to j (axis 2)
            best_from = cand.argmax(axis=1)
            back.append(best_from)
            best = np.take_along_axis(cand, best_from[:, None, :], axis=1)[:, 0, :]
            cur = best + state[rows[t]]
        paths = np.empty(len(state), dtype=np.intp)
        label = last.copy()
        for t in range(len(rows) - 1, -1, -1):
            n = live[t]
            paths[rows[t]] = label[:n]
            if t:
                label[:n] = back[t - 1][np.arange(n), label[:n]]
        return paths

    def _forward_backward(
        self, exp_state: np.ndarray, exp_trans: np.ndarray, rows: list[np.ndarray], live: list[int]
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Return scaled forward and backward scores and the scale factors (token order)."""
        n_labels = len(self.labels)
        alpha = np.empty_like(exp_state)
        beta = np.empty_like(exp_state)
        scale = np.empty(len(exp_state))
        prev: np.ndarray | None = None
        for t, where in enumerate(rows):
            n = live[t]
            if prev is None:
                cur = exp_state[where].copy()
            else:
                cur = prev[:n, 0:1] * exp_trans[0]
                for i in range(1, n_labels):
                    cur = cur + prev[:n, i : i + 1] * exp_trans[i]
                cur *= exp_state[where]
            total = cur[:, 0].copy()
            for j in range(1, n_labels):
                total += cur[:, j]
            factor = np.ones(n)
            np.divide(1.0, total, out=factor, where=total != 0.0)
            cur *= factor[:, None]
            alpha[where], scale[where] = cur, factor
            prev = cur
        after: np.ndarray | None = None
        for t in range(len(rows) - 1, -1, -1):
            where, n = rows[t], live[t]
            cur = np.empty((n, n_labels))
            m = live[t + 1] if t + 1 < len(rows) else 0
            cur[m:] = scale[where[m:], None]  # sentences ending here
            if m and after is not None:
                row = after * exp_state[rows[t + 1]]
                for i in range(n_labels):
                    dot = exp_trans[i, 0] * row[:, 0]
                    for j in range(1, n_labels):
                        dot = dot + exp_trans[i, j] * row[:, j]
                    cur[:m, i] = dot
                cur[:m] *= scale[where[:m], None]
            beta[where] = cur
            after = cur
        return alpha, beta, scale

    def _path_scores(
        self, state: np.ndarray, paths: np.ndarray, rows: list[np.ndarray], live: list[int]
    ) -> np.ndarray:
        """Return each path's score (state plus transition weights), by length rank."""
        score = state[rows[0], paths[rows[0]]].copy()
        for t in range(1, len(rows)):
            n, where = live[t], rows[t]
            label = paths[where]
            score[:n] = score[:n] + self._trans[paths[where - 1], label]
            score[:n] = score[:n] + state[where, label]
        return score
