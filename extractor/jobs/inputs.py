"""What the workspace jobs read from a workspace: labeled examples, aliases, session settings.

Shared by training, tagging, labeling, evaluation and export, so that each reads the
store the same way.
"""

from __future__ import annotations

from dataclasses import asdict
from pathlib import Path
from typing import Any

from extractor.errors import InputError
from extractor.ingest.codebook import read_codebook
from extractor.ingest.labels import LabelRecord
from extractor.loop.samples import SessionSettings
from extractor.models.stance import codebook_params
from extractor.nlp.identifiers import Screening, mask_identifiers, name_variants
from extractor.report.privacy import NAME_COLUMNS, identifying_columns
from extractor.types import Implicit, QuestionCode, Sentence, Span
from extractor.workspace import store
from extractor.workspace.folder import Workspace


def gold_examples(ws: Workspace) -> list[tuple[Sentence, list[Span]]]:
    """Return every labeled sentence with the spans of the label in force."""
    labels = store.current_labels(ws.conn)
    found = store.sentences(ws.conn, labels)
    return [(s, labels[s.id].spans) for s in found]


def gold_implicit(ws: Workspace) -> dict[int, tuple[Implicit, ...]]:
    """Return the implicit traits of the labels in force, by sentence ID (only non-empty)."""
    return {sid: lab.implicit for sid, lab in store.current_labels(ws.conn).items() if lab.implicit}


def gold_records(ws: Workspace) -> list[LabelRecord]:
    """Return every labeled sentence as a record of the label format (mentions and implicit)."""
    labels = store.current_labels(ws.conn)
    return [
        LabelRecord(
            text=s.text,
            respondent=s.respondent,
            lang=s.lang,
            question=s.question,
            spans=tuple(labels[s.id].spans),
            line=n,
            implicit=labels[s.id].implicit,
        )
        for n, s in enumerate(store.sentences(ws.conn, labels), start=1)
    ]


def alias_tuples(ws: Workspace, kind: str = "trait") -> list[tuple[str, str, str]]:
    """Return the workspace's aliases as (concept_id, text, lang)."""
    return [(a.concept_id, a.text, a.lang) for a in store.aliases(ws.conn, kind)]


def session_settings(ws: Workspace) -> SessionSettings:
    """Return the labeling session's settings from ``traits.toml``."""
    active = ws.settings.active
    return SessionSettings(
        retrain_every=active.retrain_every,
        evaluation_fraction=active.evaluation_share,
        evaluation_min=active.evaluation_min,
        stop_set_size=active.stop_set_size,
        kappa_threshold=active.stop_kappa,
        kappa_rounds=active.stop_rounds,
        subpool=active.subpool or None,
    )


# --- what identifies a person: screened out of exports, masked before training ---------


def listed_names(ws: Workspace, names_file: str | None = None) -> tuple[str, ...]:
    """Return the names of the names file (given, or traits.toml's), one per line."""
    path_text = names_file or ws.settings.export.names_file
    if not path_text:
        return ()
    path = Path(path_text) if Path(path_text).is_absolute() else ws.root / path_text
    if not path.is_file():
        raise InputError(
            f"The names file {path} does not exist; give a text file with one name per line."
        )
    try:
        text = path.read_text(encoding="utf-8")
    except UnicodeDecodeError as exc:
        raise InputError(
            f"The names file {path} is not UTF-8 text; save it as UTF-8 and run the command again."
        ) from exc
    return tuple(line.strip() for line in text.splitlines() if line.strip())


def phone_regions(ws: Workspace) -> tuple[str, ...]:
    """Return the regions whose phone formats are screened.

    They are the settings' ``phone_regions`` and the region subtags (BCP 47: two letters
    after the language) of the settings' languages and of the stored answers' tags.
    """
    tags = list(ws.settings.workspace.languages)
    tags += [a.lang for a in store.answers(ws.conn)]
    regions = [r.upper() for r in ws.settings.export.phone_regions]
    for tag in dict.fromkeys(tags):
        subtags = str(tag).replace("_", "-").split("-")[1:]
        regions += [t.upper() for t in subtags if len(t) == 2 and t.isalpha()]
    return tuple(dict.fromkeys(regions))


def screening(ws: Workspace) -> Screening:
    """Return what identifies the workspace's people: names, respondent IDs, phone regions.

    Names are the names file's and the values of name columns (``respondent_name`` ...).
    """
    people = store.respondents(ws.conn)
    names = list(listed_names(ws))
    columns = {key for person in people for key in person}
    for column in identifying_columns(sorted(columns), NAME_COLUMNS):
        names += name_variants(str(p[column]) for p in people if isinstance(p.get(column), str))
    ids = tuple(str(p["respondent"]) for p in people)
    return Screening(tuple(dict.fromkeys(names)), ids, phone_regions(ws))


def masked(sentences: list[Sentence], screen: Screening) -> list[Sentence]:
    """Return the sentences with identifying stretches masked, offsets unchanged."""
    return [s._replace(text=mask_identifiers(s.text, screen)) for s in sentences]


def question_codebook(ws: Workspace) -> dict[str, QuestionCode]:
    """Return the question codebook: the questions file, with ``[codebook]`` entries over it.

    Raises:
        InputError: The questions file is unreadable or malformed.
    """
    path = ws.path("questions")
    found = read_codebook(path) if ws.settings.workspace.questions and path.is_file() else {}
    return found | dict(ws.settings.codebook)


def stance_params(ws: Workspace) -> dict[str, Any]:
    """Return the stance model's parameters from the workspace: its cue file and codebook."""
    return {
        "cues_path": str(ws.path("stance_cues")) if ws.settings.workspace.stance_cues else None,
        "questions": codebook_params(question_codebook(ws)) or None,
    }


def model_params(ws: Workspace) -> dict[str, Any]:
    """Return the keyword arguments of ``TraitModels`` that ``traits.toml`` sets."""
    return {
        "tagger_params": asdict(ws.settings.tagger),
        "link_threshold": ws.settings.linking.threshold,
        "stance_params": stance_params(ws),
    }
