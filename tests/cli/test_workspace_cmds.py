"""The ``traits init``, ``add`` and ``status`` commands as a user sees them."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
import spacy

from extractor.cli.main import main
from extractor.models.cue_file import CUES_PATH
from tests.cli.trial import run, trial_lines


def _answers(path: Path) -> Path:
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(
        "respondent,question,answer\nKA-01,Why do you grow it?,It cooks fast and tastes sweet.\n",
        encoding="utf-8",
    )
    return path


def test_add_table_shows_a_long_path_in_full_on_a_narrow_terminal(tmp_path: Path) -> None:
    ws = tmp_path / "ws"
    assert run("init", str(ws))[0] == 0
    deep = tmp_path / "campaign_2025_northern_highlands" / "household_round_two" / "cassava"
    path = _answers(deep / "farmer_interviews_with_long_descriptive_name_final_v3.csv")
    code, out = run("-w", str(ws), "add", str(path), width=80)
    assert code == 0
    assert "…" not in out
    # The file column is the first cell of each body row (between the first two bars);
    # joined line by line it must give back the whole path.
    body = [line.split("│")[1].strip() for line in out.splitlines() if line.count("│") >= 2]
    assert "".join(body) == path.resolve().as_posix()


def _trial(tmp_path: Path) -> tuple[Path, Path]:
    """A workspace with a pt/sw/en concept list imported, and the trial's answer file."""
    ws = tmp_path / "ws"
    assert run("init", str(ws))[0] == 0
    concepts = tmp_path / "concepts.csv"
    concepts.write_text(
        "id,label,lang,synonyms,parent,definition\n"
        "CSV:01,early maturity,en,matures early,,\n"
        "CSV:01,maturação precoce,pt,amadurece cedo,,\n"
        "CSV:01,kukomaa mapema,sw,inakomaa mapema,,\n",
        encoding="utf-8",
    )
    assert run("-w", str(ws), "concepts", "import", str(concepts))[0] == 0
    lines = trial_lines()
    answers = tmp_path / "trial.csv"
    answers.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return ws, answers


def _has_spacy_pipeline(code: str) -> bool:
    try:
        spacy.util.get_lang_class(code)  # spaCy's own registry of languages
    except ImportError:
        return False
    return True


def test_add_detects_the_concept_lists_languages_and_says_what_each_lacks(tmp_path: Path) -> None:
    ws, answers = _trial(tmp_path)
    code, out = run("-w", str(ws), "add", str(answers))
    assert code == 0
    _, status = run("-w", str(ws), "status", "--json")
    # ISO 639-1 codes of the languages the answers were written in.
    assert json.loads(status)["languages"] == {"pt": 3, "sw": 3, "en": 3}
    # What each language lacks, checked against the packaged cue file and spaCy itself.
    # A language has stance cues when its section holds liked, disliked or wanted words.
    cues = json.loads(CUES_PATH.read_text(encoding="utf-8"))
    cue_languages = {
        lang
        for lang, section in cues.items()
        if not lang.startswith("_") and any(section.get(c) for c in ("liked", "disliked", "wanted"))
    }
    notes = {line.split()[1]: line for line in out.splitlines() if line.startswith("note: ")}
    for lang in ("pt", "sw"):
        assert lang in cue_languages and "stance cues" not in notes.get(lang, "")
    assert "en" in cue_languages and _has_spacy_pipeline("en") and "en" not in notes
    assert not _has_spacy_pipeline("sw") and "no spaCy pipeline" in notes["sw"]
    assert _has_spacy_pipeline("pt") and "pt" not in notes
    assert "Languages of the stored sentences: en 3, pt 3, sw 3." in " ".join(out.split())


