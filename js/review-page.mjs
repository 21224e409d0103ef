// cdfsketch review page: the UI script of the standalone page that
// cdfsketch.review.save_html writes. Dependency-free; the page inlines this
// module after js/spec-reader.mjs, so every curve is the spec reader's own
// evaluation of the candidate's spec (the same arithmetic as Python).
//
// Everything from users (names, units, rationale, notes) is inserted with
// textContent or as an attribute value, never as markup.
//
// The pure functions are exported for the node tests (js/test/); main()
// builds the page from the JSON payload.
import { readSpec } from "./spec-reader.mjs";

const SVG_NS = "http://www.w3.org/2000/svg";
export const VIEW_W = 760;
export const MARGIN = { left: 58, right: 58, top: 12, bottom: 34 };
const GRID_POINTS = 400;

// ---------------------------------------------------------------- numbers

/** Python's format(v, ".{digits}g"): significant digits, trailing zeros dropped. */
export function formatG(v, digits = 6) {
  if (v === null || v === undefined || Number.isNaN(v)) return "";
  if (v === Infinity) return "inf";
  if (v === -Infinity) return "-inf";
  if (v === 0) return Object.is(v, -0) ? "-0" : "0";
  const exp = Number(v.toExponential(digits - 1).split("e")[1]);
  if (exp < -4 || exp >= digits) {
    const [mant, e] = v.toExponential(digits - 1).split("e");
    const m = mant.includes(".") ? mant.replace(/\.?0+$/, "") : mant;
    const n = Number(e);
    return `${m}e${n < 0 ? "-" : "+"}${String(Math.abs(n)).padStart(2, "0")}`;
  }
  const s = v.toFixed(Math.max(0, digits - 1 - exp));
  return s.includes(".") ? s.replace(/\.?0+$/, "") : s;
}

/** Largest float below x (numpy.nextafter(x, -inf)). */
export function nextDown(x) {
  if (!Number.isFinite(x)) return x;
  if (x === 0) return -Number.MIN_VALUE;
  const buf = new DataView(new ArrayBuffer(8));
  buf.setFloat64(0, x);
  let bits = buf.getBigUint64(0);
  bits = x > 0 ? bits - 1n : bits + 1n;
  buf.setBigUint64(0, bits);
  return buf.getFloat64(0);
}

/** Map [d0, d1] onto [r0, r1] and back. */
export function linearScale(d0, d1, r0, r1) {
  const k = (r1 - r0) / (d1 - d0);
  return { map: (v) => r0 + (v - d0) * k, invert: (r) => d0 + (r - r0) / k, domain: [d0, d1] };
}

/** About `count` round tick values covering [lo, hi] (1, 2, 5 × 10^k steps). */
export function niceTicks(lo, hi, count = 6) {
  if (!(hi > lo)) return [lo];
  const raw = (hi - lo) / Math.max(1, count);
  const mag = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * mag).find((s) => s >= raw);
  const out = [];
  const first = Math.ceil(lo / step - 1e-9);
  const last = Math.floor(hi / step + 1e-9);
  for (let k = first; k <= last; k++) out.push(k === 0 ? 0 : Number((k * step).toPrecision(12)));
  return out;
}

/** SVG path data through the points (pixel coordinates rounded to 0.01). */
export function pathData(xs, ys, sx, sy) {
  const parts = [];
  let pen = "M";
  for (let i = 0; i < xs.length; i++) {
    const px = sx.map(xs[i]);
    const py = sy.map(ys[i]);
    if (!Number.isFinite(px) || !Number.isFinite(py)) {
      pen = "M";
      continue;
    }
    parts.push(`${pen}${px.toFixed(2)},${py.toFixed(2)}`);
    pen = "L";
  }
  return parts.join("");
}

function gridWith(lo, hi, n, extra) {
  const xs = [];
  for (let i = 0; i < n; i++) xs.push(lo + ((hi - lo) * i) / (n - 1));
  for (const v of extra) if (v > lo && v < hi) xs.push(v);
  xs.sort((a, b) => a - b);
  return xs.filter((v, i) => i === 0 || v !== xs[i - 1]);
}

/** The CDF polyline of a read spec over [lo, hi]: knots included, vertical jumps at atoms. */
export function cdfPolyline(dist, lo, hi, n = GRID_POINTS) {
  const atoms = new Map(dist.atoms.map((a) => [a.x, a.mass]));
  const xs = gridWith(lo, hi, n, [...dist.knots.x, ...atoms.keys()]);
  const ys = dist.cdf(xs);
  const outX = [];
  const outY = [];
  for (let i = 0; i < xs.length; i++) {
    if (atoms.has(xs[i])) {
      outX.push(xs[i]); // the left limit, then the value: a vertical jump
      outY.push(ys[i] - atoms.get(xs[i]));
    }
    outX.push(xs[i]);
    outY.push(ys[i]);
  }
  return { x: outX, y: outY };
}

/** The density polyline over [lo, hi], with both sides of every knot (density may jump). */
export function pdfPolyline(dist, lo, hi, n = GRID_POINTS) {
  const knots = dist.knots.x;
  const xs = gridWith(lo, hi, n, [...knots, ...knots.map(nextDown)]);
  return { x: xs, y: dist.pdf(xs) };
}

