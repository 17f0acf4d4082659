"""The settings of a workspace (``traits.toml``): typed sections, their defaults, the loader.

Each section of the file is a frozen dataclass whose attribute names are the file's
key names, and whose defaults are the only defaults: the template that ``traits init``
writes is rendered from them (:func:`render_template`), and :func:`load_settings`
fills in what a file leaves out. Loading validates everything: an unknown section or
key, a value of the wrong type, or a share outside 0 to 1 is one sentence naming the
file, the section and the key, and what is allowed.
"""

from __future__ import annotations

import dataclasses
import json
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, TypeVar

from extractor.errors import WorkspaceError
from extractor.types import DIRECTIONS, QuestionCode

T = TypeVar("T")


def _setting(
    default: T, doc: str = "", *, fraction: bool = False, choices: tuple[str, ...] = ()
) -> T:
    """Return a dataclass field with its template comment, whether it is a share, its choices."""
    return field(default=default, metadata={"doc": doc, "fraction": fraction, "choices": choices})


ALGORITHMS = ("lbfgs", "l2sgd", "ap", "pa", "arow")
"""The ``[tagger] algorithm`` choices: CRFsuite's trainers (the tagger's own list, checked
equal by the settings tests)."""

SILVER_FILTERS = ("all", "matched", "gold-check", "self-train")
"""The ``[tagger] silver_filter`` choices (the tagger training's own list, checked equal)."""

STRATEGIES = (
    "combined", "default", "least_confidence", "link_stance", "mean_entropy", "norm_logprob",
    "norm_logprob_both", "norm_logprob_ngrams", "norm_logprob_sentence", "norm_logprob_space",
    "norm_logprob_space_centroids", "norm_logprob_space_knn", "norm_logprob_space_knn_centroids",
    "random", "sentence", "total_entropy",
)  # fmt: skip
"""The ``[active] strategy`` choices (the query strategies' names, checked equal)."""


@dataclass(frozen=True)
class WorkspaceSettings:
    """Where the inputs are, and the languages expected."""

    default_language: str = _setting("en", "BCP 47 tag used when a language cannot be told")
    languages: tuple[str, ...] = _setting(
        ("en", "fr", "es"), "languages expected in the answers (for detection)"
    )
    interviews: str = _setting(
        "interviews", "folder that `traits run` reads new interview files from"
    )
    concepts: str = _setting("concepts.csv", "the validated trait concept list")
    varieties: str = _setting("varieties.csv", "optional list of variety names")
    questions: str = _setting(
        "questions.csv", "optional question codebook: columns question, text, direction"
    )
    stance_cues: str = _setting("", "optional JSON file of your own stance cues (see README)")


@dataclass(frozen=True)
class ConceptListSettings:
    """How to read the trait concept list, when its columns or branch need saying."""

    id_column: str = _setting("", "column holding the concept ID (default: id)")
    label_column: str = _setting("", "column holding the preferred label (default: label)")
    synonyms_columns: tuple[str, ...] = _setting((), "columns holding synonyms")
    lang_column: str = _setting("", "column holding each row's language tag (default: lang)")
    lang: str = _setting("", "language of every row, when the list has no language column")
    parent_column: str = _setting("", "column holding the parent ID(s) (default: parent)")
    definition_column: str = _setting("", "column holding the definition")
    split: str = _setting("", 'separator inside a synonyms or parent cell (default: "|" or ";")')
    roots: tuple[str, ...] = _setting((), "import only these concepts and their descendants")
    exclude: tuple[str, ...] = _setting((), "leave out these concepts and their descendants")


@dataclass(frozen=True)
class TaggerSettings:
    """The CRF tagger's training."""

    algorithm: str = _setting(
        "l2sgd", "CRFsuite trainer: l2sgd, or lbfgs (then c1 counts too)", choices=ALGORITHMS
    )
    c1: float = _setting(0.05, "L1 penalty of the CRF (lbfgs only)")
    c2: float = _setting(2.0, "L2 penalty of the CRF")
    max_iterations: int = _setting(30, "epochs (l2sgd) or iterations (lbfgs)")
    gold_weight: int = _setting(10, "a labeled sentence counts this many times a silver one")
    silver_filter: str = _setting(
        "self-train",
        "guard on dictionary-labeled sentences: all, matched, gold-check, self-train",
        choices=SILVER_FILTERS,
    )


