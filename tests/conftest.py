"""Shared by every test: this folder is on sys.path (pytest puts a conftest's folder there),
so tests import the reference helpers (refsolvers, prereq, fuzzcases) by name."""
