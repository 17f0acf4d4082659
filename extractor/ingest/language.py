"""Language tags (BCP 47, RFC 5646) and offline language detection with lingua.

Two jobs, kept apart: :func:`normalise_tag` checks a tag against the RFC 5646 grammar
and writes it in the registry's case conventions; :func:`detect_language` guesses the
language of an answer among a few candidates with lingua's bundled n-gram models.

The list of known primary language subtags is the union of what installed libraries
ship, since no full ISO 639 table is a dependency: lingua's ``IsoCode639_1`` and
``IsoCode639_3`` (75 languages), the language packages of ``spacy.lang``, the ISO 639
special codes and the ``qaa``-``qtz`` range that ISO 639-2 reserves for local use.
"""

from __future__ import annotations

import pkgutil
import re
from collections.abc import Sequence
from functools import lru_cache

import pycountry
import spacy.lang
from lingua import Language, LanguageDetector, LanguageDetectorBuilder

from extractor.errors import InputError
from extractor.nlp.fold import fold
from extractor.nlp.text import primary_subtag

# RFC 5646 section 2.1 "Syntax": the ABNF of a language tag, one regex per production.
_LANGUAGE = re.compile(r"[a-z]{2,3}|[a-z]{4}|[a-z]{5,8}")
_EXTLANG = re.compile(r"[a-z]{3}")
_SCRIPT = re.compile(r"[a-z]{4}")
_REGION = re.compile(r"[a-z]{2}|[0-9]{3}")
_VARIANT = re.compile(r"[a-z0-9]{5,8}|[0-9][a-z0-9]{3}")
_SINGLETON = re.compile(r"[a-wyz0-9]")
_EXTENSION_SUBTAG = re.compile(r"[a-z0-9]{2,8}")
_PRIVATE_SUBTAG = re.compile(r"[a-z0-9]{1,8}")

# RFC 5646 section 2.1 "grandfathered" productions, in their registry spelling.
_GRANDFATHERED = {
    t.lower(): t
    for t in (
        "en-GB-oed", "i-ami", "i-bnn", "i-default", "i-enochian", "i-hak", "i-klingon",
        "i-lux", "i-mingo", "i-navajo", "i-pwn", "i-tao", "i-tay", "i-tsu", "sgn-BE-FR",
        "sgn-BE-NL", "sgn-CH-DE", "art-lojban", "cel-gaulish", "no-bok", "no-nyn",
        "zh-guoyu", "zh-hakka", "zh-min", "zh-min-nan", "zh-xiang",
    )
}  # fmt: skip

# ISO 639-2/3 special codes (uncoded, multiple, undetermined, no linguistic content).
_SPECIAL_CODES = frozenset({"mis", "mul", "und", "zxx"})

DEFAULT_CANDIDATES = ("en", "fr", "es", "pt", "sw", "ar", "hi", "yo", "so", "lg")
"""Languages tried by :func:`detect_language` when the workspace names none."""

MIN_WORDS = 3
"""Texts with fewer words than this are not detected; they get the default language."""

MIN_CONFIDENCE = 0.6
"""Lowest lingua confidence (among the candidates, summing to 1) accepted as a detection."""

_WORD = re.compile(r"[^\W\d_]+")

# Language names a spreadsheet's language column may hold instead of a code (en/fr/es).
_NAMES = {
    "anglais": "en", "ingles": "en", "francais": "fr", "frances": "fr",
    "espagnol": "es", "espanol": "es", "castellano": "es", "portugais": "pt",
    "portugues": "pt", "kiswahili": "sw",
}  # fmt: skip


class _Parts:
    """The subtags of a well-formed langtag, collected while parsing (state, hence a class)."""

    def __init__(self) -> None:
        self.language = ""
        self.extlangs: list[str] = []
        self.script = ""
        self.region = ""
        self.variants: list[str] = []
        self.extensions: list[list[str]] = []
        self.private: list[str] = []


