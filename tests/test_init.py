"""The public surface in ``extractor/__init__.py``: every name it promises imports."""

from __future__ import annotations

import importlib

import pytest

import extractor


@pytest.mark.parametrize("name", sorted(extractor.__all__), ids=str)
def test_public_name_imports(name: str) -> None:
    assert getattr(extractor, name) is not None


@pytest.mark.parametrize("name", sorted(extractor._LAZY), ids=str)
def test_public_name_lives_in_the_module_the_map_names(name: str) -> None:
    module = importlib.import_module(extractor._LAZY[name])
    assert getattr(extractor, name) is getattr(module, name)


def test_unknown_name_is_an_attribute_error() -> None:
    with pytest.raises(AttributeError, match="no attribute 'pipeline_run'"):
        _ = extractor.pipeline_run
