"""Finding what identifies a person in free text: phones, e-mails, ID numbers, names, IDs.

One screening, used twice:

* exports replace each stretch with a tag (``[phone]``, ``[email]``, ``[id-number]``,
  ``[respondent]``, ``[name]``; :mod:`extractor.report.privacy`);
* training masks each stretch with a same-length placeholder before any feature,
  cluster or vocabulary is learned (:func:`mask_identifiers`), so that model files
  never hold them. Such words never generalise to other people anyway.

Phone numbers are found three ways: a pattern for international (``+`` or ``00``) and
zero-prefixed national numbers; Google's libphonenumber (the ``phonenumbers`` package)
for the national plans of the regions a workspace names (ISO 3166-1 alpha-2, e.g.
``KE``), by which a number such as ``712 345 678`` is valid; and, whatever the regions,
8 to 15 digits written in two or more groups (``84 123 4567``, ``(11) 96123-4567``),
since people type national numbers without their country's trunk 0 or code
(:func:`grouped_phones`).
"""

from __future__ import annotations

import functools
import re
from collections.abc import Iterable
from dataclasses import dataclass

import phonenumbers

from extractor.nlp.fold import fold_with_offsets

Stretch = tuple[int, int, str]
"""``(start, end, tag)``: characters of a text to hide, and what they were."""

_EMAIL = re.compile(r"(?<![\w.+-])[\w.+-]+@[\w-]+(?:\.[\w-]+)+", re.UNICODE)
# International: +CC then 6-14 more digits in groups separated by space, dot, dash or
# brackets. Local: a leading 0 then 8-11 more digits in groups (0712-345-678).
_PHONE = re.compile(
    r"(?<![\w+])(?:\+|00)\d{1,3}(?:[ .\-]?\(?\d{1,4}\)?){2,5}(?!\w)"
    r"|(?<![\w+])\(?0\d{1,4}\)?(?:[ .\-]?\d{2,4}){2,4}(?!\w)"
)
# Digit groups: a first group of 1-4 digits (or bracketed, as area codes are written)
# then 1-5 more groups of 2-8 digits, each after one space, dot or dash. Not inside a
# word, a decimal, a date or a longer run of groups ("1,5", "12/03", "12-345678-9").
_GROUPED = re.compile(
    r"(?<![\w+.,/\-])(?<!\d[ .\-])(?:\(\d{1,4}\)|\d{1,4})(?:[ .\-]\d{2,8}){1,5}(?!\w|[ .,/\-]\d)"
)
# Letters+digits (A1234567, KE12345678) or digit groups with separators, e.g. 12-345678-9.
_ID_NUMBER = re.compile(
    r"(?<!\w)(?:[A-Za-z]{1,3}\d{6,}|\d{6,}[A-Za-z]{1,2}|\d+(?:[/\-]\d+)+|\d{6,})(?!\w)"
)
_DATE = re.compile(r"\d{1,2}[/\-.]\d{1,2}[/\-.](?:\d{2}|\d{4})|\d{4}-\d{1,2}-\d{1,2}")
_YEARS = re.compile(r"(?:1[89]|20)\d\d\s*[-–/]\s*(?:(?:1[89]|20)\d\d|\d\d)")
_RANGE = re.compile(r"(\d{2,3}[05])-(\d{2,3}[05])")
COORDINATES = re.compile(r"\s*[-+]?\d{1,2}\.\d{3,}\s*[,; ]\s*[-+]?\d{1,3}\.\d{3,}\s*")
"""A decimal-degree latitude and longitude pair, as GPS apps write it."""
MIN_PHONE_DIGITS = 8
"""Fewest digits of a phone number outside a region's plan: national significant numbers
of mobile phones are commonly 8 to 10 digits (from memory); amounts of 7 digits or fewer,
such as ``1 200 000``, stay."""
MAX_PHONE_DIGITS = 15
"""Most digits of a phone number: ITU-T E.164 numbers hold at most 15 digits."""
MIN_ID_CHARS = 3
"""Shorter respondent IDs ("R1", "12") are not screened: they are ordinary words and numbers."""


