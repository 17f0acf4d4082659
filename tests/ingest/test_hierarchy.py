"""The concept hierarchy: levels and roll-up targets (extractor.ingest.hierarchy).

Outside reference: levels of the Plant Trait Ontology (read in place from
``../shared/datasets/plant-trait-ontology/``) against shortest paths computed by SciPy's
``scipy.sparse.csgraph.shortest_path`` on the graph of parent links.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.sparse import csr_matrix
from scipy.sparse.csgraph import shortest_path

from extractor.ingest.concepts import load_concept_list
from extractor.ingest.hierarchy import ancestors_at, descendants, levels
from tests.ingest.test_obo import TO_FILE, needs_to


@needs_to
def test_levels_of_the_trait_ontology_match_scipy_shortest_paths() -> None:
    loaded = load_concept_list(TO_FILE)
    parents = {c.id: list(c.parents) for c in loaded.concepts}
    ids = list(parents)
    index = {cid: i for i, cid in enumerate(ids)}
    edges = [(index[c], index[p]) for c, ps in parents.items() for p in ps]
    rows, cols = zip(*edges, strict=True)
    graph = csr_matrix((np.ones(len(edges)), (rows, cols)), shape=(len(ids), len(ids)))
    distance = shortest_path(graph, directed=True, unweighted=True)
    tops = [index[cid] for cid, ps in parents.items() if not ps]
    expected = {cid: int(distance[index[cid], tops].min()) + 1 for cid in ids}
    got = levels(parents)
    assert got == expected
    assert max(got.values()) > 5  # a deep list, not a flat one


@needs_to
def test_every_deep_concept_rolls_up_to_ancestors_at_the_level() -> None:
    loaded = load_concept_list(TO_FILE)
    parents = {c.id: list(c.parents) for c in loaded.concepts}
    depth = levels(parents)
    for cid, targets in ancestors_at(parents, 2).items():
        if depth[cid] <= 2:
            assert targets == (cid,)
        else:
            assert targets and all(depth[t] == 2 for t in targets)
            assert all(cid in descendants(parents, [t]) for t in targets)


def test_ancestors_at_follows_each_parent() -> None:
    parents = {"A": [], "B": [], "A1": ["A"], "X": ["A1", "B"]}
    assert ancestors_at(parents, 1)["X"] == ("A", "B")
    assert levels(parents) == {"A": 1, "B": 1, "A1": 2, "X": 2}


@pytest.mark.parametrize("level", [1, 2, 3], ids=["1", "2", "3"])
def test_concepts_above_the_level_roll_up_to_themselves(level: int) -> None:
    parents = {"A": [], "A1": ["A"], "A11": ["A1"]}
    targets = ancestors_at(parents, level)
    assert all(targets[c] == (c,) for c, d in levels(parents).items() if d <= level)
