/* hooks.js: the page's controls for what the engine offers beyond the first form: lens
 * kinds with a neighbour count, the balanced cover, a second filter (the product cover),
 * the colour statistic, colouring by the filter, a diverging map centred on zero with an
 * automatic or fixed range, and the lens histogram with the cover's intervals.
 *
 * It reads and writes the form and draws; it computes nothing about the data (the engine
 * gives every number). It is not the settings form's structure, which stays in app.js.
 */

/** colour-select value meaning "each node's mean filter value" (Engine.node_lens_values). */
const LENS_COLOUR = "\u0001filter";

/* Crameri's diverging map 'vik' (F. Crameri, Scientific colour maps, Zenodo,
 * doi:10.5281/zenodo.1243862; made for readers with colour-vision deficiency): dark blue,
 * through near white at the middle, to dark red-brown. The 256 entries are the file
 * cmcrameri/cmaps/vik.txt of the PyPI package cmcrameri 1.10, each channel rounded to
 * 8 bits (round(255 * value)); copied from that file, not written from memory. */
const VIK_HEX =
  "001261011462011563011764011865011a66021c67021d68021f6902206a02226b02236c02256d02276e02286f022a70" +
  "022b71022d72022e7302307402317502337602347702367802377902397a023a7b033c7c033e7d033f7e03417f034280" +
  "034481034582034783034984034a85044c86044d87044f8805518905528a06548b06568c07578d08598f095b900b5d91" +
  "0c5e920e6093106294116496136697156798176999196b9a1c6d9c1e6f9d20719e2373a02575a12877a22b79a42d7ba5" +
  "307da6337fa83681a93983ab3c85ac3f87ad4289af458bb0488db24b90b34e92b45194b65496b75798b95a9aba5d9cbb" +
  "619ebd64a0be67a2c06aa4c16da6c271a8c474aac577acc67aaec87db0c980b2ca84b4cc87b6cd8ab8ce8dbad090bcd1" +
  "94bed297c0d49ac2d59dc4d6a0c5d8a3c7d9a7c9daaacbdcadcdddb0cfdeb3d1dfb6d3e1bad5e2bdd6e3c0d8e4c3dae5" +
  "c6dbe6c9dde7ccdfe8cfe0e8d2e1e9d5e3e9d8e4e9dbe5e9dee6e9e0e6e9e2e7e8e5e7e8e7e7e7e8e7e5eae6e4ebe6e2" +
  "ece5e0ede4deeee3dceee1daeee0d8eeded5eeddd3eedbd0eed9cdedd7cbedd5c8ecd3c5ecd1c3ebd0c0eacebde9ccba" +
  "e9cab8e8c8b5e7c6b2e6c4b0e5c1ade4bfaae4bea8e3bca5e2baa2e1b8a0e0b69ddfb49adfb298deb095ddae93dcac90" +
  "dbaa8ddba88bdaa688d9a486d8a283d7a081d69f7ed69d7cd59b79d49977d39774d39572d29470d1926dd0906bcf8e68" +
  "cf8c66ce8b64cd8961cc875fcc855dcb835aca8258c98056c97e53c87c51c77b4fc6794cc6774ac57548c47445c37243" +
  "c27041c26e3fc16d3cc06b3abf6938be6736be6533bd6431bc622fbb602dba5e2ab85c28b75a26b65824b55521b3531f" +
  "b2511db04f1baf4c18ad4a16ab4814a94512a74310a5400fa33e0da13c0b9f390a9c37099a3508983307963107942f06" +
  "912d068f2b068d29068b2706892606872406852206832106811f067f1e067e1d067c1b067a1a06781806761706741506" +
  "7314067113076f11076d10076c0e076a0d07680c07670a076509076307076206076004085e03085d02085b0108590008";

const VIK = (function () {
  const rgb = new Uint8Array(256 * 3);
  for (let i = 0; i < 256 * 3; i++) rgb[i] = parseInt(VIK_HEX.substr(i * 2, 2), 16);
  return rgb;
})();

const VIK_CSS = cssColours(VIK);

function vikAt(t) {
  if (!Number.isFinite(t)) return NO_VALUE_COLOUR;
  return VIK_CSS[Math.max(0, Math.min(255, Math.round(t * 255)))];
}

/* ---------------------------------------------------------------- lens kinds */

const NEIGHBOUR_LENSES = { distanceToMeasure: "s-dtm-k", neighbourDistance: "s-nd-k" };

/** The lens of kind `kind` read from the form, for the kinds this file adds; else `lens`. */
function hookLensFromForm(kind, lens) {
  if (NEIGHBOUR_LENSES[kind]) return { kind, k: intValue(NEIGHBOUR_LENSES[kind]) };
  if (kind === "lInfinityCentrality") return { kind };
  return lens;
}

