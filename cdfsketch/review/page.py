"""The standalone review page: ONE self-contained HTML file for the meeting.

The page's script, the spec reader and the data are inline; a
Content-Security-Policy forbids every fetch, so the page works from
``file://`` with no network. It draws each candidate by evaluating its spec
with ``js/spec-reader.mjs`` — the same arithmetic as the Python package — so
fitted families travel as sketches with many knots, labelled as such, with
the largest CDF difference stated. All text from users (names, units,
rationale, notes) reaches the page as JSON data and is inserted with
``textContent``, never as markup.
"""

from __future__ import annotations

import base64
import hashlib
import html
import json
import re
from collections.abc import Mapping
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

import numpy as np

from .._files import check_output_path, write_text
from .._frozen import thaw
from .._validate import fail, quote
from .._version import __version__
from ._assets import read_asset
from .consequence_view import consequence_presentation
from .layers import MAX_SPIKES, data_layers, flags_text, floor_flags, x_range
from .palette import DASH_ARRAY
from .record import Review
from .table import presentation
from .texts import CAUTION

__all__ = ["page_html", "page_payload", "page_script", "safe_json", "save_html"]


def _list(a: Any) -> list[float]:
    return [float(v) for v in np.asarray(a, dtype=float)]


def _slug(text: str) -> str:
    """A file-name stem from free text: letters, digits, ``-``, ``_``, ``.``; at most 80."""
    return re.sub(r"[^A-Za-z0-9_.-]+", "-", text).strip("-.")[:80].strip("-.")


def _data_block(review: Review, include_data: bool) -> dict[str, Any] | None:
    layers = data_layers(review)
    if layers is None or review.data is None:
        return None
    lo, hi = review.data_range
    return {
        "n": review.fingerprint["n"],
        "min": lo,
        "max": hi,
        "median": float(review.ecdf.ppf(0.5)),
        "sha256": review.fingerprint["sha256"],
        "steps": {"x": _list(layers["steps_x"]), "p": _list(layers["steps_p"])},
        "band": {
            "eps": layers["eps"],
            "x": _list(layers["band_x"]),
            "lower": _list(layers["band_lower"]),
            "upper": _list(layers["band_upper"]),
        },
        "hist": {"edges": _list(layers["edges"]), "density": _list(layers["density"])},
        "values": _list(review.data) if include_data else None,
    }


def page_payload(review: Review, *, include_data: bool = False) -> dict[str, Any]:
    """The JSON the page is built from (everything the page shows)."""
    lo, hi = x_range(review)
    cands = []
    for c in review.candidates:
        st = review.style(c.name)
        cands.append(
            {
                "name": c.name,
                "kind": c.kind,
                "description": c.description,
                "note": c.note,
                "colour": st.colour,
                "dash": DASH_ARRAY[st.dash],
                "marker": st.marker,
                "chosen": c.name == review.chosen,
                "spec": c.sketch.to_spec(),
            }
        )
    stem = _slug(review.name or review.chosen or "") or "chosen"
    return {
        "format": "cdfsketch-review-page",
        "version": 3,
        "title": review.name or "Review of candidate distributions",
        "name": review.name,
        "units": review.units,
        "level": review.level,
        "generated": datetime.now(UTC).isoformat(timespec="seconds"),
        "packageVersion": __version__,
        "caution": CAUTION,
        "xRange": [lo, hi],
        "maxSpikes": MAX_SPIKES,
        "data": _data_block(review, include_data),
        "candidates": cands,
        "flags": flags_text(floor_flags(review)),
        "table": presentation(review),
        "consequences": consequence_presentation(review),
        "decision": None if review.decision is None else thaw(review.decision),
        "chosenSpec": review.chosen_spec() if review.decision is not None else None,
        "chosenFile": f"{stem}.spec.json",
    }


def safe_json(obj: Any) -> str:
    """JSON text safe inside a ``<script>`` element: ``< > &`` and U+2028/9 escaped.

    Examples
    --------
    >>> safe_json({"a": "</script>"})
    '{"a": "\\\\u003c/script\\\\u003e"}'
    """
    text = json.dumps(obj, ensure_ascii=False, allow_nan=False)
    for ch, esc in (("<", "\\u003c"), (">", "\\u003e"), ("&", "\\u0026")):
        text = text.replace(ch, esc)
    return text.replace("\u2028", "\\u2028").replace("\u2029", "\\u2029")


_EXPORT = re.compile(r"^export (const|function|class|let) ", re.MULTILINE)
_IMPORT = 'import { readSpec } from "./spec-reader.mjs";'