@dataclass(frozen=True)
class LinkingSettings:
    """Linking mentions to concepts."""

    threshold: float = _setting(
        0.25, "below this link probability a mention stays unlinked", fraction=True
    )


@dataclass(frozen=True)
class ActiveSettings:
    """The labeling loop: which sentences are asked, when to retrain, when to stop."""

    strategy: str = _setting("default", "query strategy", choices=STRATEGIES)
    batch_size: int = _setting(5, "sentences chosen together")
    retrain_every: int = _setting(10, "retrain in the background after this many labels")
    evaluation_share: float = _setting(
        0.1, "random evaluation sample, never queried; grows with the study", fraction=True
    )
    evaluation_min: int = _setting(30, "smallest evaluation sample")
    stop_set_size: int = _setting(500, "sentences whose predictions tell when to stop")
    stop_kappa: float = _setting(
        0.99, '"further labels are changing little" above this...', fraction=True
    )
    stop_rounds: int = _setting(3, "...for this many successive models")
    subpool: int = _setting(500, "each model ranks a random sub-pool of this many (0 = all)")


@dataclass(frozen=True)
class ExportSettings:
    """The workbook and other exports."""

    group_by: tuple[str, ...] = _setting(
        ("gender", "sex", "role", "occupation", "district", "age_group"),
        "respondent columns to compare groups by, when present",
    )
    identifying_columns: tuple[str, ...] = _setting(
        ("name", "phone", "village", "address"),
        "respondent columns never exported, besides the built-in list",
    )
    phone_regions: tuple[str, ...] = _setting(
        (), "ISO 3166 regions whose phone formats are screened (besides those of the languages)"
    )
    names_file: str = _setting("", "a text file of names to screen out of pseudonymised quotes")
    min_confidence: float = _setting(
        0.0, "predicted mentions below this tagger confidence are left out", fraction=True
    )


def _table_setting(default: Mapping[str, Any], doc: str = "", *, depth: int = 1) -> Any:
    """Return a field holding a TOML table of texts, ``depth`` tables deep, with its comment."""
    return field(
        default_factory=lambda: dict(default),
        metadata={"doc": doc, "fraction": False, "depth": depth},
    )


@dataclass(frozen=True)
class MetadataSettings:
    """Respondent metadata: columns that name the same thing, and spellings of one value."""

    columns: Mapping[str, str] = _table_setting(
        {"sex": "gender", "occupation": "role"},
        "stored column -> the column it is read as, across files",
    )
    values: Mapping[str, Mapping[str, str]] = _table_setting(
        {},
        'per column, spelling -> value, e.g. { role = { agricultrice = "farmer" } }',
        depth=2,
    )
    merge_spellings: bool = _setting(
        True, "one value for spellings differing in case, accents or spaces; F/M for gender"
    )


@dataclass(frozen=True)
class Settings:
    """All of ``traits.toml``.

    ``columns`` is the explicit column mapping (role -> header); ``codebook`` the
    questions given a direction in the file (question key -> :class:`QuestionCode`).
    """

    workspace: WorkspaceSettings = field(default_factory=WorkspaceSettings)
    columns: Mapping[str, Any] = field(default_factory=dict)
    concept_list: ConceptListSettings = field(default_factory=ConceptListSettings)
    codebook: Mapping[str, QuestionCode] = field(default_factory=dict)
    tagger: TaggerSettings = field(default_factory=TaggerSettings)
    linking: LinkingSettings = field(default_factory=LinkingSettings)
    active: ActiveSettings = field(default_factory=ActiveSettings)
    export: ExportSettings = field(default_factory=ExportSettings)
    metadata: MetadataSettings = field(default_factory=MetadataSettings)


SECTIONS: dict[str, type] = {
    "workspace": WorkspaceSettings,
    "concept_list": ConceptListSettings,
    "tagger": TaggerSettings,
    "linking": LinkingSettings,
    "active": ActiveSettings,
    "export": ExportSettings,
    "metadata": MetadataSettings,
}
"""The sections with fixed keys, in file order; ``columns`` and ``codebook`` are free-form."""

SECTION_ORDER = (
    "workspace",
    "columns",
    "codebook",
    "concept_list",
    "tagger",
    "linking",
    "active",
    "export",
    "metadata",
)

COLUMN_EXAMPLES = {
    "respondent": "Code",
    "answer": "Verbatim",
    "question": "Item",
    "language": "Lang",
    "variety": "Variety",
}
"""Shown commented out in the template's ``[columns]`` section."""


