/* graph-view.js: draws a graph on a canvas and turns pointer input into view changes,
 * hovers and selections. It does not know about files, settings or the engine: it is
 * given positions, sizes, edges and colours, and reports which node is under the pointer.
 *
 * Node positions and disc radii come from the engine's layout (src/layout.rs, the drawing
 * in [-1, 1]); the view maps them to CSS pixels as  screen = world * scale + offset  (y
 * pointing down, as the canvas does). A disc's radius scales with the view as the
 * positions do, so discs keep the room the layout gave them (area proportional to rows,
 * no disc over another, edges showing between them), within two bounds: never larger
 * than a share of the canvas (MAX_RADIUS_SHARE) and never smaller than MIN_RADIUS, so a
 * node stays visible when a big graph is zoomed out. An edge's width grows with the rows
 * its two nodes share. Nodes can be hidden (setHidden: components too small to matter):
 * they and their edges are not drawn, picked or fitted.
 *
 * Selection: a click picks one node, a shift-click adds or removes one, and a drag with
 * shift held (or any drag in lasso mode) draws a lasso whose enclosed node centres are
 * selected. With the canvas focused, arrow keys move a keyboard cursor between nodes
 * and Enter (shift+Enter) selects (toggles) the node under it.
 */

function GraphView(canvas, callbacks) {
  this.canvas = canvas;
  this.ctx = canvas.getContext("2d");
  this.callbacks = callbacks;
  this.graph = null;
  this.fills = null;
  this.highlight = null;    // Set of node indices marked on top (a loop or branch), or null
  this.selected = null;      // the node whose ring is strongest (the last one picked)
  this.selection = new Set(); // every selected node
  this.lit = null;            // Uint8Array per node: nodes lit from elsewhere (the scatter)
  this.cursor = null;         // keyboard cursor
  this.lassoMode = false;
  this.lasso = null;          // [x0, y0, x1, y1, ...] while drawing
  this.hovered = null;
  this.radii = null;
  this.order = null;
  this.view = { scale: 1, x: 0, y: 0 };
  this.width = 0;
  this.height = 0;
  this.drawCount = 0;
  this.previewCount = 0;    // drawings that were a stretched copy of the layer (zooming)
  this.zooming = false;
  this.zoomRest = null;
  this.lastDrawMs = null;   // milliseconds the last drawing took
  // The edges, discs and highlight (what a pan only moves) are drawn into `layer` once per
  // change of them or of the scale, and a pan or a hover copies it (see _blitBase).
  this.baseVersion = 0;     // counts changes of what the layer shows
  this.layer = null;        // {canvas, key, ox, oy, w, h}
  this.bounds = null;       // the layout's world bounding box
  this.drawTotalMs = 0;     // and all drawings together
  this.sliceWork = 2000;    // work a slice of the layer draws (see _itemWork); learnt in _sliceDone
  this.frameStarted = 0;    // performance.now() when this frame's drawing began
  this.layerPending = false; // the layer is still being drawn, slice by slice
  this.lastLayerMs = null;  // milliseconds the last finished layer took, its slices together
  this.maxShared = 1;       // the most rows an edge's two nodes share (edge widths)
  this.pending = false;
  this.fitted = false;     // true until the user pans or zooms: resizes then refit
  this.hidden = null;       // Uint8Array per node: 1 for a node left out of the drawing, or null
  this.radiiKey = null;     // the scale and cap this.radii were computed for
  this._listen();
  this.resize();
}

/** Largest disc radius, as a share of the canvas's smaller side (at least 8 pixels). */
GraphView.MAX_RADIUS_SHARE = 0.045;
GraphView.MIN_RADIUS = 3;
/** Pixels kept free round the fitted drawing. */
GraphView.FIT_MARGIN = 14;

/** A disc's radius in CSS pixels at scale s: its world radius scaled, within [least, cap]. */
function discPixels(worldRadius, s, cap, least) {
  return Math.min(cap, Math.max(least, worldRadius * s));
}

GraphView.prototype.setGraph = function (graph, keepView) {
  this.graph = graph;
  this.bounds = null;
  this.selected = null;
  this.selection = new Set();
  this.lit = null;
  this.cursor = null;
  this.hovered = null;
  this.highlight = null;
  this.hidden = null;
  let maxShared = 1;
  if (graph) for (const v of graph.edgeShared) maxShared = Math.max(maxShared, v);
  this.maxShared = maxShared;
  // Draw big discs first so small ones stay visible on top of them.
  this.order = largestFirst(graph ? graph.nodeSizes : [], null);
  this.baseVersion++;
  this.radiiKey = null;
  if (!keepView) this.fit();
  this._sizeDiscs();
  this.requestDraw();
};

/** Leaves out of the drawing the nodes marked 1 in `mask` (a Uint8Array per node), and
 *  their edges; null shows every node. The view is fitted again to what is shown. */