/** What the hover read-out shows at x for each candidate: {index, name, p, density}. */
export function readoutAt(entries, x) {
  return entries.map((e, index) => ({
    index,
    name: e.name,
    p: e.dist.cdf(x),
    density: e.kind === "data" ? 0 : e.dist.pdf(x),
  }));
}

/** Comparison rows ordered by one question's value, missing last, stable (review.table.sort_rows). */
export function sortRows(rows, key, ascending = true) {
  if (!key) return [...rows];
  const value = (r) => r.cells[key].value;
  const have = rows.filter((r) => value(r) !== null && value(r) !== undefined);
  const rest = rows.filter((r) => value(r) === null || value(r) === undefined);
  const sign = ascending ? 1 : -1;
  const sorted = have
    .map((r, i) => ({ r, i }))
    .sort((a, b) => (value(a.r) < value(b.r) ? -1 : value(a.r) > value(b.r) ? 1 : 0) * sign || a.i - b.i)
    .map((o) => o.r);
  return [...sorted, ...rest];
}

/** SVG path data of a marker shape of radius r centred on (cx, cy). */
export function markerPath(shape, cx, cy, r = 4) {
  const p = (pts) => "M" + pts.map(([x, y]) => `${(cx + x * r).toFixed(2)},${(cy + y * r).toFixed(2)}`).join("L") + "Z";
  switch (shape) {
    case "square": return p([[-0.85, -0.85], [0.85, -0.85], [0.85, 0.85], [-0.85, 0.85]]);
    case "triangle-up": return p([[0, -1.1], [1, 0.8], [-1, 0.8]]);
    case "triangle-down": return p([[0, 1.1], [1, -0.8], [-1, -0.8]]);
    case "diamond": return p([[0, -1.2], [1, 0], [0, 1.2], [-1, 0]]);
    case "cross": return p([[-1, -0.35], [-0.35, -0.35], [-0.35, -1], [0.35, -1], [0.35, -0.35], [1, -0.35], [1, 0.35], [0.35, 0.35], [0.35, 1], [-0.35, 1], [-0.35, 0.35], [-1, 0.35]]);
    case "star": return p([0, 1, 2, 3, 4, 5, 6, 7, 8, 9].map((k) => { const a = -Math.PI / 2 + (k * Math.PI) / 5; const m = k % 2 ? 0.45 : 1.15; return [m * Math.cos(a), m * Math.sin(a)]; }));
    default: return `M${(cx - r).toFixed(2)},${cy.toFixed(2)}a${r},${r} 0 1,0 ${2 * r},0a${r},${r} 0 1,0 ${-2 * r},0Z`;
  }
}

/** A data: URL holding the spec as pretty JSON, for the download link. */
export function specDataUrl(spec) {
  return "data:application/json;charset=utf-8," + encodeURIComponent(JSON.stringify(spec, null, 2) + "\n");
}

/** cdfsketch._numfmt.significant: `digits` significant digits, no -0, ∞ for infinities, – if missing. */
export function significant(v, digits = 4) {
  if (v === null || v === undefined || Number.isNaN(v)) return "–";
  if (v === Infinity) return "∞";
  if (v === -Infinity) return "−∞";
  const s = formatG(v, digits);
  return Number(s) === 0 || Math.abs(v) < 1e-300 ? "0" : s;
}

/**
 * F(x) read off an output curve given as quantiles: xs non-decreasing at probabilities ps.
 * 0 left of the curve, 1 right of it, linear between neighbouring points; at tied xs
 * (an atom) the top of the jump.
 */
export function curveAt(xs, ps, x) {
  const n = xs.length;
  if (!n || x < xs[0]) return 0;
  if (x >= xs[n - 1]) return 1;
  let lo = 0;
  let hi = n - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid] <= x) lo = mid;
    else hi = mid;
  }
  const dx = xs[hi] - xs[lo];
  return dx > 0 ? ps[lo] + ((ps[hi] - ps[lo]) * (x - xs[lo])) / dx : ps[lo];
}

// ---------------------------------------------------------------- DOM helpers

function el(doc, tag, attrs = {}, text) {
  const node = doc.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) node.setAttribute(k, String(v));
  if (text !== undefined) node.textContent = text;
  return node;
}

function svgEl(doc, tag, attrs = {}, text) {
  const node = doc.createElementNS(SVG_NS, tag);
  for (const [k, v] of Object.entries(attrs)) node.setAttribute(k, String(v));
  if (text !== undefined) node.textContent = text;
  return node;
}

function definitionList(doc, items) {
  const dl = el(doc, "dl");
  for (const [k, v, id] of items) {
    dl.append(el(doc, "dt", {}, k));
    dl.append(el(doc, "dd", id ? { id } : {}, v));
  }
  return dl;
}

/** A legend swatch: the candidate's line (colour, dash) with its marker. */
function swatch(doc, e, width = 30) {
  const svg = svgEl(doc, "svg", { class: "swatch", width, height: 12, viewBox: `0 0 ${width} 12`, "aria-hidden": "true" });
  svg.append(svgEl(doc, "line", { x1: 1, x2: width - 1, y1: 6, y2: 6, stroke: e.colour, "stroke-width": 2.5, "stroke-dasharray": e.dash }));
  if (e.marker !== "none") svg.append(svgEl(doc, "path", { d: markerPath(e.marker, width / 2, 6, 3.5), fill: e.colour, stroke: "white", "stroke-width": 0.8 }));
  return svg;
}

