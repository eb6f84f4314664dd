"""Shared fixtures: the demo model and the small hand-built networks in tests/data."""

from __future__ import annotations

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
DATA = Path(__file__).resolve().parent / "data"
DEMO = ROOT / "cases" / "orlewick.toml"


@pytest.fixture()
def demo_path() -> Path:
    return DEMO


@pytest.fixture()
def data_dir() -> Path:
    return DATA
