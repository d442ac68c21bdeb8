"""Pytest configuration: the benchmarks under tests/benchmarks are scripts, not tests."""

collect_ignore = ["benchmarks"]