# --------------------------------------------------------------------------- loading


def load_settings(path: Path) -> Settings:
    """Read ``traits.toml``; what it leaves out takes the defaults.

    Raises:
        WorkspaceError: The file is not TOML, or names an unknown section or key, or a
            value has the wrong type or range; one sentence naming file, section and key.
    """
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise WorkspaceError(
            f"{path} cannot be read ({exc.strerror}); check its permissions."
        ) from exc
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        raise WorkspaceError(
            f"{path}, line {line}: the file is not UTF-8 text, which TOML requires; save it as "
            "UTF-8 in a text editor (or delete it and run `traits init` for a fresh one)."
        ) from exc
    try:
        found = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise WorkspaceError(f"{path} is not valid TOML ({exc}); fix the line it names.") from exc
    return settings_from_dict(found, path)


def settings_from_dict(found: Mapping[str, Any], path: Path) -> Settings:
    """Return the settings a parsed ``traits.toml`` gives, checked (``path`` names it)."""
    unknown = [name for name in found if name not in SECTION_ORDER]
    if unknown:
        raise WorkspaceError(
            f"{path}: there is no section [{unknown[0]}]; fix its name (the sections are "
            f"{', '.join(f'[{s}]' for s in SECTION_ORDER)}) or delete it."
        )
    for name, values in found.items():
        if not isinstance(values, dict):
            raise WorkspaceError(
                f"{path}: [{name}] must be a section of settings, not a single value; "
                "fix it, or delete it to use the defaults."
            )
    parts: dict[str, Any] = {
        name: _section(kind, found.get(name, {}), name, path) for name, kind in SECTIONS.items()
    }
    codebook = _codebook(found.get("codebook", {}), path)
    return Settings(columns=dict(found.get("columns", {})), codebook=codebook, **parts)


def _codebook(values: Mapping[str, Any], path: Path) -> dict[str, QuestionCode]:
    """Return the ``[codebook]`` section checked: key = "direction" or {text, direction}."""
    allowed = ", ".join(DIRECTIONS)
    out: dict[str, QuestionCode] = {}
    for key, value in values.items():
        entry = {"direction": value} if isinstance(value, str) else value
        ok = isinstance(entry, dict) and set(entry) <= {"text", "direction"}
        ok = ok and all(isinstance(v, str) for v in entry.values())
        direction = entry.get("direction") if ok else None
        if not ok or (direction is not None and direction not in DIRECTIONS):
            raise WorkspaceError(
                f"{path}: [codebook] {key} must be one of {allowed}, or "
                f'{{ text = "...", direction = "..." }} (got {value!r}); fix or delete the line.'
            )
        out[str(key)] = QuestionCode(str(key), entry.get("text") or None, direction)
    return out


def _section(kind: type, values: Mapping[str, Any], name: str, path: Path) -> Any:
    """Return one section's dataclass from the file's values, checked one by one."""
    fields = {f.name: f for f in dataclasses.fields(kind)}
    unknown = [key for key in values if key not in fields]
    if unknown:
        raise WorkspaceError(
            f"{path}: [{name}] has no setting {unknown[0]!r}; fix its name (the settings "
            f"there are {', '.join(fields)}) or delete the line."
        )
    given: dict[str, Any] = {}
    for key, value in values.items():
        spec = fields[key]
        default = _default(spec)
        problem = _problem(
            value, default, fraction=spec.metadata["fraction"], depth=spec.metadata.get("depth", 1)
        )
        choices = spec.metadata.get("choices", ())
        if problem is None and choices and value not in choices:
            problem = f"must be one of {', '.join(choices)}"
        if problem:
            raise WorkspaceError(
                f"{path}: [{name}] {key} {problem} (got {value!r}); fix it, "
                f"or delete the line to use the default {toml_value(default)}."
            )
        given[key] = _typed(value, default)
    return kind(**given)


def _default(spec: dataclasses.Field[Any]) -> Any:
    """Return a field's default, made by its factory when it has one."""
    if spec.default_factory is not dataclasses.MISSING:
        return spec.default_factory()
    return spec.default


def _texts_table(value: Any, depth: int) -> bool:
    """Return whether ``value`` is a table of texts, nested ``depth`` tables deep."""
    if not isinstance(value, dict) or not all(isinstance(k, str) for k in value):
        return False
    if depth == 1:
        return all(isinstance(v, str) for v in value.values())
    return all(_texts_table(v, depth - 1) for v in value.values())


