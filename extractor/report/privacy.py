"""Pseudonyms for respondents and screening of quotes before they leave the workspace.

Interview answers are personal data. An export can be made shareable by

* replacing every respondent ID with a keyed-hash pseudonym
  (HMAC-SHA256, RFC 2104): the same ID and secret always give the same token, so
  exports made on different days still join, while without the secret the token
  cannot be traced back to the ID;
* screening free text: phone numbers, e-mail addresses, ID-like numbers and
  names from a user-supplied list become ``[phone]``, ``[email]``,
  ``[id-number]`` and ``[name]``;
* dropping metadata columns that identify a person (name, phone, village...).

Everything here is pure: it returns new strings and frames and never touches the
store. Screening is a safety net, not a guarantee; a person still reads the
export before it is shared.
"""

from __future__ import annotations

import hashlib
import hmac
import re
import secrets
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any

import pandas as pd

from extractor.errors import InputError
from extractor.nlp.fold import fold_with_offsets

MIN_SECRET_BYTES = 16
"""Shortest secret accepted; RFC 2104 advises against keys much shorter than the hash."""

DEFAULT_IDENTIFYING = (
    "name",
    "full_name",
    "first_name",
    "last_name",
    "surname",
    "phone",
    "telephone",
    "mobile",
    "email",
    "e-mail",
    "village",
    "address",
    "gps",
    "latitude",
    "longitude",
    "national_id",
    "id_number",
)
"""Metadata columns dropped by default when pseudonymising (compared case-insensitively)."""

TEXT_COLUMNS = ("sentence", "span_text", "question")
"""Mention columns holding free text that is screened."""


@dataclass(frozen=True)
class PrivacyOptions:
    """How to pseudonymise an export.

    Attributes:
        secret: Key of the keyed hash; keep it in the workspace, never in the export.
        names: Names (people, places) to replace with ``[name]`` in free text.
        drop_columns: Respondent metadata columns removed from the export.
    """

    secret: bytes
    names: tuple[str, ...] = ()
    drop_columns: tuple[str, ...] = field(default=DEFAULT_IDENTIFYING)


def new_secret() -> bytes:
    """Return a fresh random 32-byte secret for :func:`pseudonym`."""
    return secrets.token_bytes(32)


def _check_secret(secret: bytes) -> None:
    if not isinstance(secret, bytes | bytearray) or len(secret) < MIN_SECRET_BYTES:
        raise InputError(
            f"The pseudonym secret must be at least {MIN_SECRET_BYTES} bytes; "
            "create one with new_secret()."
        )


def pseudonym(respondent_id: str, secret: bytes, *, length: int = 8) -> str:
    """Return a short stable pseudonym such as ``R-3f9a1c2b`` for a respondent ID.

    Args:
        respondent_id: The external respondent ID (leading and trailing spaces ignored).
        secret: The HMAC key, at least 16 bytes.
        length: Number of hex digits kept from the HMAC-SHA256 digest (8 to 64).

    Raises:
        InputError: If the secret is too short or the length out of range.
    """
    _check_secret(secret)
    if not 8 <= length <= 64:
        raise InputError(f"The pseudonym length must be between 8 and 64 hex digits; got {length}.")
    digest = hmac.new(bytes(secret), str(respondent_id).strip().encode("utf-8"), hashlib.sha256)
    return "R-" + digest.hexdigest()[:length]


def pseudonym_map(respondent_ids: Iterable[str], secret: bytes) -> dict[str, str]:
    """Return ``{id: pseudonym}`` for distinct IDs, lengthening tokens if two would collide.

    Eight hex digits collide for about one study in ten thousand of 1,000
    respondents; two people must never share a row, so all tokens grow together.
    """
    ids = sorted({str(i) for i in respondent_ids})
    for length in range(8, 65, 2):
        mapping = {i: pseudonym(i, secret, length=length) for i in ids}
        if len(set(mapping.values())) == len(mapping):
            return mapping
    raise InputError("Two respondent IDs differ only in surrounding spaces; make them distinct.")


# --- screening -----------------------------------------------------------------------

