"""Fixtures of the problem-loader tests: parsed copies of the valid problem files."""

from __future__ import annotations

import pytest

from ._data import read


@pytest.fixture
def full() -> dict:
    """The forced-convection problem that uses every section of the format."""
    return read("forced_full.yaml")


@pytest.fixture
def natural() -> dict:
    """The smallest natural-convection problem."""
    return read("natural_minimal.yaml")
