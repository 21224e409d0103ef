"""The main job, told in the terminal on embedded invented data: ``cdfsketch demo``.

INVENTED DATA. The scenario is made up: the Valle Serrano irrigation
cooperative (invented) logs how long it takes to get a failed field pump
running again. Most repairs are quick fixes on site; some wait for a part
from the regional depot; a few wait for a specialist. Times are logged to the
nearest half hour, so the data are lumpy (ties), and there are only 64 of
them. The generator below is seeded; ``notebooks/make_demo_data.py`` writes
the same numbers to ``notebooks/data/pump_repair_hours.csv`` for the notebooks.

The demo walks the path the package serves — data in, automatic start,
adjusted sketch, comparison with fitted candidates, whether the choice
changes a model's answer (an invented repair-cost model), decision, spec out,
reload and sample in plain Python, review page — and writes exactly two
files, both named in its output.

Examples
--------
>>> hours = repair_hours()
>>> hours.size, float(hours.min()) > 0
(64, True)
"""

from __future__ import annotations

import subprocess
import sys
import textwrap
import time
import warnings
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np

from ._extras import need
from ._numfmt import significant

__all__ = ["FILES", "SCENARIO", "SEED", "repair_cost", "repair_hours", "run"]

SEED = 20261202
SCENARIO = (
    "repair times (hours) of field pumps at the Valle Serrano irrigation cooperative "
    "— an INVENTED scenario and invented data"
)
#: The files the demo writes, inside its output folder.
FILES = ("pump_repair_hours.json", "pump_repair_review.html")
#: Knots the automatic start may use: a handful a person can shape.
START_KNOTS = 7
#: Where the invented repair routes meet (h): the analyst's knots.
ROUTE_KNOTS = (2.5, 24.0, 48.0)
#: The invented call-out fee (EUR) of the invented repair-cost model.
CALL_OUT_FEE = 90.0
#: Draws per candidate for the repair-cost check.
COST_DRAWS = 20_000


def repair_cost(d: Any) -> dict[str, np.ndarray]:
    """The INVENTED cost of one repair (EUR): hours at the labour rate, plus the call-out fee.

    Examples
    --------
    >>> repair_cost({"hours": np.array([2.0]), "rate": np.array([40.0])})["repair cost"]
    array([170.])
    """
    return {"repair cost": d["hours"] * d["rate"] + CALL_OUT_FEE}


def repair_hours(*, rng: Any = SEED, n: int = 64) -> np.ndarray:
    """The invented repair times: a mixture of three invented repair routes.

    Parameters
    ----------
    rng : optional
        Anything :func:`numpy.random.default_rng` takes; the default is the
        demo's seed.
    n : int
        How many repair times.
    """
    gen = np.random.default_rng(rng)
    route = gen.choice(3, size=n, p=[0.6, 0.3, 0.1])
    quick = gen.gamma(4.0, 0.8, size=n)  # on-site fix
    part = 18 + gen.gamma(3.0, 6.0, size=n)  # waiting for a part
    specialist = 50 + gen.exponential(25.0, size=n)  # waiting for a specialist
    hours = np.choose(route, [quick, part, specialist])
    return np.maximum(np.round(hours * 2) / 2, 0.5)


def _h(v: float) -> str:
    return f"{significant(v, 3)} h"


def _automatic_start(hours: np.ndarray) -> Any:
    from .elicit import from_data

    return from_data(
        hours, level=0.95, max_knots=START_KNOTS, name="pump repair time (invented)", units="h"
    )


