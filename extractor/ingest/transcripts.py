"""Transcript readers (.txt, .docx): interview header blocks and speaker turns to answer rows.

The format, line by line::

    Respondent: KB-07            <- opens an interview; the ID of the respondent
    Gender: female               <- header block: ``Key: value`` lines up to a blank line
    Language: fr                 <-   (Language, Variety and Focus group have a meaning;
                                 <-    every other key is metadata)
    Interviewer: What do you like about it?   <- interviewer turn: the question
    Farmer: It cooks fast.       <- any other speaker: one answer per turn
    and it keeps well.           <- no prefix: continues the turn (joined with a newline)

A blank line ends a turn; unprefixed text after a blank line is a new turn by the same
speaker. Without any ``Respondent:`` header, the respondent ID is the file's stem.
"""

from __future__ import annotations

import io
import re
import zipfile
from pathlib import Path
from typing import Any

import docx
from docx.opc.exceptions import PackageNotFoundError
from lxml.etree import XMLSyntaxError

from extractor.errors import InputError
from extractor.ingest.columns import fold_header, is_yes, language_of_cell, snake_key
from extractor.ingest.decode import check_office_archive, decode_text

INTERVIEWER_SPEAKERS = frozenset({
    "interviewer", "moderator", "facilitator", "enqueteur", "entrevistador", "entrevistadora",
    "q", "i",
})  # fmt: skip
"""Folded speaker labels of the interviewer; any other speaker is the respondent."""

# Numbered question labels ("Q1", "Q 2b", "Question 3", "Pregunta 4") are the interviewer too.
_NUMBERED_QUESTION = re.compile(r"(?:q|question|pregunta)\s?\d+[a-z]?")
_RESPONDENT_KEYS = frozenset({"respondent", "respondent id", "repondant", "encuestado"})
_GROUP_KEYS = frozenset({"focus group", "group", "fg", "grupo focal", "groupe focal"})
_PREFIX = re.compile(r"^\s*([^\W\d_][\w.'’ -]{0,39}?)\s*:[ \t]*(.*)$")
_MAX_LABEL_WORDS = 3

Lines = list[tuple[int, str]]
"""Transcript lines as ``(line number, text)``; for .docx the number is the paragraph's."""


def is_interviewer(label: str) -> bool:
    """Return whether a speaker label names the interviewer (case- and accent-insensitive)."""
    folded = fold_header(label)
    return folded in INTERVIEWER_SPEAKERS or _NUMBERED_QUESTION.fullmatch(folded) is not None


def _speaker(line: str) -> tuple[str, str] | None:
    """Split ``Speaker: text``; ``None`` when the line has no plausible speaker label.

    A label is at most three words, each capitalised or a number ("Woman 2", "FG1"),
    so that "the taste: very good" inside an answer is not mistaken for a speaker.
    """
    match = _PREFIX.match(line)
    if match is None:
        return None
    label, text = match.group(1).strip(), match.group(2)
    words = label.split()
    capitalised = all(w[0].isupper() or w[0].isdigit() for w in words)
    if len(words) > _MAX_LABEL_WORDS or not (capitalised or is_interviewer(label)):
        return None
    return label, text


def _respondent_header(line: str) -> str | None:
    """Return the ID of a ``Respondent: <ID>`` line, ``None`` for any other line."""
    match = _PREFIX.match(line)
    if match is None or fold_header(match.group(1)) not in _RESPONDENT_KEYS:
        return None
    value = match.group(2).strip()
    # An ID is short and is no sentence; "Respondent: We like it." is a speaker turn.
    if not value or len(value) > 40 or len(value.split()) > 4 or value[-1] in ".?!":
        return None
    return value


