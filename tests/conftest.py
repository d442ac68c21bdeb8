"""Pytest configuration: the benchmarks under tests/benchmarks are scripts, not tests."""

import pytest

collect_ignore = ["benchmarks"]


@pytest.fixture(autouse=True)
def _full_width_text(monkeypatch):
    """Text tables at full width unless a test sets COLUMNS (a shell may export it)."""
    monkeypatch.delenv("COLUMNS", raising=False)
