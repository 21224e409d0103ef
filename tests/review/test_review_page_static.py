"""The standalone review page and static figures, checked without a browser.

* the page is self-contained: parsed with html.parser, no src/href/action to
  any URL, no external fetch in the script, a CSP that forbids fetches;
* user text (names, units, rationale) never appears as markup;
* figures: PNG magic bytes (PNG spec, ISO/IEC 15948), SVG parses as XML,
  PDF header "%PDF-" (ISO 32000);
* the ComparisonTable CSV round-trips through the csv module.

Data: the Nile flows (statsmodels.datasets.nile, offline; n=100). DKW
half-width for n=100 at 95 %: 0.135810 (Massart 1990; REFERENCES.md).
"""

from __future__ import annotations

import base64
import csv
import hashlib
import json
import re
import sys
import xml.etree.ElementTree as ET
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest

import cdfsketch
from cdfsketch import Sketch
from cdfsketch.elicit import from_quantiles
from cdfsketch.empirical import ECDF
from cdfsketch.review import CAUTION, Review, page_html, save_figure, save_html
from cdfsketch.review.page import page_payload, page_script, safe_json

HOSTILE = [
    "<img src=x onerror=alert(1)>",
    "</script><script>alert(1)</script>",
    "a\u2028b\u2029c & <!-- -->",
]


@pytest.fixture(scope="module")
def review(nile: np.ndarray) -> Review:
    from cdfsketch.fit import fit_candidates

    a = from_quantiles({0.1: 650, 0.5: 880, 0.9: 1150}, name=HOSTILE[0])
    b = from_quantiles({0.05: 600, 0.5: 930, 0.95: 1250}, name=HOSTILE[1])
    fits = fit_candidates(nile, families=["normal"], mixtures=[], kde=False, rng=0)
    r = Review(nile, [a, b, *fits, ECDF(nile)], units=HOSTILE[2], name=HOSTILE[1], rng=0)
    r.choose("normal", by=HOSTILE[0], rationale=HOSTILE[1] + "\n" + HOSTILE[2])
    return r