GraphView.prototype.setHidden = function (mask) {
  if (!this.graph || (mask === null && this.hidden === null)) return;
  this.hidden = mask;
  this.order = largestFirst(this.graph.nodeSizes, mask);
  this.bounds = null;
  this.baseVersion++;
  this.fit();
  this.requestDraw();
};

/** Whether node i is drawn. */
GraphView.prototype.shown = function (i) {
  return !this.hidden || !this.hidden[i];
};

/** Marks a set of nodes (and the edges among them) on top of the drawing; null clears. */
GraphView.prototype.setHighlight = function (nodes) {
  this.highlight = nodes && nodes.length ? new Set(nodes) : null;
  this.baseVersion++;
  this.requestDraw();
};

GraphView.prototype._drawHighlight = function (ctx, s, ox, oy) {
  const g = this.graph, p = g.positions, h = this.highlight;
  ctx.strokeStyle = "#d0501f";
  ctx.lineWidth = 5;
  for (let e = 0; e < g.edgeA.length; e++) {
    const a = g.edgeA[e], b = g.edgeB[e];
    if (!h.has(a) || !h.has(b) || !this.shown(a) || !this.shown(b)) continue;
    ctx.beginPath();
    ctx.moveTo(p[2 * a] * s + ox, p[2 * a + 1] * s + oy);
    ctx.lineTo(p[2 * b] * s + ox, p[2 * b + 1] * s + oy);
    ctx.stroke();
  }
  ctx.lineWidth = 3;
  const cap = this._radiusCap();
  for (const i of h) {
    if (i >= g.nodeSizes.length || !this.shown(i)) continue;
    ctx.beginPath();
    ctx.arc(p[2 * i] * s + ox, p[2 * i + 1] * s + oy, discPixels(g.radii[i], s, cap, GraphView.MIN_RADIUS) + 2.5, 0, 2 * Math.PI);
    ctx.stroke();
  }
};

GraphView.prototype.setFills = function (fills) {
  this.fills = fills;
  this.baseVersion++;
  this.requestDraw();
};

/** `nodes`: a Set of node indices (or one index, or null); `primary`: the ringed one. */
GraphView.prototype.setSelected = function (nodes, primary) {
  if (nodes === null || nodes === undefined) nodes = new Set();
  else if (typeof nodes === "number") nodes = new Set([nodes]);
  this.selection = nodes;
  this.selected = primary !== undefined ? primary : (nodes.size === 1 ? nodes.values().next().value : null);
  this.baseVersion++;
  this.requestDraw();
};

GraphView.prototype.setLit = function (lit) {
  this.lit = lit;
  this.baseVersion++;
  this.requestDraw();
};

/** Nodes whose centres lie inside the polygon [x0, y0, x1, y1, ...] (CSS pixels). */
GraphView.prototype.nodesInPolygon = function (poly) {
  const out = [];
  if (!this.graph || poly.length < 6) return out;
  for (const i of Array.from(this.order).sort((a, b) => a - b)) {
    const q = this.toScreen(i);
    if (pointInPolygon(q.x, q.y, poly)) out.push(i);
  }
  return out;
};

/** Even-odd rule ray casting (common practice). */
function pointInPolygon(x, y, poly) {
  let inside = false;
  for (let i = 0, j = poly.length - 2; i < poly.length; j = i, i += 2) {
    const xi = poly[i], yi = poly[i + 1], xj = poly[j], yj = poly[j + 1];
    if ((yi > y) !== (yj > y) && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi) inside = !inside;
  }
  return inside;
}

/** The largest disc radius on this canvas, in CSS pixels. */
GraphView.prototype._radiusCap = function () {
  return Math.max(8, Math.min(this.width, this.height) * GraphView.MAX_RADIUS_SHARE);
};

/** Each disc's radius at the view's scale (this.radii, CSS pixels: picking, rings); the
 *  layer is redrawn when the cap (the canvas's size) changed. */
GraphView.prototype._sizeDiscs = function () {
  const g = this.graph;
  if (!g) { this.radii = null; return; }
  const s = this.view.scale, cap = this._radiusCap(), key = s + " " + cap;
  if (key === this.radiiKey && this.radii && this.radii.length === g.nodeSizes.length) return;
  if (!this.radiiKey || this.radiiKey.split(" ")[1] !== String(cap)) this.baseVersion++;
  const radii = this.radii && this.radii.length === g.nodeSizes.length ? this.radii : new Float64Array(g.nodeSizes.length);
  for (let i = 0; i < radii.length; i++) radii[i] = discPixels(g.radii[i], s, cap, GraphView.MIN_RADIUS);
  this.radii = radii;
  this.radiiKey = key;
};

/** Fits what is shown into the canvas, every disc whole (its radius at the fitted scale)
 *  with FIT_MARGIN pixels to spare (see fitDiscs). */
