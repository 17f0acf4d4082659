"""What each language gets from the installed libraries: tokenizer, stemmer, cues, detection.

Every fact is read from the code and the libraries in use, never written down by
hand: the spaCy pipeline :func:`~extractor.nlp.text.spacy_code` picks, the Snowball
stemmer of :data:`~extractor.nlp.dictionary.SNOWBALL_LANGUAGES`, the sections of the
packaged stance cue file (:data:`~extractor.models.cue_file.CUES_PATH`), and lingua's
bundled models. The README's language table is checked against these facts.
"""

from __future__ import annotations

from dataclasses import dataclass

from extractor.ingest.language import detectable
from extractor.models.cue_file import has_stance_cues, packaged_cues
from extractor.nlp.dictionary import stemmer_language
from extractor.nlp.text import MULTI, primary_subtag, spacy_code


@dataclass(frozen=True)
class LanguageSupport:
    """What one language gets.

    Attributes:
        tag: The language tag asked about.
        tokenizer: The spaCy language code whose blank pipeline tokenizes it;
            ``"xx"`` (spaCy's multi-language pipeline) when spaCy has none.
        stemmer: Whether a Snowball stemmer folds its inflections in matching.
        stance_cues: Whether the packaged cue lexicon has stance words for it (liked,
            disliked or wanted cues); a section of comparison words alone has none.
        detection: Whether lingua can detect it in an answer.
    """

    tag: str
    tokenizer: str
    stemmer: bool
    stance_cues: bool
    detection: bool

    @property
    def spacy_pipeline(self) -> bool:
        """Whether spaCy has a pipeline of this language (not the multi-language one)."""
        return self.tokenizer != MULTI


def language_support(tag: str) -> LanguageSupport:
    """Return what a language gets (see :class:`LanguageSupport`)."""
    code = primary_subtag(tag)
    return LanguageSupport(
        tag=tag,
        tokenizer=spacy_code(code),
        stemmer=bool(stemmer_language(code)),
        stance_cues=has_stance_cues(packaged_cues(), code),
        detection=detectable(code),
    )