function axes(doc, svg, sx, sy, height, label, yLabel, yTicks) {
  const g = svgEl(doc, "g", { class: "axes" });
  const [x0, x1] = sx.domain;
  const bottom = height - MARGIN.bottom;
  g.append(svgEl(doc, "line", { x1: MARGIN.left, x2: VIEW_W - MARGIN.right, y1: bottom, y2: bottom, class: "axis" }));
  g.append(svgEl(doc, "line", { x1: MARGIN.left, x2: MARGIN.left, y1: MARGIN.top, y2: bottom, class: "axis" }));
  for (const t of niceTicks(x0, x1, 7)) {
    const px = sx.map(t);
    g.append(svgEl(doc, "line", { x1: px, x2: px, y1: bottom, y2: bottom + 4, class: "tick" }));
    g.append(svgEl(doc, "text", { x: px, y: bottom + 16, class: "tick-label", "text-anchor": "middle" }, significant(t, 6)));
  }
  for (const t of yTicks) {
    const py = sy.map(t);
    g.append(svgEl(doc, "line", { x1: MARGIN.left - 4, x2: MARGIN.left, y1: py, y2: py, class: "tick" }));
    g.append(svgEl(doc, "line", { x1: MARGIN.left, x2: VIEW_W - MARGIN.right, y1: py, y2: py, class: "gridline" }));
    g.append(svgEl(doc, "text", { x: MARGIN.left - 7, y: py + 4, class: "tick-label", "text-anchor": "end" }, significant(t, 3)));
  }
  g.append(svgEl(doc, "text", { x: (MARGIN.left + VIEW_W - MARGIN.right) / 2, y: height - 3, class: "axis-label", "text-anchor": "middle" }, label));
  g.append(svgEl(doc, "text", { x: 12, y: (MARGIN.top + bottom) / 2, class: "axis-label", "text-anchor": "middle", transform: `rotate(-90 12 ${(MARGIN.top + bottom) / 2})` }, yLabel));
  svg.append(g);
}

function plotSvg(doc, id, height, title) {
  const svg = svgEl(doc, "svg", { id, viewBox: `0 0 ${VIEW_W} ${height}`, role: "img", class: "plot", "data-height": height });
  svg.append(svgEl(doc, "title", {}, title));
  const clip = svgEl(doc, "clipPath", { id: `${id}-clip` });
  clip.append(svgEl(doc, "rect", { x: MARGIN.left, y: MARGIN.top, width: VIEW_W - MARGIN.left - MARGIN.right, height: height - MARGIN.top - MARGIN.bottom }));
  const defs = svgEl(doc, "defs");
  defs.append(clip);
  svg.append(defs);
  return svg;
}

// ---------------------------------------------------------------- the page, part by part

/** Read every candidate's spec; a spec that cannot be read becomes a problem shown as text. */
function readEntries(payload) {
  const entries = [];
  const problems = [];
  payload.candidates.forEach((c, i) => {
    try {
      entries.push({ ...c, index: i, dist: readSpec(c.spec) });
    } catch (exc) {
      problems.push({ index: i, name: c.name, message: String(exc && exc.message) });
    }
  });
  return { entries, problems };
}

/** Title, one line of guidance, the caution, flags, and unreadable candidates. */
function buildHeader(doc, payload, problems) {
  const units = payload.units ? ` · units (${payload.units})` : "";
  const header = el(doc, "header");
  header.append(el(doc, "h1", { id: "title" }, payload.title));
  header.append(el(doc, "p", { class: "subtitle" },
    `${payload.candidates.length} candidates${units} · written ${payload.generated} by cdfsketch ${payload.packageVersion}`));
  header.append(el(doc, "p", { class: "guide-text" },
    "Untick a candidate to hide it; move the mouse over a plot to read each candidate's values there. The comparison below answers the questions a review asks."));
  header.append(el(doc, "p", { id: "caution", role: "note" }, payload.caution));
  if (payload.flags) header.append(el(doc, "p", { id: "flags", role: "alert" }, payload.flags));
  for (const p of problems) {
    const msg = el(doc, "p", { class: "problem", "data-candidate": p.index });
    msg.append(el(doc, "span", { class: "candidate-name" }, p.name));
    msg.append(doc.createTextNode(`: this candidate's spec could not be read and is not drawn. ${p.message}`));
    header.append(msg);
  }
  return header;
}