GraphView.prototype.fit = function () {
  const g = this.graph, order = this.order;
  if (!g || !order || order.length === 0 || this.width === 0) return;
  const m = GraphView.FIT_MARGIN;
  const W = Math.max(1, this.width - 2 * m), H = Math.max(1, this.height - 2 * m);
  const f = fitDiscs(g.positions, g.radii, order, W, H, this._radiusCap(), GraphView.MIN_RADIUS);
  this.view.scale = f.scale;
  this.view.x = m + (W - f.w) / 2 - f.x0;
  this.view.y = m + (H - f.h) / 2 - f.y0;
  this.fitted = true;
  this._sizeDiscs();
  this.requestDraw();
};

/** The largest scale s at which the discs of the nodes in `order` (positions p, world
 *  radii R, drawn at discPixels(R, s, cap, least)) fit a W × H box, and their extent at
 *  that scale: {scale, x0, y0, w, h} (x0, y0 from the world origin, in pixels). The drawn
 *  width lies between the centres' span times s and that plus two caps, so s is found by
 *  halving that interval; only the nodes near the centres' box can reach the extent's
 *  edge, so only they are measured. */
function fitDiscs(p, R, order, W, H, cap, least) {
  let cx0 = Infinity, cx1 = -Infinity, cy0 = Infinity, cy1 = -Infinity, rMost = 0;
  for (let k = 0; k < order.length; k++) {
    const i = order[k], x = p[2 * i], y = p[2 * i + 1];
    if (x < cx0) cx0 = x;
    if (x > cx1) cx1 = x;
    if (y < cy0) cy0 = y;
    if (y > cy1) cy1 = y;
    if (R[i] > rMost) rMost = R[i];
  }
  const spanX = cx1 - cx0, spanY = cy1 - cy0;
  let hi = Math.min(spanX > 1e-12 ? W / spanX : Infinity, spanY > 1e-12 ? H / spanY : Infinity);
  let lo = Number.isFinite(hi) ? Math.max(0, Math.min(spanX > 1e-12 ? (W - 2 * cap) / spanX : hi, spanY > 1e-12 ? (H - 2 * cap) / spanY : hi)) : 0;
  // At a scale of at least lo, a disc whose centre lies more than (cap - least) / lo inside
  // the centres' box cannot reach past a disc on the box's edge.
  const d = lo > 0 ? (cap - least) / lo : Infinity;
  const xs = [], ys = [], rs = [];
  for (let k = 0; k < order.length; k++) {
    const i = order[k], x = p[2 * i], y = p[2 * i + 1];
    if (x - cx0 <= d || cx1 - x <= d || y - cy0 <= d || cy1 - y <= d) { xs.push(x); ys.push(y); rs.push(R[i]); }
  }
  const n = xs.length;
  const out = { scale: 1, x0: 0, y0: 0, w: 0, h: 0 };
  const measure = (s) => {
    let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
    for (let k = 0; k < n; k++) {
      const r = Math.min(cap, Math.max(least, rs[k] * s)), x = xs[k] * s, y = ys[k] * s;
      if (x - r < x0) x0 = x - r;
      if (x + r > x1) x1 = x + r;
      if (y - r < y0) y0 = y - r;
      if (y + r > y1) y1 = y + r;
    }
    out.scale = s; out.x0 = x0; out.y0 = y0; out.w = x1 - x0; out.h = y1 - y0;
    return out.w <= W && out.h <= H;
  };
  if (!Number.isFinite(hi)) { measure(rMost > 0 ? cap / rMost : 1); return out; } // one place: the disc at its cap
  if (measure(hi)) return out;
  for (let k = 0; k < 14; k++) {
    const mid = (lo + hi) / 2;
    if (measure(mid)) lo = mid; else hi = mid;
  }
  measure(lo > 0 ? lo : hi);
  return out;
}

GraphView.prototype.resize = function () {
  const rect = this.canvas.getBoundingClientRect();
  const dpr = window.devicePixelRatio || 1;
  const oldW = this.width, oldH = this.height;
  // Nothing changed (draw() may have taken the new size already): the layer stays.
  if (rect.width === oldW && rect.height === oldH && dpr === this.dpr) return;
  this.width = rect.width;
  this.height = rect.height;
  this.canvas.width = Math.max(1, Math.round(rect.width * dpr));
  this.canvas.height = Math.max(1, Math.round(rect.height * dpr));
  this.dpr = dpr;
  if (this.graph) {
    if (oldW === 0 || oldH === 0 || this.fitted) this.fit();
    else { this.view.x += (this.width - oldW) / 2; this.view.y += (this.height - oldH) / 2; }
    this._sizeDiscs();
  }
  this.requestDraw();
};

GraphView.prototype.toScreen = function (i) {
  const p = this.graph.positions;
  return { x: p[2 * i] * this.view.scale + this.view.x, y: p[2 * i + 1] * this.view.scale + this.view.y };
};