@dataclass(frozen=True)
class Screening:
    """What to look for besides the patterns: names, respondent IDs, phone regions.

    Attributes:
        names: Names of people and places, matched as whole words ignoring case and accents.
        ids: The workspace's respondent IDs ("OMB-777"), matched the same way.
        regions: ISO 3166-1 alpha-2 regions whose national phone formats are recognised.
    """

    names: tuple[str, ...] = ()
    ids: tuple[str, ...] = ()
    regions: tuple[str, ...] = ()


def _digits(s: str) -> int:
    return sum(ch.isdigit() for ch in s)


def word_pattern(words: Iterable[str]) -> re.Pattern[str] | None:
    """Return a pattern of whole words over folded text (see :mod:`extractor.nlp.fold`)."""
    return _word_pattern(tuple(words))


@functools.lru_cache(maxsize=16)
def _word_pattern(words: tuple[str, ...]) -> re.Pattern[str] | None:
    parts = []
    for word in words:
        folded, _ = fold_with_offsets(str(word).strip())
        tokens = folded.split()
        if tokens:
            parts.append(r"\s+".join(re.escape(w) for w in tokens))
    if not parts:
        return None
    parts.sort(key=len, reverse=True)  # "Ana Maria" before "Ana"
    return re.compile(r"(?<!\w)(?:" + "|".join(parts) + r")(?!\w)")


def name_variants(full_names: Iterable[str]) -> list[str]:
    """Return each full name and its words of three letters or more.

    People are often called by one of their names ("Wanjiku" for "Wanjiku Moraa").
    """
    out = []
    for full in full_names:
        out.append(full.strip())
        out += [w for w in full.split() if len(w) >= 3 and any(ch.isalpha() for ch in w)]
    return [n for n in out if n]


def _screened_ids(ids: Iterable[str]) -> list[str]:
    out = []
    for raw in ids:
        i = str(raw).strip()
        if len(i) >= MIN_ID_CHARS and not (i.isdigit() and len(i) < 4):
            out.append(i)
    return out


def national_phones(text: str, regions: Iterable[str]) -> list[tuple[int, int]]:
    """Return stretches that are valid phone numbers by a region's numbering plan."""
    if _digits(text) < MIN_PHONE_DIGITS - 1:
        return []
    found = []
    for region in regions:
        region = region.upper()
        if region not in phonenumbers.SUPPORTED_REGIONS:
            continue
        matcher = phonenumbers.PhoneNumberMatcher(
            text, region, leniency=phonenumbers.Leniency.POSSIBLE
        )
        for match in matcher:
            raw = match.raw_string
            if _YEARS.fullmatch(raw) or _digits(raw) < MIN_PHONE_DIGITS - 1:
                continue
            if phonenumbers.is_valid_number(match.number):
                found.append((match.start, match.end))
    return found


def _price_range(s: str) -> bool:
    """Whether ``s`` is a range of two prices or counts: ``2500-3750``, ``150-200``.

    Both ends have 3 or 4 digits and end in 0 or 5, as prices are quoted (common
    practice), and the first is the smaller; a phone number written ``2212-3456`` is not.
    """
    ends = _RANGE.fullmatch(s)
    return ends is not None and int(ends[1]) < int(ends[2])


def _date_years_or_range(s: str) -> bool:
    """Whether digits with separators are a date, a year range or a price range."""
    return bool(_DATE.fullmatch(s) or _YEARS.fullmatch(s) or _price_range(s))


def _grouped_phone(s: str) -> bool:
    """Whether digit groups are a phone number rather than an amount, a date or years."""
    digits = re.sub(r"\D", "", s)
    if not MIN_PHONE_DIGITS <= len(digits) <= MAX_PHONE_DIGITS or _date_years_or_range(s):
        return False
    groups = re.findall(r"\d+", s)
    if all(len(g) == 4 and g[:2] in ("19", "20") for g in groups):
        return False  # years listed: "2019 2020"
    # Round figures are amounts, whatever their grouping: "12 500 000", "1000-1500".
    # Of libphonenumber's example numbers for every region, 4 in 489 end in 00.
    return not digits.endswith("00")


