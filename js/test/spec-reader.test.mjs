// The JS spec reader against the vectors the Python package wrote
// (tests/data/js-vectors.json, made by tests/data/make_js_vectors.py), and
// its checks of bad and hostile specs. Run: `node --test test/` in js/.
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { test } from "node:test";

import { SpecError, readSpec, validateSpec } from "../spec-reader.mjs";

const vectorsUrl = new URL("../../tests/data/js-vectors.json", import.meta.url);
const vectors = JSON.parse(readFileSync(vectorsUrl, "utf8"));
const decode = (v) => (v === "inf" ? Infinity : v === "-inf" ? -Infinity : v);
const EPS = 2 ** -52;
const TOL = 1e-12; // the agreement asked of JS and Python (issue 6)

const baseSpec = () => structuredClone(vectors.cases.find((c) => c.label.startsWith("exponential tails derived (pchip)")).spec);

test("the vectors file is the one the Python script writes", () => {
  assert.equal(vectors.format, "cdfsketch-js-vectors");
  assert.ok(vectors.cases.length > 20, "expected the full set of cases");
  assert.ok(vectors.bad_specs.length > 10, "expected the bad specs");
});

for (const c of vectors.cases) {
  test(`agrees with Python: ${c.label}`, (t) => {
    const d = readSpec(c.spec);
    const pc = d.pieces;
    const py = c.pieces;
    // the piece table is rebuilt operation for operation: it must be identical
    assert.deepEqual(Array.from(pc.xa), py.xa, "piece starts xa");
    assert.deepEqual(Array.from(pc.xb), py.xb, "piece right ends xb");
    assert.deepEqual(Array.from(pc.h), py.h, "piece widths h");
    for (let r = 0; r < 4; r++) assert.deepEqual(Array.from(pc.c[r]), py.c[r], `coefficients c${r}`);
    for (let r = 0; r < 3; r++) {
      assert.deepEqual(Array.from(pc.e[r]), py.e[r], `coefficients from the right e${r}`);
    }
    assert.deepEqual(Array.from(pc.xm), py.xm, "where evaluation switches ends xm");
    assert.deepEqual(Array.from(pc.pm), py.pm, "probabilities there pm");
    assert.deepEqual(Array.from(pc.pl), py.pl, "left-end probabilities");
    assert.deepEqual(Array.from(pc.pr), py.pr, "right-end probabilities");
    assert.deepEqual(Array.from(pc.atomX), py.atom_x);
    assert.deepEqual(Array.from(pc.atomMass), py.atom_mass);
    assert.deepEqual(pc.lower, py.lower, "lower exponential tail");
    assert.deepEqual(pc.upper, py.upper, "upper exponential tail");
    assert.equal(pc.pLow, py.p_low);
    assert.equal(pc.pHigh, py.p_high);
    assert.deepEqual(d.support, c.support.map(decode), "support");
    assert.deepEqual(d.atoms.map((a) => [a.x, a.mass]), c.atoms, "atoms");
    assert.deepEqual(d.tailScales, c.tail_scales, "resolved tail scales");

    const xs = c.x.map(decode);
    const cdf = d.cdf(xs);
    const pdf = d.pdf(xs);
    const sf = d.sf(xs);
    const pdfScale = Math.max(...c.pdf);
    let worstCdf = 0;
    let worstPdf = 0;
    let same = 0;
    xs.forEach((x, i) => {
      const want = c.cdf[i];
      const err = Math.abs(cdf[i] - want);
      worstCdf = Math.max(worstCdf, err);
      assert.ok(err <= TOL, `cdf(${x}) = ${cdf[i]}, Python ${want}`);
      const perr = Math.abs(pdf[i] - c.pdf[i]) / Math.max(pdfScale, Math.abs(c.pdf[i]));
      worstPdf = Math.max(worstPdf, perr);
      assert.ok(perr <= TOL, `pdf(${x}) = ${pdf[i]}, Python ${c.pdf[i]}`);
      // sf: relative to itself in an upper exponential tail (computed there without
      // cancellation), else absolute like cdf
      const sTol = pc.upper !== null && x >= pc.upper.edge ? TOL * c.sf[i] : TOL;
      assert.ok(Math.abs(sf[i] - c.sf[i]) <= sTol, `sf(${x}) = ${sf[i]}, Python ${c.sf[i]}`);
      if (cdf[i] === want && pdf[i] === c.pdf[i]) same += 1;
    });
    // ppf: relative to the scale of the sketch (the knots' span, or the distance
    // from the knots' middle far out in a tail), plus a few ulps of the value
    const kx = c.spec.knots.x;
    const span = kx[kx.length - 1] - kx[0];
    const middle = 0.5 * (kx[0] + kx[kx.length - 1]);
    const us = c.u.map(decode);
    const ppf = d.ppf(us);
    let worstPpf = 0;
    let samePpf = 0;
    us.forEach((u, i) => {
      const want = decode(c.ppf[i]);
      const got = ppf[i];
      if (!Number.isFinite(want)) {
        assert.equal(got, want, `ppf(${u})`);
        samePpf += 1;
        return;
      }
      const scale = Math.max(span, Math.abs(want - middle));
      const err = Math.abs(got - want);
      worstPpf = Math.max(worstPpf, err / scale);
      assert.ok(err <= TOL * scale + 4 * EPS * Math.abs(want), `ppf(${u}) = ${got}, Python ${want}`);
      if (got === want) samePpf += 1;
      // definition of the generalized inverse (cdfsketch DESIGN.md): F(Q(u)) ≥ u
      // (at the float just above Q(u): Q(u) itself is rounded to the x spacing there)
      const above = got + 4 * EPS * Math.abs(got);
      if (u > 0) assert.ok(d.cdf(above) >= u - TOL, `cdf(ppf(${u})) = ${d.cdf(above)} < u`);
    });
    t.diagnostic(
      `cdf/pdf bit-equal at ${same}/${xs.length} x, ppf at ${samePpf}/${us.length} u; worst ` +
        `|Δcdf| ${worstCdf.toExponential(2)}, pdf ${worstPdf.toExponential(2)}, ` +
        `ppf ${worstPpf.toExponential(2)} (relative to scale)`,
    );
  });
}