def _parse(tag: str) -> _Parts | str | None:
    """Parse a lower-case tag against the RFC 5646 grammar.

    Returns:
        The parts of a langtag, the text of a private-use or grandfathered tag, or
        ``None`` when the tag is not well-formed.
    """
    if tag in _GRANDFATHERED:
        return _GRANDFATHERED[tag]
    subtags = tag.split("-")
    if subtags[0] == "x":
        ok = len(subtags) > 1 and all(_PRIVATE_SUBTAG.fullmatch(s) for s in subtags[1:])
        return tag if ok else None
    parts = _Parts()
    if not _LANGUAGE.fullmatch(subtags[0]):
        return None
    parts.language, i = subtags[0], 1
    # Up to three extlangs, only after a 2-3 letter language.
    while len(subtags[0]) <= 3 and i < len(subtags) and len(parts.extlangs) < 3:
        if not _EXTLANG.fullmatch(subtags[i]):
            break
        parts.extlangs.append(subtags[i])
        i += 1
    if i < len(subtags) and _SCRIPT.fullmatch(subtags[i]):
        parts.script, i = subtags[i], i + 1
    if i < len(subtags) and _REGION.fullmatch(subtags[i]):
        parts.region, i = subtags[i], i + 1
    while i < len(subtags) and _VARIANT.fullmatch(subtags[i]):
        parts.variants.append(subtags[i])
        i += 1
    while i < len(subtags) and _SINGLETON.fullmatch(subtags[i]):
        extension = [subtags[i]]
        i += 1
        while i < len(subtags) and _EXTENSION_SUBTAG.fullmatch(subtags[i]):
            extension.append(subtags[i])
            i += 1
        if len(extension) == 1:
            return None
        parts.extensions.append(extension)
    if i < len(subtags) and subtags[i] == "x":
        parts.private = subtags[i + 1 :]
        if not parts.private or not all(_PRIVATE_SUBTAG.fullmatch(s) for s in parts.private):
            return None
        i = len(subtags)
    if i != len(subtags):
        return None
    # RFC 5646 section 2.2.6 and 2.2.5: a singleton and a variant may each occur once.
    singletons = [e[0] for e in parts.extensions]
    if len(set(singletons)) != len(singletons) or len(set(parts.variants)) != len(parts.variants):
        return None
    return parts


def is_well_formed(tag: str) -> bool:
    """Return whether ``tag`` is a well-formed BCP 47 tag (RFC 5646 grammar, ``_`` as ``-``).

    Args:
        tag: The tag to check, in any case.

    Returns:
        ``True`` when the tag follows the grammar and repeats no singleton or variant.
    """
    return _parse(tag.strip().replace("_", "-").lower()) is not None


@lru_cache(maxsize=1)
def known_languages() -> frozenset[str]:
    """Return the primary language subtags this installation recognises (see module docs)."""
    # pycountry ships the whole ISO 639-3 table (with ISO 639-1 equivalents), so tags such
    # as ha, ig, rw, wo, bm, ny, qu, cmn and yue are known, not only lingua's languages.
    codes = {lang.alpha_3 for lang in pycountry.languages}
    codes |= {lang.alpha_2 for lang in pycountry.languages if hasattr(lang, "alpha_2")}
    codes |= {lang.iso_code_639_1.name.lower() for lang in Language.all()}
    codes |= {lang.iso_code_639_3.name.lower() for lang in Language.all()}
    codes |= {m.name for m in pkgutil.iter_modules(spacy.lang.__path__) if m.ispkg}
    codes.discard("xx")  # spaCy's multi-language pipeline, not an ISO 639 code
    return frozenset(codes | _SPECIAL_CODES)


@lru_cache(maxsize=1)
def _three_to_two() -> dict[str, str]:
    """Map ISO 639-3 codes to their ISO 639-1 equivalent (ISO 639 tables from pycountry)."""
    pairs = {lang.alpha_3: lang.alpha_2 for lang in pycountry.languages if hasattr(lang, "alpha_2")}
    return pairs | {
        lang.iso_code_639_3.name.lower(): lang.iso_code_639_1.name.lower()
        for lang in Language.all()
    }


def _is_local_use(code: str) -> bool:
    """Return whether a primary subtag lies in the range ``qaa``-``qtz`` reserved for local use."""
    return len(code) == 3 and "qaa" <= code <= "qtz"


def normalise_tag(tag: str) -> str:
    """Check a BCP 47 language tag and return it in its conventional case.

    Language and extlang lower case, script title case, region upper case, everything
    else lower case (RFC 5646 section 2.1.1). ``_`` is accepted as ``-``. A three-letter
    code with a two-letter equivalent is shortened (``fra`` -> ``fr``), as the IANA
    registry holds only the shortest ISO 639 code.

    Args:
        tag: The tag, e.g. ``"EN"``, ``"es_419"`` or ``"zh-hant-tw"``.

    Returns:
        The normalised tag, e.g. ``"en"``, ``"es-419"`` or ``"zh-Hant-TW"``.

    Raises:
        InputError: If the tag is not well-formed or its primary language is unknown.
    """
    text = tag.strip().replace("_", "-").lower()
    parsed = _parse(text)
    if parsed is None:
        raise InputError(
            f"The language tag {tag!r} is not a well-formed BCP 47 tag; "
            "use a code such as 'en', 'fr', 'es-419' or 'pt-BR'."
        )
    if isinstance(parsed, str):
        return parsed
    language = _three_to_two().get(parsed.language, parsed.language)
    if language not in known_languages() and not _is_local_use(language):
        raise InputError(
            f"The language tag {tag!r} has an unknown primary language {parsed.language!r}; "
            "use an ISO 639-1 or ISO 639-3 code such as 'en', 'fr', 'es' or 'sw'."
        )
    pieces = [language, *parsed.extlangs]
    if parsed.script:
        pieces.append(parsed.script.title())
    if parsed.region:
        pieces.append(parsed.region.upper())
    pieces += parsed.variants
    for extension in parsed.extensions:
        pieces += extension
    if parsed.private:
        pieces += ["x", *parsed.private]
    return "-".join(pieces)


