"""The browser files the review page inlines, read from the package or the checkout.

An installed wheel carries ``js/review-page.mjs``, ``js/review-page.css`` and
``js/spec-reader.mjs`` as ``cdfsketch/_js/<name>`` (the build maps them
there); a source checkout or an editable install reads them from the
repository's ``js/`` folder, their one home.
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path

__all__ = ["ASSETS", "read_asset"]

#: The files the page needs.
ASSETS = ("review-page.mjs", "review-page.css", "spec-reader.mjs")
_CHECKOUT_JS = Path(__file__).resolve().parents[2] / "js"


def read_asset(name: str) -> str:
    """The text of one of :data:`ASSETS`, from the installed package or the checkout.

    Examples
    --------
    >>> "readSpec" in read_asset("spec-reader.mjs")
    True
    """
    if name not in ASSETS:
        raise ValueError(f"name must be one of {', '.join(ASSETS)}; got {name!r}.")
    packaged = resources.files("cdfsketch") / "_js" / name
    if packaged.is_file():
        return packaged.read_text(encoding="utf-8")
    local = _CHECKOUT_JS / name
    if local.is_file():
        return local.read_text(encoding="utf-8")
    raise FileNotFoundError(
        f"The review page's file {name!r} is missing: neither the installed package "
        f"(cdfsketch/_js/{name}) nor a source checkout ({local}) holds it. Reinstall "
        "cdfsketch from a complete wheel or sdist."
    )
