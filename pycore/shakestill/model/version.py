"""The engine's version; pyproject.toml carries the same (tests/test_layers.py checks)."""

VERSION = "0.1.0"