/** The topmost node whose disc holds the point (CSS pixels in the canvas), or null. */
GraphView.prototype.nodeAt = function (x, y) {
  if (!this.graph) return null;
  const p = this.graph.positions, s = this.view.scale, ox = this.view.x, oy = this.view.y;
  for (let k = this.order.length - 1; k >= 0; k--) {
    const i = this.order[k];
    const dx = p[2 * i] * s + ox - x, dy = p[2 * i + 1] * s + oy - y;
    const r = this.radii[i] + 2;
    if (dx * dx + dy * dy <= r * r) return i;
  }
  return null;
};

GraphView.prototype.requestDraw = function () {
  if (this.pending) return;
  this.pending = true;
  requestAnimationFrame(() => { this.pending = false; this.draw(); });
};

GraphView.prototype.draw = function () {
  this.frameStarted = performance.now();
  // A size changed since the last frame (the progress bar came or went as a build ended)
  // is taken before drawing, so the graph is drawn once, at the size it is shown at, not
  // once more when the resize observer reports it after this frame.
  const rect = this.canvas.getBoundingClientRect();
  if (rect.width !== this.width || rect.height !== this.height || (window.devicePixelRatio || 1) !== this.dpr) this.resize();
  const started = performance.now();
  if (this.graph) this._sizeDiscs();
  this._draw();
  this.lastDrawMs = performance.now() - started;
  this.drawTotalMs += this.lastDrawMs;
};

/** The world bounding box of the centres shown, made once per graph and hiding. */
GraphView.prototype._worldBounds = function () {
  if (this.bounds) return this.bounds;
  const p = this.graph.positions;
  let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
  for (const i of this.order) {
    x0 = Math.min(x0, p[2 * i]); x1 = Math.max(x1, p[2 * i]);
    y0 = Math.min(y0, p[2 * i + 1]); y1 = Math.max(y1, p[2 * i + 1]);
  }
  this.bounds = { x0, x1, y0, y1 };
  return this.bounds;
};

/** Copies the layer (edges, discs, highlight) into the view, drawing the layer first when
 *  what it shows or the scale changed. False when the graph at this scale is too large
 *  for a layer (then the caller draws directly). The layer is placed so that a pan by
 *  whole CSS pixels copies it at whole device pixels: the picture is the same as drawn.
 *
 *  A layer is drawn in slices, one per frame, each about SLICE_MS long (the edges, then
 *  the discs largest first, then the highlight: the order of a drawing in one go, so the
 *  finished layer is the same picture). A graph of 19 000 nodes takes about 150 ms to draw;
 *  in one frame that would hold the page still, in slices it fills in over a few frames
 *  while the page stays responsive. `layerPending` is true until the last slice is in. */
GraphView.prototype._blitBase = function (ctx) {
  const g = this.graph, n = this.order.length;
  this.layerPending = false;
  if (n === 0) return true;
  const s = this.view.scale, dpr = this.dpr, b = this._worldBounds();
  const pad = this._radiusCap() + 8;
  const w = (b.x1 - b.x0) * s + 2 * pad, h = (b.y1 - b.y0) * s + 2 * pad;
  let L = this.layer;
  const started = performance.now();
  // While the wheel turns, the layer drawn at an earlier scale is copied stretched (a
  // preview, a little blurred); the exact picture follows once the wheel rests. A layer
  // still being drawn goes on at its own scale meanwhile.
  if (L && this.zooming && L.version === this.baseVersion && L.dpr === dpr) {
    const k = s / L.s;
    if (k >= 1 / 8 && k <= 8) {
      const work = L.next < L.total ? this._drawSlice(L) : 0;
      ctx.setTransform(1, 0, 0, 1, 0, 0);
      ctx.drawImage(L.canvas, (this.view.x - L.ox * k) * dpr, (this.view.y - L.oy * k) * dpr, L.cw * k, L.ch * k);
      ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
      this._sliceDone(L, work, started);
      this.previewCount++;
      return true;
    }
  }
  if (!(w * h * dpr * dpr <= GraphView.LAYER_MAX_PIXELS)) { this.layer = null; return false; }
  // A pan by whole device pixels keeps the key; any other move draws the layer again.
  const frac = (v) => { const d = v * dpr; return Math.round((d - Math.floor(d)) * 1e4) % 1e4; };
  const key = [this.baseVersion, s, dpr, frac(this.view.x), frac(this.view.y)].join(" ");
  if (!L || L.key !== key) {
    // Screen x = layer x + (view.x - ox); that offset is made a whole number of device pixels.
    const rawX = this.view.x + b.x0 * s - pad, rawY = this.view.y + b.y0 * s - pad;
    const bx = Math.floor(rawX * dpr) / dpr, by = Math.floor(rawY * dpr) / dpr;
    const canvas = L ? L.canvas : document.createElement("canvas");
    const cw = Math.ceil(w * dpr) + 2, ch = Math.ceil(h * dpr) + 2;
    if (canvas.width !== cw || canvas.height !== ch) { canvas.width = cw; canvas.height = ch; }
    const lctx = canvas.getContext("2d");
    lctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    lctx.clearRect(0, 0, cw / dpr, ch / dpr);
    L = this.layer = {
      canvas, ctx: lctx, key, ox: this.view.x - bx, oy: this.view.y - by, cw, ch, s, dpr, version: this.baseVersion,
      next: 0, total: g.edgeA.length + n + 1, ms: 0,
    };
  }
  const work = L.next < L.total ? this._drawSlice(L) : 0;
  ctx.setTransform(1, 0, 0, 1, 0, 0);
  ctx.drawImage(L.canvas, Math.round((this.view.x - L.ox) * dpr), Math.round((this.view.y - L.oy) * dpr));
  ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
  this._sliceDone(L, work, started);
  return true;
};

