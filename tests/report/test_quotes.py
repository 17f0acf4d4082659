from __future__ import annotations

from extractor.report.inputs import prepare
from extractor.report.privacy import PrivacyOptions, pseudonym
from extractor.report.quotes import GLOSS, quotes_by_trait
from tests.report.study import CONCEPTS, S1, S3, SECRET, Study


def test_quotes_cover_every_linked_mention_once_per_sentence(study: Study) -> None:
    m, r = prepare(*study)
    table = quotes_by_trait(m, r, CONCEPTS, "gender")
    # from study_frames by hand: W1 names fast cooking twice in sentence 1 (one quote),
    # 7 other linked mentions; 2 mentions are unlinked
    assert len(table) == 8
    liked = table.loc[(table["Concept ID"] == "BTX:0001") & (table["Stance"] == "liked")]
    assert liked["Respondent"].tolist() == ["W1", "W2", "FG1", "U1"]
    assert liked["gender"].tolist() == ["woman", "woman", "(not recorded)", "(not recorded)"]
    assert liked["Quote"].tolist() == [S1, S3, S1, S1]
    assert table[GLOSS].isna().all()
    # stances run liked, disliked, wanted within a trait
    first = table.loc[table["Concept ID"] == "BTX:0001", "Stance"].tolist()
    assert first == sorted(first, key=["liked", "disliked", "wanted", "neutral"].index)


def test_quotes_are_pseudonymised_with_the_export(study: Study) -> None:
    m, r = prepare(*study, pseudonymise=PrivacyOptions(secret=SECRET))
    table = quotes_by_trait(m, r, CONCEPTS, "gender")
    assert "W1" not in set(table["Respondent"])
    assert pseudonym("W1", SECRET) in set(table["Respondent"])
