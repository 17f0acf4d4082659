"""Planted identifiers never reach a pseudonymised export or a model folder.

An invented study plants, in answers, questions and respondent columns, what identifies
a person: phone numbers in national formats (Kenya's plan, as libphonenumber ships it),
e-mails, GPS coordinates, national ID numbers, the workspace's own respondent IDs, names
from a names file and from a name column. Every pseudonymised format is written and read
back whole (workbook cells, CSV, JSON Lines, JSON-LD); the model folder's files are read as
bytes. None may hold a planted identifier.
"""

from __future__ import annotations

import csv
import re
from pathlib import Path

import openpyxl
import pytest

from tests.jobs.study import make_study, run

pytestmark = pytest.mark.slow

PEOPLE = [
    # respondent, name, e-mail, mobile, gps, national ID, answer, question
    (
        "OMB-771",
        "Wanjiku Moraa",
        "wanjiku.moraa@mvuamail.org",
        "0712 345 678",
        "-1.29210, 36.82190",
        "KX1234567",
        "Wanjiku says it cooks fast. Call me on 798 765 432 for seed.",
        "Why do you grow it?",
    ),
    (
        "OMB-772",
        "Baraka Otieno",
        "baraka.otieno@mvuamail.org",
        "0723 456 789",
        "-1.30010, 36.80020",
        "KX7654321",
        "Write to baraka.otieno@mvuamail.org. OMB-771 likes the taste.",
        "Did Tumaini tell you about it?",
    ),
    (
        "OMB-773",
        "Imani Odhiambo",
        "imani.o@mvuamail.org",
        "0733 111 222",
        "-1.31000, 36.79990",
        "KX5555555",
        "Tumaini sold us the seed; the yield is good. My ID is KX5555555.",
        "Why do you grow it?",
    ),
]
LISTED = ["Tumaini"]
FORMULAS = [  # answers a spreadsheet would run (OWASP, "CSV Injection")
    ("OMB-781", "=1+1 it cooks fast", "@SUM(A1) why?"),
    ("OMB-782", "+254 it cooks fast", "-why?"),
    ("OMB-783", "-2+3 it cooks fast", "=HYPERLINK(x) why?"),
]


def _planted() -> list[str]:
    words = list(LISTED)
    for respondent, name, email, mobile, gps, national, _, _ in PEOPLE:
        words += [respondent, *name.split(), email, mobile, mobile.replace(" ", ""), gps]
        words += [national, "798 765 432"]
    return words


@pytest.fixture(scope="module")
def study(tmp_path_factory: pytest.TempPathFactory) -> Path:
    root = make_study(tmp_path_factory.mktemp("privacy") / "study")
    lines = [
        "respondent,respondent_name,email,mobile,gps,national_id,gender,language,question,answer"
    ]
    for respondent, name, email, mobile, gps, national, answer, question in PEOPLE:
        lines.append(
            f'{respondent},{name},{email},{mobile},"{gps}",{national},woman,en-KE,'
            f'{question},"{answer}"'
        )
    for respondent, answer, question in FORMULAS:
        lines.append(f'{respondent},,,,,,man,en-KE,"{question}","{answer}"')
    (root / "interviews" / "planted.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    (root / "names.txt").write_text("\n".join(LISTED) + "\n", encoding="utf-8")
    settings = root / "traits.toml"
    text = re.sub(
        r"(?m)^#?\s*names_file = .*$", 'names_file = "names.txt"', settings.read_text("utf-8")
    )
    settings.write_text(text, encoding="utf-8")
    assert run("-w", str(root), "concepts", "import", str(root / "concepts.csv"))[0] == 0
    for name in ("survey.csv", "planted.csv"):
        assert run("-w", str(root), "add", str(root / "interviews" / name))[0] == 0
    code, out = run("-w", str(root), "train", "--no-cv")
    assert code == 0, out
    return root


def _leaks(text: str) -> list[str]:
    folded = text.casefold()
    return [word for word in _planted() if word.casefold() in folded]


@pytest.mark.parametrize("fmt", ["csv", "jsonl", "jsonld"])
def test_pseudonymised_text_exports_hold_no_planted_identifier(study: Path, fmt: str) -> None:
    out = study / "exports" / f"shared.{fmt}"
    code, said = run(
        "-w", str(study), "export", "--format", fmt, "--pseudonymise", "--out", str(out)
    )
    assert code == 0, said
    text = out.read_text(encoding="utf-8")
    assert "cooks fast" in text  # the quotes are there, screened
    assert _leaks(text) == []


def test_pseudonymised_workbook_holds_no_planted_identifier(study: Path) -> None:
    out = study / "exports" / "shared.xlsx"
    code, said = run("-w", str(study), "export", "--pseudonymise", "--out", str(out))
    assert code == 0, said
    workbook = openpyxl.load_workbook(out)
    cells = [
        str(cell.value)
        for sheet in workbook.worksheets
        for row in sheet.iter_rows()
        for cell in row
        if cell.value is not None
    ]
    assert any("cooks fast" in c for c in cells)
    assert _leaks("\n".join(cells)) == []


def test_model_folder_holds_no_planted_identifier(study: Path) -> None:
    (folder,) = [p for p in (study / "models").iterdir() if p.is_dir()]
    for path in (p for p in folder.rglob("*") if p.is_file()):
        data = path.read_bytes().decode("utf-8", errors="ignore")
        # pieces of four letters or six digits and more: shorter ones turn up by chance
        # in binary files
        pieces = {
            piece
            for word in _planted()
            for piece in re.split(r"[\s@.,]+", word)
            if len(piece) >= (6 if piece.isdigit() else 4)
        }
        assert [p for p in pieces if p.casefold() in data.casefold()] == [], path.name


@pytest.mark.parametrize("private", [False, True], ids=["plain", "pseudonymised"])
def test_csv_export_cells_never_start_a_formula(study: Path, private: bool) -> None:
    out = study / "exports" / f"cells-{private}.csv"
    argv = ["-w", str(study), "export", "--format", "csv", "--out", str(out)]
    code, said = run(*argv, *(["--pseudonymise"] if private else []))
    assert code == 0, said
    with out.open(newline="", encoding="utf-8") as fh:  # the csv module is the reference reader
        cells = [cell for row in csv.reader(fh) for cell in row]
    guarded = [c for c in cells if c.startswith("'")]
    assert len(guarded) >= len(FORMULAS)  # the planted answers are there, with the quote
    risky = [c for c in cells if c[:1] in ("=", "+", "@", "\t", "\r")]
    risky += [c for c in cells if c.startswith("-") and not _number(c)]
    assert risky == []


def _number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True
