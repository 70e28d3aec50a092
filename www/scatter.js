/* scatter.js: the linked scatter of the rows, on a canvas. Two columns, or the first two
 * principal components of the points behind the graph, for a seeded sample of at most
 * SCATTER_LIMIT rows (drawn by the engine; the note under the plot says when it is a
 * sample). Rows of the selected nodes light up; a rectangle dragged over points selects
 * the nodes that hold at least one of those points.
 *
 * It draws and links; the values and the sample come from the engine.
 */

/** Most points drawn at once: enough to see the shape, few enough to redraw at once. */
const SCATTER_LIMIT = 50000;

const scatter = {
  data: null,        // {rows, x, y, total, xLabel, yLabel}
  key: null,         // axes + build the data belongs to
  lit: null,         // Uint8Array over the sample: point belongs to the selection
  litCount: 0,
  rect: null,        // the dragged rectangle, in data units [x0, y0, x1, y1]
  box: null,         // plot box in CSS pixels and data ranges
  seq: 0,
};

function scatterVisible() {
  return !byId("pane-scatter").hidden && !byId("dock").hidden;
}

function scatterAxes() {
  const a = byId("scatter-axes").value;
  if (a === "" || a === "__pc") return { x: "", y: "" };
  return { x: a, y: byId("scatter-y").value };
}

function renderScatterControls() {
  const numeric = numericColumns();
  const axes = byId("scatter-axes"), y = byId("scatter-y");
  const keepX = axes.value, keepY = y.value;
  setOptions(axes, [["__pc", "Principal components 1 and 2"]].concat(numeric.map((n) => [n, n])), numeric.indexOf(keepX) >= 0 ? keepX : "__pc");
  const xName = axes.value;
  const yChoices = numeric.filter((n) => n !== xName);
  setOptions(y, yChoices.map((n) => [n, n]), yChoices.indexOf(keepY) >= 0 ? keepY : yChoices[0]);
  byId("scatter-y-field").hidden = xName === "__pc";
}

/** Fetches the scatter's points when its axes or the graph changed, then draws. */
async function refreshScatter() {
  if (!state.graph || !scatterVisible()) return null;
  const axes = scatterAxes();
  const key = axes.x + "\u0000" + axes.y + "\u0000" + state.builds;
  if (key === scatter.key && scatter.data) { scatterSelectionChanged(); return scatter.data; }
  const seq = ++scatter.seq;
  let data;
  try {
    data = await engine.request("scatter", { x: axes.x, y: axes.y, limit: SCATTER_LIMIT });
  } catch (e) {
    if (seq === scatter.seq) { scatter.data = null; byId("scatter-note").textContent = e.message; drawScatter(); }
    return null;
  }
  if (seq !== scatter.seq) return null;
  scatter.data = data;
  scatter.key = key;
  scatter.rect = null;
  const n = data.rows.length;
  byId("scatter-note").textContent = n < data.total
    ? "Showing " + formatCount(n) + " of " + formatCount(data.total) + " rows: a random sample drawn from the settings’ seed (the same sample every time)."
    : "Showing all " + plural(data.total, "row", "rows") + " with a value on both axes.";
  if (data.setAside && data.setAside.length) byId("scatter-note").textContent += " Open rings: " + plural(data.setAside.length, "row", "rows") + " set aside as far from the others (not in the graph).";
  scatterSelectionChanged();
  return data;
}

/** Marks the sampled points whose rows belong to the selection, and redraws. */
function scatterSelectionChanged() {
  const d = scatter.data;
  if (!d) return;
  const rows = state.groupRows;
  scatter.lit = null;
  scatter.litCount = 0;
  if (rows && rows.length) {
    const lit = new Uint8Array(d.rows.length);
    // Both lists increase: one merge pass.
    let j = 0, count = 0;
    for (let i = 0; i < d.rows.length; i++) {
      const r = d.rows[i];
      while (j < rows.length && rows[j] < r) j++;
      if (j < rows.length && rows[j] === r) { lit[i] = 1; count++; }
    }
    scatter.lit = lit;
    scatter.litCount = count;
  }
  drawScatter();
}

