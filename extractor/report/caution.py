"""The review caution: one wording wherever extracted results are shown or written."""

from __future__ import annotations

REVIEW_CAUTION = (
    "Automatic extraction makes mistakes: have a person review the mentions before the "
    "results inform any decision."
)
"""Shown under every command that reports results, and first on the workbook's About sheet."""
