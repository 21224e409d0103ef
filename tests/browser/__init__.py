"""Browser tests (real Chromium).

A package, so its conftest does not clash with tests/conftest.py.
"""