def test_add_says_which_languages_have_no_synonyms(tmp_path: Path) -> None:
    ws, answers = _trial(tmp_path)
    concepts = tmp_path / "en_only.csv"
    concepts.write_text(
        "id,label,lang,synonyms,parent,definition\nCSV:01,early maturity,en,matures early,,\n",
        encoding="utf-8",
    )
    answers.write_text(
        "respondent,question,answer,language\nR1,Why?,Aguenta bem a seca e dá muita raiz.,pt\n",
        encoding="utf-8",
    )
    assert run("-w", str(ws), "concepts", "import", str(concepts))[0] == 0
    code, out = run("-w", str(ws), "add", str(answers))
    assert code == 0
    note = next(line for line in out.splitlines() if line.startswith("note: pt"))
    assert "no synonyms" in note


def test_add_lists_the_questions_stance_cannot_read_until_a_codebook_names_them(
    tmp_path: Path,
) -> None:
    ws = tmp_path / "ws"
    assert run("init", str(ws))[0] == 0
    first = tmp_path / "survey.csv"
    first.write_text(
        "respondent,question,answer\n"
        "R1,q5_dislike,The cobs are small.\n"
        "R2,q5_dislike,It rots.\n"
        "R1,What do you like about it?,It yields well.\n",
        encoding="utf-8",
    )
    code, out = run("-w", str(ws), "add", str(first))
    flat = " ".join(out.split())
    assert code == 0
    assert "note: 1 question tells stance nothing: q5_dislike (2 answers)" in flat
    # The settings section is named as written, not swallowed as console markup.
    assert "under [codebook] in traits.toml" in flat
    # A codebook row gives the field name its direction; a question still uncoded is listed.
    (ws / "questions.csv").write_text("question,text,direction\nq5_dislike,,dislikes\n", "utf-8")
    second = tmp_path / "round2.csv"
    second.write_text("respondent,question,answer\nR3,q7,Bigger cobs.\n", encoding="utf-8")
    code, out = run("-w", str(ws), "add", str(second))
    flat = " ".join(out.split())
    assert code == 0 and "q7 (1 answer)" in flat and "q5_dislike" not in flat


def test_add_takes_a_users_cue_file_as_stance_cues_of_its_language(tmp_path: Path) -> None:
    ws = tmp_path / "ws"
    assert run("init", str(ws))[0] == 0
    answers = tmp_path / "ha.csv"
    answers.write_text("respondent,language,answer\nR1,ha,Ina son masara.\n", encoding="utf-8")
    code, out = run("-w", str(ws), "add", str(answers))
    assert "no stance cues" in " ".join(out.split())
    (ws / "my_cues.json").write_text(json.dumps({"ha": {"wanted": ["ina son"]}}), "utf-8")
    toml = (ws / "traits.toml").read_text(encoding="utf-8")
    toml = toml.replace('stance_cues = ""', 'stance_cues = "my_cues.json"')
    (ws / "traits.toml").write_text(toml, encoding="utf-8")
    code, out = run("-w", str(ws), "add", str(answers))
    assert code == 0 and "no stance cues" not in " ".join(out.split())


def test_add_help_explains_every_column_option(capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit):
        main(["add", "--help"])
    text = " ".join(capsys.readouterr().out.split())
    for role in ("respondent", "question", "answer", "language", "variety"):
        assert f"--{role}-column HEADER the column holding" in text, text


def test_add_says_when_answers_read_as_a_language_the_study_does_not_list(
    tmp_path: Path,
) -> None:
    ws = tmp_path / "ws"
    assert run("init", str(ws))[0] == 0  # the settings list en, fr and es
    # Invented answers in Portuguese and Swahili (ISO 639-1 pt, sw), no language column.
    answers = tmp_path / "survey.csv"
    answers.write_text(
        "respondent,question,answer\n"
        "R1,Why?,Não gosto porque apodrece logo depois da colheita.\n"
        "R2,Why?,A farinha sai branca e vende bem no mercado.\n"
        "R3,Why?,Sipendi kwa sababu mizizi inaoza haraka baada ya kuvuna.\n",
        encoding="utf-8",
    )
    code, out = run("-w", str(ws), "add", str(answers))
    flat = " ".join(out.split())
    assert code == 0
    assert "note: 2 answers read as Portuguese (pt) and 1 as Swahili (sw)" in flat
    assert 'add "pt", "sw" to languages under [workspace] in traits.toml' in flat
    # A language column is the user's word: nothing is said of answers it tags.
    tagged = tmp_path / "tagged.csv"
    tagged.write_text(
        "respondent,question,answer,language\n"
        "R4,Why?,Não gosto porque apodrece logo depois da colheita.,es\n",
        encoding="utf-8",
    )
    code, out = run("-w", str(ws), "add", str(tagged))
    assert code == 0 and "read as" not in out


