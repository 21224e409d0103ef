"""ReviewBoard, kernel side: "Does the choice change the model's answer?" (issue 12).

The board shows the output's CDF per candidate (a bqplot figure in the input
panels' colours and dashes) and the table of output figures; the decision
keeps the run's record. Candidates and the cost model are invented.
"""

from __future__ import annotations

from html.parser import HTMLParser

import numpy as np
import pytest

import cdfsketch
from cdfsketch import Sketch
from cdfsketch._validate import InputError
from cdfsketch.review.consequence_view import consequence_presentation

HOSTILE = "<img src=x onerror=alert(1)>"


def experts() -> list[Sketch]:
    return [
        Sketch([0, 4, 10], [0, 0.5, 1], name="expert A", units="h"),
        Sketch([1, 6, 14], [0, 0.5, 1], name=HOSTILE, units="h"),
        Sketch([0, 3, 30], [0, 0.6, 1], name="expert C", units="h"),
    ]


INPUTS = {
    "hours": experts()[0],
    "rate": Sketch([50, 70], [0, 1], name="rate"),  # invented EUR/h
}


def cost(d):
    return {"cost": d["hours"] * d["rate"], "downtime": d["hours"] + 1.0}


@pytest.fixture
def board():
    return cdfsketch.ReviewBoard(
        None, experts(), units="h", model=cost, inputs=INPUTS, vary="hours", size=10_000,
        rng=4, output_units={"cost": "EUR", "downtime": "h"},
        consequence_options={"tolerance": {"cost": 10.0, "downtime": 0.2},
                             "thresholds": {"cost": [600]}},
    )  # fmt: skip


class _Cells(HTMLParser):
    """Text per cell of the board's table, rows in order."""

    def __init__(self) -> None:
        super().__init__()
        self.rows: list[list[str]] = []
        self.tags: list[str] = []
        self._cell: list[str] | None = None

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        if tag == "tr":
            self.rows.append([])
        elif tag in ("td", "th"):
            self._cell = []

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self._cell is not None:
            self.rows[-1].append("".join(self._cell).strip())
            self._cell = None

    def handle_data(self, data):
        if self._cell is not None:
            self._cell.append(data)


def _cells(html: str) -> _Cells:
    p = _Cells()
    p.feed(html)
    return p


def test_overlay_is_the_results_curves_in_the_input_styles(board) -> None:
    res = board.review.consequences
    assert board.outcome_box.layout.display == ""
    assert list(board.outcome_output.options) == ["cost", "downtime"]
    assert board.outcome_output.layout.display == ""  # two outputs: a choice
    curves = res.output_curves(points=201, output="cost")
    for name in board.names:
        line = board.outcome_lines[name]
        np.testing.assert_array_equal(line.x, curves[name]["x"])
        np.testing.assert_array_equal(line.y, curves[name]["p"])
        # the same colour, dash and marker as the candidate's line in the input panels
        assert line.colors == board.cdf_lines[name].colors
        assert line.line_style == board.cdf_lines[name].line_style
        assert board.outcome_markers[name].marker == board.markers[name].marker
    assert board.outcome_axis.label == "cost (EUR)"
    board.outcome_output.value = "downtime"
    np.testing.assert_array_equal(
        board.outcome_lines["expert A"].x, res.output_curves(output="downtime")["expert A"]["x"]
    )
    assert board.outcome_axis.label == "downtime (h)"
    lo, hi = consequence_presentation(board.review)["outputs"][1]["xRange"]
    assert (board.outcome_x.min, board.outcome_x.max) == (lo, hi)


def test_table_shows_the_presentation_escaped(board) -> None:
    out = consequence_presentation(board.review)["outputs"][0]
    html = board.outcome_view.value
    assert HOSTILE not in html and "&lt;img src=x onerror=alert(1)&gt;" in html
    parsed = _cells(html)
    assert "img" not in parsed.tags and "script" not in parsed.tags
    head, *rows = parsed.rows
    assert head[0] == "Candidate" and head[-1] == "Verdict"
    assert head[1] == "Mean(EUR)" and head[-2] == "P(> 600)(%)"
    for shown, row in zip(rows, out["rows"], strict=True):
        assert shown[0].endswith(row["name"] + ("reference" if row["reference"] else ""))
        for text, col in zip(shown[1:-1], out["columns"], strict=True):
            cell = row["cells"][col["key"]]
            assert text == cell["text"] + cell["diffText"]
        assert shown[-1] == row["verdict"]
    assert out["verdict"] in board.outcome_verdict.value  # the verdict sentence for the output
    # tolerance 10 EUR against a mean difference of about 2.25 h · 60 EUR/h: changes
    assert rows[1][-1] == "changes"


def test_choice_moves_the_reference_and_thickens_the_line(board) -> None:
    assert board.outcome_lines["expert C"].stroke_width == 1.8
    board.choose("expert C", by="review group", rationale="long repairs happen")
    assert board.outcome_lines["expert C"].stroke_width == 3.6
    rows = _cells(board.outcome_view.value).rows[1:]
    assert rows[2][-1] == "reference" and rows[0][-1] != "reference"
    assert "Recorded with the decision: We checked that the choice matters" in (
        board.outcome_note.value
    )
    spec = board.chosen_spec()
    cdfsketch.validate_spec(spec)
    assert spec["provenance"]["decision"]["consequences"]["chosen"] == "expert C"


def test_toggle_hides_the_output_curve_too(board) -> None:
    board.set_visible("expert A", False)
    assert board.outcome_lines["expert A"].visible is False
    assert board.outcome_markers["expert A"].visible is False
    board.set_visible("expert A", True)
    assert board.outcome_lines["expert A"].visible is True


def test_without_a_run_the_section_is_hidden_until_attached() -> None:
    b = cdfsketch.ReviewBoard(None, experts()[:2], units="h")
    assert b.outcome_box.layout.display == "none"
    res = cdfsketch.consequences(None, {"hours": experts()[0]}, vary="hours",
                                 candidates=experts()[:2], size=2000, rng=1)  # fmt: skip
    b.attach_consequences(res)
    assert b.outcome_box.layout.display == ""
    assert b.outcome_output.layout.display == "none"  # one output: no drop-down
    assert b.outcome_axis.label == "hours (h)"  # the identity model: the input's units
    wrong = cdfsketch.consequences(None, {"hours": experts()[0]}, vary="hours",
                                   candidates=experts()[:2], names=["a", "b"], size=500,
                                   rng=1)  # fmt: skip
    with pytest.raises(InputError, match="must be the review's candidates"):
        b.attach_consequences(wrong)


def test_run_from_the_board() -> None:
    b = cdfsketch.ReviewBoard(None, experts()[:2])
    res = b.run_consequences(cost, INPUTS, vary="hours", size=2000, rng=2, output_units="EUR")
    assert res.candidates == b.names
    assert b.outcome_axis.label == "cost (EUR)"
    assert "Mean" in b.outcome_view.value
