// Pure functions of the review page's script (js/review-page.mjs). The page's DOM is
// tested in a real browser by tests/browser/test_review_page.py. Run: `node --test js/test/`.
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { test } from "node:test";

import { readSpec } from "../spec-reader.mjs";
import {
  cdfPolyline,
  curveAt,
  formatG,
  linearScale,
  markerPath,
  nextDown,
  niceTicks,
  pathData,
  pdfPolyline,
  readoutAt,
  significant,
  sortRows,
  specDataUrl,
} from "../review-page.mjs";

const golden = (name) =>
  JSON.parse(readFileSync(new URL(`../../tests/data/${name}`, import.meta.url), "utf8"));

test("formatG matches Python's format(v, '.6g')", () => {
  // Expected strings printed by CPython 3.11: [v, format(v, ".6g")]
  const cases = [[0.0, "0"], [1.0, "1"], [-2.5, "-2.5"], [123456.0, "123456"],
    [1234567.0, "1.23457e+06"], [0.0001, "0.0001"], [1.234567e-05, "1.23457e-05"],
    [3.14159265, "3.14159"], [-0.000123456789, "-0.000123457"], [1e+21, "1e+21"],
    [2.5e-300, "2.5e-300"], [999999.5, "1e+06"], [0.30000000000000004, "0.3"],
    [100.0, "100"], [12345.678, "12345.7"]];
  for (const [v, want] of cases) assert.equal(formatG(v, 6), want, `formatG(${v})`);
  // CPython 3.11: format(v, ".4g")
  for (const [v, want] of [[0.0123456, "0.01235"], [98765.4, "9.877e+04"], [1e-07, "1e-07"]]) {
    assert.equal(formatG(v, 4), want);
  }
  assert.equal(formatG(Infinity), "inf");
  assert.equal(formatG(-Infinity), "-inf");
  assert.equal(formatG(NaN), "");
});

test("significant matches cdfsketch._numfmt.significant", () => {
  // Expected strings printed by cdfsketch._numfmt.significant (CPython 3.11)
  const cases = [[1234.5678, 4, "1235"], [-0.00001234, 2, "-1.2e-05"], [-0.0, 4, "0"],
    [0.0315, 3, "0.0315"], [2.69e-5, 3, "2.69e-05"], [1e-301, 3, "0"]];
  for (const [v, d, want] of cases) assert.equal(significant(v, d), want, `significant(${v}, ${d})`);
  assert.equal(significant(Infinity), "∞");
  assert.equal(significant(-Infinity), "−∞");
  assert.equal(significant(null), "–");
  assert.equal(significant(NaN), "–");
});

test("every palette marker is a closed path around its centre", () => {
  for (const m of ["circle", "square", "triangle-up", "diamond", "cross", "triangle-down", "star"]) {
    const d = markerPath(m, 50, 20, 4);
    assert.ok(d.startsWith("M") && d.endsWith("Z"), m);
    const nums = (d.match(/-?\d+\.?\d*/g) || []).map(Number);
    assert.ok(nums.length >= 4, m);
  }
  assert.notEqual(markerPath("square", 0, 0), markerPath("diamond", 0, 0));
});

test("nextDown is numpy.nextafter(x, -inf)", () => {
  assert.equal(nextDown(1), 1 - 2 ** -53); // IEEE 754 binary64: the float below 1
  assert.equal(nextDown(-1), -1 - 2 ** -52);
  assert.equal(nextDown(0), -Number.MIN_VALUE);
  assert.equal(nextDown(2 ** -1074), 0);
  assert.ok(nextDown(1e9) < 1e9 && nextDown(1e9) === 1e9 - 2 ** -23);
});

test("linear scales map and invert", () => {
  const s = linearScale(10, 20, 100, 300);
  assert.equal(s.map(15), 200);
  assert.equal(s.invert(250), 17.5);
  const flipped = linearScale(0, 1, 280, 10);
  assert.equal(flipped.map(1), 10);
  assert.equal(flipped.invert(145), 0.5);
});

test("nice ticks are round and cover the range", () => {
  assert.deepEqual(niceTicks(0, 1, 4), [0, 0.5, 1]);
  // span 914 over 8 ticks: raw step 114 → the next of 1, 2, 5 × 10^k is 200
  assert.deepEqual(niceTicks(456, 1370, 8), [600, 800, 1000, 1200]);
  assert.deepEqual(niceTicks(-0.3, 0.3, 6), [-0.3, -0.2, -0.1, 0, 0.1, 0.2, 0.3]);
});

