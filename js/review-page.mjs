// cdfsketch review page: the UI script of the standalone page that
// cdfsketch.report.save_html writes. Dependency-free; the page inlines this
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

/** A metric cell as a number: the page's JSON writes ±inf as "inf"/"-inf", NaN as null. */
export function cellNumber(v) {
  if (v === "inf") return Infinity;
  if (v === "-inf") return -Infinity;
  return v;
}

/** The display text of a table cell (numbers like Python's .6g, missing values empty). */
export function cellText(v) {
  const u = cellNumber(v);
  if (u === null || u === undefined) return "";
  if (typeof u === "number") return formatG(u, 6);
  return String(u);
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

/** Rows sorted by a column, as ComparisonTable.sort_by does: missing (null/NaN) last. */
export function sortRows(rows, column, ascending = true) {
  const missing = (v) => v === null || v === undefined || (typeof v === "number" && Number.isNaN(v));
  const have = rows.filter((r) => !missing(cellNumber(r[column])));
  const rest = rows.filter((r) => missing(cellNumber(r[column])));
  const sign = ascending ? 1 : -1;
  const sorted = have
    .map((r, i) => ({ r, i }))
    .sort((a, b) => {
      const u = cellNumber(a.r[column]);
      const v = cellNumber(b.r[column]);
      const c = u < v ? -1 : u > v ? 1 : 0;
      return c * sign || a.i - b.i; // stable, as Python's sort
    })
    .map((o) => o.r);
  return [...sorted, ...rest];
}

/** A data: URL holding the spec as pretty JSON, for the download link. */
export function specDataUrl(spec) {
  return "data:application/json;charset=utf-8," + encodeURIComponent(JSON.stringify(spec, null, 2) + "\n");
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

function axes(doc, svg, sx, sy, height, label, yLabel, yTicks) {
  const g = svgEl(doc, "g", { class: "axes" });
  const [x0, x1] = sx.domain;
  const bottom = height - MARGIN.bottom;
  g.append(svgEl(doc, "line", { x1: MARGIN.left, x2: VIEW_W - MARGIN.right, y1: bottom, y2: bottom, class: "axis" }));
  g.append(svgEl(doc, "line", { x1: MARGIN.left, x2: MARGIN.left, y1: MARGIN.top, y2: bottom, class: "axis" }));
  for (const t of niceTicks(x0, x1, 8)) {
    const px = sx.map(t);
    g.append(svgEl(doc, "line", { x1: px, x2: px, y1: bottom, y2: bottom + 4, class: "tick" }));
    g.append(svgEl(doc, "text", { x: px, y: bottom + 16, class: "tick-label", "text-anchor": "middle" }, formatG(t, 6)));
  }
  for (const t of yTicks) {
    const py = sy.map(t);
    g.append(svgEl(doc, "line", { x1: MARGIN.left - 4, x2: MARGIN.left, y1: py, y2: py, class: "tick" }));
    g.append(svgEl(doc, "line", { x1: MARGIN.left, x2: VIEW_W - MARGIN.right, y1: py, y2: py, class: "gridline" }));
    g.append(svgEl(doc, "text", { x: MARGIN.left - 7, y: py + 4, class: "tick-label", "text-anchor": "end" }, formatG(t, 4)));
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

// ---------------------------------------------------------------- the page

/** Build the review page from its payload (see cdfsketch.report.page_payload). */
export function main(doc, payload) {
  const root = doc.getElementById("review-root");
  const units = payload.units ? ` (${payload.units})` : "";
  const [lo, hi] = payload.xRange;
  const entries = [];
  const problems = [];
  payload.candidates.forEach((c, i) => {
    try {
      entries.push({ ...c, index: i, dist: readSpec(c.spec) });
    } catch (exc) {
      problems.push({ index: i, name: c.name, message: String(exc && exc.message) });
    }
  });

  // header and caution
  const header = el(doc, "header");
  header.append(el(doc, "h1", { id: "title" }, payload.title));
  header.append(
    el(doc, "p", { class: "subtitle" },
      `${payload.candidates.length} candidates${units ? " · units" + units : ""} · written ${payload.generated} by cdfsketch ${payload.packageVersion}`),
  );
  root.append(header);
  root.append(el(doc, "p", { id: "caution", role: "note" }, payload.caution));

  // toggles (the legend)
  const toggles = el(doc, "fieldset", { id: "toggles" });
  toggles.append(el(doc, "legend", {}, "Candidates (untick to hide)"));
  for (const e of entries) {
    const label = el(doc, "label", { class: "toggle", "data-candidate": e.index });
    const box = el(doc, "input", { type: "checkbox", "data-candidate": e.index });
    box.checked = true;
    label.append(box);
    const sw = el(doc, "span", { class: "swatch" });
    sw.style.background = e.dashed ? `repeating-linear-gradient(90deg, ${e.colour} 0 7px, transparent 7px 11px)` : e.colour;
    label.append(sw);
    label.append(el(doc, "span", { class: "candidate-name" }, e.name));
    label.append(el(doc, "span", { class: "candidate-kind" }, ` ${e.description}${e.chosen ? " — chosen" : ""}`));
    toggles.append(label);
  }
  root.append(toggles);
  for (const p of problems) {
    const msg = el(doc, "p", { class: "problem", "data-candidate": p.index });
    msg.append(el(doc, "span", { class: "candidate-name" }, p.name));
    msg.append(doc.createTextNode(`: this candidate's spec could not be read and is not drawn. ${p.message}`));
    root.append(msg);
  }

  // the two panels
  const hCdf = 320;
  const hPdf = 240;
  const sx = linearScale(lo, hi, MARGIN.left, VIEW_W - MARGIN.right);
  const syC = linearScale(0, 1, hCdf - MARGIN.bottom, MARGIN.top);
  const cdfSvg = plotSvg(doc, "cdf-plot", hCdf, "Cumulative probability of each candidate over the ECDF and its band");
  const data = payload.data;
  const xLabel = `${payload.name || "x"}${units}`;
  axes(doc, cdfSvg, sx, syC, hCdf, xLabel, "cumulative probability", [0, 0.25, 0.5, 0.75, 1]);
  const layerC = svgEl(doc, "g", { "clip-path": "url(#cdf-plot-clip)" });
  if (data) {
    const b = data.band;
    const poly = [];
    for (let i = 0; i < b.x.length; i++) poly.push(`${sx.map(b.x[i]).toFixed(2)},${syC.map(b.upper[i]).toFixed(2)}`);
    for (let i = b.x.length - 1; i >= 0; i--) poly.push(`${sx.map(b.x[i]).toFixed(2)},${syC.map(b.lower[i]).toFixed(2)}`);
    layerC.append(svgEl(doc, "polygon", { points: poly.join(" "), class: "band" }));
    layerC.append(svgEl(doc, "path", { d: pathData(data.steps.x, data.steps.p, sx, syC), class: "ecdf" }));
  }
  // densities: histogram scale and the mass scale for spikes
  const peaks = [];
  const pdfLines = entries.map((e) => {
    if (e.kind === "data") return null;
    const line = pdfPolyline(e.dist, lo, hi);
    const m = Math.max(...line.y);
    if (m > 0) peaks.push(m);
    return line;
  });
  peaks.sort((a, b) => a - b);
  let top = peaks.length ? peaks[Math.floor((peaks.length - 1) / 2)] : 0;
  if (peaks.length && peaks.length % 2 === 0) top = (peaks[peaks.length / 2 - 1] + peaks[peaks.length / 2]) / 2;
  if (data) top = Math.max(top, ...data.hist.density);
  top = top > 0 ? 1.15 * top : 1;
  const masses = entries.flatMap((e) => e.dist.atoms.filter((a) => a.x >= lo && a.x <= hi).map((a) => a.mass));
  const massTop = masses.length ? 1.1 * Math.max(...masses) : 1;
  const syP = linearScale(0, top, hPdf - MARGIN.bottom, MARGIN.top);
  const syM = linearScale(0, massTop, hPdf - MARGIN.bottom, MARGIN.top);
  const pdfSvg = plotSvg(doc, "pdf-plot", hPdf, "Density of each candidate over the data histogram; atoms as spikes");
  axes(doc, pdfSvg, sx, syP, hPdf, xLabel, "density", niceTicks(0, top / 1.15, 4));
  if (masses.length) {
    const g = svgEl(doc, "g", { class: "axes mass-axis" });
    const right = VIEW_W - MARGIN.right;
    g.append(svgEl(doc, "line", { x1: right, x2: right, y1: MARGIN.top, y2: hPdf - MARGIN.bottom, class: "axis" }));
    for (const t of niceTicks(0, massTop / 1.1, 3)) {
      g.append(svgEl(doc, "text", { x: right + 6, y: syM.map(t) + 4, class: "tick-label" }, formatG(t, 3)));
    }
    g.append(svgEl(doc, "text", { x: VIEW_W - 6, y: MARGIN.top + 8, class: "axis-label", "text-anchor": "end" }, "atom mass"));
    pdfSvg.append(g);
  }
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
  // candidates, chosen last so it is on top
  const order = [...entries].sort((a, b) => Number(a.chosen) - Number(b.chosen));
  for (const e of order) {
    const width = e.chosen ? 3.5 : 1.8;
    const gc = svgEl(doc, "g", { class: "candidate", "data-candidate": e.index });
    const line = cdfPolyline(e.dist, lo, hi);
    gc.append(svgEl(doc, "path", { d: pathData(line.x, line.y, sx, syC), class: "curve cdf", stroke: e.colour, "stroke-width": width, "stroke-dasharray": e.dashed ? "7 4" : "none", "data-candidate": e.index }));
    layerC.append(gc);
    const gp = svgEl(doc, "g", { class: "candidate", "data-candidate": e.index });
    const pl = pdfLines[entries.indexOf(e)];
    if (pl) {
      gp.append(svgEl(doc, "path", { d: pathData(pl.x, pl.y, sx, syP), class: "curve pdf", stroke: e.colour, "stroke-width": width, "stroke-dasharray": e.dashed ? "7 4" : "none", "data-candidate": e.index }));
    }
    for (const a of e.dist.atoms) {
      if (a.x < lo || a.x > hi) continue;
      const px = sx.map(a.x).toFixed(2);
      const spike = svgEl(doc, "line", { x1: px, x2: px, y1: syM.map(0), y2: syM.map(a.mass).toFixed(2), class: "spike", stroke: e.colour, "data-candidate": e.index });
      spike.append(svgEl(doc, "title", {}, `${e.name}: atom of mass ${formatG(a.mass, 4)} at ${formatG(a.x, 6)}`));
      gp.append(spike);
    }
    layerP.append(gp);
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

  // hover: a guide line in both panels and the read-out
  const readout = el(doc, "div", { id: "readout", "aria-live": "polite" });
  const readHead = el(doc, "p", { class: "readout-x" }, "Hover over a panel to read x, p and the density of each candidate.");
  readout.append(readHead);
  const readTable = el(doc, "table", { class: "readout-table" });
  const rhead = el(doc, "tr");
  for (const t of ["candidate", "p = F(x)", "density f(x)"]) rhead.append(el(doc, "th", {}, t));
  readTable.append(rhead);
  const readRows = new Map();
  for (const e of entries) {
    const tr = el(doc, "tr", { "data-candidate": e.index });
    const name = el(doc, "td", { class: "candidate-name" }, e.name);
    name.style.borderLeft = `4px solid ${e.colour}`;
    tr.append(name, el(doc, "td", { class: "p" }, ""), el(doc, "td", { class: "density" }, ""));
    readTable.append(tr);
    readRows.set(e.index, tr);
  }
  readout.append(readTable);
  const guides = [cdfSvg, pdfSvg].map((svg) => {
    const hgt = Number(svg.getAttribute("data-height"));
    const g = svgEl(doc, "line", { class: "guide", y1: MARGIN.top, y2: hgt - MARGIN.bottom, x1: -10, x2: -10 });
    svg.append(g);
    return g;
  });
  const show = (x) => {
    const px = sx.map(x).toFixed(2);
    for (const g of guides) {
      g.setAttribute("x1", px);
      g.setAttribute("x2", px);
    }
    readout.setAttribute("data-x", String(x));
    readHead.textContent = `x = ${formatG(x, 6)}${payload.units ? " " + payload.units : ""}`;
    for (const r of readoutAt(entries, x)) {
      const tr = readRows.get(entries[r.index].index);
      tr.setAttribute("data-p", String(r.p));
      tr.setAttribute("data-density", String(r.density));
      tr.children[1].textContent = r.p.toFixed(4);
      tr.children[2].textContent = entries[r.index].kind === "data" ? "atoms only" : formatG(r.density, 4);
    }
  };
  for (const svg of [cdfSvg, pdfSvg]) {
    const hgt = Number(svg.getAttribute("data-height"));
    const hit = svgEl(doc, "rect", { class: "hover-area", x: MARGIN.left, y: MARGIN.top, width: VIEW_W - MARGIN.left - MARGIN.right, height: hgt - MARGIN.top - MARGIN.bottom });
    hit.addEventListener("mousemove", (ev) => {
      const box = svg.getBoundingClientRect();
      const vx = ((ev.clientX - box.left) * VIEW_W) / box.width;
      show(Math.min(hi, Math.max(lo, sx.invert(vx))));
    });
    svg.append(hit);
  }
  const plots = el(doc, "section", { id: "plots" });
  plots.append(cdfSvg, pdfSvg, readout);
  root.append(plots);

  // toggling
  toggles.addEventListener("change", (ev) => {
    const box = ev.target;
    const i = box.getAttribute("data-candidate");
    for (const node of doc.querySelectorAll(`g.candidate[data-candidate="${Number(i)}"], tr[data-candidate="${Number(i)}"]`)) {
      node.style.display = box.checked ? "" : "none";
    }
  });

  // comparison table
  const tableSection = el(doc, "section", { id: "comparison-section" });
  tableSection.append(el(doc, "h2", {}, "Comparison"));
  if (payload.table) {
    const t = payload.table;
    const table = el(doc, "table", { id: "comparison" });
    const thead = el(doc, "thead");
    const hr = el(doc, "tr");
    const tbody = el(doc, "tbody");
    const state = { column: null, ascending: true };
    const fill = () => {
      tbody.replaceChildren();
      const rows = state.column ? sortRows(t.rows, state.column, state.ascending) : t.rows;
      for (const r of rows) {
        const tr = el(doc, "tr", r.name === (payload.decision && payload.decision.chosen) ? { class: "chosen" } : {});
        for (const c of t.columns) tr.append(el(doc, "td", { "data-column": c }, cellText(r[c])));
        tbody.append(tr);
      }
    };
    for (const c of t.columns) {
      const th = el(doc, "th", { title: t.notes[c] || "", "data-column": c });
      const btn = el(doc, "button", { type: "button", class: "sort", "data-column": c }, c);
      btn.addEventListener("click", () => {
        state.ascending = state.column === c ? !state.ascending : true;
        state.column = c;
        for (const b of thead.querySelectorAll("th")) b.removeAttribute("aria-sort");
        th.setAttribute("aria-sort", state.ascending ? "ascending" : "descending");
        fill();
      });
      th.append(btn);
      hr.append(th);
    }
    thead.append(hr);
    table.append(thead, tbody);
    fill();
    tableSection.append(table);
    const info = Object.entries(t.info).map(([k, v]) => `${k}=${cellText(v)}`).join(", ");
    tableSection.append(
      el(doc, "p", { class: "table-info" },
        `${info}. Click a column name to sort; hover it for its meaning. Distances on all data carry no p-value: the candidates were fitted or tuned on these data.`),
    );
  } else {
    tableSection.append(el(doc, "p", {}, "No data were given, so the candidates were not compared with observations."));
  }
  root.append(tableSection);

  // decision
  const dec = el(doc, "section", { id: "decision" });
  dec.append(el(doc, "h2", {}, "Decision"));
  const d = payload.decision;
  if (d) {
    const dl = el(doc, "dl");
    const item = (k, v, id) => {
      dl.append(el(doc, "dt", {}, k));
      dl.append(el(doc, "dd", id ? { id } : {}, v));
    };
    item("chosen", d.chosen, "decision-chosen");
    item("by", d.by, "decision-by");
    item("when (UTC)", d.when, "decision-when");
    item("rationale", d.rationale, "decision-rationale");
    item("band level", String(d.level));
    if (d.how_written) item("how the spec was written", d.how_written);
    item("competitors", d.competitors.map((c) => c.name).join(", ") || "none");
    dec.append(dl);
    const a = el(doc, "a", { id: "download-spec", download: payload.chosenFile, href: specDataUrl(payload.chosenSpec) }, "Download the chosen spec (JSON)");
    dec.append(a);
  } else {
    dec.append(el(doc, "p", { id: "no-decision" }, "No decision recorded yet."));
  }
  root.append(dec);

  // data summary
  const ds = el(doc, "section", { id: "data-summary" });
  ds.append(el(doc, "h2", {}, "Data"));
  if (data) {
    const dl = el(doc, "dl");
    const item = (k, v, id) => {
      dl.append(el(doc, "dt", {}, k));
      dl.append(el(doc, "dd", id ? { id } : {}, v));
    };
    item("n", String(data.n), "data-n");
    item("range", `${formatG(data.min, 6)} – ${formatG(data.max, 6)}${payload.units ? " " + payload.units : ""}`, "data-range");
    item("median", formatG(data.median, 6));
    item("SHA-256 (float64, little-endian, in order)", data.sha256, "data-sha256");
    item("DKW band", `level ${payload.level}, half-width ε = ${formatG(data.band.eps, 4)}`);
    ds.append(dl);
    if (data.values) {
      const det = el(doc, "details", { id: "raw-data" });
      det.append(el(doc, "summary", {}, `Raw data (${data.values.length} values, in the order given)`));
      det.append(el(doc, "pre", {}, data.values.map((v) => formatG(v, 12)).join("\n")));
      ds.append(det);
    } else {
      ds.append(el(doc, "p", {}, "The raw values are not included in this page (the ECDF shows the distinct values)."));
    }
  } else {
    ds.append(el(doc, "p", {}, "No data."));
  }
  root.append(ds);

  // candidates: how each was made
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
  root.append(cl);
  doc.title = payload.title;
  if (typeof performance !== "undefined" && performance.mark) performance.mark("cdfsketch-review-drawn");
  return { entries, problems, show };
}