_EMAIL = re.compile(r"(?<![\w.+-])[\w.+-]+@[\w-]+(?:\.[\w-]+)+", re.UNICODE)
# International: +CC then 6-14 more digits in groups separated by space, dot, dash or
# brackets. Local: a leading 0 then 8-11 more digits in groups (0712-345-678).
_PHONE = re.compile(
    r"(?<![\w+])(?:\+|00)\d{1,3}(?:[ .\-]?\(?\d{1,4}\)?){2,5}(?!\w)"
    r"|(?<![\w+])\(?0\d{1,4}\)?(?:[ .\-]?\d{2,4}){2,4}(?!\w)"
)
# Letters+digits (A1234567, KE12345678) or digit groups with separators, e.g. 12-345678-9.
_ID_NUMBER = re.compile(
    r"(?<!\w)(?:[A-Za-z]{1,3}\d{6,}|\d{6,}[A-Za-z]{1,2}|\d+(?:[/\-]\d+)+|\d{6,})(?!\w)"
)
_DATE = re.compile(r"\d{1,2}[/\-.]\d{1,2}[/\-.](?:\d{2}|\d{4})|\d{4}-\d{1,2}-\d{1,2}")


def _digits(s: str) -> int:
    return sum(ch.isdigit() for ch in s)


def _name_pattern(names: Iterable[str]) -> re.Pattern[str] | None:
    parts = []
    for name in names:
        folded, _ = fold_with_offsets(str(name).strip())
        words = folded.split()
        if words:
            parts.append(r"\s+".join(re.escape(w) for w in words))
    if not parts:
        return None
    parts.sort(key=len, reverse=True)  # "Ana Maria" before "Ana"
    return re.compile(r"(?<!\w)(?:" + "|".join(parts) + r")(?!\w)")


def redactions(text: str, names: Iterable[str] = ()) -> list[tuple[int, int, str]]:
    """Return the non-overlapping ``(start, end, tag)`` stretches of ``text`` to replace.

    Earlier kinds win where stretches overlap: e-mail, phone, ID number, then name.
    """
    found: list[tuple[int, int, str]] = []

    def free(a: int, b: int) -> bool:
        return all(b <= s or a >= e for s, e, _ in found)

    for m in _EMAIL.finditer(text):
        found.append((m.start(), m.end(), "[email]"))
    for m in _PHONE.finditer(text):
        if _digits(m.group()) >= 8 and free(m.start(), m.end()):
            found.append((m.start(), m.end(), "[phone]"))
    for m in _ID_NUMBER.finditer(text):
        s = m.group()
        # Dates and short codes ("2-3 bags", "12/05/2023") are not identifiers.
        if _digits(s) >= 6 and not _DATE.fullmatch(s) and free(m.start(), m.end()):
            found.append((m.start(), m.end(), "[id-number]"))
    pattern = _name_pattern(names)
    if pattern is not None:
        folded, where = fold_with_offsets(text)
        for m in pattern.finditer(folded):
            a, b = where[m.start()], where[m.end() - 1] + 1
            if free(a, b):
                found.append((a, b, "[name]"))
    return sorted(found)


def _apply(text: str, found: Sequence[tuple[int, int, str]]) -> str:
    out, pos = [], 0
    for s, e, tag in found:
        out.append(text[pos:s])
        out.append(tag)
        pos = e
    out.append(text[pos:])
    return "".join(out)


def screen_text(text: str, names: Iterable[str] = ()) -> str:
    """Return ``text`` with phones, e-mails, ID-like numbers and listed names replaced.

    Names match whole words, ignoring case and accents ("José" matches "jose").

    Args:
        text: Free text from an interview.
        names: Names to hide; multi-word names match across any whitespace.

    Returns:
        The screened text, e.g. ``"call [name] on [phone]"``.
    """
    return _apply(text, redactions(text, names))


def _shift(offset: int, found: Sequence[tuple[int, int, str]], *, is_end: bool) -> int:
    """Map an offset in the original text to the screened text."""
    delta = 0
    for s, e, tag in found:
        if e <= offset:
            delta += len(tag) - (e - s)
        elif s < offset < e:
            # The offset falls inside a redaction: snap it to the tag's edge so the
            # mention covers the whole tag rather than half of it.
            return s + delta + (len(tag) if is_end else 0)
    return offset + delta