/** First parameters of the added kinds (k = 10 is our choice: a small neighbourhood). */
function hookDefaultLens(kind) {
  if (NEIGHBOUR_LENSES[kind]) return { kind, k: 10 };
  if (kind === "lInfinityCentrality") return { kind };
  return null;
}

/* ---------------------------------------------------------------- covers */

/** Cover kind, and the second filter with its cover, from the form into `s`. */
function hookCoverFromForm(s) {
  s.cover.kind = byId("s-cover-kind").value;
  if (!byId("s-second").checked) { delete s.lens2; delete s.cover2; return; }
  if (!s.lens2) {
    // Just ticked: the second principal component, covered like the first filter.
    s.lens2 = { kind: "principal", component: 2 };
    s.cover2 = { intervals: s.cover.intervals, overlap: s.cover.overlap, kind: s.cover.kind };
    return;
  }
  const kind = byId("s2-lens").value;
  if (s.lens2.kind !== kind) {
    state.lensMemory2[s.lens2.kind] = s.lens2;
    s.lens2 = state.lensMemory2[kind] || (kind === "principal" ? { kind, component: 2 } : defaultLens(kind));
  }
  else if (kind === "principal") s.lens2 = { kind, component: intValue("s2-component") };
  else if (kind === "column") s.lens2 = { kind, column: byId("s2-column").value };
  else if (NEIGHBOUR_LENSES[kind]) s.lens2 = { kind, k: intValue("s2-k") };
  else if (kind === "density") s.lens2 = { kind, bandwidth: byId("s2-bandwidth").value.trim() === "" ? null : Number(byId("s2-bandwidth").value) };
  else if (kind === "eccentricity") s.lens2 = { kind, norm: byId("s2-norm").value };
  s.cover2 = { intervals: intValue("s2-intervals"), overlap: Number(byId("s2-overlap").value), kind: byId("s2-cover-kind").value };
}

/** Shows the added fields for settings `s`; `put` sets a field unless it has the focus. */
function hookRenderSettings(s, put) {
  if (NEIGHBOUR_LENSES[s.lens.kind]) put(NEIGHBOUR_LENSES[s.lens.kind], s.lens.k);
  put("s-cover-kind", s.cover.kind || "uniform");
  const two = !!s.lens2;
  byId("s-second").checked = two;
  byId("second-fields").hidden = !two;
  if (!two) { byId("lens-hist-2").hidden = true; return; }
  const l2 = s.lens2, c2 = s.cover2 || s.cover;
  put("s2-lens", l2.kind);
  setOptions(byId("s2-column"), numericColumns().map((n) => [n, n]), l2.kind === "column" ? l2.column : undefined);
  if (l2.kind === "principal") put("s2-component", l2.component);
  if (NEIGHBOUR_LENSES[l2.kind]) put("s2-k", l2.k);
  if (l2.kind === "density") put("s2-bandwidth", l2.bandwidth === null || l2.bandwidth === undefined ? "" : l2.bandwidth);
  if (l2.kind === "eccentricity") put("s2-norm", l2.norm || "rms");
  for (const e of document.querySelectorAll("[data-lens2]")) e.hidden = e.dataset.lens2.split(" ").indexOf(l2.kind) < 0;
  put("s2-intervals", c2.intervals);
  put("s2-overlap", c2.overlap);
  byId("s2-overlap-out").textContent = Math.round(c2.overlap * 100) + " %";
  put("s2-cover-kind", c2.kind || "uniform");
}

/* ---------------------------------------------------------------- colour */

/** What the worker is asked for to colour the nodes. */
function colourRequest() {
  const c = state.colour;
  return { column: c.column, stat: c.stat, lens: c.column === LENS_COLOUR };
}

/** The legend's title for the colouring in force. */
function colourTitle() {
  const c = state.colour;
  if (c.column === LENS_COLOUR) return "Mean filter value in each node";
  const st = c.stat;
  if (st && st.kind === "shareAbove") return "Share of rows with " + c.column + " above " + formatNumber(st.threshold) + ", in each node";
  return statWords(st) + " of " + c.column + " in each node";
}

/** The tooltip's words for one node's value. */
function colourShort() {
  const c = state.colour;
  if (c.column === LENS_COLOUR) return "mean filter value";
  const st = c.stat;
  if (st && st.kind === "shareAbove") return "share of " + c.column + " > " + formatNumber(st.threshold);
  return statWords(st).toLowerCase() + " " + c.column;
}

/** The time column whose instants the colour values are (the mean or median of a time
 *  column, or the filter when it is a time column), or null. */
function colourTime() {
  const c = state.colour;
  if (c.column === LENS_COLOUR) {
    const lens = (state.builtSettings || state.settings || {}).lens;
    return lens && lens.kind === "column" ? timeOf(lens.column) : null;
  }
  const st = c.stat && c.stat.kind ? c.stat.kind : c.stat;
  return st === "mean" || st === "median" || !st ? timeOf(c.column) : null;
}