def run(out: Any = "cdfsketch-demo", *, echo: Callable[[str], Any] = print) -> list[Path]:
    """Run the demo, telling each step through ``echo``; returns the files written.

    Parameters
    ----------
    out : path
        Folder for the two files (created if missing).
    echo : callable
        Receives each line of the story (``print`` by default).
    """
    from ._files import check_output_path
    from .empirical import ECDF
    from .fit import fit_candidates
    from .metrics import compare
    from .review import Review, save_html
    from .sketch import Sketch
    from .tails import BoundedTail, ExponentialTail

    need("fit", "scipy")  # before anything is shown or written
    folder = Path(out)
    folder.mkdir(parents=True, exist_ok=True)
    spec_path, page_path = (check_output_path(folder / f) for f in FILES)
    t0 = time.perf_counter()

    hours = repair_hours()
    for line in textwrap.wrap(f"1. Data: {hours.size} {SCENARIO}.", 90, subsequent_indent="   "):
        echo(line)
    echo(
        f"   {np.unique(hours).size} distinct values (logged to the half hour), "
        f"range {_h(hours.min())} – {_h(hours.max())}, median {_h(float(np.median(hours)))}."
    )

    start = _automatic_start(hours)
    exc = start.provenance["extra"]["max_excursion"]
    echo(
        f"2. Automatic start: {len(start)} knots inside the data's 95 % DKW band "
        f"(largest excursion outside it: {significant(max(exc, 0.0), 2)})."
    )

    # The adjustments an analyst makes by dragging in the editor, here in code:
    # knots where the three repair routes meet (on-site fixes end by about 2.5 h, a part
    # arrives within a day, a specialist within two), placed on the data's ECDF, and
    # tails beyond the data (a judgement the data cannot make).
    ecdf = ECDF(hours)
    s = start.replace(lower_tail=BoundedTail(0.25), upper_tail=ExponentialTail(scale=24.0))
    s = s.move_knot(0, p=0.02).move_knot(len(s) - 1, p=0.97)
    for x in ROUTE_KNOTS:
        s = s.with_knot(x, float(np.clip(ecdf.cdf(x), 0.03, 0.96)))
    sketch = s.replace(name="sketch")
    echo(
        f"3. Adjusted sketch: {len(sketch)} knots; knots where the repair routes meet "
        f"({', '.join(_h(x) for x in ROUTE_KNOTS)});"
    )
    echo("   lower tail bounded at 0.25 h (2 %), upper tail exponential, stated 24 h scale (3 %).")
    echo(
        f"   mean {_h(sketch.mean())}, median {_h(sketch.median())}, "
        f"95th percentile {_h(float(sketch.ppf(0.95)))}, P(down > 2 days) "
        f"{significant(sketch.prob_above(48.0), 2)}."
    )

    with warnings.catch_warnings():
        # a family fitted by maximum likelihood may warn while it searches; the
        # fits that fail are listed with their reason by fit_candidates itself
        warnings.simplefilter("ignore", RuntimeWarning)
        cands = fit_candidates(hours, rng=SEED, progress=False)
    best = sorted(cands, key=lambda c: c.aic)[:3]
    table = compare(hours, [sketch, *best], rng=SEED, progress=False)
    below = {m.name: float(m.cdf(0.0)) for m in [sketch, *best]}
    echo(f"4. Compared with {len(cands)} fitted candidates (the 3 lowest-AIC shown):")
    echo(f"   {'candidate':<22}{'KS':>7}{'W1 (h)':>8}{'held-out log score':>20}{'P(< 0 h)':>10}")
    for row in table.rows:
        echo(
            f"   {row['name'][:21]:<22}{significant(row['ks'], 3):>7}"
            f"{significant(row['w1'], 3):>8}{significant(row.get('log_score'), 3):>20}"
            f"{significant(below[row['name']], 2):>10}"
        )
    echo("   Lower KS and W1: closer to the data. Higher held-out log score: predicts unseen")
    echo("   repairs better (optimistic for the sketch, which was drawn on all the data).")
    negative = [n for n, v in below.items() if v > 1e-3]
    reason = "it keeps the three repair routes and a tail for waits longer than any seen"
    if negative:
        verb = "puts" if len(negative) == 1 else "put"
        reason += f", while {' and '.join(negative)} {verb} repair times below 0 h"

    # does the choice change a model's answer? an invented repair-cost model, run by the
    # review on every candidate with common random numbers
    rate = Sketch([38, 45, 60], [0, 0.5, 1], name="labour rate (invented)", units="EUR/h")
    review = Review(
        hours,
        [sketch, *best],
        units="h",
        name="pump repair time (invented)",
        rng=SEED,
        progress=False,
        model=repair_cost,
        inputs={"hours": sketch, "rate": rate},
        vary="hours",
        size=COST_DRAWS,
        output_units="EUR",
        consequence_options={"tolerance": 25.0, "quantiles": (0.5, 0.9)},
    )
    decision = review.choose(
        "sketch",
        by="demo review group (invented)",
        rationale=reason,
    )
    echo("5. Decision: the review group (invented) chose the sketch:")
    for line in textwrap.wrap(f"{reason}.", 87, initial_indent="   ", subsequent_indent="   "):
        echo(line)
    verdict = review.consequences.verdicts("sketch")["repair cost"]
    story = (
        "Does the choice change a model's answer? An invented repair-cost model (hours × an "
        f"invented labour rate + a {CALL_OUT_FEE:g} EUR call-out fee), {COST_DRAWS:,} draws "
        f"per candidate on common random numbers, tolerance 25 EUR: {verdict}. "
        f"The spec records: {decision['consequences']['statement']}"
    )
    for line in textwrap.wrap(story, 87, initial_indent="   ", subsequent_indent="   "):
        echo(line)

    from .spec import dump_spec

    dump_spec(review.chosen_spec(), spec_path)
    echo(f"6. Spec written: {spec_path}")

    code = (
        "import cdfsketch",
        f"s = cdfsketch.load({str(spec_path)!r})",
        "v = s.sample(100_000, rng=1)",
    )
    report = "import numpy as np; print(f'{v.mean():.2f} {np.quantile(v, 0.9):.2f} {v.max():.1f}')"
    done = subprocess.run(
        [sys.executable, "-c", "; ".join([*code, report])],
        capture_output=True,
        text=True,
        check=True,
    )
    mean, q90, top = done.stdout.split()
    echo("7. Reloaded in a fresh Python process (numpy only) and sampled:")
    for line in code:
        echo(f"   >>> {line}")
    echo(f"   mean {mean} h, 90th percentile {q90} h, largest of 100,000 draws {top} h.")

    save_html(review, page_path)
    echo(f"8. Review page written: {page_path} — open it in a browser (works offline).")
    echo(f"Done in {time.perf_counter() - t0:.1f} s. Files written: {spec_path}, {page_path}.")
    echo(
        "Caution: a sketch is judgement, to be reviewed; where it feeds safety- or "
        "money-critical decisions, local codes and licensed practice decide."
    )
    return [spec_path, page_path]