/** The toggles are the legend: one per candidate (colour, dash, marker), plus the data layers. */
function buildLegend(doc, payload, entries) {
  const toggles = el(doc, "fieldset", { id: "toggles" });
  toggles.append(el(doc, "legend", {}, "Candidates (untick to hide)"));
  for (const e of entries) {
    const label = el(doc, "label", { class: "toggle", "data-candidate": e.index, title: `${e.name} — ${e.description}` });
    const box = el(doc, "input", { type: "checkbox", "data-candidate": e.index });
    box.checked = true;
    label.append(box, swatch(doc, e));
    label.append(el(doc, "span", { class: "candidate-name" }, e.name));
    if (e.chosen) label.append(el(doc, "span", { class: "chosen-mark" }, " (chosen)"));
    toggles.append(label);
  }
  if (payload.data) {
    const keys = el(doc, "p", { class: "data-keys" });
    keys.append(swatch(doc, { colour: "#6b6b6b", dash: "none", marker: "none" }), doc.createTextNode(" data (ECDF, histogram)"), el(doc, "br"));
    keys.append(el(doc, "span", { class: "band-key" }), doc.createTextNode(` ${Math.round(payload.level * 100)} % DKW band`));
    toggles.append(keys);
  }
  return toggles;
}

/** The density axis top: the histogram and the median candidate peak, not a spike. */
function densityTop(pdfLines, data) {
  const peaks = pdfLines.filter(Boolean).map((l) => Math.max(...l.y)).filter((m) => m > 0).sort((a, b) => a - b);
  let top = 0;
  if (peaks.length) {
    const h = peaks.length / 2;
    top = peaks.length % 2 ? peaks[Math.floor(h)] : (peaks[h - 1] + peaks[h]) / 2;
  }
  if (data) top = Math.max(top, ...data.hist.density);
  return top > 0 ? 1.15 * top : 1;
}

/** Both panels, the data layers and every candidate (chosen last, on top). */
function buildPanels(doc, payload, entries) {
  const [lo, hi] = payload.xRange;
  const units = payload.units ? ` (${payload.units})` : "";
  const xLabel = `${payload.name || "x"}${units}`;
  const hCdf = 320;
  const hPdf = 230;
  const sx = linearScale(lo, hi, MARGIN.left, VIEW_W - MARGIN.right);
  const syC = linearScale(0, 1, hCdf - MARGIN.bottom, MARGIN.top);
  const cdfSvg = plotSvg(doc, "cdf-plot", hCdf, "Cumulative probability of each candidate over the ECDF and its band");
  axes(doc, cdfSvg, sx, syC, hCdf, xLabel, "cumulative probability", [0, 0.25, 0.5, 0.75, 1]);
  const layerC = svgEl(doc, "g", { "clip-path": "url(#cdf-plot-clip)" });
  const data = payload.data;
  if (data) {
    const b = data.band;
    const poly = [];
    for (let i = 0; i < b.x.length; i++) poly.push(`${sx.map(b.x[i]).toFixed(2)},${syC.map(b.upper[i]).toFixed(2)}`);
    for (let i = b.x.length - 1; i >= 0; i--) poly.push(`${sx.map(b.x[i]).toFixed(2)},${syC.map(b.lower[i]).toFixed(2)}`);
    layerC.append(svgEl(doc, "polygon", { points: poly.join(" "), class: "band" }));
    layerC.append(svgEl(doc, "path", { d: pathData(data.steps.x, data.steps.p, sx, syC), class: "ecdf" }));
  }
  const pdfLines = entries.map((e) => (e.kind === "data" ? null : pdfPolyline(e.dist, lo, hi)));
  const top = densityTop(pdfLines, data);
  const spiked = (e) => e.dist.atoms.length <= (payload.maxSpikes ?? Infinity);
  const masses = entries.filter(spiked).flatMap((e) => e.dist.atoms.filter((a) => a.x >= lo && a.x <= hi).map((a) => a.mass));
  const massTop = masses.length ? 1.1 * Math.max(...masses) : 1;
  const syP = linearScale(0, top, hPdf - MARGIN.bottom, MARGIN.top);
  const syM = linearScale(0, massTop, hPdf - MARGIN.bottom, MARGIN.top);
  const pdfSvg = plotSvg(doc, "pdf-plot", hPdf, "Density of each candidate over the data histogram; atoms as spikes");
  axes(doc, pdfSvg, sx, syP, hPdf, xLabel, payload.units ? `density (per ${payload.units})` : "density", niceTicks(0, top / 1.15, 4));
  if (masses.length) pdfSvg.append(massAxis(doc, syM, massTop, hPdf));
  const layerP = svgEl(doc, "g", { "clip-path": "url(#pdf-plot-clip)" });
  if (data) {
    const h = data.hist;
    for (let i = 0; i < h.density.length; i++) {
      const x0 = sx.map(h.edges[i]);
      const x1 = sx.map(h.edges[i + 1]);
      const y = syP.map(h.density[i]);
      layerP.append(svgEl(doc, "rect", { x: x0.toFixed(2), y: y.toFixed(2), width: Math.max(0, x1 - x0).toFixed(2), height: Math.max(0, syP.map(0) - y).toFixed(2), class: "hist" }));
    }
  }
  const order = [...entries].sort((a, b) => Number(a.chosen) - Number(b.chosen));
  for (const e of order) {
    drawCandidate(doc, e, { lo, hi, sx, syC, syP, syM, layerC, layerP, pdf: pdfLines[entries.indexOf(e)], spikes: spiked(e) });
  }
  cdfSvg.append(layerC);
  pdfSvg.append(layerP);
  // the geometry, for anyone reading values back from the drawing (the browser tests do)
  for (const [svg, sy] of [[cdfSvg, syC], [pdfSvg, syP]]) {
    svg.setAttribute("data-x-domain", `${lo} ${hi}`);
    svg.setAttribute("data-x-pixels", `${MARGIN.left} ${VIEW_W - MARGIN.right}`);
    svg.setAttribute("data-y-domain", sy.domain.join(" "));
    svg.setAttribute("data-y-pixels", `${sy.map(sy.domain[0])} ${sy.map(sy.domain[1])}`);
  }
  return { cdfSvg, pdfSvg, sx };
}

