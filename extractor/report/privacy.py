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
from extractor.nlp.identifiers import (
    Screening,
    find_identifiers,
    identifying_value,
    name_variants,
)

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
"""Metadata columns always dropped when pseudonymising (compared case-insensitively, also
as the last or first word of a longer name: ``respondent_name``, ``phone_2``)."""
NAME_COLUMNS = ("name", "full_name", "first_name", "last_name", "surname")
"""Columns whose values are also screened out of free text as names."""
VALUE_SHARE = 0.5
"""A column is identifying when at least this share of its filled cells is a phone,
an e-mail or a coordinate pair (common practice: a majority)."""

TEXT_COLUMNS = ("sentence", "span_text", "question")
"""Mention columns holding free text that is screened."""


@dataclass(frozen=True)
class PrivacyOptions:
    """How to pseudonymise an export.

    Attributes:
        secret: Key of the keyed hash; keep it in the workspace, never in the export.
        names: Names (people, places) to replace with ``[name]`` in free text.
        drop_columns: Respondent metadata columns removed from the export, besides
            :data:`DEFAULT_IDENTIFYING` (a list from the settings adds to it, never
            replaces it).
        phone_regions: ISO 3166 regions whose national phone formats are screened.
    """

    secret: bytes
    names: tuple[str, ...] = ()
    drop_columns: tuple[str, ...] = field(default=DEFAULT_IDENTIFYING)
    phone_regions: tuple[str, ...] = ()


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


def redactions(text: str, names: Iterable[str] = (), **more: Any) -> list[tuple[int, int, str]]:
    """Return the non-overlapping ``(start, end, tag)`` stretches of ``text`` to replace.

    Earlier kinds win where stretches overlap: e-mail, phone, ID number, respondent ID,
    then name (:func:`extractor.nlp.identifiers.find_identifiers`). ``ids`` and
    ``regions`` may be given by keyword (see :class:`~extractor.nlp.identifiers.Screening`).
    """
    screening = Screening(
        names=tuple(names), ids=tuple(more.get("ids", ())), regions=tuple(more.get("regions", ()))
    )
    return find_identifiers(text, screening)


def _apply(text: str, found: Sequence[tuple[int, int, str]]) -> str:
    out, pos = [], 0
    for s, e, tag in found:
        out.append(text[pos:s])
        out.append(tag)
        pos = e
    out.append(text[pos:])
    return "".join(out)


def screen_text(
    text: str, names: Iterable[str] = (), *, ids: Iterable[str] = (), regions: Iterable[str] = ()
) -> str:
    """Return ``text`` with phones, e-mails, ID-like numbers, IDs and listed names replaced.

    Names and IDs match whole words, ignoring case and accents ("José" matches "jose").

    Args:
        text: Free text from an interview.
        names: Names to hide; multi-word names match across any whitespace.
        ids: The workspace's respondent IDs, replaced with ``[respondent]``.
        regions: ISO 3166 regions whose national phone formats are recognised.

    Returns:
        The screened text, e.g. ``"call [name] on [phone]"``.
    """
    return _apply(text, redactions(text, names, ids=ids, regions=regions))


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
    sent: Any, start: Any, end: Any, screening: Screening
) -> tuple[Any, Any, Any, str | None]:
    """Return the screened sentence, the span's moved offsets and its screened text.

    Anything that is not a sentence string, or a span without both offsets, comes back
    as given, with no span text.
    """
    if not isinstance(sent, str):
        return sent, start, end, None
    found = find_identifiers(sent, screening)
    new = _apply(sent, found)
    if not (pd.notna(start) and pd.notna(end)):
        return new, start, end, None
    s2 = _shift(int(start), found, is_end=False)
    e2 = _shift(int(end), found, is_end=True)
    return new, s2, e2, new[s2:e2]