test("path data skips non-finite points and rounds to 0.01 px", () => {
  const id = linearScale(0, 1, 0, 1);
  assert.equal(pathData([0, 1, 2], [0, 0.123456, 1], id, id), "M0.00,0.00L1.00,0.12L2.00,1.00");
  assert.equal(pathData([0, 1, 2, 3], [0, NaN, 1, 2], id, id), "M0.00,0.00M2.00,1.00L3.00,2.00");
});

test("the CDF polyline jumps at atoms and passes through every knot", () => {
  const d = readSpec(golden("spec-v1-pchip-atoms-exponential.json"));
  assert.ok(d.atoms.length > 0);
  const [lo, hi] = [d.ppf(0.001), d.ppf(0.999)];
  const line = cdfPolyline(d, lo, hi, 200);
  for (const a of d.atoms) {
    if (a.x <= lo || a.x >= hi) continue;
    const j = line.x.indexOf(a.x);
    assert.ok(j >= 0, `atom at ${a.x} drawn`);
    assert.equal(line.x[j + 1], a.x);
    assert.ok(Math.abs(line.y[j + 1] - line.y[j] - a.mass) < 1e-15, "vertical jump of the atom's mass");
  }
  for (const k of d.knots.x) if (k > lo && k < hi) assert.ok(line.x.includes(k));
  for (let i = 1; i < line.x.length; i++) {
    assert.ok(line.x[i] >= line.x[i - 1] && line.y[i] >= line.y[i - 1] - 1e-15, "monotone");
  }
  const pdf = pdfPolyline(d, lo, hi, 200);
  assert.deepEqual(pdf.y, d.pdf(pdf.x));
  for (const k of d.knots.x) if (k > lo && k < hi) assert.ok(pdf.x.includes(nextDown(k)));
});

test("the read-out is the reader's cdf and pdf", () => {
  const d = readSpec(golden("spec-v1-linear-bounded.json"));
  const rows = readoutAt([{ name: "<b>x</b>", kind: "sketch", dist: d }, { name: "data", kind: "data", dist: d }], 3.3);
  assert.equal(rows[0].p, d.cdf(3.3));
  assert.equal(rows[0].density, d.pdf(3.3));
  assert.equal(rows[0].name, "<b>x</b>");
  assert.equal(rows[1].density, 0);
});

test("comparison rows sort like review.table.sort_rows: missing last, stable", () => {
  const row = (name, close, tail) => ({ name, cells: { close: { value: close }, tail: { value: tail } } });
  const rows = [row("a", 0.3, null), row("b", null, 0.2), row("c", 0.1, 0.1), row("d", 0.3, 0.5)];
  const names = (rs) => rs.map((r) => r.name);
  assert.deepEqual(names(sortRows(rows, "close")), ["c", "a", "d", "b"]);
  assert.deepEqual(names(sortRows(rows, "close", false)), ["a", "d", "c", "b"]);
  assert.deepEqual(names(sortRows(rows, "tail")), ["c", "b", "d", "a"]);
  assert.deepEqual(names(sortRows(rows, null)), ["a", "b", "c", "d"]);
  assert.equal(rows[0].name, "a", "the input is not changed");
});

test("the spec download URL holds the spec as JSON", () => {
  const spec = golden("spec-v1-linear-bounded.json");
  spec.name = "</script><img src=x onerror=alert(1)> & #?%";
  const url = specDataUrl(spec);
  assert.ok(url.startsWith("data:application/json;charset=utf-8,"));
  assert.ok(!/[<>"#? ]/.test(url.slice(36)), "everything after the header is percent-encoded");
  const back = JSON.parse(decodeURIComponent(url.slice(url.indexOf(",") + 1)));
  assert.deepEqual(back, spec);
  assert.equal(readSpec(back).name, spec.name);
});

test("curveAt reads F(x) off an output curve given as quantiles", () => {
  // a uniform output on [10, 20] as 5 quantiles: F(x) = (x - 10) / 10 (hand-computed)
  const xs = [10, 12.5, 15, 17.5, 20];
  const ps = [0, 0.25, 0.5, 0.75, 1];
  assert.equal(curveAt(xs, ps, 9.99), 0);
  assert.equal(curveAt(xs, ps, 15), 0.5);
  assert.equal(curveAt(xs, ps, 16), 0.6);
  assert.equal(curveAt(xs, ps, 20), 1);
  assert.equal(curveAt(xs, ps, 25), 1);
  // an atom at 3 (tied quantiles): the top of the jump at 3, the bottom just left of it
  const ax = [1, 3, 3, 3, 5];
  assert.equal(curveAt(ax, ps, 3), 0.75);
  assert.ok(Math.abs(curveAt(ax, ps, 2.999) - (0.25 * 1.999) / 2) < 1e-12);
  assert.equal(curveAt([], [], 1), 0);
});
