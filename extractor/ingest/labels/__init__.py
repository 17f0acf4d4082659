"""Reading labeled sentences from files, and importing them into the workspace store.

Two formats are read:

* **Gold JSONL**: one sentence per line, ``{"respondent", "text", "lang", "spans":
  [{"start", "end", "concept"?, "stance"?}], "question"?, "variety"?}``; ``"spans": []``
  means the sentence was labeled as holding no trait. Offsets are characters of ``text``.
* **CoNLL-style IOB2 columns**: one token per line, ``token tag [concept [stance]]``
  separated by whitespace, a blank line between sentences, ``_`` for an empty column.
  Lines starting with ``#`` are comments; ``# text = ...``, ``# respondent = ...``,
  ``# lang = ...`` and ``# question = ...`` before a sentence's tokens are honoured.
  Without ``# text`` the sentence text is the tokens joined by single spaces. Tags are
  ``O``, ``B-<type>`` and ``I-<type>`` of any one type (read as TRAIT); an ``I-`` that
  does not continue an entity of its type is an error (the file is probably IOB1), not
  silently repaired. An entity takes the concept and stance columns of its ``B-`` token.

Spans that do not fall on token boundaries are **snapped outwards** to the tokens they
touch (:func:`extractor.nlp.text.tokenize` for the sentence's language): the tagger learns
per token anyway, and strict span scores compare token-aligned offsets, so a span ending
mid-word would be unmatchable. Snapping is counted (``snapped``) and reported, never
silent; two spans that snap onto the same words become one (the first one's concept and
stance). A span that touches no token (whitespace only), or spans that still overlap
after snapping, are rejected with the line number.

Every line of a file is checked before anything is returned, and :func:`import_labels`
stores all records in one transaction, so a bad file leaves the store unchanged.

The work is split by format in private modules (``_jsonl``, ``_conll``), with the record
and snapping in ``_record``, files in ``_files`` and the import in ``_import``; callers
use this package.
"""

from extractor.ingest.labels._conll import EMPTY, parse_conll
from extractor.ingest.labels._files import CONLL_SUFFIXES, JSONL_SUFFIXES, read_labels, to_gold
from extractor.ingest.labels._import import LabelImport, import_labels
from extractor.ingest.labels._jsonl import parse_jsonl, record_from_dict, records_from_dicts
from extractor.ingest.labels._record import LabelRecord, align_spans

__all__ = [
    "CONLL_SUFFIXES",
    "EMPTY",
    "JSONL_SUFFIXES",
    "LabelImport",
    "LabelRecord",
    "align_spans",
    "import_labels",
    "parse_conll",
    "parse_jsonl",
    "read_labels",
    "record_from_dict",
    "records_from_dicts",
    "to_gold",
]