/** Milliseconds one slice of a layer aims at (drawing and copying together); the frame's
 *  own work (style, layout, paint of the page) comes on top. */
GraphView.SLICE_MS = 10;

/** Work of drawing item `k` of the layer, in units of about one edge: a disc costs more
 *  the bigger it is (two fills of its area), so the first discs (the largest) are dear. */
GraphView.prototype._itemWork = function (k, E, dpr) {
  const d = k - E;
  if (d < 0 || d >= this.order.length) return 1;
  const r = this.radii[this.order[d]] * dpr;
  return 1 + r * r / 64;
};

/** Draws the layer's next slice of items; returns the work drawn. Time this frame already
 *  spent (laying the page out after a build changed the panels) comes off the slice. */
GraphView.prototype._drawSlice = function (L) {
  const spent = this.frameStarted ? performance.now() - this.frameStarted : 0;
  const share = Math.max(0, Math.min(1, (GraphView.SLICE_MS - spent) / GraphView.SLICE_MS));
  const budget = this.sliceWork * share, E = this.graph.edgeA.length;
  const from = L.next;
  let to = from, work = 0;
  // At least a few items, so a run of busy frames still ends the layer.
  while (to < L.total && (work < budget || to - from < 16)) work += this._itemWork(to++, E, L.dpr);
  this._drawItems(L.ctx, L.s, L.ox, L.oy, L.cw / L.dpr, L.ch / L.dpr, from, to);
  L.next = to;
  return work;
};

/** After a slice was drawn and the layer copied: learns how much work fits in SLICE_MS
 *  (the copy is where the canvas turns the slice into pixels, so it is timed with it) and
 *  asks for the next frame when the layer is not finished. */
GraphView.prototype._sliceDone = function (L, work, started) {
  if (work > 0) {
    const ms = performance.now() - started;
    L.ms += ms;
    if (work >= 64 && ms >= 1) this.sliceWork = Math.max(256, Math.min(1e7, work * GraphView.SLICE_MS / ms));
    if (L.next >= L.total) this.lastLayerMs = L.ms;
  }
  this.layerPending = L.next < L.total;
  if (this.layerPending) this.requestDraw();
};

/** Edges, discs (largest first; with a selection or lit nodes the others dimmed) and the
 *  highlight, with screen = world * s + (ox, oy), into a w × h box (CSS pixels); what
 *  lies wholly outside the box is skipped. */
GraphView.prototype._drawBase = function (ctx, s, ox, oy, w, h) {
  this._drawItems(ctx, s, ox, oy, w, h, 0, this.graph.edgeA.length + this.order.length + 1);
};

/** Items `from` to `to` (exclusive) of the drawing _drawBase makes: items 0 to E - 1 are
 *  the edges, the next n the discs in drawing order, the last one the highlight. */
GraphView.prototype._drawItems = function (ctx, s, ox, oy, w, h, from, to) {
  const g = this.graph, p = g.positions, E = g.edgeA.length, n = this.order.length;
  if (from < E) {
    const maxShared = this.maxShared;
    ctx.lineCap = "round";
    ctx.strokeStyle = "rgba(62, 74, 86, 0.42)";
    const m = 8;
    const hidden = this.hidden;
    for (let e = from; e < Math.min(E, to); e++) {
      const a = g.edgeA[e], b = g.edgeB[e];
      if (hidden && (hidden[a] || hidden[b])) continue;
      const xa = p[2 * a] * s + ox, ya = p[2 * a + 1] * s + oy, xb = p[2 * b] * s + ox, yb = p[2 * b + 1] * s + oy;
      if ((xa < -m && xb < -m) || (xa > w + m && xb > w + m) || (ya < -m && yb < -m) || (ya > h + m && yb > h + m)) continue;
      ctx.lineWidth = 1 + 5 * Math.sqrt(g.edgeShared[e] / maxShared);
      ctx.beginPath();
      ctx.moveTo(xa, ya);
      ctx.lineTo(xb, yb);
      ctx.stroke();
    }
  }
  // Each disc is drawn by ringedDisc (a graph of thousands of nodes spends most of a full
  // drawing on its discs); a faded disc is faded over its white one.
  const dim = this.selection.size > 0 || !!this.lit;
  const ring = GraphView.RING / 2, cap = this._radiusCap(), R = g.radii;
  for (let k = Math.max(0, from - E); k < Math.min(n, to - E); k++) {
    const i = this.order[k];
    const x = p[2 * i] * s + ox, y = p[2 * i + 1] * s + oy, r = discPixels(R[i], s, cap, GraphView.MIN_RADIUS);
    if (x + r < -2 || x - r > w + 2 || y + r < -2 || y - r > h + 2) continue;
    const faded = dim && !this.selection.has(i) && !(this.lit && this.lit[i]);
    ringedDisc(ctx, x, y, r, ring, this.fills ? this.fills[i] : "rgb(120, 134, 150)", faded ? 0.35 : 1);
  }
  if (to > E + n && this.highlight) this._drawHighlight(ctx, s, ox, oy);
};