function massAxis(doc, syM, massTop, hPdf) {
  const g = svgEl(doc, "g", { class: "axes mass-axis" });
  const right = VIEW_W - MARGIN.right;
  g.append(svgEl(doc, "line", { x1: right, x2: right, y1: MARGIN.top, y2: hPdf - MARGIN.bottom, class: "axis" }));
  for (const t of niceTicks(0, massTop / 1.1, 3)) {
    g.append(svgEl(doc, "text", { x: right + 6, y: syM.map(t) + 4, class: "tick-label" }, significant(t, 3)));
  }
  g.append(svgEl(doc, "text", { x: VIEW_W - 6, y: MARGIN.top + 8, class: "axis-label", "text-anchor": "end" }, "atom mass"));
  return g;
}

/** One candidate: its CDF with markers, its density, its atoms as spikes. */
function drawCandidate(doc, e, g) {
  const width = e.chosen ? 3.5 : 1.8;
  const style = { stroke: e.colour, "stroke-width": width, "stroke-dasharray": e.dash, "data-candidate": e.index };
  const gc = svgEl(doc, "g", { class: "candidate", "data-candidate": e.index });
  const line = cdfPolyline(e.dist, g.lo, g.hi);
  gc.append(svgEl(doc, "path", { d: pathData(line.x, line.y, g.sx, g.syC), class: "curve cdf", ...style }));
  for (let k = 1; k <= 6; k++) {
    const x = g.lo + ((g.hi - g.lo) * (k + 0.17 * (e.index % 5))) / 7.5;
    const y = e.dist.cdf(x);
    gc.append(svgEl(doc, "path", { d: markerPath(e.marker, g.sx.map(x), g.syC.map(y), 3.5), class: "marker", fill: e.colour }));
  }
  g.layerC.append(gc);
  const gp = svgEl(doc, "g", { class: "candidate", "data-candidate": e.index });
  if (g.pdf) gp.append(svgEl(doc, "path", { d: pathData(g.pdf.x, g.pdf.y, g.sx, g.syP), class: "curve pdf", ...style }));
  for (const a of g.spikes ? e.dist.atoms : []) {
    if (a.x < g.lo || a.x > g.hi) continue;
    const px = g.sx.map(a.x).toFixed(2);
    const spike = svgEl(doc, "line", { x1: px, x2: px, y1: g.syM.map(0), y2: g.syM.map(a.mass).toFixed(2), class: "spike", stroke: e.colour, "data-candidate": e.index });
    spike.append(svgEl(doc, "title", {}, `${e.name}: atom of mass ${significant(a.mass, 4)} at ${significant(a.x, 6)}`));
    gp.append(spike);
  }
  g.layerP.append(gp);
}

/** The read-out (visible candidates only) and the hover strips that drive it, no click needed. */
function buildReadout(doc, payload, entries, panels) {
  const [lo, hi] = payload.xRange;
  const readout = el(doc, "div", { id: "readout", "aria-live": "polite" });
  const readHead = el(doc, "p", { class: "readout-x" }, "Move the mouse over a plot to read x, F(x) and f(x).");
  readout.append(readHead);
  const readTable = el(doc, "table", { class: "readout-table" });
  const rhead = el(doc, "tr");
  for (const t of ["candidate", "F(x)", "f(x)"]) rhead.append(el(doc, "th", {}, t));
  readTable.append(rhead);
  const readRows = new Map();
  for (const e of entries) {
    const tr = el(doc, "tr", { "data-candidate": e.index });
    const name = el(doc, "td", { class: "candidate-name", title: e.name });
    name.append(swatch(doc, e, 18), doc.createTextNode(" " + e.name));
    tr.append(name, el(doc, "td", { class: "p" }, ""), el(doc, "td", { class: "density" }, ""));
    readTable.append(tr);
    readRows.set(e.index, tr);
  }
  readout.append(readTable);
  const svgs = [panels.cdfSvg, panels.pdfSvg];
  const guides = svgs.map((svg) => {
    const hgt = Number(svg.getAttribute("data-height"));
    const line = svgEl(doc, "line", { class: "guide", y1: MARGIN.top, y2: hgt - MARGIN.bottom, x1: -10, x2: -10 });
    svg.append(line);
    return line;
  });
  const show = (x) => {
    const px = panels.sx.map(x).toFixed(2);
    for (const line of guides) {
      line.setAttribute("x1", px);
      line.setAttribute("x2", px);
    }
    readout.setAttribute("data-x", String(x));
    readHead.textContent = `x = ${significant(x, 6)}${payload.units ? " " + payload.units : ""}`;
    for (const r of readoutAt(entries, x)) {
      const tr = readRows.get(entries[r.index].index);
      tr.setAttribute("data-p", String(r.p));
      tr.setAttribute("data-density", String(r.density));
      tr.children[1].textContent = r.p.toFixed(4);
      tr.children[2].textContent = entries[r.index].kind === "data" ? "atoms" : significant(r.density, 4);
    }
  };
  for (const svg of svgs) {
    const hgt = Number(svg.getAttribute("data-height"));
    const hit = svgEl(doc, "rect", { class: "hover-area", x: MARGIN.left, y: MARGIN.top, width: VIEW_W - MARGIN.left - MARGIN.right, height: hgt - MARGIN.top - MARGIN.bottom });
    hit.addEventListener("pointermove", (ev) => {
      const box = svg.getBoundingClientRect();
      const vx = ((ev.clientX - box.left) * VIEW_W) / box.width;
      show(Math.min(hi, Math.max(lo, panels.sx.invert(vx))));
    });
    svg.append(hit);
  }
  return { readout, show };
}