function drawScatter() {
  const canvas = byId("scatter-canvas");
  const rect = canvas.getBoundingClientRect();
  const dpr = window.devicePixelRatio || 1;
  const w = Math.max(1, rect.width), h = Math.max(1, rect.height);
  canvas.width = Math.round(w * dpr);
  canvas.height = Math.round(h * dpr);
  const ctx = canvas.getContext("2d");
  ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
  ctx.clearRect(0, 0, w, h);
  const d = scatter.data;
  if (!d || d.rows.length === 0) return;
  let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
  for (let i = 0; i < d.x.length; i++) {
    x0 = Math.min(x0, d.x[i]); x1 = Math.max(x1, d.x[i]);
    y0 = Math.min(y0, d.y[i]); y1 = Math.max(y1, d.y[i]);
  }
  if (x1 === x0) { x0 -= 0.5; x1 += 0.5; }
  if (y1 === y0) { y0 -= 0.5; y1 += 0.5; }
  // A time axis is labelled with round instants (dates or clock times) along it.
  const tx = d.xLabel ? timeOf(d.xLabel) : null, ty = d.yLabel ? timeOf(d.yLabel) : null;
  const m = { l: ty ? 84 : 52, r: 12, t: 10, b: 40 };
  const pw = w - m.l - m.r, ph = h - m.t - m.b;
  const sx = (v) => m.l + (v - x0) / (x1 - x0) * pw;
  const sy = (v) => m.t + (1 - (v - y0) / (y1 - y0)) * ph;
  scatter.box = { m, pw, ph, x0, x1, y0, y1 };

  // Axes and labels.
  ctx.strokeStyle = "#c3bcaf";
  ctx.lineWidth = 1;
  ctx.strokeRect(m.l + 0.5, m.t + 0.5, pw, ph);
  ctx.fillStyle = "#56616b";
  ctx.font = "13px system-ui, sans-serif";
  if (tx) {
    ctx.textAlign = "center";
    for (const tick of timeTicks(x0, x1, tx, Math.max(2, Math.floor(pw / 80)))) {
      ctx.fillRect(Math.round(sx(tick.at)), m.t + ph, 1, 4);
      ctx.fillText(tick.label, sx(tick.at), h - 22);
    }
  } else {
    ctx.textAlign = "left";
    ctx.fillText(formatNumber(x0), m.l, h - 22);
    ctx.textAlign = "right";
    ctx.fillText(formatNumber(x1), m.l + pw, h - 22);
  }
  ctx.textAlign = "center";
  ctx.fillStyle = "#1c242c";
  ctx.fillText(d.xLabel + (tx ? " (" + zoneShort(tx) + ")" : ""), m.l + pw / 2, h - 6);
  ctx.save();
  ctx.translate(14, m.t + ph / 2);
  ctx.rotate(-Math.PI / 2);
  ctx.fillText(d.yLabel + (ty ? " (" + zoneShort(ty) + ")" : ""), 0, 0);
  ctx.restore();
  ctx.fillStyle = "#56616b";
  ctx.textAlign = "right";
  if (ty) {
    for (const tick of timeTicks(y0, y1, ty, Math.max(2, Math.floor(ph / 40)))) {
      ctx.fillRect(m.l - 3, Math.round(sy(tick.at)), 4, 1);
      ctx.fillText(tick.label, m.l - 5, sy(tick.at) + 4);
    }
  } else {
    ctx.fillText(formatNumber(y1), m.l - 4, m.t + 12);
    ctx.fillText(formatNumber(y0), m.l - 4, m.t + ph);
  }

  // Points: the rest faint, the selection's rows on top.
  const size = d.rows.length > 20000 ? 1.5 : d.rows.length > 2000 ? 2.5 : 3.5;
  const lit = scatter.lit;
  ctx.fillStyle = lit ? "rgba(86, 97, 107, 0.22)" : "rgba(46, 74, 107, 0.45)";
  for (let i = 0; i < d.x.length; i++) {
    if (lit && lit[i]) continue;
    ctx.fillRect(sx(d.x[i]) - size / 2, sy(d.y[i]) - size / 2, size, size);
  }
  if (d.setAside && d.setAside.length) {
    // Rows the denoising set aside: open rings, so they read as "not in the graph".
    ctx.strokeStyle = "rgba(150, 96, 10, 0.9)";
    ctx.lineWidth = 1;
    ctx.beginPath();
    for (const i of d.setAside) {
      ctx.moveTo(sx(d.x[i]) + size + 0.5, sy(d.y[i]));
      ctx.arc(sx(d.x[i]), sy(d.y[i]), size + 0.5, 0, 2 * Math.PI);
    }
    ctx.stroke();
  }
  if (lit) {
    ctx.fillStyle = "rgba(181, 54, 31, 0.85)";
    const s2 = size + 1;
    for (let i = 0; i < d.x.length; i++) if (lit[i]) ctx.fillRect(sx(d.x[i]) - s2 / 2, sy(d.y[i]) - s2 / 2, s2, s2);
  }
  if (scatter.rect) {
    const r = scatter.rect;
    const a = sx(Math.min(r[0], r[2])), b = sy(Math.max(r[1], r[3]));
    ctx.setLineDash([6, 4]);
    ctx.strokeStyle = "#2e4a6b";
    ctx.lineWidth = 1.5;
    ctx.strokeRect(a, b, sx(Math.max(r[0], r[2])) - a, sy(Math.min(r[1], r[3])) - b);
    ctx.setLineDash([]);
  }
}