/** Width (CSS pixels) of the white ring around each disc. */
GraphView.RING = 1.25;

/** Graphs with at least this many nodes are previewed while zooming (drawing them exactly
 *  takes longer than a frame), and the exact drawing waits for the wheel to rest this long. */
GraphView.ZOOM_PREVIEW_NODES = 1500;
GraphView.ZOOM_REST_MS = 140;

/** Largest layer (device pixels) kept for pans; a bigger graph on screen (zoomed in) is
 *  drawn directly, only what is in view. */
GraphView.LAYER_MAX_PIXELS = 12e6;

GraphView.prototype._draw = function () {
  const ctx = this.ctx, g = this.graph;
  ctx.setTransform(this.dpr, 0, 0, this.dpr, 0, 0);
  ctx.clearRect(0, 0, this.width, this.height);
  if (!g) return;
  if (!this._blitBase(ctx)) this._drawBase(ctx, this.view.scale, this.view.x, this.view.y, this.width, this.height);

  // Lit, hover, selection and keyboard-cursor rings on top.
  const rings = [];
  if (this.lit) for (let i = 0; i < this.lit.length; i++) if (this.lit[i] && !this.selection.has(i)) rings.push([i, "#2e6b8f", 2.5, 3.5, null]);
  rings.push([this.hovered, "rgba(29, 37, 45, 0.55)", 2, 3.5, null]);
  for (const i of this.selection) rings.push([i, "#b5361f", i === this.selected ? 3.5 : 2.5, 3.5, null]);
  rings.push([this.cursor, "#1c242c", 2, 7, [4, 3]]);
  for (const [i, colour, width, gap, dash] of rings) {
    if (i === null || i === undefined || i >= this.radii.length || !this.shown(i)) continue;
    const q = this.toScreen(i);
    ctx.beginPath();
    ctx.arc(q.x, q.y, this.radii[i] + gap, 0, 2 * Math.PI);
    ctx.lineWidth = width;
    ctx.strokeStyle = colour;
    ctx.setLineDash(dash || []);
    ctx.stroke();
  }
  ctx.setLineDash([]);
  if (this.lasso && this.lasso.length >= 4) {
    ctx.beginPath();
    ctx.moveTo(this.lasso[0], this.lasso[1]);
    for (let k = 2; k < this.lasso.length; k += 2) ctx.lineTo(this.lasso[k], this.lasso[k + 1]);
    ctx.closePath();
    ctx.fillStyle = "rgba(46, 74, 107, 0.08)";
    ctx.fill();
    ctx.lineWidth = 1.5;
    ctx.setLineDash([6, 4]);
    ctx.strokeStyle = "#2e4a6b";
    ctx.stroke();
    ctx.setLineDash([]);
  }
  this.drawCount++;
  if (this.callbacks.onDraw) this.callbacks.onDraw(this.drawCount, !this.layerPending);
};