/** A dot on the row's shared scale, with the column's reference mark. */
function dotSvg(doc, pos, ref, colour) {
  const w = 90;
  const pad = 5;
  const svg = svgEl(doc, "svg", { class: "dot", width: w, height: 14, viewBox: `0 0 ${w} 14`, "aria-hidden": "true" });
  svg.append(svgEl(doc, "line", { x1: pad, x2: w - pad, y1: 7, y2: 7, class: "dot-track" }));
  if (ref !== null && ref !== undefined) {
    const x = (pad + ref * (w - 2 * pad)).toFixed(1);
    svg.append(svgEl(doc, "line", { x1: x, x2: x, y1: 1, y2: 13, class: "dot-ref" }));
  }
  if (pos !== null && pos !== undefined) {
    svg.append(svgEl(doc, "circle", { cx: (pad + pos * (w - 2 * pad)).toFixed(1), cy: 7, r: 4, fill: colour, class: "dot-mark" }));
  }
  return svg;
}

/** The comparison, by the questions a review asks; sortable; raw scores stay in the CSV. */
function buildTable(doc, payload, entries) {
  const section = el(doc, "section", { id: "comparison-section" });
  section.append(el(doc, "h2", {}, "How the candidates compare"));
  const t = payload.table;
  if (!t) {
    section.append(el(doc, "p", {}, "No data were given, so the candidates were not compared with observations."));
    return section;
  }
  const byIndex = new Map(entries.map((e) => [e.index, e]));
  const table = el(doc, "table", { id: "comparison" });
  const thead = el(doc, "thead");
  const hr = el(doc, "tr");
  const tbody = el(doc, "tbody");
  const state = { key: null, ascending: true };
  const fill = () => {
    tbody.replaceChildren();
    for (const r of sortRows(t.rows, state.key, state.ascending)) {
      const tr = el(doc, "tr", { "data-candidate": r.index, ...(r.chosen ? { class: "chosen" } : {}) });
      const name = el(doc, "td", { class: "name-cell", "data-column": "name" });
      const e = byIndex.get(r.index) || { colour: r.colour, dash: r.dash, marker: "circle" };
      name.append(swatch(doc, e, 22), doc.createTextNode(" "), el(doc, "span", { class: "candidate-name" }, r.name));
      name.append(el(doc, "span", { class: "candidate-kind" }, r.kind + (r.chosen ? " — chosen" : "")));
      tr.append(name);
      for (const c of t.columns) {
        const cell = r.cells[c.key];
        const td = el(doc, "td", { "data-column": c.key, class: "metric" });
        td.append(el(doc, "span", { class: "value" }, cell.text));
        if (c.key !== "params") td.append(dotSvg(doc, cell.pos, c.reference ? c.reference.pos : null, r.colour));
        tr.append(td);
      }
      tbody.append(tr);
    }
  };
  hr.append(el(doc, "th", { class: "name-head" }, "Candidate"));
  for (const c of t.columns) {
    const th = el(doc, "th", { title: c.help, "data-column": c.key });
    const btn = el(doc, "button", { type: "button", class: "sort", "data-column": c.key }, c.label + (c.unit ? ` (${c.unit})` : ""));
    btn.addEventListener("click", () => {
      state.ascending = state.key === c.key ? !state.ascending : true;
      state.key = c.key;
      for (const h of thead.querySelectorAll("th")) h.removeAttribute("aria-sort");
      th.setAttribute("aria-sort", state.ascending ? "ascending" : "descending");
      fill();
    });
    th.append(btn, el(doc, "span", { class: "direction" }, c.direction));
    hr.append(th);
  }
  thead.append(hr);
  table.append(thead, tbody);
  fill();
  section.append(table);
  const refs = t.columns.filter((c) => c.reference).map((c) => `${c.label}: the mark is ${c.reference.text}`);
  section.append(el(doc, "p", { class: "table-info" },
    `${refs.join("; ")}. Dots share one scale per column (the tail chance in log scale). Click a heading to sort; hover it for what it measures. ${t.n} observations, ${t.nTest} held out. Distances on all data carry no p-value: the candidates were fitted or tuned on these data. Every raw score is in the comparison table's CSV (table().to_csv).`));
  return section;
}

