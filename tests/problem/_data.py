"""The valid problem files under data/ (see data/README.md), read for the tests."""

from __future__ import annotations

import copy
from pathlib import Path

import yaml

DATA = Path(__file__).parent / "data"
VALID_FILES = sorted(DATA.glob("*.yaml"))


def read(name: str) -> dict:
    """A parsed copy of one valid fixture (safe to mutate)."""
    return copy.deepcopy(yaml.safe_load((DATA / name).read_text(encoding="utf-8")))