def _problem(value: Any, default: Any, *, fraction: bool, depth: int = 1) -> str | None:
    """Return what is wrong with a value, judged by its default's type, or None."""
    if isinstance(default, Mapping):
        if _texts_table(value, depth):
            return None
        if depth == 1:
            return 'must be a table of texts, like { sex = "gender" }'
        return 'must be a table of tables of texts, like { gender = { F = "female" } }'
    if isinstance(default, bool):
        return None if isinstance(value, bool) else "must be true or false"
    if isinstance(default, int):
        if isinstance(value, bool) or not isinstance(value, int) or value < 0:
            return "must be a whole number, 0 or more"
        return None
    if isinstance(default, float):
        if isinstance(value, bool) or not isinstance(value, int | float) or value < 0:
            return "must be a number, 0 or more"
        if fraction and value > 1:
            return "must be between 0 and 1"
        return None
    if isinstance(default, str):
        return None if isinstance(value, str) else "must be text in quotes"
    if isinstance(default, tuple):
        ok = isinstance(value, list) and all(isinstance(v, str) for v in value)
        return None if ok else 'must be a list of texts, like ["gender", "role"]'
    return None


def _typed(value: Any, default: Any) -> Any:
    """Return a checked value as its attribute's type (a whole number may stand for a decimal)."""
    if isinstance(default, float):
        return float(value)
    if isinstance(default, tuple):
        return tuple(value)
    if isinstance(default, Mapping):
        return {k: dict(v) if isinstance(v, dict) else v for k, v in value.items()}
    return value


# --------------------------------------------------------------------------- the template


def toml_value(value: Any) -> str:
    """Return a setting's value written as TOML."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int | float):
        return repr(value)
    if isinstance(value, str):
        # a JSON string is a valid TOML basic string
        return json.dumps(value, ensure_ascii=False)
    if isinstance(value, tuple | list):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    if isinstance(value, Mapping):
        pairs = ", ".join(
            f"{json.dumps(str(k), ensure_ascii=False)} = {toml_value(v)}" for k, v in value.items()
        )
        return "{ " + pairs + " }" if pairs else "{}"
    raise TypeError(f"no TOML form for {value!r}")


def render_template(settings: Settings | None = None) -> str:
    """Return ``traits.toml`` text holding ``settings`` (the defaults when None), commented."""
    settings = settings or Settings()
    lines = [
        "# trait-extractor workspace settings. Paths are relative to this folder.",
        "# Delete a line to use its default.",
    ]
    for name in SECTION_ORDER:
        lines.append("")
        if name == "columns":
            lines += _columns_lines(settings.columns)
            continue
        if name == "codebook":
            lines += _codebook_lines(settings.codebook)
            continue
        section = getattr(settings, name)
        lines.append(f"# {type(section).__doc__}")
        lines.append(f"[{name}]")
        for spec in dataclasses.fields(section):
            line = f"{spec.name} = {toml_value(getattr(section, spec.name))}"
            doc = spec.metadata["doc"]
            lines.append(f"{line:<32} # {doc}" if doc else line)
    return "\n".join(lines) + "\n"


def _columns_lines(columns: Mapping[str, Any]) -> list[str]:
    lines = [
        "# Explicit column mapping for interview tables, when headers are not recognised:",
        "[columns]",
    ]
    lines += [f"{role} = {toml_value(header)}" for role, header in columns.items()]
    if not columns:
        lines += [f"# {role} = {toml_value(h)}" for role, h in COLUMN_EXAMPLES.items()]
    return lines


def _codebook_lines(codebook: Mapping[str, QuestionCode]) -> list[str]:
    lines = [
        "# What each question asks for, when answers name it by a field name (likes, dislikes,",
        "# wishes, open). Evidence for stance, never the answer; the questions file works too.",
        "[codebook]",
    ]
    for key, code in codebook.items():
        parts = [
            f"{name} = {toml_value(v)}"
            for name, v in zip(("text", "direction"), code[1:], strict=True)
            if v
        ]
        lines.append(f"{toml_value(key)} = {{ {', '.join(parts)} }}")
    if not codebook:
        lines += [
            '# q5_dislike = "dislikes"',
            '# reason_preferred = { text = "Why did you prefer this one?", direction = "likes" }',
        ]
    return lines