/** One output's CDF per candidate, in the candidates' own colour, dash and marker. */
function outcomePlot(doc, o, k) {
  const [lo, hi] = o.xRange;
  const h = 260;
  const id = `outcome-plot-${k}`;
  const sx = linearScale(lo, hi, MARGIN.left, VIEW_W - MARGIN.right);
  const sy = linearScale(0, 1, h - MARGIN.bottom, MARGIN.top);
  const svg = plotSvg(doc, id, h, `The output ${o.name}: its cumulative probability under each candidate`);
  svg.classList.add("outcome-plot");
  axes(doc, svg, sx, sy, h, o.axisLabel, "cumulative probability", [0, 0.25, 0.5, 0.75, 1]);
  const layer = svgEl(doc, "g", { "clip-path": `url(#${id}-clip)` });
  const order = [...o.curves].sort((a, b) => Number(a.chosen) - Number(b.chosen));
  for (const c of order) {
    const g = svgEl(doc, "g", { class: "candidate", "data-candidate": c.index });
    g.append(svgEl(doc, "title", {}, c.name));
    g.append(svgEl(doc, "path", {
      d: pathData(c.x, c.p, sx, sy), class: "curve outcome", stroke: c.colour,
      "stroke-width": c.chosen ? 3.5 : 1.8, "stroke-dasharray": c.dash, "data-candidate": c.index,
    }));
    for (let m = 1; m <= 6; m++) {
      const x = lo + ((hi - lo) * (m + 0.17 * (c.index % 5))) / 7.5;
      g.append(svgEl(doc, "path", { d: markerPath(c.marker, sx.map(x), sy.map(curveAt(c.x, c.p, x)), 3.5), class: "marker", fill: c.colour }));
    }
    layer.append(g);
  }
  svg.append(layer);
  svg.setAttribute("data-x-domain", `${lo} ${hi}`);
  svg.setAttribute("data-x-pixels", `${MARGIN.left} ${VIEW_W - MARGIN.right}`);
  svg.setAttribute("data-y-domain", "0 1");
  svg.setAttribute("data-y-pixels", `${sy.map(0)} ${sy.map(1)}`);
  return svg;
}

/** A figure and its "± se" as unbreakable parts the line may wrap between. */
function wrappable(doc, cls, parts) {
  const span = el(doc, "span", { class: cls });
  parts.forEach((part, i) => {
    if (i) span.append(doc.createTextNode(" "));
    span.append(el(doc, "span", { class: "part" }, part));
  });
  return span;
}

/** One output's figures per candidate: value ± se, and under it Δ to the reference ± paired se. */
function outcomeTable(doc, o, k) {
  const table = el(doc, "table", { class: "consequence-table", id: `consequence-table-${k}`, "data-output": o.name });
  const hr = el(doc, "tr");
  hr.append(el(doc, "th", { class: "name-head" }, "Candidate"));
  for (const c of o.columns) {
    const th = el(doc, "th", { title: c.help, "data-column": c.key }, c.label);
    if (c.unit) th.append(el(doc, "span", { class: "unit" }, `(${c.unit})`));
    hr.append(th);
  }
  hr.append(el(doc, "th", { "data-column": "verdict", title: o.verdictHelp }, "Verdict"));
  const thead = el(doc, "thead");
  thead.append(hr);
  const tbody = el(doc, "tbody");
  for (const r of o.rows) {
    const tr = el(doc, "tr", { "data-candidate": r.index, ...(r.chosen ? { class: "chosen" } : {}) });
    const name = el(doc, "td", { class: "name-cell", "data-column": "name" });
    name.append(swatch(doc, r, 22), doc.createTextNode(" "), el(doc, "span", { class: "candidate-name" }, r.name));
    const role = [r.chosen ? "chosen" : "", r.reference ? "reference" : ""].filter(Boolean).join(", ");
    if (role) name.append(el(doc, "span", { class: "candidate-kind" }, role));
    tr.append(name);
    for (const c of o.columns) {
      const cell = r.cells[c.key];
      const td = el(doc, "td", { class: "metric", "data-column": c.key });
      td.append(wrappable(doc, "value", cell.parts));
      if (cell.diffParts.length) td.append(wrappable(doc, "diff", cell.diffParts));
      tr.append(td);
    }
    tr.append(el(doc, "td", { class: "verdict-cell", "data-column": "verdict" }, r.verdict));
    tbody.append(tr);
  }
  table.append(thead, tbody);
  return table;
}

/** Does the choice change the model's answer? Computed numbers and curves only: nothing runs. */
function buildConsequences(doc, payload) {
  const c = payload.consequences;
  if (!c) return null;
  const section = el(doc, "section", { id: "consequences" });
  section.append(el(doc, "h2", {}, c.title));
  section.append(el(doc, "p", { class: "consequence-intro" }, c.intro));
  c.outputs.forEach((o, k) => {
    const block = el(doc, "div", { class: "consequence-output", "data-output": o.name });
    if (c.outputs.length > 1) block.append(el(doc, "h3", {}, o.axisLabel));
    const verdict = el(doc, "p", { class: "verdict" });
    verdict.append(el(doc, "strong", {}, o.name), doc.createTextNode(`: ${o.verdict} (${o.toleranceText}).`));
    const figure = el(doc, "div", { class: "outcome-figure" });
    const plot = el(doc, "div", { class: "outcome-plot-box" });
    plot.append(outcomePlot(doc, o, k));
    const legend = el(doc, "ul", { class: "outcome-legend" });
    for (const r of o.rows) {
      const li = el(doc, "li", { "data-candidate": r.index, title: r.name });
      li.append(swatch(doc, r), doc.createTextNode(" "), el(doc, "span", { class: "candidate-name" }, r.name));
      if (r.chosen) li.append(el(doc, "span", { class: "chosen-mark" }, " (chosen)"));
      legend.append(li);
    }
    figure.append(plot, legend);
    block.append(verdict, figure, outcomeTable(doc, o, k));
    section.append(block);
  });
  section.append(el(doc, "p", { class: "table-info" }, c.note));
  return section;
}