def tag_from_value(value: str) -> str:
    """Return the normalised tag for a language cell: a BCP 47 tag or a language name.

    Names are accepted because questionnaires often say ``English`` or ``Français``
    rather than ``en``: lingua's English language names, plus a few French and
    Spanish names of common languages.

    Raises:
        InputError: If the value is neither a known tag nor a known language name.
    """
    folded = fold(value.strip())
    if folded in _NAMES:
        return _NAMES[folded]
    for lang in Language.all():
        if lang.name.lower() == folded:
            return lang.iso_code_639_1.name.lower()
    return normalise_tag(value)


@lru_cache(maxsize=1)
def _lingua_by_code() -> dict[str, Language]:
    """Map ISO 639-1 and 639-3 codes to lingua languages."""
    out: dict[str, Language] = {}
    for lang in Language.all():
        out[lang.iso_code_639_1.name.lower()] = lang
        out[lang.iso_code_639_3.name.lower()] = lang
    return out


def detectable(tag: str) -> bool:
    """Return whether lingua ships a model of the tag's language, so it can be detected."""
    return primary_subtag(tag) in _lingua_by_code()


@lru_cache(maxsize=16)
def _detector(languages: frozenset[Language]) -> LanguageDetector:
    """Build (once per candidate set) a detector that loads only these languages' models."""
    return LanguageDetectorBuilder.from_languages(*sorted(languages, key=str)).build()


def _candidate_map(candidates: Sequence[str] | None) -> dict[Language, str]:
    """Map each detectable candidate's lingua language to the candidate tag as given."""
    out: dict[Language, str] = {}
    for tag in candidates if candidates else DEFAULT_CANDIDATES:
        lang = _lingua_by_code().get(primary_subtag(tag))
        if lang is not None and lang not in out:
            out[lang] = tag
    return out


def _is_short(text: str) -> bool:
    """Return whether ``text`` has too few words to detect its language reliably."""
    return len(_WORD.findall(text)) < MIN_WORDS


def detect_language(text: str, candidates: Sequence[str] | None, default: str) -> tuple[str, str]:
    """Guess the language of ``text`` among the candidate languages.

    Args:
        text: The answer text.
        candidates: Normalised tags to choose from (the workspace's languages); a
            candidate is returned as given, so ``es-419`` stays ``es-419``. ``None`` or
            empty means :data:`DEFAULT_CANDIDATES`. Tags lingua has no model for are
            ignored.
        default: The tag returned when detection is not possible or not confident.

    Returns:
        ``(tag, "detected")``, or ``(default, "default")`` for texts under
        :data:`MIN_WORDS` words, fewer than two detectable candidates, or a best
        confidence under :data:`MIN_CONFIDENCE`.
    """
    return detect_languages([text], candidates, default)[0]


def detect_languages(
    texts: Sequence[str], candidates: Sequence[str] | None, default: str
) -> list[tuple[str, str]]:
    """Run :func:`detect_language` on many texts, using lingua's parallel batch call."""
    by_language = _candidate_map(candidates)
    out = [(default, "default")] * len(texts)
    if len(by_language) < 2:
        return out
    todo = [i for i, text in enumerate(texts) if not _is_short(text)]
    if not todo:
        return out
    detector = _detector(frozenset(by_language))
    values = detector.compute_language_confidence_values_in_parallel([texts[i] for i in todo])
    for i, confidences in zip(todo, values, strict=True):
        if confidences and confidences[0].value >= MIN_CONFIDENCE:
            out[i] = (by_language[confidences[0].language], "detected")
    return out


def languages_outside(texts: Sequence[str], candidates: Sequence[str]) -> dict[str, int]:
    """Count the texts that read as a language other than the candidates, by its tag.

    Detection (:func:`detect_languages`) stores each answer as one of the candidates,
    so a Portuguese answer in a study set up for en, fr and es is stored as Spanish and
    nothing says so. This detects the same texts among the candidates and the
    :data:`DEFAULT_CANDIDATES` together and counts those whose confident winner (as
    :func:`detect_languages` decides it) is not a candidate. Nothing stored changes.

    Returns:
        ISO 639-1 tag -> number of texts, most first; empty when the candidates already
        hold every default candidate.
    """
    given = {primary_subtag(tag) for tag in candidates}
    wider = list(candidates) + [tag for tag in DEFAULT_CANDIDATES if tag not in given]
    if len(wider) == len(candidates):
        return {}
    counts: dict[str, int] = {}
    for tag, origin in detect_languages(texts, wider, ""):
        if origin == "detected" and primary_subtag(tag) not in given:
            counts[tag] = counts.get(tag, 0) + 1
    return dict(sorted(counts.items(), key=lambda kv: (-kv[1], kv[0])))


def language_name(tag: str) -> str:
    """Return the English name of a tag's language ("Portuguese" for ``pt-BR``), else the tag."""
    lang = _lingua_by_code().get(primary_subtag(tag))
    return tag if lang is None else lang.name.title()