GraphView.prototype._listen = function () {
  const c = this.canvas;
  let drag = null;
  const local = (ev) => {
    const r = c.getBoundingClientRect();
    return { x: ev.clientX - r.left, y: ev.clientY - r.top };
  };
  c.addEventListener("pointerdown", (ev) => {
    if (ev.button !== 0) return;
    const q = local(ev);
    const lasso = this.lassoMode || ev.shiftKey;
    drag = { x: q.x, y: q.y, vx: this.view.x, vy: this.view.y, moved: false, id: ev.pointerId, lasso, shift: ev.shiftKey };
    if (lasso) this.lasso = [q.x, q.y];
    c.setPointerCapture(ev.pointerId);
  });
  c.addEventListener("pointermove", (ev) => {
    const q = local(ev);
    if (drag) {
      const dx = q.x - drag.x, dy = q.y - drag.y;
      if (!drag.moved && dx * dx + dy * dy > 16) { drag.moved = true; c.classList.add("dragging"); }
      if (drag.lasso) {
        if (this.graph) { this.lasso.push(q.x, q.y); this.requestDraw(); }
        return;
      }
      if (drag.moved) {
        this.fitted = false;
        // Whole device pixels: the drawn layer is then only copied (see _blitBase).
        this.view.x = drag.vx + Math.round(dx * this.dpr) / this.dpr;
        this.view.y = drag.vy + Math.round(dy * this.dpr) / this.dpr;
        this.requestDraw();
        return;
      }
    }
    const i = this.nodeAt(q.x, q.y);
    if (i !== this.hovered) {
      this.hovered = i;
      this.requestDraw();
    }
    c.classList.toggle("over-node", i !== null);
    this.callbacks.onHover(i, q.x, q.y);
  });
  const end = (ev) => {
    if (!drag) return;
    const wasClick = !drag.moved;
    const d = drag;
    c.releasePointerCapture(drag.id);
    c.classList.remove("dragging");
    drag = null;
    const poly = this.lasso;
    this.lasso = null;
    if (ev.type !== "pointerup") { this.requestDraw(); return; }
    if (wasClick) {
      const q = local(ev);
      this.callbacks.onSelect(this.nodeAt(q.x, q.y), { toggle: d.shift });
    } else if (d.lasso && poly) {
      this.callbacks.onLasso(this.nodesInPolygon(poly), { add: d.shift });
    }
    this.requestDraw();
  };
  c.addEventListener("pointerup", end);
  c.addEventListener("pointercancel", end);
  c.addEventListener("pointerleave", () => {
    if (this.hovered !== null) { this.hovered = null; this.requestDraw(); }
    this.callbacks.onHover(null, 0, 0);
  });
  c.addEventListener("wheel", (ev) => {
    if (!this.graph) return;
    ev.preventDefault();
    const q = local(ev);
    const factor = Math.exp(-ev.deltaY * (ev.deltaMode === 1 ? 0.05 : 0.0015));
    const next = Math.min(Math.max(this.view.scale * factor, 1e-6), 1e9);
    const k = next / this.view.scale;
    this.view.x = q.x - (q.x - this.view.x) * k;
    this.view.y = q.y - (q.y - this.view.y) * k;
    this.view.scale = next;
    this.fitted = false;
    // Large graphs: stretched copies of the last layer while the wheel turns (see _blitBase).
    this.zooming = this.graph.nodeSizes.length >= GraphView.ZOOM_PREVIEW_NODES;
    clearTimeout(this.zoomRest);
    if (this.zooming) this.zoomRest = setTimeout(() => { this.zooming = false; this.requestDraw(); }, GraphView.ZOOM_REST_MS);
    this.requestDraw();
  }, { passive: false });
  c.addEventListener("dblclick", () => this.fit());
  c.addEventListener("keydown", (ev) => {
    if (!this.graph || this.graph.nodeSizes.length === 0) return;
    const keys = { ArrowRight: [1, 0], ArrowLeft: [-1, 0], ArrowDown: [0, 1], ArrowUp: [0, -1] };
    if (keys[ev.key]) {
      ev.preventDefault();
      this.cursor = this.nextNode(this.cursor, keys[ev.key]);
      this.requestDraw();
      const q = this.toScreen(this.cursor);
      this.callbacks.onHover(this.cursor, q.x, q.y);
    } else if ((ev.key === "Enter" || ev.key === " ") && this.cursor !== null) {
      ev.preventDefault();
      this.callbacks.onSelect(this.cursor, { toggle: ev.shiftKey });
    }
  });
  c.addEventListener("blur", () => { this.cursor = null; this.requestDraw(); this.callbacks.onHover(null, 0, 0); });
};

/** The nearest node from `from` in direction [dx, dy] (screen), within a 45° cone; the
 *  largest node when there is no cursor yet; `from` itself when nothing lies that way. */
GraphView.prototype.nextNode = function (from, dir) {
  if (from === null || from === undefined || !this.shown(from)) return this.order[0];
  const a = this.toScreen(from);
  let best = from, bestD = Infinity;
  for (const i of this.order) {
    if (i === from) continue;
    const q = this.toScreen(i);
    const dx = q.x - a.x, dy = q.y - a.y;
    const along = dx * dir[0] + dy * dir[1];
    const across = Math.abs(dx * dir[1] - dy * dir[0]);
    if (along <= 0 || across > along) continue;
    const d = along + 2 * across;
    if (d < bestD) { bestD = d; best = i; }
  }
  return best;
};

/** For the tests: whether the finished layer is, pixel for pixel, the drawing _drawBase
 *  makes in one go of what the view shows now (null while a layer is being drawn, or when
 *  there is none or it shows an earlier state). */
GraphView.prototype.layerMatchesOneGo = function () {
  const L = this.layer;
  if (!L || L.next < L.total || L.version !== this.baseVersion) return null;
  const c = document.createElement("canvas");
  c.width = L.cw;
  c.height = L.ch;
  const x = c.getContext("2d");
  x.setTransform(L.dpr, 0, 0, L.dpr, 0, 0);
  this._drawBase(x, L.s, L.ox, L.oy, L.cw / L.dpr, L.ch / L.dpr);
  return samePixels(L.canvas, c);
};

/** Whether two canvases of one size hold the same pixels. */
function samePixels(a, b) {
  if (a.width !== b.width || a.height !== b.height) return false;
  const p = a.getContext("2d").getImageData(0, 0, a.width, a.height).data;
  const q = b.getContext("2d").getImageData(0, 0, b.width, b.height).data;
  for (let i = 0; i < p.length; i++) if (p[i] !== q[i]) return false;
  return true;
}