class _TranscriptParser:
    """Walks the lines once, keeping the current interview, turn and question."""

    def __init__(self, path: Path) -> None:
        self.path = path
        self.rows: list[dict[str, Any]] = []
        self._start_interview(path.stem)
        self.speaker: str | None = None
        self.turn: list[str] = []
        self.turn_line = 0

    def _start_interview(self, respondent: str) -> None:
        self.respondent = respondent
        self.metadata: dict[str, str] = {}
        self.lang: str | None = None
        self.variety: str | None = None
        self.is_group = False
        self.question: str | None = None
        self.in_header = False

    def _flush(self) -> None:
        """Close the open turn: an interviewer turn sets the question, any other is an answer."""
        if not self.turn:
            return
        text = "\n".join(self.turn)
        self.turn = []
        if self.speaker is not None and is_interviewer(self.speaker):
            self.question = text.strip() or self.question
            return
        if not text.strip():
            return
        metadata = dict(self.metadata)
        self.rows.append({
            "speaker": self.speaker,
            "respondent": self.respondent,
            "question": self.question,
            "answer": text,
            "lang": self.lang,
            "lang_origin": "column" if self.lang else None,
            "variety": self.variety,
            "metadata": metadata,
            "sheet": None,
            "row": self.turn_line,
            "is_group": self.is_group,
        })  # fmt: skip

    def _header_line(self, number: int, line: str) -> bool:
        """Record a ``Key: value`` header line; ``False`` when the line is not one."""
        match = _PREFIX.match(line)
        if match is None or is_interviewer(match.group(1)):
            return False
        key, value = fold_header(match.group(1)), match.group(2).strip()
        if key in ("language", "langue", "idioma"):
            where = f"File '{self.path.name}', line {number}"
            self.lang = language_of_cell(value, where, match.group(1).strip())[0]
        elif key in ("variety", "variete", "variedad"):
            self.variety = value or None
        elif key in _GROUP_KEYS:
            self.is_group = is_yes(value)
        elif value:
            self.metadata[snake_key(match.group(1))] = value
        return True

    def feed(self, number: int, line: str) -> None:
        """Consume one line."""
        if not line.strip():
            self._flush()
            self.in_header = False
            return
        respondent = _respondent_header(line)
        if respondent is not None:
            self._flush()
            self._start_interview(respondent)
            self.speaker = None
            self.in_header = True
            return
        if self.in_header:
            if self._header_line(number, line):
                return
            self.in_header = False
        split = _speaker(line)
        if split is not None:
            self._flush()
            self.speaker, text = split
            self.turn, self.turn_line = [text], number
        elif self.turn:
            self.turn.append(line)
        else:
            # After a blank line, or before any speaker: a new turn by the last speaker.
            self.turn, self.turn_line = [line], number

    def finish(self) -> list[dict[str, Any]]:
        """Close the last turn and return the answer rows."""
        self._flush()
        return self.rows


def parse_transcript(path: Path, lines: Lines) -> list[dict[str, Any]]:
    """Turn transcript lines into answer rows (``lang`` is ``None`` where not given).

    Raises:
        InputError: For a ``Language:`` header that is not a known language tag.
    """
    parser = _TranscriptParser(path)
    for number, line in lines:
        parser.feed(number, line)
    return parser.finish()


def text_lines(path: Path, data: bytes) -> tuple[Lines, str, list[str]]:
    """Decode a .txt transcript into numbered lines; return lines, encoding and warnings."""
    text, encoding, warnings = decode_text(data, path)
    lines = [(n, line.rstrip("\r")) for n, line in enumerate(text.split("\n"), start=1)]
    return lines, encoding, warnings


def docx_lines(path: Path, data: bytes) -> tuple[Lines, list[str]]:
    """Read a .docx transcript as one line per paragraph; return lines and warnings.

    Raises:
        InputError: If the file is password-protected or not a valid .docx document.
    """
    try:
        check_office_archive(path, data, "word processor")
        document = docx.Document(io.BytesIO(data))
    except (PackageNotFoundError, zipfile.BadZipFile, KeyError, ValueError, XMLSyntaxError,
            OSError) as err:  # fmt: skip
        raise InputError(
            f"File '{path.name}' is not a valid .docx document ({type(err).__name__}); "
            "open it in a word processor and save it as .docx again."
        ) from err
    lines: Lines = []
    for number, paragraph in enumerate(document.paragraphs, start=1):
        # A soft line break inside a paragraph is a continuation line of the same turn.
        lines += [(number, part) for part in paragraph.text.split("\n")]
    warnings = []
    if document.tables:
        warnings.append(
            f"File '{path.name}' contains tables, which were not read; "
            "copy interview text out of tables into paragraphs."
        )
    return lines, warnings