/** Screen (CSS pixels in the canvas) to data units. */
function scatterToData(px, py) {
  const b = scatter.box;
  return [b.x0 + (px - b.m.l) / b.pw * (b.x1 - b.x0), b.y0 + (1 - (py - b.m.t) / b.ph) * (b.y1 - b.y0)];
}

/** Selects the nodes holding any sampled point inside the rectangle (data units). */
async function selectScatterRect(r) {
  const d = scatter.data;
  if (!d || !state.table) return [];
  const xa = Math.min(r[0], r[2]), xb = Math.max(r[0], r[2]), ya = Math.min(r[1], r[3]), yb = Math.max(r[1], r[3]);
  const mark = new Uint8Array(state.table.rows);
  let any = 0;
  for (let i = 0; i < d.x.length; i++) {
    if (d.x[i] >= xa && d.x[i] <= xb && d.y[i] >= ya && d.y[i] <= yb) { mark[d.rows[i]] = 1; any++; }
  }
  const m = await memberships();
  const nodes = any ? nodesHoldingRows(m, mark) : [];
  scatter.rect = r;
  await setSelection(nodes);
  scatter.rect = r;
  drawScatter();
  return nodes;
}

function scatterInfo() {
  if (!scatter.data) return null;
  return { shown: scatter.data.rows.length, total: scatter.data.total, lit: scatter.litCount, xLabel: scatter.data.xLabel, yLabel: scatter.data.yLabel, box: scatter.box ? { left: scatter.box.m.l, top: scatter.box.m.t, width: scatter.box.pw, height: scatter.box.ph, x0: scatter.box.x0, x1: scatter.box.x1, y0: scatter.box.y0, y1: scatter.box.y1 } : null };
}

function wireScatter() {
  const canvas = byId("scatter-canvas");
  const local = (ev) => { const r = canvas.getBoundingClientRect(); return [ev.clientX - r.left, ev.clientY - r.top]; };
  let drag = null;
  canvas.addEventListener("pointerdown", function (ev) {
    if (ev.button !== 0 || !scatter.box) return;
    drag = { start: local(ev), id: ev.pointerId };
    canvas.setPointerCapture(ev.pointerId);
  });
  canvas.addEventListener("pointermove", function (ev) {
    if (!drag) return;
    const q = local(ev);
    scatter.rect = scatterToData(drag.start[0], drag.start[1]).concat(scatterToData(q[0], q[1]));
    drawScatter();
  });
  canvas.addEventListener("pointerup", function (ev) {
    if (!drag) return;
    const q = local(ev), s0 = drag.start;
    canvas.releasePointerCapture(drag.id);
    drag = null;
    if (Math.abs(q[0] - s0[0]) < 4 && Math.abs(q[1] - s0[1]) < 4) { scatter.rect = null; setSelection([]); return; }
    selectScatterRect(scatterToData(s0[0], s0[1]).concat(scatterToData(q[0], q[1]))).catch(function (e) { fail(e.message); });
  });
  byId("scatter-axes").addEventListener("change", function () { renderScatterControls(); refreshScatter(); });
  byId("scatter-y").addEventListener("change", function () { refreshScatter(); });
  new ResizeObserver(function () { if (scatterVisible()) drawScatter(); }).observe(byId("scatter-wrap"));
}