function buildDecision(doc, payload) {
  const dec = el(doc, "section", { id: "decision" });
  dec.append(el(doc, "h2", {}, "Decision"));
  const d = payload.decision;
  if (!d) {
    dec.append(el(doc, "p", { id: "no-decision" }, "No decision recorded yet."));
    return dec;
  }
  const items = [
    ["chosen", d.chosen, "decision-chosen"],
    ["by", d.by, "decision-by"],
    ["when (UTC)", d.when, "decision-when"],
    ["rationale", d.rationale, "decision-rationale"],
    ["band level", String(d.level)],
  ];
  if (d.how_written) items.push(["how the spec was written", d.how_written]);
  if (d.consequences) items.push(["does the choice matter", d.consequences.statement, "decision-consequences"]);
  items.push(["competitors", d.competitors.map((c) => c.name).join(", ") || "none"]);
  dec.append(definitionList(doc, items));
  dec.append(el(doc, "a", { id: "download-spec", download: payload.chosenFile, href: specDataUrl(payload.chosenSpec) }, "Download the chosen spec (JSON)"));
  return dec;
}

function buildDataSummary(doc, payload) {
  const ds = el(doc, "section", { id: "data-summary" });
  ds.append(el(doc, "h2", {}, "Data"));
  const data = payload.data;
  if (!data) {
    ds.append(el(doc, "p", {}, "No data."));
    return ds;
  }
  const unit = payload.units ? " " + payload.units : "";
  ds.append(definitionList(doc, [
    ["n", String(data.n), "data-n"],
    ["range", `${significant(data.min, 6)} – ${significant(data.max, 6)}${unit}`, "data-range"],
    ["median", significant(data.median, 6) + unit],
    ["SHA-256 (float64, little-endian, in order)", data.sha256, "data-sha256"],
    ["DKW band", `level ${payload.level}, half-width ε = ${significant(data.band.eps, 4)}`],
  ]));
  if (data.values) {
    const det = el(doc, "details", { id: "raw-data" });
    det.append(el(doc, "summary", {}, `Raw data (${data.values.length} values, in the order given)`));
    det.append(el(doc, "pre", {}, data.values.map((v) => formatG(v, 17)).join("\n")));
    ds.append(det);
  } else {
    ds.append(el(doc, "p", {}, "The raw values are not included in this page (the ECDF shows the distinct values)."));
  }
  return ds;
}

function buildNotes(doc, payload) {
  const cl = el(doc, "section", { id: "candidate-notes" });
  cl.append(el(doc, "h2", {}, "Candidates"));
  const ul = el(doc, "ul");
  for (const c of payload.candidates) {
    const li = el(doc, "li");
    li.append(el(doc, "strong", { class: "candidate-name" }, c.name));
    li.append(doc.createTextNode(` — ${c.description}${c.note ? ": " + c.note : ""}`));
    ul.append(li);
  }
  cl.append(ul);
  return cl;
}

/** Hide or show a candidate everywhere (curves, read-out row) when its toggle changes. */
function wireToggles(doc, toggles) {
  toggles.addEventListener("change", (ev) => {
    const i = Number(ev.target.getAttribute("data-candidate"));
    for (const node of doc.querySelectorAll(`g.candidate[data-candidate="${i}"], #readout tr[data-candidate="${i}"]`)) {
      node.style.display = ev.target.checked ? "" : "none";
    }
  });
}

/** Build the review page from its payload (see cdfsketch.review.page.page_payload). */
export function main(doc, payload) {
  const root = doc.getElementById("review-root");
  const { entries, problems } = readEntries(payload);
  root.append(buildHeader(doc, payload, problems));
  const panels = buildPanels(doc, payload, entries);
  const toggles = buildLegend(doc, payload, entries);
  const { readout, show } = buildReadout(doc, payload, entries, panels);
  const plots = el(doc, "div", { id: "plots" });
  plots.append(panels.cdfSvg, panels.pdfSvg);
  const side = el(doc, "aside", { id: "side" });
  side.append(readout, toggles);
  const area = el(doc, "section", { id: "plots-area" });
  area.append(plots, side);
  root.append(area);
  wireToggles(doc, toggles);
  root.append(buildTable(doc, payload, entries));
  const consequences = buildConsequences(doc, payload);
  if (consequences) root.append(consequences);
  root.append(buildDecision(doc, payload), buildDataSummary(doc, payload), buildNotes(doc, payload));
  doc.title = payload.title;
  if (typeof performance !== "undefined" && performance.mark) performance.mark("cdfsketch-review-drawn");
  return { entries, problems, show };
}