/** A node's colour value as the legend and the tooltip write it: an instant (to the unit
 *  that `span`, the legend's range, calls for), a length of time for the spread of a time
 *  column, else a number. */
function colourValueText(x, span) {
  const t = colourTime();
  if (t) return formatInstant(x, t, span !== undefined && Number.isFinite(span) ? spanPrecision(span) : undefined);
  const st = state.colour.stat && state.colour.stat.kind ? state.colour.stat.kind : state.colour.stat;
  if (st === "spread" && timeOf(state.colour.column)) return formatDuration(x);
  return formatNumber(x);
}

/** " (UTC)", " (+02:00)"... for a legend of instants, else "". */
function colourZoneNote() {
  const t = colourTime();
  return t ? " (" + zoneShort(t) + ")" : "";
}

/** "Centre on zero" applies: it is ticked and the values are not instants (zero would be 1970). */
function centred() {
  return byId("colour-centre").checked && !colourTime();
}

/** The colour scale for node values over the data range [lo, hi]: the range shown (fixed
 *  or automatic; centred on zero, automatic is symmetric) and the value -> colour map. */
function colourScale(lo, hi) {
  const centre = centred();
  const fixed = byId("colour-range").value === "fixed";
  if (fixed) {
    const a = Number(byId("colour-lo").value), b = Number(byId("colour-hi").value);
    if (byId("colour-lo").value.trim() !== "" && byId("colour-hi").value.trim() !== "" && Number.isFinite(a) && Number.isFinite(b) && a < b) { lo = a; hi = b; }
  } else if (centre && Number.isFinite(lo)) {
    const m = Math.max(Math.abs(lo), Math.abs(hi));
    lo = -m; hi = m;
  }
  const at = centre ? vikAt : colourAt;
  const split = centre && lo < 0 && hi > 0;   // zero sits at the middle of the map
  const t = function (v) {
    if (!Number.isFinite(v)) return NaN;
    if (split) return v < 0 ? 0.5 * Math.max(0, (v - lo) / -lo) : 0.5 + 0.5 * Math.min(1, v / hi);
    return hi > lo ? Math.max(0, Math.min(1, (v - lo) / (hi - lo))) : 0.5;
  };
  return { lo, hi, fill: (v) => at(t(v)), at };
}

/** The legend's and pictures' map at t in [0, 1]. */
function legendColourAt(t) {
  return centred() ? vikAt(t) : colourAt(t);
}

function legendGradient() {
  const stops = [];
  for (let k = 0; k <= 16; k++) stops.push(legendColourAt(k / 16) + " " + (k * 100 / 16).toFixed(2) + "%");
  return "linear-gradient(to right, " + stops.join(", ") + ")";
}

/** The statistic chosen in the colour card. */
function statFromControls() {
  const kind = byId("colour-stat").value;
  if (kind !== "shareAbove") return kind;
  const t = Number(byId("colour-threshold").value);
  return { kind, threshold: Number.isFinite(t) ? t : 0 };
}

/** The colour card's added controls, after app.js has filled the column list. */
function hookColourControls() {
  const select = byId("colour-select");
  const o = el("option", null, "The filter (lens value)");
  o.value = LENS_COLOUR;
  select.append(o);
  if (state.colour.column === LENS_COLOUR) select.value = LENS_COLOUR;
  const st = state.colour.stat;
  byId("colour-stat").value = st && st.kind ? st.kind : st || "mean";
  byId("colour-stat").disabled = state.colour.column === LENS_COLOUR;
  byId("colour-centre").disabled = !!colourTime();
  byId("colour-threshold-field").hidden = !(st && st.kind === "shareAbove");
  const fixed = byId("colour-range").value === "fixed";
  byId("colour-lo").hidden = byId("colour-hi").hidden = !fixed;
}

/** Colours again with the values already fetched (the scale changed, not the values). */
function recolour() {
  if (!state.colour.values) return;
  applyColour({ column: state.colour.column, values: state.colour.values });
  renderLegend();
}

function wireHooks() {
  // The second filter offers the same kinds as the first, listed once in index.html.
  byId("s2-lens").replaceChildren(...Array.from(byId("s-lens").options, (o) => o.cloneNode(true)));
  const again = function () {
    state.colour.stat = statFromControls();
    renderColourControls();
    if (state.colour.column) setColourColumn(state.colour.column).catch(function () { /* shown on the page */ });
  };
  byId("colour-stat").addEventListener("change", again);
  byId("colour-threshold").addEventListener("change", again);
  byId("colour-centre").addEventListener("change", recolour);
  byId("colour-range").addEventListener("change", function () { renderColourControls(); recolour(); });
  byId("colour-lo").addEventListener("change", recolour);
  byId("colour-hi").addEventListener("change", recolour);
  byId("s2-overlap").addEventListener("input", function () {
    byId("s2-overlap-out").textContent = Math.round(Number(byId("s2-overlap").value) * 100) + " %";
  });
}

