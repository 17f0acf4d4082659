"""The workspace's SQLite store: schema, forward migrations and every SQL statement.

Nothing else in the package writes SQL. The store runs in WAL mode with foreign keys
on; every write that belongs together runs in one transaction (:func:`transaction`),
so a failed ingest or import leaves the store exactly as it was, and a label is on
disk the moment :func:`add_label` returns.

Labels are append-only: undo appends a ``retract`` row instead of deleting, so the
full history of who labeled what, and when, is kept.

The statements live in private modules by table group; callers use this package:
``from extractor.workspace import store`` then ``store.add_label(...)``.
"""

from extractor.workspace.store._answers import (
    AnswerLanguage,
    SentenceContext,
    StoredAnswer,
    add_metadata_renames,
    add_source,
    answer_fingerprint,
    answers,
    find_sentence,
    metadata_renames,
    respondents,
    select_answers,
    sentence_context,
    sentences,
    set_answer_languages,
    source_known,
    sources,
)
from extractor.workspace.store._concepts import (
    ConceptListVersion,
    StoredAlias,
    StoredConcept,
    add_alias,
    aliases,
    concept_versions,
    concepts,
    current_concept_version,
    replace_concept_list,
)
from extractor.workspace.store._labels import (
    StoredLabel,
    add_label,
    add_skip,
    add_to_sample,
    current_labels,
    label_history,
    retract_label,
    sample_ids,
    skipped,
)
from extractor.workspace.store._leases import (
    Disagreement,
    claim_sentence,
    disagreements,
    held_elsewhere,
    labels_by_annotator,
    release_sentences,
)
from extractor.workspace.store._models import (
    ModelVersion,
    StoredPrediction,
    add_model,
    count_predictions,
    latest_model,
    models,
    predictions,
    set_model_metrics,
    store_predictions,
)
from extractor.workspace.store._schema import (
    MIGRATIONS,
    SCHEMA_VERSION,
    connect,
    get_meta,
    migrate,
    now,
    schema_version,
    set_meta,
    store_failure,
    transaction,
)
from extractor.workspace.store._status import counts

__all__ = [
    "release_sentences",
    "labels_by_annotator",
    "held_elsewhere",
    "disagreements",
    "claim_sentence",
    "Disagreement",
    "MIGRATIONS",
    "AnswerLanguage",
    "SCHEMA_VERSION",
    "ConceptListVersion",
    "ModelVersion",
    "SentenceContext",
    "StoredAlias",
    "StoredAnswer",
    "StoredConcept",
    "StoredLabel",
    "StoredPrediction",
    "add_alias",
    "add_label",
    "add_metadata_renames",
    "add_model",
    "add_skip",
    "add_source",
    "add_to_sample",
    "aliases",
    "answer_fingerprint",
    "answers",
    "concept_versions",
    "concepts",
    "connect",
    "count_predictions",
    "counts",
    "current_concept_version",
    "current_labels",
    "find_sentence",
    "get_meta",
    "label_history",
    "latest_model",
    "metadata_renames",
    "migrate",
    "models",
    "now",
    "predictions",
    "replace_concept_list",
    "respondents",
    "retract_label",
    "sample_ids",
    "schema_version",
    "select_answers",
    "sentence_context",
    "sentences",
    "set_answer_languages",
    "set_meta",
    "set_model_metrics",
    "skipped",
    "source_known",
    "sources",
    "store_failure",
    "store_predictions",
    "transaction",
]
