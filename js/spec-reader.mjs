// cdfsketch spec reader: the browser-side reference reader of the spec format.
//
// A dependency-free ES module. It checks a cdfsketch spec (format
// "cdfsketch-spec", version 1; see cdfsketch/spec/ and
// cdfsketch/spec/schemas/spec-v1.schema.json) and evaluates it exactly as the
// Python package does: the piece table of cdfsketch/_pieces.py is rebuilt
// operation for operation (same formulas, same order of floating-point
// operations), so cdf, pdf and ppf agree with Python to rounding.
//
// Nothing in a spec is ever executed: names, units and provenance are data
// and come back as plain strings and plain objects.
//
//   import { readSpec } from "./spec-reader.mjs";
//   const d = readSpec(specObjectOrJsonText);
//   d.cdf(2.5); d.pdf([1, 2]); d.ppf(0.9); d.support; d.atoms;

export const FORMAT = "cdfsketch-spec";
export const VERSION = 1;
// The limits of cdfsketch/_limits.py (a Python test checks that these numbers agree).
export const MAX_KNOTS = 100000;
export const MAX_SPEC_CHARS = 10000000; // _limits.MAX_SPEC_BYTES
export const MAX_ABS_X = 1e100;
export const MIN_SPACING = 1e-100;
export const MAX_SCALE = 1e100;
export const MAX_NAME_CHARS = 500;
export const MAX_UNITS_CHARS = 100;
export const MAX_TEXT_CHARS = 100000;
// The reader's own guard (cdfsketch/spec/_format.py MAX_DEPTH): deepest nesting read.
export const MAX_DEPTH = 32;
// relative agreement asked of a stored derived scale with the one the knots give
const SCALE_RTOL = 1e-9;

const TOP_KEYS = ["format", "version", "name", "units", "interpolation", "knots", "tails", "provenance"];
const REQUIRED = ["format", "version", "interpolation", "knots", "tails"];
const PROVENANCE_TEXT = ["author", "created", "rationale", "package_version", "method", "notes"];
const PROVENANCE_KEYS = [...PROVENANCE_TEXT, "data", "contributors", "decision", "extra"];

/** Anything wrong with a spec. */
export class SpecError extends Error {
  constructor(message) {
    super(message);
    this.name = "SpecError";
  }
}

// ---------------------------------------------------------------- helpers

const hasOwn = (obj, key) => Object.prototype.hasOwnProperty.call(obj, key);
const own = (obj, key) => (hasOwn(obj, key) ? obj[key] : undefined);
const isObject = (v) => v !== null && typeof v === "object" && !Array.isArray(v);

/** A short, safe description of a found value for error messages. */
function show(value) {
  if (value === undefined) return "nothing (the key is missing)";
  if (typeof value === "number") {
    if (Number.isNaN(value)) return "NaN";
    return String(value);
  }
  if (typeof value === "string") {
    // quoted like Python's repr, escaped like JSON: never markup, never code
    const text = value.length > 80 ? value.slice(0, 80) + "…" : value;
    return `'${JSON.stringify(text).slice(1, -1).replace(/\\"/g, '"').replace(/'/g, "\\'")}'`;
  }
  if (Array.isArray(value) && value.every((v) => typeof v === "string")) {
    return `[${value.map(show).join(", ")}]`;
  }
  if (typeof value === "bigint") return `${value}n`;
  if (typeof value === "function") return "a function";
  if (typeof value === "symbol") return "a symbol";
  try {
    const s = JSON.stringify(value);
    if (s === undefined) return typeof value;
    return s.length > 80 ? s.slice(0, 80) + "…" : s;
  } catch {
    return Array.isArray(value) ? "an array" : "an object";
  }
}

function number(value, field) {
  if (typeof value !== "number") {
    throw new SpecError(`${field} must be a number; found ${show(value)}.`);
  }
  if (!Number.isFinite(value)) {
    throw new SpecError(
      `${field} must be finite; found ${show(value)}. Describe unbounded ends by tails.`,
    );
  }
  return value;
}

// Text of at most `limit` characters (counted as Python counts them: code points).
function text(value, field, limit) {
  if (typeof value !== "string") {
    throw new SpecError(`${field} must be a string; found ${show(value)}.`);
  }
  if (value.length > limit) {
    const n = [...value].length;
    if (n > limit) {
      throw new SpecError(
        `${field} must be at most ${limit} characters; found ${n} characters. Shorten it; ` +
          "longer notes belong in the rationale.",
      );
    }
  }
  return value;
}

// Refuse nesting deeper than MAX_DEPTH (a cycle counts as too deep); iterative, so no
// input can exhaust the stack.
function checkDepth(root) {
  const stack = [[root, 1]];
  while (stack.length) {
    const [node, depth] = stack.pop();
    if (node === null || typeof node !== "object") continue;
    if (depth > MAX_DEPTH) {
      throw new SpecError(
        `A spec must nest at most ${MAX_DEPTH} levels deep; found more. Flatten ` +
          "provenance.extra; a spec itself needs four levels.",
      );
    }
    for (const value of Object.values(node)) stack.push([value, depth + 1]);
  }
}