def screen_mentions(
    mentions: pd.DataFrame, names: Iterable[str] = (), screening: Screening | None = None
) -> pd.DataFrame:
    """Return mentions with screened sentence, span and question texts.

    ``start``/``end`` are moved so they still index the screened sentence;
    ``span_text`` becomes that stretch of the screened sentence. ``answer_start``
    and ``answer_end`` keep pointing into the stored answer, which is not changed.
    """
    screening = screening or Screening()
    screening = Screening(tuple(names) + screening.names, screening.ids, screening.regions)

    def screen(t: Any) -> Any:
        return _apply(t, find_identifiers(t, screening)) if isinstance(t, str) else t

    out = mentions.copy()
    if "sentence" in out.columns:
        screened = [
            _screen_sentence(sent, start, end, screening)
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
                fallback = out["span_text"].map(screen)
                out["span_text"] = [
                    row[3] if row[3] is not None else f
                    for row, f in zip(screened, fallback, strict=True)
                ]
    for col in TEXT_COLUMNS:
        if col in out.columns and col not in ("sentence", "span_text"):
            out[col] = out[col].map(screen)
    if "span_text" in out.columns and "sentence" not in out.columns:
        out["span_text"] = out["span_text"].map(screen)
    return out


def _norm(column: Any) -> str:
    return re.sub(r"[\s\-_]+", "_", str(column).strip().casefold())


def identifying_columns(columns: Iterable[str], drop: Iterable[str]) -> list[str]:
    """Return the columns named in ``drop``, ignoring case, spaces and dashes.

    A listed name also matches as the first or last word of a longer column name
    (``name`` finds ``respondent_name``; ``phone`` finds ``phone_2``).
    """
    wanted = {_norm(d) for d in drop}

    def named(c: str) -> bool:
        n = _norm(c)
        return n in wanted or any(n.endswith("_" + w) or n.startswith(w + "_") for w in wanted)

    return [c for c in columns if named(c)]


def identifying_by_values(
    frame: pd.DataFrame, regions: Iterable[str] = ()
) -> list[tuple[str, str]]:
    """Return ``(column, kind)`` for columns whose cells are mostly phones, e-mails, places.

    A cell counts when it is wholly an e-mail, a phone number or a coordinate pair
    (:func:`extractor.nlp.identifiers.identifying_value`).
    """
    regions = tuple(regions)
    found = []
    for column in frame.columns:
        if column == "respondent":
            continue
        cells = [str(v) for v in frame[column] if isinstance(v, str) and v.strip()]
        kinds = [k for k in (identifying_value(v, regions) for v in cells) if k]
        if cells and len(kinds) >= VALUE_SHARE * len(cells):
            found.append((str(column), max(set(kinds), key=kinds.count)))
    return found


def dropped_columns(respondents: pd.DataFrame, options: PrivacyOptions) -> list[tuple[str, str]]:
    """Return ``(column, why)`` for every respondent column a pseudonymised export drops."""
    listed = identifying_columns(
        [c for c in respondents.columns if c != "respondent"],
        DEFAULT_IDENTIFYING + tuple(options.drop_columns),
    )
    out = [(c, "named as identifying") for c in listed]
    rest = respondents.drop(columns=listed)
    out += [
        (c, f"values look like {kind}")
        for c, kind in identifying_by_values(rest, options.phone_regions)
    ]
    return out


def _screening(ids: pd.Series, respondents: pd.DataFrame, options: PrivacyOptions) -> Screening:
    """Return an export's screening: names given and in name columns, IDs, phone regions."""
    names = list(options.names)
    for column in identifying_columns(respondents.columns, NAME_COLUMNS):
        names += name_variants(str(v) for v in respondents[column] if isinstance(v, str))
    return Screening(tuple(names), tuple(ids.astype(str).unique()), options.phone_regions)


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

    m = screen_mentions(mentions, screening=_screening(ids, respondents, options))
    if "respondent" in m.columns:
        m["respondent"] = swap(m["respondent"])
    r = respondents.drop(columns=[c for c, _ in dropped_columns(respondents, options)])
    r = r.copy()
    if "respondent" in r.columns:
        r["respondent"] = swap(r["respondent"])
    return m, r
