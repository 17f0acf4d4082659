"""Reading labeled sentences from files, and importing them into the workspace store.

Two formats are read:

* **The label format** (JSON Lines, ours): one labeled sentence per line,
  ``{"respondent", "sentence", "lang", "mentions": [{"start", "end", "concept", "stance"}],
  "implicit": [{"concept", "stance"}], "question"?, "variety"?, "metadata"?}``.
  ``start``/``end`` are character offsets into ``sentence``, end exclusive, as in the W3C
  Web Annotation ``TextPositionSelector``; ``implicit`` holds the traits the sentence
  states without a phrase naming them. ``"mentions": []`` with no ``implicit`` means the
  sentence holds no trait. ``lang`` is checked as interview readers check it (BCP 47, a
  known language). Files of earlier versions (``text`` and ``spans``) are refused with
  one sentence naming ``traits convert-labels`` (:func:`convert_legacy_lines`).
* **CoNLL-style IOB2 columns**: one token per line, ``token tag [concept [stance]]``
  separated by whitespace, a blank line between sentences, ``_`` for an empty column.
  Lines starting with ``#`` are comments; ``# text = ...``, ``# respondent = ...``,
  ``# lang = ...`` and ``# question = ...`` before a sentence's tokens are honoured.
  Without ``# text`` the sentence text is the tokens joined by single spaces. Tags are
  ``O``, ``B-<type>`` and ``I-<type>`` of any one type (read as TRAIT); an ``I-`` that
  does not continue an entity of its type is an error (the file is probably IOB1), not
  silently repaired. An entity takes the concept and stance columns of its ``B-`` token.
  ``# implicit = CONCEPT STANCE`` lines (repeatable) give the implicit traits.

Spans that do not fall on token boundaries are **snapped outwards** to the tokens they
touch (:func:`extractor.nlp.text.tokenize` for the sentence's language): the tagger learns
per token anyway, and strict span scores compare token-aligned offsets, so a span ending
mid-word would be unmatchable. Snapping is counted (``snapped``) and reported, never
silent; two spans that snap onto the same words become one (the first one's concept and
stance). A span that touches no token (whitespace only), or spans that still overlap
after snapping, are rejected with the line number.

Every line of a file is checked before anything is returned, and :func:`import_labels`
checks every concept against the workspace's concept list, then stores all records in one
transaction, so a bad file leaves the store unchanged.

The work is split by format in private modules (``_jsonl``, ``_conll``, ``_legacy``), with
the record and snapping in ``_record``, files in ``_files`` and the import in ``_import``;
callers use this package.
"""

from extractor.ingest.labels._conll import EMPTY, parse_conll
from extractor.ingest.labels._files import CONLL_SUFFIXES, JSONL_SUFFIXES, read_labels, to_gold
from extractor.ingest.labels._import import LabelImport, check_concepts, import_labels
from extractor.ingest.labels._jsonl import (
    CONVERT_HINT,
    parse_jsonl,
    record_from_dict,
    record_to_dict,
    records_from_dicts,
)
from extractor.ingest.labels._legacy import convert_legacy_lines
from extractor.ingest.labels._record import LabelRecord, align_spans

__all__ = [
    "CONLL_SUFFIXES",
    "CONVERT_HINT",
    "EMPTY",
    "JSONL_SUFFIXES",
    "LabelImport",
    "LabelRecord",
    "align_spans",
    "check_concepts",
    "convert_legacy_lines",
    "import_labels",
    "parse_conll",
    "parse_jsonl",
    "read_labels",
    "record_from_dict",
    "record_to_dict",
    "records_from_dicts",
    "to_gold",
]