test("a derived exponential tail continues the density at its knot", () => {
  let checked = 0;
  for (const c of vectors.cases) {
    const d = readSpec(c.spec);
    const pc = d.pieces;
    const span = c.spec.knots.x[c.spec.knots.x.length - 1] - c.spec.knots.x[0];
    for (const side of ["lower", "upper"]) {
      const tail = pc[side];
      if (tail === null || c.spec.tails[side].scale_rule !== "continue-density") continue;
      // the body's density at the knot, from the outer piece next to it
      const j = side === "lower" ? searchIndex(pc.xa, tail.edge) : searchIndex(pc.xb, tail.edge);
      if (!(pc.pr[j] > pc.pl[j]) || tail.scale === span || tail.scale === 1e100) continue;
      const body = side === "lower" ? pc.c[1][j] / pc.h[j] : pc.e[0][j] / pc.h[j];
      const edge = tail.mass / tail.scale;
      assert.ok(Math.abs(edge - body) <= 1e-12 * body, `${c.label} (${side}): ${edge} != ${body}`);
      checked += 1;
    }
  }
  assert.ok(checked >= 6, `expected derived tails to check; found ${checked}`);
  const readme = readSpec(vectors.cases.find((k) => k.label.startsWith("README sketch")).spec);
  const [below, at] = readme.pdf([45 - 1e-9, 45]);
  assert.ok(Math.abs(below - at) <= 1e-9 * at, `pdf jumps at 45: ${below} then ${at}`);
  assert.ok(Math.abs(at - 0.12 / 25) <= 1e-15, `pdf(45) = ${at}, the last secant 0.0048`);
});

const searchIndex = (a, v) => a.findIndex((w) => w === v);

test("JSON text reads the same as the parsed object", () => {
  for (const c of vectors.cases.slice(0, 6)) {
    const a = readSpec(c.spec);
    const b = readSpec(JSON.stringify(c.spec));
    const xs = c.x.map(decode);
    assert.deepEqual(b.cdf(xs), a.cdf(xs));
    assert.deepEqual(b.ppf(c.u), a.ppf(c.u));
  }
});

