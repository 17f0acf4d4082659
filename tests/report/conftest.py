"""Fixtures of the report tests: the invented study of :mod:`tests.report.study`."""

from __future__ import annotations

import pytest

from tests.report.study import Study, study_frames


@pytest.fixture()
def study() -> Study:
    """Mentions and respondents: six individuals (3 women, 2 men, 1 unrecorded), one group."""
    return study_frames()