def test_status_shows_the_language_tags_row_only_when_it_says_more(tmp_path: Path) -> None:
    ws = tmp_path / "ws"
    assert run("init", str(ws))[0] == 0
    plain = tmp_path / "plain.csv"
    plain.write_text(
        "respondent,question,answer,language\nR1,Why?,It cooks fast.,en\n", encoding="utf-8"
    )
    assert run("-w", str(ws), "add", str(plain))[0] == 0
    code, out = run("-w", str(ws), "status")
    assert code == 0 and "language tags" not in out and "language_tags" not in out
    # A region subtag (BCP 47: es-419, Latin American Spanish) is a tag the languages
    # row folds into its primary subtag, so the tags get their own row.
    regional = tmp_path / "regional.csv"
    regional.write_text(
        "respondent,question,answer,language\nR2,Why?,Se cocina rápido.,es-419\n",
        encoding="utf-8",
    )
    assert run("-w", str(ws), "add", str(regional))[0] == 0
    code, out = run("-w", str(ws), "status")
    row = next(line for line in out.splitlines() if "language tags" in line)
    assert code == 0 and "es-419 1" in row


def test_first_add_says_no_concept_list_is_imported_not_that_a_language_lacks_synonyms(
    tmp_path: Path,
) -> None:
    ws = tmp_path / "ws"
    assert run("init", str(ws))[0] == 0
    code, out = run("-w", str(ws), "add", str(_answers(tmp_path / "answers.csv")))
    assert code == 0
    said = " ".join(out.split())
    assert "no synonyms in the concept list" not in said
    assert said.count("no concept list is imported yet") == 1
    assert "import it with `traits concepts import FILE`" in said


_SHORT_WIDE = (
    "respondent_id,gender,district,why_grow,dislike_q\n"
    'VK-01,female,Lindaro,"It grows fast, and we like the taste.",The grain is small.\n'
    'VK-02,male,Lindaro,"It sells well at the Tessaly market.",Low price.\n'
)


@pytest.mark.parametrize(
    "codebook",
    [
        ("questions.csv", "question,text,direction\ndislike_q,,dislikes\n"),
        ("traits.toml", '[codebook]\ndislike_q = "dislikes"\n'),
    ],
    ids=["questions file", "codebook in traits.toml"],
)
def test_add_reads_a_wide_column_the_codebook_names_as_a_question(
    tmp_path: Path, codebook: tuple[str, str]
) -> None:
    ws = tmp_path / "ws"
    assert run("init", str(ws))[0] == 0
    name, text = codebook
    path = ws / name
    if path.exists():  # the template's [codebook] section, filled in
        text = path.read_text(encoding="utf-8").replace("[codebook]\n", text)
    path.write_text(text, encoding="utf-8")
    answers = tmp_path / "short.csv"
    answers.write_text(_SHORT_WIDE, encoding="utf-8")
    code, out = run("-w", str(ws), "add", str(answers))
    assert code == 0 and "read like answers" not in out
    _, status = run("-w", str(ws), "status", "--json")
    assert json.loads(status)["answers"] == 4


def test_add_warns_when_short_answers_are_kept_as_metadata(tmp_path: Path) -> None:
    ws = tmp_path / "ws"
    assert run("init", str(ws))[0] == 0
    answers = tmp_path / "short.csv"
    answers.write_text(_SHORT_WIDE, encoding="utf-8")
    code, out = run("-w", str(ws), "add", str(answers))
    assert code == 0
    said = " ".join(out.split())
    assert "warning: File 'short.csv', column 'dislike_q': its values read like answers" in said