def _screen_sentence(
    sent: Any, start: Any, end: Any, names: Sequence[str]
) -> tuple[Any, Any, Any, str | None]:
    """Return the screened sentence, the span's moved offsets and its screened text.

    Anything that is not a sentence string, or a span without both offsets, comes back
    as given, with no span text.
    """
    if not isinstance(sent, str):
        return sent, start, end, None
    found = redactions(sent, names)
    new = _apply(sent, found)
    if not (pd.notna(start) and pd.notna(end)):
        return new, start, end, None
    s2 = _shift(int(start), found, is_end=False)
    e2 = _shift(int(end), found, is_end=True)
    return new, s2, e2, new[s2:e2]


def screen_mentions(mentions: pd.DataFrame, names: Iterable[str] = ()) -> pd.DataFrame:
    """Return mentions with screened sentence, span and question texts.

    ``start``/``end`` are moved so they still index the screened sentence;
    ``span_text`` becomes that stretch of the screened sentence. ``answer_start``
    and ``answer_end`` keep pointing into the stored answer, which is not changed.
    """
    names = tuple(names)
    out = mentions.copy()
    if "sentence" in out.columns:
        screened = [
            _screen_sentence(sent, start, end, names)
            for sent, start, end in zip(
                out["sentence"],
                out.get("start", [None] * len(out)),
                out.get("end", [None] * len(out)),
                strict=True,
            )
        ]
        out["sentence"] = [row[0] for row in screened]
        if "start" in out.columns and "end" in out.columns:
            out["start"] = [row[1] for row in screened]
            out["end"] = [row[2] for row in screened]
            if "span_text" in out.columns:
                fallback = out["span_text"].map(
                    lambda t: screen_text(t, names) if isinstance(t, str) else t
                )
                out["span_text"] = [
                    row[3] if row[3] is not None else f
                    for row, f in zip(screened, fallback, strict=True)
                ]
    for col in TEXT_COLUMNS:
        if col in out.columns and col not in ("sentence", "span_text"):
            out[col] = out[col].map(lambda t: screen_text(t, names) if isinstance(t, str) else t)
    if "span_text" in out.columns and "sentence" not in out.columns:
        out["span_text"] = out["span_text"].map(
            lambda t: screen_text(t, names) if isinstance(t, str) else t
        )
    return out


def identifying_columns(columns: Iterable[str], drop: Iterable[str]) -> list[str]:
    """Return the columns whose names match ``drop``, ignoring case, spaces and dashes."""

    def norm(c: str) -> str:
        return re.sub(r"[\s\-_]+", "_", str(c).strip().casefold())

    wanted = {norm(d) for d in drop}
    return [c for c in columns if norm(c) in wanted]


def pseudonymise_frames(
    mentions: pd.DataFrame, respondents: pd.DataFrame, options: PrivacyOptions
) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Return copies of both frames with pseudonyms, screened text and no identifying columns.

    Args:
        mentions: Mention rows with a ``respondent`` column.
        respondents: One row per respondent with a ``respondent`` column.
        options: Secret, names to screen and metadata columns to drop.

    Returns:
        ``(mentions, respondents)``, new frames; the inputs are unchanged.
    """
    ids = pd.concat(
        [
            mentions.get("respondent", pd.Series(dtype=object)),
            respondents.get("respondent", pd.Series(dtype=object)),
        ]
    ).dropna()
    mapping = pseudonym_map(ids.astype(str), options.secret)

    def swap(col: pd.Series) -> pd.Series:
        return col.map(lambda r: mapping[str(r)] if pd.notna(r) else r)

    m = screen_mentions(mentions, options.names)
    if "respondent" in m.columns:
        m["respondent"] = swap(m["respondent"])
    r = respondents.drop(columns=identifying_columns(respondents.columns, options.drop_columns))
    r = r.copy()
    if "respondent" in r.columns:
        r["respondent"] = swap(r["respondent"])
    return m, r
