"""Indicator files for statistics packages: one row per respondent, 0/1 per trait and stance.

``traits export --format indicators`` writes the same table three ways, with a codebook:

* CSV (UTF-8, RFC 4180; text that a spreadsheet would run as a formula is quoted);
* Stata ``.dta`` and SPSS ``.sav`` (written by pyreadstat), each variable with its
  label ("liked: fast cooking (BTX:0002)") and the 0/1 variables with value labels
  (0 = no, 1 = yes);
* a codebook CSV: variable, label, kind, concept, stance and values.

Each trait of the concept list gets one variable per stance (liked, disliked, wanted,
neutral) and one for any mention; when the list has parent concepts, each parent gets
the same set again, counting the parent and every narrower concept under it.
Respondents' metadata follow as text variables; focus groups are rows marked
``is_group = 1`` (leave them out of shares of individuals).
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path

import pandas as pd
import pyreadstat

from extractor.report.formats import write_mentions_csv
from extractor.report.inputs import concept_labels, metadata_columns, trait_name
from extractor.workspace.files import atomic_path

STANCES = {
    "liked": "liked",
    "disliked": "disliked",
    "wanted": "wanted",
    "neutral": "named without a stance",
    "mention": "mentioned",
}
"""Stance variable prefix -> how its label reads."""
PREFIX = {
    "liked": "like",
    "disliked": "dislike",
    "wanted": "want",
    "neutral": "neut",
    "mention": "any",
}
YES_NO = {0: "no", 1: "yes"}
MAX_NAME = 32
"""Longest variable name Stata accepts (SPSS takes 64)."""
MAX_LABEL = 80
"""Longest variable label Stata keeps."""
CODEBOOK_COLUMNS = ["Variable", "Label", "Kind", "Concept ID", "Stance", "Values"]


@dataclass(frozen=True)
class Indicators:
    """The indicator table, its variable labels and its codebook."""

    frame: pd.DataFrame
    labels: Mapping[str, str]
    value_labels: Mapping[str, Mapping[int, str]]
    codebook: pd.DataFrame


def variable_name(text: str, taken: set[str]) -> str:
    """Return a Stata- and SPSS-safe variable name for ``text``, unique among ``taken``.

    Letters, digits and underscores only, starting with a letter, at most 32 characters
    (the Stata limit; from memory).
    """
    name = re.sub(r"[^A-Za-z0-9_]+", "_", text).strip("_") or "v"
    if not name[0].isalpha():
        name = "v" + name
    name = name[:MAX_NAME]
    base, i = name, 2
    while name.casefold() in taken:
        suffix = f"_{i}"
        name = base[: MAX_NAME - len(suffix)] + suffix
        i += 1
    taken.add(name.casefold())
    return name


def _descendants(concepts: pd.DataFrame) -> dict[str, set[str]]:
    """Return parent ID -> itself and every concept under it, for parents in the list."""
    parent = {
        str(c): str(p)
        for c, p in zip(concepts["concept_id"], concepts.get("parent", []), strict=False)
        if isinstance(p, str) and p
    }
    out: dict[str, set[str]] = {}
    for child in parent:
        seen, node = set(), child
        while node in parent and node not in seen:
            seen.add(node)
            node = parent[node]
            out.setdefault(node, {node}).add(child)
    return out


def _holders(mentions: pd.DataFrame, stance: str) -> dict[str, set[str]]:
    """Return concept ID -> respondents with a mention of it in ``stance`` (any for mention)."""
    linked = mentions.loc[mentions["concept_id"].notna()]
    said = linked["stance"].where(linked["stance"].isin(["liked", "disliked", "wanted"]), "neutral")
    if stance != "mention":
        linked = linked.loc[said == stance]
    return {
        str(cid): set(part["respondent"].astype(str))
        for cid, part in linked.groupby(linked["concept_id"].astype(str))
    }


def indicator_table(
    mentions: pd.DataFrame, respondents: pd.DataFrame, concepts: pd.DataFrame
) -> Indicators:
    """Return one row per respondent with 0/1 per concept x stance, parents, and metadata.

    Args:
        mentions: Prepared mention rows (see :func:`extractor.report.inputs.prepare`).
        respondents: Prepared respondent rows.
        concepts: The concept list (``concept_id``, ``label``, ``parent``); every
            concept gets its variables, mentioned or not, so files of two runs line up.
    """
    labels = concept_labels(mentions, concepts)
    listed = [str(c) for c in concepts["concept_id"]] if len(concepts) else []
    extra = sorted(set(mentions["concept_id"].dropna().astype(str)) - set(listed))
    ids = listed + extra
    parents = _descendants(concepts) if len(concepts) else {}
    taken: set[str] = set()
    people = respondents["respondent"].astype(str).tolist()
    columns: dict[str, object] = {variable_name("respondent", taken): people}
    var_labels = {"respondent": "Respondent ID (a pseudonym when the export is pseudonymised)"}
    book: list[tuple[str, str, str, str | None, str | None, str]] = [
        ("respondent", var_labels["respondent"], "id", None, None, "")
    ]
    name = variable_name("is_group", taken)
    columns[name] = respondents["is_group"].astype(int).tolist()
    var_labels[name] = "Focus group (1) or individual (0)"
    book.append(
        (name, var_labels[name], "respondent type", None, None, "0 = individual; 1 = focus group")
    )
    value_labels: dict[str, dict[int, str]] = {name: {0: "individual", 1: "focus group"}}
    for col in metadata_columns(respondents):
        name = variable_name(str(col), taken)
        columns[name] = ["" if pd.isna(v) else str(v) for v in respondents[col].tolist()]
        var_labels[name] = f"Respondent metadata: {col}"[:MAX_LABEL]
        book.append((name, var_labels[name], "metadata", None, None, "text"))
    for stance, verb in STANCES.items():
        holders = _holders(mentions, stance)
        sets = [(cid, holders.get(cid, set()), False) for cid in ids]
        sets += [
            (pid, set().union(*(holders.get(c, set()) for c in under)), True)
            for pid, under in parents.items()
        ]
        for cid, who, is_parent in sets:
            stem = f"{PREFIX[stance]}_{'grp_' if is_parent else ''}{cid}"
            name = variable_name(stem, taken)
            columns[name] = [int(p in who) for p in people]
            scope = " or a narrower trait" if is_parent else ""
            var_labels[name] = f"{verb}: {trait_name(cid, labels)}{scope}"[:MAX_LABEL]
            value_labels[name] = dict(YES_NO)
            kind = "parent indicator" if is_parent else "indicator"
            book.append((name, var_labels[name], kind, cid, stance, "0 = no; 1 = yes"))
    frame = pd.DataFrame(columns)
    return Indicators(frame, var_labels, value_labels, pd.DataFrame(book, columns=CODEBOOK_COLUMNS))


def indicator_paths(csv_path: Path) -> dict[str, Path]:
    """Return the files written beside ``csv_path``: csv, dta, sav and the codebook."""
    return {
        "csv": csv_path,
        "dta": csv_path.with_suffix(".dta"),
        "sav": csv_path.with_suffix(".sav"),
        "codebook": csv_path.with_name(csv_path.stem + "_codebook.csv"),
    }


def write_indicators(csv_path: Path | str, table: Indicators) -> dict[str, Path]:
    """Write the table as CSV, Stata .dta and SPSS .sav with labels, and the codebook CSV.

    Returns:
        The paths written, by kind.
    """
    paths = indicator_paths(Path(csv_path))
    write_mentions_csv(paths["csv"], table.frame)
    write_mentions_csv(paths["codebook"], table.codebook)
    labels = [table.labels.get(c) for c in table.frame.columns]
    values: dict[str, dict[int | float, str]] = {
        k: dict(v.items()) for k, v in table.value_labels.items()
    }
    with atomic_path(paths["dta"]) as temp:
        pyreadstat.write_dta(
            table.frame, temp, column_labels=labels, variable_value_labels=values, version=15
        )
    with atomic_path(paths["sav"]) as temp:
        pyreadstat.write_sav(table.frame, temp, column_labels=labels, variable_value_labels=values)
    return paths
