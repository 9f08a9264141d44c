"""Shared fixtures: the demo study as text and a writer for edited copies."""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "studies" / "arven_cruise.toml"


@pytest.fixture
def demo_text() -> str:
    return DEMO.read_text()


#: Demo tables that name inputs or groups; tests that rewrite the inputs or bands start without them.
DECISION_TABLES = ("requirement", "sweep", "sensitivity")


@pytest.fixture
def demo_dict() -> dict:
    """The demo study as a dict, without the decision tables (see ``demo_full_dict``)."""
    data = tomllib.loads(DEMO.read_text())
    for key in DECISION_TABLES:
        data.pop(key, None)
    return data


@pytest.fixture
def demo_full_dict() -> dict:
    return tomllib.loads(DEMO.read_text())


@pytest.fixture
def write_study(tmp_path):
    """Write a study text (with optional replacements of whole lines) and return its path."""

    def write(text: str, name: str = "study.toml") -> Path:
        p = tmp_path / name
        p.write_text(text)
        return p

    return write
