"""The editor's HTML: one escaping element builder and one style sheet (CSS classes only).

Every piece of HTML the editor shows is built by :func:`tag`, which escapes
the text and every attribute value, so a quote in a name, a unit or a font
list can never end an attribute early. Looks come from the class rules in
:data:`CSS` (sent once, in the editor's header), never from inline
``style`` attributes.

Examples
--------
>>> tag("span", "5 < 6", cls="cdfsketch-warn", title="it's \\"quoted\\"")
'<span class="cdfsketch-warn" title="it&#x27;s &quot;quoted&quot;">5 &lt; 6</span>'
"""

from __future__ import annotations

import html

from ..review import palette

__all__ = ["CSS", "raw", "swatch", "tag"]


class raw(str):
    """Markup already built by :func:`tag` (not escaped again)."""


def tag(name: str, *content: str, cls: str | None = None, **attrs: object) -> raw:
    """``<name …>content</name>`` with the text and every attribute value escaped.

    ``content`` items that are :class:`raw` (built by ``tag``) are kept as
    markup; plain strings are escaped. Attribute names use ``_`` for ``-``.
    """
    parts = [name]
    if cls:
        parts.append(f'class="{html.escape(cls, quote=True)}"')
    for key, value in attrs.items():
        if value is None:
            continue
        parts.append(f'{key.rstrip("_").replace("_", "-")}="{html.escape(str(value), quote=True)}"')
    body = "".join(c if isinstance(c, raw) else html.escape(str(c)) for c in content)
    return raw(f"<{' '.join(parts)}>{body}</{name}>")


def swatch(
    kind: str,
    colour: str,
    *,
    dash: str | None = None,
    width: int = 22,
    stroke_width: float = 2,
    style: str | None = None,
) -> raw:
    """A small SVG legend mark: ``"line"``, ``"band"``, ``"dot"`` or ``"square"``.

    ``dash`` is an SVG dash array; ``width`` and ``stroke_width`` size a line mark
    (the review board draws its candidates' lines a little longer and thicker);
    ``style`` is for HTML outside the editor, which has no stylesheet of ours.
    """
    if kind == "band":
        shape = tag("rect", x="0", y="3", width="22", height="8", fill=colour)
    elif kind in ("dot", "square"):
        shape = (
            tag("circle", cx="11", cy="7", r="5", fill=colour)
            if kind == "dot"
            else tag("rect", x="6", y="2", width="10", height="10", fill=colour)
        )
    else:
        shape = tag(
            "line", x1="0", y1="7", x2=str(width), y2="7", stroke=colour,
            stroke_width=str(stroke_width), stroke_dasharray=dash,
        )  # fmt: skip
    w = width if kind == "line" else 22
    return tag(
        "svg", shape, cls="cdfsketch-swatch", width=str(w), height="14", viewBox=f"0 0 {w} 14",
        aria_hidden="true", style=style,
    )  # fmt: skip


# The layout rules (see the Editor docstring, "Layout"): the plots take the width; the side
# column keeps 300 px and wraps below the plots when the row is narrower than both.
CSS = f"""
.cdfsketch-editor {{ font-family: {palette.FONT}; font-size: 12.5px; color: #222; }}
.cdfsketch-editor .curve, .cdfsketch-editor .curve * {{ pointer-events: none; }}
.cdfsketch-editor .cdfsketch-title {{ font-size: 15px; font-weight: 600; }}
.cdfsketch-editor .cdfsketch-note {{ font-size: 11.5px; color: #555; }}
.cdfsketch-editor .cdfsketch-guide {{ font-size: 12.5px; color: #222; }}
.cdfsketch-editor .cdfsketch-warn {{ color: {palette.KNOT_OUTSIDE_BAND}; }}
.cdfsketch-editor .cdfsketch-ok {{ color: #333; }}
.cdfsketch-editor .cdfsketch-error {{ color: {palette.KNOT_OUTSIDE_BAND}; font-size: 12px;
  line-height: 18px; }}
.cdfsketch-editor .cdfsketch-message {{ min-height: 18px; margin: 0; }}
.cdfsketch-editor .cdfsketch-legend {{ font-size: 11.5px; color: #444; line-height: 18px; }}
.cdfsketch-editor .cdfsketch-legend span {{ margin-right: 12px; white-space: nowrap; }}
.cdfsketch-editor .cdfsketch-swatch {{ vertical-align: middle; margin-right: 3px; }}
.cdfsketch-editor table.cdfsketch-readout-table td {{ padding: 0 8px 0 0; height: 18px;
  line-height: 18px; white-space: nowrap; vertical-align: top; }}
.cdfsketch-editor table.cdfsketch-readout-table td.cdfsketch-key {{ color: #555; }}
.cdfsketch-editor .cdfsketch-readout {{ overflow: hidden; }}
.cdfsketch-editor table.cdfsketch-readout-table td {{ max-width: 190px; overflow: hidden;
  text-overflow: ellipsis; }}
.cdfsketch-editor .cdfsketch-checks {{ font-size: 12px; line-height: 16px; }}
.cdfsketch-editor .cdfsketch-group {{ border: 1px solid #ddd; border-radius: 4px;
  padding: 2px 6px 4px 6px; margin: 0 6px 6px 0; }}
.cdfsketch-editor .cdfsketch-group-title {{ font-weight: 600; font-size: 12px; color: #333; }}
.cdfsketch-editor .cdfsketch-table-head {{ font-size: 12px; color: #555; }}
.cdfsketch-editor .cdfsketch-table-head span {{ display: inline-block; }}
.cdfsketch-editor .cdfsketch-th-knot {{ width: 64px; }}
.cdfsketch-editor .cdfsketch-th-x {{ width: 112px; }}
.cdfsketch-editor .cdfsketch-selected-row input {{ background: #e8f1f8; font-weight: 600; }}
.cdfsketch-editor .cdfsketch-snippet pre {{ font-size: 11.5px; margin: 2px 0; }}
"""