def _not_an_id(s: str) -> bool:
    """Whether digits joined by dashes or slashes are a date, years or a round range."""
    if _date_years_or_range(s):
        return True
    groups = re.split(r"[/\-]", s)
    return len(groups) == 2 and all(g.endswith("00") for g in groups)


def grouped_phones(text: str) -> list[tuple[int, int]]:
    """Return stretches of 8 to 15 digits in groups that are not amounts, dates or years.

    This needs no region: ``ligue 84 123 4567`` is a number however the workspace is
    set up. Prices and counts stay: they have fewer digits (``1 200 000``) or end in
    ``00`` (``12 500 000``); dates, year ranges and price ranges (``2500-3750``) stay too.
    """
    return [(m.start(), m.end()) for m in _GROUPED.finditer(text) if _grouped_phone(m.group())]


def phone_formats(regions: Iterable[str]) -> str:
    """Return, as a sentence, which phone formats a screening with ``regions`` finds."""
    named = sorted({r.upper() for r in regions})
    plans = (
        f"the national numbering plans of {', '.join(named)}"
        if named
        else "no national numbering plan (no phone region known)"
    )
    return (
        "International (+ or 00), national with a leading 0, "
        f"{MIN_PHONE_DIGITS} to {MAX_PHONE_DIGITS} digits written in groups "
        f"(not amounts ending in 00, dates or years), and {plans}"
    )


def find_identifiers(text: str, screening: Screening = Screening()) -> list[Stretch]:
    """Return the non-overlapping stretches of ``text`` that identify someone, in order.

    Earlier kinds win where stretches overlap: e-mail, phone, ID number, respondent
    ID, then name.
    """
    found: list[Stretch] = []

    def free(a: int, b: int) -> bool:
        return all(b <= s or a >= e for s, e, _ in found)

    for m in _EMAIL.finditer(text):
        found.append((m.start(), m.end(), "[email]"))
    for m in _PHONE.finditer(text):
        if _digits(m.group()) >= MIN_PHONE_DIGITS and free(m.start(), m.end()):
            found.append((m.start(), m.end(), "[phone]"))
    for a, b in national_phones(text, screening.regions) + grouped_phones(text):
        if free(a, b):
            found.append((a, b, "[phone]"))
    for m in _ID_NUMBER.finditer(text):
        s = m.group()
        # Dates, short codes and ranges ("2-3 bags", "12/05/2023", "1000-1500", "2003/2004")
        # are not identifiers.
        if _digits(s) >= 6 and not _not_an_id(s) and free(m.start(), m.end()):
            found.append((m.start(), m.end(), "[id-number]"))
    for words, tag in ((_screened_ids(screening.ids), "[respondent]"), (screening.names, "[name]")):
        pattern = word_pattern(words)
        if pattern is None:
            continue
        folded, where = fold_with_offsets(text)
        for m in pattern.finditer(folded):
            a, b = where[m.start()], where[m.end() - 1] + 1
            if free(a, b):
                found.append((a, b, tag))
    return sorted(found)


def identifying_value(value: str, regions: Iterable[str] = ()) -> str | None:
    """Return the kind (``e-mail``, ``phone``, ``coordinates``) of a whole cell, or None."""
    text = value.strip()
    if not text:
        return None
    if _EMAIL.fullmatch(text):
        return "e-mail"
    if COORDINATES.fullmatch(text):
        return "coordinates"
    for a, b, tag in find_identifiers(text, Screening(regions=tuple(regions))):
        if tag == "[phone]" and a == 0 and b == len(text):
            return "phone"
    return None


def mask_identifiers(text: str, screening: Screening = Screening()) -> str:
    """Return ``text`` with every identifying stretch masked, keeping every offset.

    Letters become ``x`` and digits ``0`` (spaces and punctuation stay), so tokens,
    spans and sentence offsets are unchanged while no model learns the word itself.
    """
    chars = list(text)
    for start, end, _ in find_identifiers(text, screening):
        for k in range(start, end):
            ch = chars[k]
            if ch.isdigit():
                chars[k] = "0"
            elif ch.isalpha():
                chars[k] = "x"
    return "".join(chars)