/* ---------------------------------------------------------------- lens histogram */

const HISTOGRAM_BINS = 40;
const lensHistograms = [null, null];

/** Fetches the lens histogram(s) of the graph just built and draws them. */
async function refreshLensHistogram() {
  const axes = state.builtSettings && state.builtSettings.lens2 ? [0, 1] : [0];
  lensHistograms[1] = null;
  for (const axis of axes) {
    const canvas = byId(axis ? "lens-hist-2" : "lens-hist");
    try {
      const h = await engine.request("lensHistogram", { bins: HISTOGRAM_BINS, axis });
      lensHistograms[axis] = h;
      canvas.hidden = false;
      drawLensHistogram(canvas, h, axis);
    } catch (e) {
      lensHistograms[axis] = null;
      canvas.hidden = true;   // an older graph's values are gone; the next build draws again
    }
  }
}

/** Bars of the row counts per bin; under them each cover interval as a band (two rows, so
 *  neighbours' overlaps show) labelled with the rows it holds. */
function drawLensHistogram(canvas, h, axis) {
  const ratio = window.devicePixelRatio || 1;
  const w = canvas.clientWidth || 300, ht = canvas.clientHeight || 110;
  canvas.width = Math.round(w * ratio);
  canvas.height = Math.round(ht * ratio);
  const g = canvas.getContext("2d");
  g.setTransform(ratio, 0, 0, ratio, 0, 0);
  g.clearRect(0, 0, w, ht);
  const lo = h.edges[0], hi = h.edges[h.edges.length - 1];
  let a = lo, b = hi;
  for (const iv of h.intervals) { a = Math.min(a, iv[0]); b = Math.max(b, iv[1]); }
  const x = (v) => 4 + (w - 8) * (b > a ? (v - a) / (b - a) : 0.5);
  const barsTop = 4, barsBottom = ht - 34;
  const most = Math.max(1, ...h.counts);
  g.fillStyle = "#56616b";
  for (let i = 0; i < h.counts.length; i++) {
    const x0 = x(h.edges[i]), x1 = x(h.edges[i + 1]);
    const bh = (barsBottom - barsTop) * h.counts[i] / most;
    g.fillRect(x0, barsBottom - bh, Math.max(1, x1 - x0 - 1), bh);
  }
  g.font = "10px sans-serif";
  g.textAlign = "center";
  g.textBaseline = "middle";
  // The bands in two passes (one colour each), then the labels that fit: with hundreds of
  // intervals almost none fits, and none is measured.
  for (const odd of [0, 1]) {
    g.fillStyle = odd ? "rgba(0, 34, 78, 0.28)" : "rgba(217, 195, 92, 0.55)";
    for (let k = odd; k < h.intervals.length; k += 2) {
      const iv = h.intervals[k], x0 = x(iv[0]), x1 = x(iv[1]);
      g.fillRect(x0, barsBottom + 3 + odd * 15, Math.max(1, x1 - x0), 13);
    }
  }
  g.fillStyle = "#1c242c";
  h.intervals.forEach(function (iv, k) {
    const x0 = x(iv[0]), x1 = x(iv[1]);
    if (x1 - x0 < 10) return;
    const label = String(iv[2]);
    if (g.measureText(label).width + 4 < x1 - x0) g.fillText(label, (x0 + x1) / 2, barsBottom + 3 + (k % 2) * 15 + 7);
  });
  const rows = h.intervals.map((iv) => iv[2]);
  const listed = rows.length > 60 ? rows.slice(0, 60).join(", ") + ", … (" + rows.length + " intervals)" : rows.join(", ");
  // A filter that is a time column says its range as instants.
  const lens = state.builtSettings && (axis ? state.builtSettings.lens2 : state.builtSettings.lens);
  const t = lens && lens.kind === "column" ? timeOf(lens.column) : null;
  const range = t ? "Filter from " + formatInstant(lo, t, spanPrecision(hi - lo)) + " to " + formatInstant(hi, t, spanPrecision(hi - lo)) + " (" + zoneShort(t) + "). " : "";
  canvas.title = range + "Rows in each interval, in order: " + listed;
  canvas.setAttribute("aria-label", "Histogram of the filter values with the cover's " + h.intervals.length + " intervals; rows in each interval: " + listed);
}

/** The last histograms (copies), for scripts and tests. */
function lensHistogramInfo() {
  return JSON.parse(JSON.stringify(lensHistograms));
}
