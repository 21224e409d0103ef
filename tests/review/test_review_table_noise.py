"""The comparison as a review reads it: rounding noise is shown as 0 (issue 13).

The resampled data's KS distance to its own ECDF is 0 in exact arithmetic; in
floating point the sum of the ECDF's steps can leave ~1e-18, which the table
showed as "8.67e-19". The rule (cdfsketch.review.table): a distance or error
below NOISE times its column's scale (the largest value in the column, or the
band's half-width) is shown as 0; the raw value stays in the ComparisonTable.
Data are invented (seeded gamma draws rounded to 0.1 h, as in the board's
browser notebook).
"""

from __future__ import annotations

import numpy as np

from cdfsketch import Sketch
from cdfsketch.empirical import ECDF
from cdfsketch.review import Review
from cdfsketch.review.table import NOISE, presentation, shown_value, table_html


def test_resampled_data_ks_noise_is_shown_as_zero(tmp_path) -> None:
    hours = np.round(np.random.default_rng(7).gamma(1.6, 6.0, 240), 1)
    wide = Sketch([0, 5, 60], [0, 0.5, 1], name="wide")
    r = Review(hours, [wide, ECDF(hours)], rng=1, progress=False)
    raw = {row["name"]: row["ks"] for row in r.table().rows}
    assert 0 < raw["resampled data"] < 1e-15  # the noise this is about (8.67e-19 here)
    cells = {row["name"]: row["cells"]["close"] for row in presentation(r)["rows"]}
    assert cells["resampled data"]["text"] == "0"
    assert cells["resampled data"]["value"] == raw["resampled data"]  # sorting keeps the raw
    assert cells["wide"]["text"] != "0"
    assert ">8.67e-19<" not in table_html(presentation(r))
    r.table().to_csv(tmp_path / "table.csv")  # the raw value stays in the CSV
    assert "e-19" in (tmp_path / "table.csv").read_text(encoding="utf-8")


def test_the_rule_is_relative_to_the_columns_scale() -> None:
    assert shown_value(0.9 * NOISE * 0.136, 0.136) == "0"
    assert shown_value(1.1 * NOISE * 0.136, 0.136) == "1.5e-10"
    assert shown_value(3e-12, 1e-3) == "3e-12"  # small scale: still shown
    assert shown_value(0.0, 0.1) == "0"