for (const bad of vectors.bad_specs) {
  test(`rejects like Python: ${bad.label}`, () => {
    assert.throws(
      () => readSpec(bad.spec),
      (err) => {
        assert.ok(err instanceof SpecError, `expected a SpecError, got ${err}`);
        assert.ok(
          err.message.includes(bad.field),
          `the message should name ${bad.field}: ${err.message} (Python: ${bad.python_error})`,
        );
        return true;
      },
    );
  });
}

const rejects = (spec, pattern) =>
  assert.throws(() => validateSpec(spec), (err) => err instanceof SpecError && pattern.test(err.message));

test("unknown keys are refused with the field and the remedy", () => {
  const s = baseSpec();
  s.knots.weights = [1, 1, 1, 1];
  rejects(s, /Unknown key 'weights' in knots.*Remove it/);
  const t = baseSpec();
  t.__proto__extra = 1;
  rejects(t, /Unknown key '__proto__extra' in the spec/);
  // a "__proto__" key in JSON text is an own key like any other: refused, not merged
  const text = JSON.stringify(baseSpec()).replace('{"format"', '{"__proto__":{"x":1},"format"');
  rejects(text, /Unknown key '__proto__' in the spec/);
});

test("NaN and Infinity are refused wherever a number is read", () => {
  const nan = baseSpec();
  nan.knots.p[1] = NaN;
  rejects(nan, /knots\.p\[1\] must be finite; found NaN/);
  const inf = baseSpec();
  inf.knots.x[3] = Infinity;
  rejects(inf, /knots\.x\[3\] must be finite; found Infinity.*tails/);
  const str = baseSpec();
  str.knots.x[0] = "NaN";
  rejects(str, /knots\.x\[0\] must be a number; found 'NaN'/);
  const lim = baseSpec();
  lim.tails.lower = { kind: "bounded", limit: -Infinity, density: "uniform" };
  rejects(lim, /tails\.lower\.limit must be finite/);
  // JSON text with a NaN literal is not JSON (RFC 8259)
  const text = JSON.stringify(baseSpec()).replace('"p":[0.05', '"p":[NaN');
  rejects(text, /not valid JSON/);
});

test("newer or malformed versions are refused", () => {
  const newer = baseSpec();
  newer.version = 2;
  rejects(newer, /version 2, newer than this reader reads \(up to 1\)/);
  const zero = baseSpec();
  zero.version = 0;
  rejects(zero, /version must be ≥ 1; found 0/);
  const frac = baseSpec();
  frac.version = 1.5;
  rejects(frac, /version must be an integer; found 1\.5/);
  const other = baseSpec();
  other.format = "something-else";
  rejects(other, /format must be 'cdfsketch-spec'; found 'something-else'/);
  rejects(null, /must be a JSON object; found null/);
  rejects([1, 2], /must be a JSON object; found \[1,2\]/);
});

test("a stored derived scale must agree with the knots at rel 1e-9 (as spec.py)", () => {
  const s = baseSpec();
  const scale = s.tails.upper.scale;
  s.tails.upper.scale = scale * (1 + 1e-11);
  assert.doesNotThrow(() => readSpec(s));
  s.tails.upper.scale = scale * (1 + 1e-8);
  rejects(s, /tails\.upper\.scale is .* but the knots give .*Set scale_rule to 'stated'/);
  const none = baseSpec();
  delete none.tails.upper.scale;
  assert.equal(readSpec(none).tailScales[1], scale);
});

test("hostile names and notes come back as the same plain strings", () => {
  const c = vectors.cases.find((k) => k.label.startsWith("hostile"));
  assert.ok(c, "the vectors hold a hostile case");
  const d = readSpec(JSON.stringify(c.spec));
  assert.equal(typeof d.name, "string");
  assert.equal(d.name, c.spec.name);
  assert.match(d.name, /<script>alert\('name'\)<\/script>/);
  assert.equal(d.units, c.spec.units);
  assert.equal(d.provenance.notes, c.spec.provenance.notes);
  assert.equal(d.provenance.contributors[0].name, "<b>expert</b>");
  // nothing ran: the template-literal text did not set a global
  assert.equal(globalThis.x, undefined);
  // a "__proto__" key in provenance.extra stays data, and pollutes nothing
  assert.ok(Object.prototype.hasOwnProperty.call(d.provenance.extra, "__proto__"));
  assert.deepEqual(d.provenance.extra.__proto__, { polluted: true });
  assert.equal({}.polluted, undefined);
  assert.ok(Object.isFrozen(d) && Object.isFrozen(d.provenance.extra));
});