/** Node indices by size, largest first, ties by index: the order discs are drawn in
 *  (nodes marked in `hidden`, if given, left out). Each node is one number, (largest -
 *  size) · n + index, and the numbers are sorted as numbers, with no comparison function
 *  (which took 5 to 10 ms at 19 000 nodes); when those numbers would not all be exact
 *  doubles, a sort with a comparison function. */
function largestFirst(sizes, hidden) {
  const n = sizes.length;
  let most = 0, shown = 0;
  for (let i = 0; i < n; i++) {
    most = Math.max(most, sizes[i]);
    if (!hidden || !hidden[i]) shown++;
  }
  const order = new Uint32Array(shown);
  if ((most + 1) * n < Number.MAX_SAFE_INTEGER) {
    const keys = new Float64Array(shown);
    for (let i = 0, k = 0; i < n; i++) if (!hidden || !hidden[i]) keys[k++] = (most - sizes[i]) * n + i;
    keys.sort();
    for (let k = 0; k < shown; k++) order[k] = keys[k] % n;
  } else {
    for (let i = 0, k = 0; i < n; i++) if (!hidden || !hidden[i]) order[k++] = i;
    order.sort((a, b) => sizes[b] - sizes[a] || a - b);
  }
  return order;
}

/** Draws a stored graph (positions, sizes, edges, fills) fitted into a w × h box of a 2-D
 *  context, with no interaction: history thumbnails, the comparison view, the PNG export. */
function drawGraphStatic(ctx, w, h, graph, fills, pad) {
  ctx.clearRect(0, 0, w, h);
  const d = staticDrawing(w, h, graph, fills, pad);
  d.draw(ctx, 0, d.total);
}

/** The drawing drawGraphStatic makes, as `total` items drawn in order by `draw(ctx, from,
 *  to)`: the edges, then the discs largest first. Drawn a range at a time (history
 *  thumbnails of big graphs are drawn in slices), the items make the same picture. */
function staticDrawing(w, h, graph, fills, pad) {
  const n = graph.nodeSizes.length, E = graph.edgeA.length;
  if (n === 0) return { total: 0, draw: function () {} };
  const p = graph.positions, R = graph.radii;
  const cap = Math.max(2, Math.min(w, h) * GraphView.MAX_RADIUS_SHARE), m = pad === undefined ? 4 : pad;
  const order = largestFirst(graph.nodeSizes, null);
  const f = fitDiscs(p, R, order, Math.max(1, w - 2 * m), Math.max(1, h - 2 * m), cap, 1.5);
  const s = f.scale, ox = (w - f.w) / 2 - f.x0, oy = (h - f.h) / 2 - f.y0;
  let maxShared = 1;
  for (const v of graph.edgeShared) maxShared = Math.max(maxShared, v);
  return {
    total: E + n,
    draw: function (ctx, from, to) {
      if (from < E) {
        ctx.strokeStyle = "rgba(62, 74, 86, 0.42)";
        ctx.lineCap = "round";
      }
      for (let e = from; e < Math.min(E, to); e++) {
        const a = graph.edgeA[e], b = graph.edgeB[e];
        ctx.lineWidth = Math.max(0.6, (1 + 5 * Math.sqrt(graph.edgeShared[e] / maxShared)) * cap / 30);
        ctx.beginPath();
        ctx.moveTo(p[2 * a] * s + ox, p[2 * a + 1] * s + oy);
        ctx.lineTo(p[2 * b] * s + ox, p[2 * b + 1] * s + oy);
        ctx.stroke();
      }
      for (let k = Math.max(0, from - E); k < Math.min(n, to - E); k++) {
        const i = order[k];
        const r = discPixels(R[i], s, cap, 1.5);
        ringedDisc(ctx, p[2 * i] * s + ox, p[2 * i + 1] * s + oy, r, 0.4, fills ? fills[i] : "rgb(120, 134, 150)", 1);
      }
    },
  };
}

/** A disc of radius r with a white ring 2 × half wide on its edge, drawn as a white disc
 *  and the coloured disc on it (two fills take about two thirds of the time of a fill and
 *  a stroked outline); `alpha` fades the coloured disc over its white one. */
function ringedDisc(ctx, x, y, r, half, fill, alpha) {
  ctx.beginPath();
  ctx.arc(x, y, r + half, 0, 2 * Math.PI);
  ctx.fillStyle = "rgba(255, 255, 255, 0.9)";
  ctx.fill();
  ctx.beginPath();
  ctx.arc(x, y, Math.max(0.5, r - half), 0, 2 * Math.PI);
  ctx.fillStyle = fill;
  if (alpha !== 1) ctx.globalAlpha = alpha;
  ctx.fill();
  if (alpha !== 1) ctx.globalAlpha = 1;
}
