"""The page's browser files: read from an installed wheel first, the checkout second."""

from __future__ import annotations

from pathlib import Path

import pytest

from cdfsketch.review import _assets


def test_reads_the_checkout_files() -> None:
    root = Path(__file__).resolve().parents[2] / "js"
    for name in _assets.ASSETS:
        assert _assets.read_asset(name) == (root / name).read_text(encoding="utf-8")


def test_packaged_copy_wins(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    # an installed wheel: cdfsketch/_js/<name> inside the package (hatch force-include)
    (tmp_path / "_js").mkdir()
    (tmp_path / "_js" / "review-page.css").write_text("/* packaged */", encoding="utf-8")
    monkeypatch.setattr(_assets.resources, "files", lambda _pkg: tmp_path)
    assert _assets.read_asset("review-page.css") == "/* packaged */"


def test_missing_everywhere_is_a_clear_error(tmp_path: Path, monkeypatch) -> None:
    monkeypatch.setattr(_assets.resources, "files", lambda _pkg: tmp_path)
    monkeypatch.setattr(_assets, "_CHECKOUT_JS", tmp_path / "no-js")
    with pytest.raises(FileNotFoundError, match=r"neither the installed package .* holds it"):
        _assets.read_asset("spec-reader.mjs")
    with pytest.raises(ValueError, match="name must be one of"):
        _assets.read_asset("../secrets.txt")