class _Tags(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tags: list[tuple[str, dict[str, str | None]]] = []
        self.scripts: list[tuple[dict[str, str | None], str]] = []
        self._in: dict[str, str | None] | None = None
        self._buf: list[str] = []

    def handle_starttag(self, tag, attrs):
        d = dict(attrs)
        self.tags.append((tag, d))
        if tag == "script":
            self._in, self._buf = d, []

    def handle_endtag(self, tag):
        if tag == "script" and self._in is not None:
            self.scripts.append((self._in, "".join(self._buf)))
            self._in = None

    def handle_data(self, data):
        if self._in is not None:
            self._buf.append(data)


def _parse(text: str) -> _Tags:
    p = _Tags()
    p.feed(text)
    p.close()
    return p


def test_page_is_self_contained(review: Review) -> None:
    text = page_html(review)
    p = _parse(text)
    tags = [t for t, _ in p.tags]
    # every element that could load something: no URL anywhere
    for tag, attrs in p.tags:
        for key in ("src", "href", "action", "data", "poster", "srcset", "xlink:href"):
            assert key not in attrs, f"<{tag} {key}=...> in the static page"
        if tag == "link":
            pytest.fail("a <link> element loads an external resource")
    assert "iframe" not in tags and "img" not in tags and "object" not in tags
    # only two scripts: the JSON data and the inline module; neither has a src
    assert [a.get("type") for a, _ in p.scripts] == ["application/json", "module"]
    # nothing in the whole file names a remote URL (http:, https:, protocol-relative //host)
    assert not re.search(r"https?:", text.replace("http://www.w3.org/2000/svg", ""))
    assert not re.search(r"""(['"(=]\s*)//[a-z0-9]""", text, re.IGNORECASE)
    script = p.scripts[1][1]
    for api in ("fetch(", "XMLHttpRequest", "WebSocket", "EventSource", "sendBeacon", "import(",
                "eval(", "new Function", "innerHTML", "outerHTML", "insertAdjacentHTML",
                "document.write"):  # fmt: skip
        assert api not in script, f"the page's script uses {api}"
    # the CSP allows only this very script (its hash) and no fetches at all
    csp = next(a["content"] for t, a in p.tags if t == "meta" and a.get("http-equiv"))
    assert "default-src 'none'" in csp
    digest = base64.b64encode(hashlib.sha256(script.encode()).digest()).decode()
    assert f"script-src 'sha256-{digest}'" in csp


def test_hostile_text_is_data_not_markup(review: Review) -> None:
    text = page_html(review)
    p = _parse(text)
    # markup found by the parser is only the page's own skeleton
    assert {t for t, _ in p.tags} <= {"html", "head", "meta", "title", "style", "body", "main",
                                       "noscript", "p", "script"}  # fmt: skip
    assert len(p.scripts) == 2
    for s in HOSTILE:
        assert s not in text  # never verbatim: escaped in the title, \u-escaped in the JSON
    # the JSON holds the exact strings
    payload = json.loads(p.scripts[0][1])
    assert [c["name"] for c in payload["candidates"]][:2] == HOSTILE[:2]
    assert payload["units"] == HOSTILE[2]
    assert payload["decision"]["by"] == HOSTILE[0]
    assert payload["decision"]["rationale"] == HOSTILE[1] + "\n" + HOSTILE[2]
    assert "<" not in p.scripts[0][1] and ">" not in p.scripts[0][1] and "&" not in p.scripts[0][1]
    assert "\u2028" not in p.scripts[0][1] and "\u2029" not in p.scripts[0][1]


def test_safe_json_round_trips() -> None:
    obj = {"s": "".join(HOSTILE), "n": [1.5, 2]}
    out = safe_json(obj)
    assert json.loads(out) == obj
    assert not re.search(r"[<>&\u2028\u2029]", out)


def test_payload_contents(review: Review, nile: np.ndarray) -> None:
    pay = page_payload(review)
    d = pay["data"]
    assert d["n"] == 100 and d["min"] == 456.0 and d["max"] == 1370.0  # statsmodels nile
    assert d["sha256"] == cdfsketch.data_fingerprint(nile)["sha256"]
    assert d["values"] is None
    assert round(d["band"]["eps"], 6) == 0.135810  # Massart 1990, n=100, α=0.05
    assert pay["caution"] == CAUTION
    # the chosen spec in the page is what chosen_spec() returns, apart from the creation time
    a, b = pay["chosenSpec"], review.chosen_spec()
    a["provenance"].pop("created")
    b["provenance"].pop("created")
    assert a == b
    # every candidate travels as a spec that loads
    for c in pay["candidates"]:
        cdfsketch.validate_spec(c["spec"])
    assert [c["chosen"] for c in pay["candidates"]] == [False, False, True, False]
    # each candidate keeps its palette style (colour, dash, marker): chosen or not
    assert [c["colour"] for c in pay["candidates"]] == [
        review.style(n).colour for n in review.names
    ]
    assert len({(c["colour"], c["dash"], c["marker"]) for c in pay["candidates"]}) == 4
    with_data = page_payload(review, include_data=True)["data"]["values"]
    assert with_data == nile.tolist()
    assert cdfsketch.data_fingerprint(with_data)["sha256"] == d["sha256"]


def test_script_inlines_the_spec_reader() -> None:
    script = page_script()
    root = Path(__file__).resolve().parents[2]
    reader = (root / "js" / "spec-reader.mjs").read_text(encoding="utf-8")
    # the reader's code is carried over line for line, only `export ` dropped
    assert reader.replace("\nexport ", "\n") in script
    # inside the reader's scope no export is left; the whole script imports nothing (an
    # inline module may keep its own top-level exports, which nothing fetches)
    reader_part = script.split("return { readSpec, validateSpec, SpecError };")[0]
    assert not re.search(r"^\s*export\s", reader_part, re.MULTILINE)
    assert not re.search(r"^\s*import\b", script, re.MULTILINE)
    assert "const { readSpec } = specReader;" in script


def test_save_html_writes_and_checks(review: Review, tmp_path: Path) -> None:
    out = save_html(review, tmp_path / "review.html")
    assert out.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["review.html"]  # no stray temp file
    with pytest.raises(ValueError, match=r"review page must end in .html, .htm"):
        save_html(review, tmp_path / "review.txt")
    with pytest.raises(ValueError, match="include_data must be True or False"):
        page_html(review, include_data="yes")
    with pytest.raises(ValueError, match=r"review must be a cdfsketch\.review\.Review"):
        page_html("review")


def test_no_decision_page(nile: np.ndarray) -> None:
    r = Review(nile, [Sketch([400, 900, 1400], [0, 0.5, 1], name="flat")], holdout=None)
    p = _parse(page_html(r))
    payload = json.loads(p.scripts[0][1])
    assert payload["decision"] is None and payload["chosenSpec"] is None


@pytest.mark.parametrize("suffix", [".png", ".svg", ".pdf"])
def test_figures_are_valid(review: Review, tmp_path: Path, suffix: str) -> None:
    out = save_figure(review, tmp_path / f"fig{suffix}", dpi=60)
    blob = out.read_bytes()
    if suffix == ".png":
        assert blob[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (ISO/IEC 15948 §5.2)
    elif suffix == ".pdf":
        assert blob[:5] == b"%PDF-" and b"%%EOF" in blob[-32:]  # ISO 32000-1 §7.5
    else:
        root = ET.fromstring(blob)
        assert root.tag == "{http://www.w3.org/2000/svg}svg"
        text = blob.decode("utf-8")
        # names are text in the SVG (matplotlib writes glyph paths or escaped text)
        assert "<img" not in text and "<script>alert" not in text


def test_figure_errors(review: Review, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    with pytest.raises(ValueError, match=r"figure must end in .png, .svg, .pdf; got 'fig.jpg'"):
        save_figure(review, tmp_path / "fig.jpg")
    with pytest.raises(ValueError, match="dpi must be a finite number"):
        save_figure(review, tmp_path / "fig.png", dpi=0)
    monkeypatch.setitem(sys.modules, "matplotlib", None)
    monkeypatch.setitem(sys.modules, "matplotlib.figure", None)
    with pytest.raises(ImportError, match=r"'review' extra.*pip install 'cdfsketch\[review\]'"):
        save_figure(review, tmp_path / "fig.png")
    assert list(tmp_path.iterdir()) == []  # nothing written by a refused call


def test_table_csv(review: Review, tmp_path: Path) -> None:
    path = tmp_path / "table.csv"
    review.table().to_csv(path)
    with open(path, newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert [r["name"] for r in rows] == list(review.names)
    ks = {r["name"]: r["ks"] for r in review.table().rows}
    for r in rows:
        assert float(r["ks"]) == pytest.approx(ks[r["name"]], rel=1e-5)
