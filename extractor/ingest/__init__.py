"""Reading interview files into answer rows, with BCP 47 language tags and detection."""

from extractor.ingest.columns import MAPPING_KEYS
from extractor.ingest.language import (
    DEFAULT_CANDIDATES,
    detect_language,
    detect_languages,
    is_well_formed,
    known_languages,
    normalise_tag,
    tag_from_value,
)
from extractor.ingest.reader import SUFFIXES, ReadResult, read_interviews

__all__ = [
    "DEFAULT_CANDIDATES",
    "MAPPING_KEYS",
    "SUFFIXES",
    "ReadResult",
    "detect_language",
    "detect_languages",
    "is_well_formed",
    "known_languages",
    "normalise_tag",
    "read_interviews",
    "tag_from_value",
]