function checkKeys(obj, allowed, where) {
  const unknown = Object.keys(obj).filter((k) => !allowed.includes(k));
  if (unknown.length) {
    throw new SpecError(
      `Unknown key ${show(unknown[0])} in ${where}; allowed keys are ${show(allowed)}. ` +
        "Remove it (or check its spelling); free-form notes go in provenance.extra.",
    );
  }
}

// numpy.searchsorted on a sorted array: the first index i with a[i] >= v
// (side "left") or a[i] > v (side "right").
function searchLeft(a, v) {
  let lo = 0;
  let hi = a.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (a[mid] < v) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

function searchRight(a, v) {
  let lo = 0;
  let hi = a.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (a[mid] <= v) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

const sign = (v) => (v > 0 ? 1 : v < 0 ? -1 : 0); // numpy.sign (no NaN reaches it)

// ---------------------------------------------------------------- checking

function checkProvenance(prov) {
  if (!isObject(prov)) {
    throw new SpecError(`provenance must be an object; found ${show(prov)}.`);
  }
  checkKeys(prov, PROVENANCE_KEYS, "provenance");
  for (const key of PROVENANCE_TEXT) {
    if (hasOwn(prov, key)) text(prov[key], `provenance.${key}`, MAX_TEXT_CHARS);
  }
  const data = own(prov, "data");
  if (data !== undefined && data !== null) {
    if (!isObject(data)) {
      throw new SpecError("provenance.data must be an object with 'sha256' and 'n', or null.");
    }
    checkKeys(data, ["sha256", "n", "label"], "provenance.data");
    const digest = own(data, "sha256");
    if (!(typeof digest === "string" && /^[0-9a-f]{64}$/.test(digest))) {
      throw new SpecError(
        `provenance.data.sha256 must be 64 lowercase hex digits; found ${show(digest)}. ` +
          "Use cdfsketch.data_fingerprint(data).",
      );
    }
    const n = own(data, "n");
    if (!(typeof n === "number" && Number.isInteger(n) && n >= 0)) {
      throw new SpecError(`provenance.data.n must be a non-negative integer; found ${show(n)}.`);
    }
    if (hasOwn(data, "label")) text(data.label, "provenance.data.label", MAX_NAME_CHARS);
  }
  const contributors = own(prov, "contributors");
  if (hasOwn(prov, "contributors")) {
    if (!Array.isArray(contributors)) {
      throw new SpecError("provenance.contributors must be a list of {name, weight} objects.");
    }
    contributors.forEach((item, i) => {
      const where = `provenance.contributors[${i}]`;
      if (!isObject(item)) {
        throw new SpecError(`${where} must be an object with 'name' and 'weight'.`);
      }
      checkKeys(item, ["name", "weight", "summary"], where);
      text(own(item, "name"), `${where}.name`, MAX_NAME_CHARS);
      const w = number(own(item, "weight"), `${where}.weight`);
      if (w < 0) throw new SpecError(`${where}.weight must be ≥ 0; found ${show(w)}.`);
      if (hasOwn(item, "summary") && !isObject(item.summary)) {
        throw new SpecError(`${where}.summary must be an object; found ${show(item.summary)}.`);
      }
    });
  }
  for (const key of ["decision", "extra"]) {
    if (hasOwn(prov, key) && !isObject(prov[key])) {
      throw new SpecError(`provenance.${key} must be an object; found ${show(prov[key])}.`);
    }
  }
}

// Returns {tail, stored}: tail is {kind:"bounded", limit, density} or
// {kind:"exponential", scale: number|null}; stored is the scale a
// "continue-density" tail carries (checked against the derived one later).
function tailFromSpec(obj, side) {
  const where = `tails.${side}`;
  if (!isObject(obj)) {
    throw new SpecError(`${where} must be an object with a 'kind'; found ${show(obj)}.`);
  }
  const kind = own(obj, "kind");
  const stated = hasOwn(obj, "stated") ? obj.stated : true;
  if (typeof stated !== "boolean") {
    throw new SpecError(`${where}.stated must be true or false; found ${show(stated)}.`);
  }
  if (kind === "bounded") {
    checkKeys(obj, ["kind", "limit", "density", "stated"], where);
    if (!stated) {
      throw new SpecError(
        `${where}: only the default tail (exponential, continue-density) can be unstated; ` +
          "found a bounded tail with stated=false. Set stated to true.",
      );
    }
    if (!hasOwn(obj, "density")) {
      throw new SpecError(`${where} lacks 'density'; add "density": "uniform" or "taper".`);
    }
    const density = obj.density;
    if (density !== "uniform" && density !== "taper") {
      throw new SpecError(`${where}.density must be 'uniform' or 'taper'; found ${show(density)}.`);
    }
    const limit = number(own(obj, "limit"), `${where}.limit`);
    if (Math.abs(limit) > MAX_ABS_X) {
      throw new SpecError(
        `${where}.limit must satisfy |limit| ≤ ${MAX_ABS_X}, like knot positions; found ` +
          `${show(limit)}. Rescale the quantity (e.g. other units).`,
      );
    }
    return { tail: { kind: "bounded", limit, density }, stored: null };
  }
  if (kind === "exponential") {
    checkKeys(obj, ["kind", "scale", "scale_rule", "stated"], where);
    const rule = own(obj, "scale_rule");
    const scale = own(obj, "scale");
    if (rule !== "stated" && rule !== "continue-density") {
      throw new SpecError(
        `${where}.scale_rule must be 'stated' or 'continue-density'; found ${show(rule)}.`,
      );
    }
    if (!stated && rule !== "continue-density") {
      throw new SpecError(
        `${where}: an unstated (default) tail derives its scale; found scale_rule ` +
          `${show(rule)} with stated=false. Set stated to true or the rule to 'continue-density'.`,
      );
    }
    if (rule === "stated") {
      const s = number(scale, `${where}.scale`);
      if (s <= 0) throw new SpecError(`${where}.scale must be positive; found ${show(s)}.`);
      if (s > MAX_SCALE) {
        throw new SpecError(
          `${where}.scale must be at most ${MAX_SCALE}; found ${show(s)}. ` +
            "Rescale the quantity (e.g. other units).",
        );
      }
      return { tail: { kind: "exponential", scale: s }, stored: null };
    }
    if (rule === "continue-density") {
      const stored = scale === undefined || scale === null ? null : number(scale, `${where}.scale`);
      if (stored !== null && stored <= 0) {
        throw new SpecError(`${where}.scale must be positive; found ${show(stored)}.`);
      }
      return { tail: { kind: "exponential", scale: null }, stored };
    }
    throw new SpecError(
      `${where}.scale_rule must be 'stated' or 'continue-density'; found ${show(rule)}.`,
    );
  }
  throw new SpecError(`${where}.kind must be 'bounded' or 'exponential'; found ${show(kind)}.`);
}


// cdfsketch.knots.check_knots (x and p are already finite numbers).
function checkKnots(x, p) {
  if (x.length !== p.length) {
    throw new Error(
      `Knot x and p must have the same length; got ${x.length} x values and ${p.length} ` +
        "p values. Give one probability per knot.",
    );
  }
  if (x.length < 2) {
    throw new Error(
      `A sketch needs at least 2 knots; got ${x.length}. Add a knot at each end of ` +
        "the range you want to describe.",
    );
  }
  const n = x.length;
  for (let i = 0; i < n; i++) {
    if (p[i] < 0 || p[i] > 1) {
      throw new Error(`Knot probabilities must lie in [0, 1]; got p[${i}]=${p[i]}. Clip them.`);
    }
  }
  for (let i = 1; i < n; i++) {
    if (x[i] - x[i - 1] < 0) {
      throw new Error(
        `Knot positions must be non-decreasing; got x[${i}]=${x[i]} < x[${i - 1}]=${x[i - 1]}. ` +
          "Sort the knots by x.",
      );
    }
  }
  for (let i = 1; i < n; i++) {
    if (p[i] - p[i - 1] < 0) {
      throw new Error(
        `Knot probabilities must be non-decreasing; got p[${i}]=${p[i]} < p[${i - 1}]=` +
          `${p[i - 1]}. Sort the knots by x.`,
      );
    }
  }
  for (let i = 0; i < n; i++) {
    if (Math.abs(x[i]) > MAX_ABS_X) {
      throw new Error(
        `Knot positions must satisfy |x| ≤ ${MAX_ABS_X}; got x[${i}]=${x[i]}. Express the quantity ` +
          "in larger units (e.g. millions) so the numbers stay moderate.",
      );
    }
  }
  for (let i = 1; i < n; i++) {
    const dx = x[i] - x[i - 1];
    if (dx > 0 && dx < MIN_SPACING) {
      throw new Error(
        `Distinct knot positions must be at least ${MIN_SPACING} apart; got x[${i}] - x[${i - 1}] = ` +
          `${dx}. Express the quantity in smaller units, or make the two knots a jump (equal x).`,
      );
    }
  }
  for (let i = 0; i + 2 < n; i++) {
    if (x[i + 1] - x[i] === 0 && x[i + 2] - x[i + 1] === 0) {
      throw new Error(
        `At most two knots may share an x (a jump); got x[${i}]=x[${i + 1}]=x[${i + 2}]=` +
          `${x[i]}. Keep only the lowest and highest p at that x.`,
      );
    }
  }
  for (let i = 0; i + 1 < n; i++) {
    if (x[i + 1] - x[i] === 0 && p[i + 1] - p[i] === 0) {
      throw new Error(
        `Two knots at the same x must make a jump (p must rise); got x[${i}]=x[${i + 1}]=` +
          `${x[i]} with p[${i}]=p[${i + 1}]=${p[i]}. Remove one of them.`,
      );
    }
  }
  if (!(x[n - 1] > x[0])) {
    throw new Error(
      `Knots must span a range of x; got all knots at x=${x[0]}. Spread the knots over the ` +
        "range of the quantity (a point mass alone is not a sketch).",
    );
  }
}

/**
 * Check a spec (an object, or JSON text) field by field, as cdfsketch.load
 * does; throw a SpecError naming the field, what was found and the remedy.
 * Returns a checked, normalised copy: {name, units, interpolation, x, p,
 * lower, upper, storedScales, provenance}.
 */
export function validateSpec(obj) {
  let spec = obj;
  if (typeof spec === "string") {
    if (spec.length > MAX_SPEC_CHARS) {
      throw new SpecError(
        `The spec text is ${spec.length} characters; at most ${MAX_SPEC_CHARS} are read.`,
      );
    }
    try {
      spec = JSON.parse(spec);
    } catch (exc) {
      throw new SpecError(
        `The spec is not valid JSON (${exc.message}). A spec is plain JSON (RFC 8259: no NaN ` +
          "or Infinity); write it again with Sketch.to_json().",
      );
    }
  }
  if (!isObject(spec)) {
    throw new SpecError(`A spec must be a JSON object; found ${show(spec)}.`);
  }
  checkDepth(spec);
  const fmt = own(spec, "format");
  if (fmt !== FORMAT) {
    throw new SpecError(
      `format must be '${FORMAT}'; found ${show(fmt)}. This file is not a cdfsketch spec.`,
    );
  }
  const version = own(spec, "version");
  if (typeof version !== "number" || !Number.isInteger(version)) {
    throw new SpecError(`version must be an integer; found ${show(version)}.`);
  }
  if (version > VERSION) {
    throw new SpecError(
      `This spec has version ${version}, newer than this reader reads (up to ${VERSION}). ` +
        "Use a newer spec-reader.mjs (and cdfsketch) to load it.",
    );
  }
  if (version < 1) throw new SpecError(`version must be ≥ 1; found ${version}.`);
  checkKeys(spec, TOP_KEYS, "the spec");
  const missing = REQUIRED.filter((k) => !hasOwn(spec, k));
  if (missing.length) throw new SpecError(`The spec lacks the required key '${missing[0]}'.`);
  if (hasOwn(spec, "name")) text(spec.name, "name", MAX_NAME_CHARS);
  if (hasOwn(spec, "units")) text(spec.units, "units", MAX_UNITS_CHARS);
  const interpolation = spec.interpolation;
  if (interpolation !== "linear" && interpolation !== "pchip") {
    throw new SpecError(
      `interpolation must be 'linear' or 'pchip'; found ${show(interpolation)}.`,
    );
  }
  const knots = spec.knots;
  if (!isObject(knots)) throw new SpecError("knots must be an object with arrays 'x' and 'p'.");
  checkKeys(knots, ["x", "p"], "knots");
  const arrays = {};
  for (const key of ["x", "p"]) {
    const values = own(knots, key);
    if (!Array.isArray(values)) {
      throw new SpecError(`knots.${key} must be an array of numbers; found ${show(values)}.`);
    }
    if (values.length < 2 || values.length > MAX_KNOTS) {
      throw new SpecError(
        `knots.${key} must hold 2 to ${MAX_KNOTS} numbers; found ${values.length}. ` +
          "Thin the knots; a sketch rarely needs more than a few hundred.",
      );
    }
    arrays[key] = Array.from(values, (v, i) => number(v, `knots.${key}[${i}]`));
  }
  const tails = spec.tails;
  if (!isObject(tails)) throw new SpecError("tails must be an object with 'lower' and 'upper'.");
  checkKeys(tails, ["lower", "upper"], "tails");
  const lower = tailFromSpec(own(tails, "lower"), "lower");
  const upper = tailFromSpec(own(tails, "upper"), "upper");
  const prov = hasOwn(spec, "provenance") ? spec.provenance : {};
  checkProvenance(prov);
  const name = hasOwn(spec, "name") ? spec.name : "";
  const units = hasOwn(spec, "units") ? spec.units : "";
  let pieces;
  try {
    checkKnots(arrays.x, arrays.p);
    pieces = buildPieces(arrays.x, arrays.p, interpolation, lower.tail, upper.tail);
  } catch (exc) {
    if (exc instanceof SpecError) throw exc;
    throw new SpecError(`The spec's knots or tails are not a valid CDF: ${exc.message}`);
  }
  const resolved = [pieces.lower ? pieces.lower.scale : null, pieces.upper ? pieces.upper.scale : null];
  const storedScales = [lower.stored, upper.stored];
  ["lower", "upper"].forEach((side, k) => {
    const stored = storedScales[k];
    const got = resolved[k];
    if (stored !== null && got !== null && !isClose(stored, got, SCALE_RTOL)) {
      throw new SpecError(
        `tails.${side}.scale is ${stored} but the knots give ${got} under scale_rule ` +
          "'continue-density'. Set scale_rule to 'stated' to keep the stored scale, or " +
          "remove the scale.",
      );
    }
  });
  return {
    name,
    units,
    interpolation,
    x: arrays.x,
    p: arrays.p,
    lower: lower.tail,
    upper: upper.tail,
    storedScales,
    provenance: JSON.parse(JSON.stringify(prov)),
    pieces,
  };
}

// math.isclose(a, b, rel_tol=rtol) with abs_tol=0
function isClose(a, b, rtol) {
  if (a === b) return true;
  return Math.abs(a - b) <= rtol * Math.max(Math.abs(a), Math.abs(b));
}

// ---------------------------------------------------------------- the piece table

function diff(a) {
  const out = new Array(a.length - 1);
  for (let i = 0; i + 1 < a.length; i++) out[i] = a[i + 1] - a[i];
  return out;
}

/** Monotone cubic Hermite slopes, as cdfsketch._pieces.pchip_slopes (= scipy's PCHIP). */
export function pchipSlopes(x, y) {
  const h = diff(x);
  const dy = diff(y);
  const m = dy.map((v, i) => v / h[i]);
  const n = x.length;
  if (n === 2) return [m[0], m[0]];
  const d = new Array(n).fill(0);
  for (let k = 0; k + 2 < n; k++) {
    const w1 = 2 * h[k + 1] + h[k];
    const w2 = h[k + 1] + 2 * h[k];
    const zero = sign(m[k + 1]) !== sign(m[k]) || m[k + 1] === 0 || m[k] === 0;
    const whmean = (w1 / m[k] + w2 / m[k + 1]) / (w1 + w2);
    d[k + 1] = zero ? 0.0 : 1.0 / whmean;
  }
  d[0] = pchipEndSlope(h[0], h[1], m[0], m[1]);
  d[n - 1] = pchipEndSlope(h[n - 2], h[n - 3], m[n - 2], m[n - 3]);
  return d;
}

function pchipEndSlope(h0, h1, m0, m1) {
  const d = ((2 * h0 + h1) * m0 - h0 * m1) / (h0 + h1);
  if (sign(d) !== sign(m0)) return 0.0;
  if (sign(m0) !== sign(m1) && Math.abs(d) > 3 * Math.abs(m0)) return 3 * m0;
  return d;
}

// cdfsketch._pieces.knot_slopes: the density at each knot from inside its run (runs are
// split at equal x). continueLower/continueUpper: a derived exponential tail holds mass
// beyond that end; a zero monotone-cubic slope at the end of the outer run is then set
// to the outer segment's secant, so the tail continues a positive density.
function knotSlopes(x, p, interpolation, continueLower = false, continueUpper = false) {
  const n = x.length;
  const d = new Array(n).fill(0);
  const runs = [];
  const starts = [0];
  const stops = [];
  for (let i = 0; i + 1 < n; i++) {
    if (x[i + 1] - x[i] === 0) {
      stops.push(i + 1);
      starts.push(i + 1);
    }
  }
  stops.push(n);
  for (let r = 0; r < starts.length; r++) {
    const a = starts[r];
    const b = stops[r];
    if (b - a < 2) continue;
    runs.push([a, b]);
    const xs = x.slice(a, b);
    const ps = p.slice(a, b);
    if (interpolation === "pchip") {
      const s = pchipSlopes(xs, ps);
      for (let i = a; i < b; i++) d[i] = s[i - a];
    } else {
      const dp = diff(ps);
      const dx = diff(xs);
      for (let i = a; i < b - 1; i++) d[i] = dp[i - a] / dx[i - a];
      d[b - 1] = d[b - 2];
    }
  }
  if (interpolation === "pchip" && runs.length) {
    const a = runs[0][0]; // the first knot of the first run
    if (continueLower && d[a] === 0) d[a] = (p[a + 1] - p[a]) / (x[a + 1] - x[a]);
    const z = runs[runs.length - 1][1] - 1; // the last knot of the last run
    if (continueUpper && d[z] === 0) d[z] = (p[z] - p[z - 1]) / (x[z] - x[z - 1]);
  }
  return d;
}

// cdfsketch._pieces._outer_density: the outer knot's slope on the first continuous
// segment (past an atom at the outer knot); where it is not positive, the average
// density over the knots' range (the density then jumps at the knot).
function outerDensity(x, p, d, side) {
  const n = x.length;
  const idx = [];
  if (side === "lower") for (let i = 0; i < n - 1; i++) idx.push(i);
  else for (let i = n - 1; i > 0; i--) idx.push(i);
  for (const i of idx) {
    const j = side === "lower" ? i + 1 : i - 1;
    if (x[i] !== x[j]) {
      if (d[i] > 0) return d[i];
      break;
    }
  }
  return (p[n - 1] - p[0]) / (x[n - 1] - x[0]);
}

// cdfsketch._pieces._from_right: a piece's coefficients from its right end,
// F = pr - s (e0 + s (e1 + s e2)) with s = (xb - x) / h, from those from its left end
function fromRight(c) {
  const [, c1, c2, c3] = c;
  return [c1 + 2 * c2 + 3 * c3, -(c2 + 3 * c3), c3];
}

function expScale(tail, x, p, d, side, mass) {
  // cdfsketch._pieces._exp_scale
  if (tail.scale !== null) return tail.scale;
  const f = outerDensity(x, p, d, side);
  let scale = f > 0 ? mass / f : Infinity;
  if (!(Number.isFinite(scale) && scale > 0)) {
    // no density to continue, or mass / f underflows: the knots' span
    scale = x[x.length - 1] - x[0];
  }
  // at most what a stated scale may be, so it can be restated
  return Math.min(scale, MAX_SCALE);
}

/** The piece table of valid knots, as cdfsketch._pieces.build_pieces. */
function buildPieces(x, p, interpolation, lower, upper) {
  const n = x.length;
  const p0 = p[0];
  const pn = p[n - 1];
  const derives = (tail, mass) => tail.kind === "exponential" && tail.scale === null && mass > 0;
  const d = knotSlopes(x, p, interpolation, derives(lower, p0), derives(upper, 1.0 - pn));
  const xa = [];
  const hh = [];
  const cs = [];
  const es = [];
  const atomX = [];
  const atomMass = [];
  let lowerExp = null;
  let upperExp = null;
  // cdfsketch._pieces.check_limits: limits lie outside the knots (strictly where the
  // tail holds mass)
  if (lower.kind === "bounded" && !(lower.limit < x[0] || (lower.limit === x[0] && p0 === 0))) {
    throw new Error(
      `A bounded lower tail needs its limit below the first knot; got limit=` +
        `${lower.limit} and x[0]=${x[0]}. Lower the limit or move the knot.`,
    );
  }
  if (
    upper.kind === "bounded" &&
    !(upper.limit > x[n - 1] || (upper.limit === x[n - 1] && pn === 1))
  ) {
    throw new Error(
      `A bounded upper tail needs its limit above the last knot; got limit=` +
        `${upper.limit} and x[-1]=${x[n - 1]}. Raise the limit or move the knot.`,
    );
  }
  if (p0 > 0) {
    if (lower.kind === "bounded") {
      xa.push(lower.limit);
      hh.push(x[0] - lower.limit);
      cs.push(lower.density === "uniform" ? [0.0, p0, 0.0, 0.0] : [0.0, 0.0, p0, 0.0]);
      es.push(fromRight(cs[cs.length - 1]));
    } else {
      lowerExp = { edge: x[0], mass: p0, scale: expScale(lower, x, p, d, "lower", p0) };
    }
  }
  for (let i = 0; i < n - 1; i++) {
    if (x[i] === x[i + 1]) {
      atomX.push(x[i]);
      atomMass.push(p[i + 1] - p[i]);
      continue;
    }
    const h = x[i + 1] - x[i];
    const delta = p[i + 1] - p[i];
    if (interpolation === "linear") {
      cs.push([p[i], delta, 0.0, 0.0]);
      es.push([delta, 0.0, 0.0]);
    } else {
      const a = h * d[i];
      const b = h * d[i + 1];
      cs.push([p[i], a, 3 * delta - 2 * a - b, -2 * delta + a + b]);
      es.push([b, 3 * delta - a - 2 * b, a + b - 2 * delta]);
    }
    xa.push(x[i]);
    hh.push(h);
  }
  if (pn < 1) {
    const mass = 1.0 - pn;
    if (upper.kind === "bounded") {
      xa.push(x[n - 1]);
      hh.push(upper.limit - x[n - 1]);
      cs.push(upper.density === "uniform" ? [pn, mass, 0.0, 0.0] : [pn, 2 * mass, -mass, 0.0]);
      es.push(fromRight(cs[cs.length - 1]));
    } else {
      upperExp = { edge: x[n - 1], mass, scale: expScale(upper, x, p, d, "upper", mass) };
    }
  }
  const m = cs.length;
  const c = [0, 1, 2, 3].map((r) => cs.map((row) => row[r]));
  const e = [0, 1, 2].map((r) => es.map((row) => row[r]));
  const pl = c[0].slice();
  // numpy's c.sum(axis=0): ((c0 + c1) + c2) + c3
  const pr = new Array(m);
  for (let k = 0; k < m; k++) pr[k] = c[0][k] + c[1][k] + c[2][k] + c[3][k];
  // the polynomial pieces meet the knots exactly at their right ends (_snap_right_ends):
  // the knot there is the first knot past the piece's exact left end; a bounded upper
  // tail (the last piece) ends at probability 1
  for (let k = 0; k < m; k++) {
    const idx = searchRight(x, xa[k]);
    if (idx < n) pr[k] = p[idx];
  }
  if (pn < 1 && upper.kind === "bounded") pr[m - 1] = 1.0;
  // exact right ends: the pieces are contiguous (xb[j] === xa[j + 1])
  const last = pn < 1 && upper.kind === "bounded" ? upper.limit : x[n - 1];
  const xb = [...xa.slice(1), last];
  // F is evaluated from the nearer end: from the left up to xm (capped at pm = F(xm)),
  // from the right beyond it (floored at pm)
  const xm = new Array(m);
  const pm = new Array(m);
  for (let k = 0; k < m; k++) {
    xm[k] = Math.min(Math.max(xa[k] + 0.5 * hh[k], xa[k]), xb[k]);
    const t = (xm[k] - xa[k]) / hh[k];
    const f = c[0][k] + t * (c[1][k] + t * (c[2][k] + t * c[3][k]));
    pm[k] = Math.min(Math.max(f, pl[k]), pr[k]);
  }
  return {
    xa,
    xb,
    h: hh,
    c,
    e,
    xm,
    pm,
    pl,
    pr,
    atomX,
    atomMass,
    lower: lowerExp,
    upper: upperExp,
    pLow: lowerExp ? p0 : 0.0,
    pHigh: upperExp ? pn : 1.0,
    xEnd: xb[m - 1],
  };
}

// ---------------------------------------------------------------- evaluation

function cdfAt(pc, v) {
  if (pc.lower !== null && v < pc.lower.edge) {
    return pc.lower.mass * Math.exp((v - pc.lower.edge) / pc.lower.scale);
  }
  if (pc.upper !== null && v >= pc.upper.edge) {
    return pc.pHigh - pc.upper.mass * Math.expm1(-(v - pc.upper.edge) / pc.upper.scale);
  }
  const j = searchRight(pc.xa, v) - 1;
  if (j < 0) return 0.0;
  if (v >= pc.xEnd) return pc.pHigh;
  return pieceCdf(pc, j, v);
}

// cdfsketch._pieces.left_cdf: F on the left half of piece j, within [pl, pm]
function leftCdf(pc, j, v) {
  const c = pc.c;
  const t = (v - pc.xa[j]) / pc.h[j];
  const f = c[0][j] + t * (c[1][j] + t * (c[2][j] + t * c[3][j]));
  return Math.min(Math.max(f, pc.pl[j]), pc.pm[j]);
}

// cdfsketch._pieces.right_cdf: F on the right half of piece j, within [pm, pr]
function rightCdf(pc, j, v) {
  const e = pc.e;
  const s = (pc.xb[j] - v) / pc.h[j];
  const f = pc.pr[j] - s * (e[0][j] + s * (e[1][j] + s * e[2][j]));
  return Math.min(Math.max(f, pc.pm[j]), pc.pr[j]);
}

// cdfsketch._pieces.piece_cdf: F inside piece j, from the nearer end
function pieceCdf(pc, j, v) {
  return v > pc.xm[j] ? rightCdf(pc, j, v) : leftCdf(pc, j, v);
}

// 1 - F, computed directly in the upper exponential tail (no cancellation)
function sfAt(pc, v) {
  if (pc.upper !== null && v >= pc.upper.edge) {
    return pc.upper.mass * Math.exp(-(v - pc.upper.edge) / pc.upper.scale);
  }
  return 1.0 - cdfAt(pc, v);
}

function pdfAt(pc, v) {
  if (pc.lower !== null && v < pc.lower.edge) {
    return (pc.lower.mass / pc.lower.scale) * Math.exp((v - pc.lower.edge) / pc.lower.scale);
  }
  if (pc.upper !== null && v >= pc.upper.edge) {
    return (pc.upper.mass / pc.upper.scale) * Math.exp(-(v - pc.upper.edge) / pc.upper.scale);
  }
  const j = searchRight(pc.xa, v) - 1;
  if (j < 0 || !(v < pc.xEnd)) return 0.0;
  const c = pc.c;
  const t = (v - pc.xa[j]) / pc.h[j];
  const df = c[1][j] + t * (2 * c[2][j] + t * 3 * c[3][j]);
  return Math.max(df, 0.0) / pc.h[j];
}

// Doubles as 64-bit integer keys in the same order (adjacent doubles, adjacent keys),
// as cdfsketch._inverse.order_key and from_order_key.
const KEY_F64 = new Float64Array(1);
const KEY_I64 = new BigInt64Array(KEY_F64.buffer);
const KEY_SIGN = -(2n ** 63n);
const KEY_MAGNITUDE = 2n ** 63n - 1n;

function orderKey(x) {
  KEY_F64[0] = x;
  const b = KEY_I64[0];
  return b >= 0n ? b : -(b & KEY_MAGNITUDE);
}

function fromOrderKey(k) {
  KEY_I64[0] = k >= 0n ? k : -k | KEY_SIGN;
  return KEY_F64[0];
}

// The closed-form inverse on a linear piece (cdfsketch._inverse.linear_inverse).
function linearInverse(pc, j, u) {
  const t = Math.min(Math.max((u - pc.c[0][j]) / pc.c[1][j], 0.0), 1.0);
  return Math.min(pc.xa[j] + pc.h[j] * t, pc.xb[j]);
}

// The smallest x in piece j with F(x) >= u, by bisection over the doubles
// (cdfsketch._inverse.bisect_pieces for one point): first the half of the piece where
// u lies (u <= pm: (xa, xm], else (xm, xb]), evaluated from that half's end, then the
// count of doubles in (lo, hi] halved. Monotone in u by construction. u lies in
// (pl, pr] of the piece.
function bisectPiece(pc, j, u) {
  // u = pr is reached at the piece's end exactly (F < pr inside a rising piece)
  if (u >= pc.pr[j]) return pc.xb[j];
  const right = u > pc.pm[j];
  let lo = orderKey(right ? pc.xm[j] : pc.xa[j]);
  let hi = orderKey(right ? pc.xb[j] : pc.xm[j]);
  const cdf = right ? rightCdf : leftCdf;
  // doubles in the bracket (as a float where it straddles zero, as in Python)
  const count = lo < 0n && hi >= 0n ? Number(hi) - Number(lo) : Number(hi - lo);
  const steps = Math.min(Math.ceil(Math.log2(Math.max(count, 1.0))) + 2, 66);
  for (let k = 0; k < steps; k++) {
    const mid = (lo >> 1n) + (hi >> 1n) + (lo & hi & 1n); // floor of the mean
    if (cdf(pc, j, fromOrderKey(mid)) >= u) hi = mid;
    else lo = mid;
  }
  return fromOrderKey(hi);
}

function supportOf(pc) {
  let low;
  let high;
  if (pc.lower !== null) {
    low = -Infinity;
  } else {
    const j = searchRight(pc.pr, 0.0);
    low = j < pc.pr.length ? pc.xa[j] : pc.xEnd;
  }
  if (pc.upper !== null) {
    high = Infinity;
  } else {
    const j = searchLeft(pc.pr, 1.0);
    if (j >= pc.pr.length) high = pc.xEnd;
    else if (pc.pl[j] >= 1.0) high = pc.xa[j];
    else high = pc.xb[j];
  }
  return [low, high];
}

function ppfAt(pc, u, low, high) {
  if (u === 0) return low;
  if (u === 1) return high;
  if (u > pc.pLow && u <= pc.pHigh) {
    const j = searchLeft(pc.pr, u);
    if (j >= pc.pr.length) return pc.xEnd; // an atom at the top end
    if (u <= pc.pl[j]) return pc.xa[j]; // an atom, or the left end of a piece
    const c = pc.c;
    return c[2][j] === 0 && c[3][j] === 0 ? linearInverse(pc, j, u) : bisectPiece(pc, j, u);
  }
  // the tails (cdfsketch.tails.ResolvedExponentialTail.ppf): never on the body's side
  if (u <= pc.pLow) {
    if (pc.lower === null) return low;
    const lt = pc.lower;
    return Math.min(lt.edge + lt.scale * Math.log(u / lt.mass), lt.edge);
  }
  // u > pHigh: only with an upper exponential tail
  const ut = pc.upper;
  return Math.max(ut.edge - ut.scale * Math.log((1.0 - u) / ut.mass), ut.edge);
}

// ---------------------------------------------------------------- public reader

function mapValues(values, name, fn, probability) {
  const one = (v, where) => {
    if (typeof v !== "number" || Number.isNaN(v)) {
      throw new TypeError(
        `${name} must be numbers (not NaN); got ${show(v)}${where}. Drop or replace ` +
          "missing values first.",
      );
    }
    if (probability && !(v >= 0 && v <= 1)) {
      throw new RangeError(
        `${name} must be probabilities in [0, 1]; got ${v}${where}. Rescale or clip them.`,
      );
    }
    return fn(v);
  };
  if (typeof values === "number") return one(values, "");
  if (Array.isArray(values) || ArrayBuffer.isView(values)) {
    return Array.from(values, (v, i) => one(v, ` at index ${i}`));
  }
  throw new TypeError(`${name} must be a number or an array of numbers; got ${show(values)}.`);
}

const deepFreeze = (o) => {
  if (o !== null && typeof o === "object" && !Object.isFrozen(o)) {
    Object.freeze(o);
    for (const v of Object.values(o)) deepFreeze(v);
  }
  return o;
};

/**
 * Read a cdfsketch spec (an object or JSON text) and return its distribution.
 *
 * The result is frozen: {name, units, interpolation, knots: {x, p},
 * tails: {lower, upper} (resolved: exponential tails carry their scale, or
 * null when they hold no mass), tailMass: [lower, upper],
 * tailScales: [lower|null, upper|null], support: [low, high], atoms:
 * [{x, mass}], provenance, pieces (the piece table), and the functions
 * cdf(x), sf(x), pdf(x), ppf(u), quantile(u), median()}. The functions take
 * a number (and return a number) or an array (and return an array).
 * Throws SpecError when the spec is not valid.
 */
export function readSpec(obj) {
  const s = validateSpec(obj);
  const pc = s.pieces;
  const [low, high] = supportOf(pc);
  const scales = [pc.lower ? pc.lower.scale : null, pc.upper ? pc.upper.scale : null];
  const resolvedTail = (tail, scale) =>
    tail.kind === "bounded"
      ? { kind: "bounded", limit: tail.limit, density: tail.density }
      : {
          kind: "exponential",
          scale: tail.scale !== null ? tail.scale : scale,
          scaleRule: tail.scale !== null ? "stated" : "continue-density",
        };
  const atoms = Array.from(pc.atomX, (x, i) => ({ x, mass: pc.atomMass[i] }));
  const n = s.p.length;
  const ppf = (u) => mapValues(u, "u", (v) => ppfAt(pc, v, low, high), true);
  return deepFreeze({
    format: FORMAT,
    version: VERSION,
    name: s.name,
    units: s.units,
    interpolation: s.interpolation,
    knots: { x: s.x.slice(), p: s.p.slice() },
    tails: { lower: resolvedTail(s.lower, scales[0]), upper: resolvedTail(s.upper, scales[1]) },
    tailMass: [s.p[0], 1.0 - s.p[n - 1]],
    tailScales: scales,
    support: [low, high],
    atoms,
    provenance: s.provenance,
    pieces: pc,
    cdf: (x) => mapValues(x, "x", (v) => cdfAt(pc, v), false),
    sf: (x) => mapValues(x, "x", (v) => sfAt(pc, v), false),
    pdf: (x) => mapValues(x, "x", (v) => pdfAt(pc, v), false),
    ppf,
    quantile: ppf,
    median: () => ppfAt(pc, 0.5, low, high),
  });
}