def page_script() -> str:
    """The page's script: the spec reader wrapped in a scope, then the page module."""
    body = _EXPORT.sub(r"\1 ", read_asset("spec-reader.mjs"))
    page = read_asset("review-page.mjs")
    if re.search(r"^\s*(export|import)\b", body, re.MULTILINE):
        raise RuntimeError(
            "spec-reader.mjs has an export or import form the page writer cannot inline "
            "(only `export const|function|class|let` at line start are supported)."
        )
    if _IMPORT not in page:
        raise RuntimeError(f"review-page.mjs must import the reader with exactly: {_IMPORT}")
    script = (
        "const specReader = (() => {\n"
        + body
        + "\nreturn { readSpec, validateSpec, SpecError };\n})();\n"
        + page.replace(_IMPORT, "const { readSpec } = specReader;")
        + '\nmain(document, JSON.parse(document.getElementById("review-data").textContent));\n'
    )
    if re.search(r"</script|<!--", script, re.IGNORECASE):
        raise RuntimeError("The page's script contains '</script' or '<!--'; it cannot be inlined.")
    return script


def _page_from_payload(payload: Mapping[str, Any]) -> str:
    script = "\n" + page_script()
    css = read_asset("review-page.css")
    if re.search(r"</style", css, re.IGNORECASE):
        raise RuntimeError("review-page.css contains '</style'; it cannot be inlined.")
    digest = base64.b64encode(hashlib.sha256(script.encode("utf-8")).digest()).decode("ascii")
    csp = (
        f"default-src 'none'; script-src 'sha256-{digest}'; style-src 'unsafe-inline'; "
        "img-src data:; base-uri 'none'; form-action 'none'"
    )
    title = html.escape(str(payload.get("title", "")))
    return (
        "<!DOCTYPE html>\n"
        '<html lang="en">\n<head>\n<meta charset="utf-8">\n'
        f'<meta http-equiv="Content-Security-Policy" content="{csp}">\n'
        '<meta name="viewport" content="width=device-width, initial-scale=1">\n'
        f'<meta name="generator" content="cdfsketch {html.escape(__version__)}">\n'
        f"<title>{title}</title>\n<style>\n{css}\n</style>\n</head>\n<body>\n"
        '<main id="review-root"></main>\n'
        "<noscript><p>This page draws its curves with JavaScript; allow scripts for this "
        "local file to see the review.</p></noscript>\n"
        f'<script type="application/json" id="review-data">{safe_json(payload)}</script>\n'
        f'<script type="module">{script}</script>\n</body>\n</html>\n'
    )


def page_html(review: Review, *, include_data: bool = False) -> str:
    """The standalone review page as HTML text (see :func:`save_html`)."""
    if not isinstance(review, Review):
        raise fail(
            "review must be a cdfsketch.review.Review",
            type(review).__name__,
            "Pass the Review (or call board.save_html on a ReviewBoard).",
            field="review",
        )
    if not isinstance(include_data, bool):
        raise fail(
            "include_data must be True or False",
            quote(include_data),
            "Pass include_data=True to embed the raw values.",
            field="include_data",
            value=include_data,
        )
    return _page_from_payload(page_payload(review, include_data=include_data))


def save_html(review: Review, path: Any, *, include_data: bool = False) -> Path:
    """Write one self-contained HTML page for a review meeting (atomically).

    The page needs no network (no CDN, nothing external; a
    Content-Security-Policy forbids fetches) and works from ``file://``. It
    shows the CDF overlays over the ECDF and its DKW band, the densities
    over the data histogram with atoms as spikes, a toggle per candidate
    (the legend), hover read-outs of x, p and density, the comparison
    (sortable), flags for mass where the data never go, the decision and
    rationale, the data summary (n, range, SHA-256 digest) and a download of
    the chosen spec. With a consequence run it also shows whether the choice
    changes the model's answer: the output's CDF per candidate (in the
    candidates' own colours and dashes) and the output figures with their
    standard errors and verdicts — computed numbers only; the model is not in
    the page and nothing is run when it opens.

    Parameters
    ----------
    review : Review
        What to show.
    path : str or path-like
        Where to write (``.html``), checked before any work.
    include_data : bool
        Also embed the raw values in the order given. The ECDF overlay, and
        a "resampled data" candidate, always show the distinct values and
        their frequencies; leave those out if the values must not travel.

    Returns
    -------
    Path

    Examples
    --------
    >>> import tempfile, pathlib
    >>> from cdfsketch import Sketch
    >>> r = Review(None, [Sketch([0, 4, 10], [0, 0.5, 1], name="expert A")])
    >>> out = save_html(r, pathlib.Path(tempfile.mkdtemp()) / "review.html")
    >>> out.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    True
    """
    target = check_output_path(path, suffixes=(".html", ".htm"), what="review page")
    return write_text(target, page_html(review, include_data=include_data))