test("evaluation inputs are checked", () => {
  const d = readSpec(baseSpec());
  assert.throws(() => d.cdf(NaN), /x must be numbers \(not NaN\); got NaN/);
  assert.throws(() => d.pdf([1, "2"]), /got '2' at index 1/);
  assert.throws(() => d.ppf(1.5), /u must be probabilities in \[0, 1\]; got 1\.5/);
  assert.throws(() => d.ppf([0.5, -0.1]), /got -0\.1 at index 1/);
  assert.throws(() => d.cdf({}), /x must be a number or an array of numbers/);
  assert.equal(typeof d.cdf(3), "number");
  assert.ok(Array.isArray(d.ppf(new Float64Array([0.1, 0.9]))));
  assert.equal(d.median(), d.ppf(0.5));
  assert.equal(d.sf(3), 1 - d.cdf(3));
  // far in the upper exponential tail sf is computed directly, not as 1 - cdf
  assert.ok(d.sf(1000) > 0 && d.cdf(1000) === 1);
});

test("text limits are the package's: name, units, provenance text (counted in code points)", () => {
  const ok = baseSpec();
  ok.name = "A".repeat(500);
  ok.units = "u".repeat(100);
  ok.provenance = { notes: "n".repeat(100000) };
  assert.equal(validateSpec(ok).name.length, 500);
  const astral = baseSpec();
  astral.name = "😀".repeat(500); // 500 characters in Python, 1000 UTF-16 units in JS
  assert.equal(validateSpec(astral).name, astral.name);
  const name = baseSpec();
  name.name = "A".repeat(501);
  rejects(name, /name must be at most 500 characters; found 501/);
  const units = baseSpec();
  units.units = "u".repeat(101);
  rejects(units, /units must be at most 100 characters/);
  const notes = baseSpec();
  notes.provenance = { notes: "n".repeat(100001) };
  rejects(notes, /provenance\.notes must be at most 100000 characters/);
  const who = baseSpec();
  who.provenance = { contributors: [{ name: "c".repeat(501), weight: 1 }] };
  rejects(who, /contributors\[0\]\.name must be at most 500/);
});

test("provenance.data.label and contributors[].summary have the Python types", () => {
  const label = baseSpec();
  label.provenance = { data: { sha256: "a".repeat(64), n: 3, label: 7 } };
  rejects(label, /provenance\.data\.label must be a string/);
  const summary = baseSpec();
  summary.provenance = { contributors: [{ name: "a", weight: 1, summary: "text" }] };
  rejects(summary, /contributors\[0\]\.summary must be an object/);
  const nulls = baseSpec();
  nulls.provenance = { contributors: null };
  rejects(nulls, /contributors must be a list/);
});

test("a stored derived scale must be positive; a stated scale at most MAX_SCALE", () => {
  const neg = baseSpec();
  neg.tails.upper = { kind: "exponential", scale: -1, scale_rule: "continue-density" };
  rejects(neg, /tails\.upper\.scale must be positive/);
  const big = baseSpec();
  big.tails.upper = { kind: "exponential", scale: 1e101, scale_rule: "stated" };
  rejects(big, /tails\.upper\.scale must be at most 1e\+100/);
});

test("nesting deeper than MAX_DEPTH and cycles are refused, never a stack overflow", () => {
  const deep = baseSpec();
  let node = [];
  for (let i = 0; i < 200000; i++) node = [node];
  deep.provenance = { extra: { node } };
  rejects(deep, /nest at most 32 levels deep/);
  const text = JSON.stringify(baseSpec()).replace('"name":', `"n2":${"[".repeat(5000)}${"]".repeat(5000)},"name":`);
  rejects(text, /nest at most 32 levels deep/);
  const cyclic = baseSpec();
  cyclic.provenance = { extra: {} };
  cyclic.provenance.extra.self = cyclic.provenance;
  rejects(cyclic, /nest at most 32 levels deep/);
  const ok = baseSpec();
  let shallow = 0;
  for (let i = 0; i < 28; i++) shallow = [shallow];
  ok.provenance = { extra: { shallow } };
  assert.ok(validateSpec(ok));
});
