"""Roll-ups by the concept hierarchy (extractor.report.rollup).

Outside reference: the respondents per ancestor are counted a second way, in SQLite with a
recursive common table expression (``WITH RECURSIVE``, https://www.sqlite.org/lang_with.html)
that walks the parent links of the invented demo concept list, in Python's ``sqlite3``.
"""

from __future__ import annotations

import sqlite3
from pathlib import Path

import pandas as pd
import pytest
from openpyxl import load_workbook

from extractor.errors import InputError
from extractor.ingest.concepts import load_concept_list
from extractor.report.about import RunFacts
from extractor.report.rollup import has_hierarchy, roll_up
from extractor.report.tables import respondent_concepts
from extractor.report.workbook import SHEETS, write_workbook
from tests.report.study import S1, mention, study_frames

DEMO_CSV = Path(__file__).resolve().parents[2] / "sample_interviews" / "concepts.csv"


def _demo_concepts() -> pd.DataFrame:
    loaded = load_concept_list(DEMO_CSV)
    labels = {a.concept_id: a.text for a in loaded.aliases if a.kind == "preferred"}
    return pd.DataFrame(
        {
            "concept_id": [c.id for c in loaded.concepts],
            "label": [labels[c.id] for c in loaded.concepts],
            "parent": [c.parent for c in loaded.concepts],
            "parents": [c.parents for c in loaded.concepts],
        }
    )


def _sql_top_counts(concepts: pd.DataFrame, mentions: pd.DataFrame) -> dict[str, int]:
    """Respondents per top concept, by a recursive CTE over the parent links."""
    conn = sqlite3.connect(":memory:")
    conn.execute("CREATE TABLE links (child TEXT, parent TEXT)")
    conn.execute("CREATE TABLE said (respondent TEXT, concept TEXT)")
    conn.executemany(
        "INSERT INTO links VALUES (?, ?)",
        [
            (c, p)
            for c, ps in zip(concepts["concept_id"], concepts["parents"], strict=True)
            for p in ps
        ],
    )
    conn.executemany(
        "INSERT INTO said VALUES (?, ?)",
        mentions.loc[mentions["concept_id"].notna(), ["respondent", "concept_id"]].values.tolist(),
    )
    rows = conn.execute(
        """
        WITH RECURSIVE up(concept, node) AS (
            SELECT DISTINCT concept, concept FROM said
            UNION
            SELECT up.concept, links.parent FROM up JOIN links ON links.child = up.node
        )
        SELECT up.node, COUNT(DISTINCT said.respondent) FROM said JOIN up
            ON up.concept = said.concept
        WHERE up.node NOT IN (SELECT child FROM links)
        GROUP BY up.node
        """
    ).fetchall()
    conn.close()
    return {node: n for node, n in rows}


def test_roll_up_to_level_1_counts_each_respondent_once_per_top_concept() -> None:
    concepts = _demo_concepts()
    # Invented mentions: R1 names two traits under cooking quality (BTX:0002 cooking
    # time, BTX:0009 bitterness, itself under BTX:0003 taste), R2 one, R3 a grain trait.
    mentions = pd.DataFrame(
        [
            mention("R1", 1, S1, "cooks fast", "BTX:0002", "liked"),
            mention("R1", 1, S1, "fast", "BTX:0009", "disliked"),
            mention("R2", 2, S1, "cooks fast", "BTX:0003", "liked"),
            mention("R3", 3, S1, "cooks fast", "BTX:0012", "liked"),
            mention("R3", 3, S1, "fast", None, "liked"),
        ]
    )
    rolled = roll_up(mentions, concepts, 1)
    flags = respondent_concepts(rolled)
    counts = flags.groupby("concept_id")["respondent"].nunique().to_dict()
    assert counts == _sql_top_counts(concepts, mentions) == {"BTX:0001": 2, "BTX:0011": 1}
    assert rolled["concept_id"].isna().sum() == 1  # the unlinked mention stays unlinked


def test_roll_up_keeps_concepts_at_or_above_the_level() -> None:
    concepts = _demo_concepts()
    mentions = pd.DataFrame(
        [
            mention("R1", 1, S1, "cooks fast", "BTX:0009", "liked"),  # level 3
            mention("R2", 2, S1, "cooks fast", "BTX:0002", "liked"),  # level 2
        ]
    )
    assert list(roll_up(mentions, concepts, 2)["concept_id"]) == ["BTX:0003", "BTX:0002"]


def test_roll_up_a_concept_with_two_parents_counts_under_both() -> None:
    concepts = pd.DataFrame(
        {
            "concept_id": ["A", "B", "C"],
            "label": ["cooking", "market", "cooks fast and sells"],
            "parents": [(), (), ("A", "B")],
        }
    )
    mentions = pd.DataFrame([mention("R1", 1, S1, "cooks fast", "C", "liked")])
    rolled = roll_up(mentions, concepts, 1)
    assert sorted(rolled["concept_id"]) == ["A", "B"]
    assert sorted(rolled["concept_label"]) == ["cooking", "market"]


def test_roll_up_level_below_one_is_one_sentence() -> None:
    mentions, _ = study_frames()
    with pytest.raises(InputError, match="level must be 1"):
        roll_up(mentions, _demo_concepts(), 0)


def _facts() -> RunFacts:
    return RunFacts(model_version="m-3", concept_list="concepts.csv")


@pytest.mark.parametrize("with_parents", [True, False], ids=["parents", "flat"])
def test_workbook_has_a_parent_sheet_only_when_the_list_has_parents(
    tmp_path: Path, with_parents: bool
) -> None:
    mentions, respondents = study_frames()
    concepts = pd.DataFrame(
        {
            "concept_id": ["BTX:0001", "BTX:0002", "BTX:0003", "BTX:0010"],
            "label": ["fast cooking", "pest tolerance", "large seed", "cooking quality"],
            "parent": ["BTX:0010", None, None, None] if with_parents else [None] * 4,
        }
    )
    assert has_hierarchy(concepts) is with_parents
    path = tmp_path / "out.xlsx"
    write_workbook(path, mentions, respondents, concepts, _facts())
    names = load_workbook(path, read_only=True).sheetnames
    assert (SHEETS["parents"] in names) is with_parents
