// The page part of the benchmark: opens dist/nervure.html from file:// in headless
// Chromium with the benchmark's settings in its address (`#s=...`, as a colleague's link
// carries them), gives the file input the data file (as a user's drop would), and
// measures from the file input to the first graph drawn, which is built with those
// settings: the read time the page reports, the tab's peak memory (resident memory of
// Chromium's renderer processes, the page's and its workers', sampled from /proc every
// 100 ms), and every main-thread task over 50 ms (PerformanceObserver 'longtask'). Then it
// times re-colouring, a change of overlap (with where its time went: the worker's parts,
// the page's), and panning a graph of about 5,000 nodes (frame gaps and drawing times).
// Main-thread tasks are listed by phase; those that began before the file was given are
// the page's own start ("page start"), not part of the time to the first graph.
// Last, in a fresh browser, the same file dropped on the page with no settings in its
// address: the time to the first graph with the automatic settings. Prints one JSON line.
// With `auto` for SETTINGS.json, only that last part (the growth part of tests/bench.sh).
// Both give the time to the first look (firstLookMs, null for a table that needs none).
//
//   node tests/bench/page.mjs DATA.csv SETTINGS.json|auto

import { readFileSync, readdirSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { chromium } from "playwright-core";

const here = dirname(fileURLToPath(import.meta.url));
// NERVURE_PAGE: another build of the page, to compare two builds side by side.
const pageUrl = pathToFileURL(process.env.NERVURE_PAGE || join(here, "..", "..", "dist", "nervure.html")).href;
const [data, settingsPath] = process.argv.slice(2);
const autoOnly = settingsPath === "auto";
const settings = autoOnly ? null : JSON.parse(readFileSync(settingsPath, "utf8"));
const FLAGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"];

/** Summed resident memory (bytes) of the renderer processes of the browser started with
 *  `userDataDir` (other browsers on the machine are not counted). */
function rendererRss(userDataDir) {
  const procs = [];
  for (const pid of readdirSync("/proc")) {
    if (!/^\d+$/.test(pid)) continue;
    try {
      const cmd = readFileSync(`/proc/${pid}/cmdline`, "utf8");
      const ppid = Number(/PPid:\s+(\d+)/.exec(readFileSync(`/proc/${pid}/status`, "utf8"))[1]);
      procs.push({ pid: Number(pid), ppid, cmd });
    } catch { /* the process ended */ }
  }
  const ours = new Set(procs.filter((p) => p.cmd.includes(userDataDir)).map((p) => p.pid));
  for (let grew = true; grew;) {
    grew = false;
    for (const p of procs) if (!ours.has(p.pid) && ours.has(p.ppid)) { ours.add(p.pid); grew = true; }
  }
  let total = 0;
  for (const p of procs) {
    if (!ours.has(p.pid) || !p.cmd.includes("--type=renderer")) continue;
    try {
      const m = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${p.pid}/status`, "utf8"));
      if (m) total += Number(m[1]) * 1024;
    } catch { /* the process ended */ }
  }
  return total;
}

const settingsHash = "#s=" + encodeURIComponent(JSON.stringify(settings));

/** A fresh browser (its own profile) on the page, with `hash` in its address; longtask
 *  entries recorded with the phase they fell in, and the renderers' memory sampled every
 *  100 ms until `close` (`peak()` is the largest sample so far). */
async function openPage(hash) {
  const userDataDir = mkdtempSync(join(tmpdir(), "nervure-bench-chromium-"));
  const context = await chromium.launchPersistentContext(userDataDir, { executablePath: process.env.CHROMIUM || "/usr/bin/chromium", headless: true, args: FLAGS, viewport: { width: 1600, height: 900 } });
  const page = await context.newPage();
  await page.addInitScript(() => {
    window.__longTasks = [];
    window.__longTaskAt = [];
    // Tasks before the file is given are the page's own start (parsing the page, its
    // script's first run and first layout); "load" runs from the file input to the first graph.
    window.__phase = "page start";
    new PerformanceObserver((list) => { for (const e of list.getEntries()) { const phase = window.__fileAt !== undefined && e.startTime >= window.__fileAt ? window.__phase : "page start"; window.__longTasks.push(e.duration); window.__longTaskAt.push(phase + " " + Math.round(e.duration)); } }).observe({ type: "longtask", buffered: true });
  });
  await page.goto(pageUrl + hash);
  let top = rendererRss(userDataDir);
  const sampler = setInterval(() => { top = Math.max(top, rendererRss(userDataDir)); }, 100);
  const peak = () => (top = Math.max(top, rendererRss(userDataDir)));
  let open = true;
  const close = async () => {
    if (!open) return;
    open = false;
    clearInterval(sampler);
    await context.close();
    rmSync(userDataDir, { recursive: true, force: true });
  };
  return { page, peak, close };
}

/** Drops the data file on the page and waits for the first graph drawn; the wall time
 *  from the file input to it, the page's own timings and the peak memory by then. */
async function loadToFirstGraph({ page, peak }) {
  await page.evaluate(() => { window.__phase = "load"; window.__fileAt = performance.now(); });
  const started = Date.now();
  await page.setInputFiles("#file-input", data);
  await page.waitForFunction(() => (window.nervure.summary() !== null && window.nervure.timings().firstGraphMs !== null) || window.nervure.status().phase === "failed", null, { timeout: 900000, polling: 50 });
  const wallMs = Date.now() - started;
  const failed = await page.evaluate(() => (window.nervure.status().phase === "failed" ? window.nervure.message() : null));
  if (failed) throw new Error("the page could not read the file: " + failed);
  const peakBytes = peak();
  // The build's parts are recorded once what follows the drawing is done.
  await page.waitForFunction(() => window.nervure.timings().lastBuild !== null, null, { timeout: 60000, polling: 50 });
  const timings = await page.evaluate(() => window.nervure.timings());
  return { wallMs, timings, peak: peakBytes };
}

/** The file on a page with no settings in its address: the automatic settings. */
async function autoRun() {
  const second = await openPage("");
  try {
    const a = await loadToFirstGraph(second);
    return { wallMs: a.wallMs, readMs: a.timings.tableReadMs, firstLookMs: a.timings.firstLookMs, firstGraphMs: a.timings.firstGraphMs, build: a.timings.lastBuild, peakRendererBytes: a.peak, summary: await second.page.evaluate(() => window.nervure.summary()) };
  } finally {
    await second.close();
  }
}

if (autoOnly) {
  console.log(JSON.stringify({ auto: await autoRun() }));
  process.exit(0);
}

const first = await openPage(settingsHash);
const page = first.page;
try {
  // The first graph, built with the benchmark's settings (taken from the address).
  const load = await loadToFirstGraph(first);
  const restored = await page.evaluate(() => window.nervure.restored());
  if (restored !== "fragment") throw new Error("the page did not take the benchmark's settings from its address (restored: " + restored + ")");
  const summary = await page.evaluate(() => window.nervure.summary());
  const firstBuild = load.timings.lastBuild;
  const peakLoad = load.peak;
  // Re-colouring: the mean of a chosen column per node.
  await page.evaluate(() => { window.__phase = "re-colour"; });
  const colourMs = await page.evaluate(async (col) => {
    const t = performance.now();
    await window.nervure.colourBy(col);
    return performance.now() - t;
  }, settings.columns[0]);
  // A new overlap: lens re-used.
  await page.evaluate(() => { window.__phase = "overlap change"; });
  const overlapMs = await page.evaluate(async (s) => {
    const t = performance.now();
    await window.nervure.applySettings(Object.assign({}, s, { cover: Object.assign({}, s.cover, { overlap: s.cover.overlap === 0.5 ? 0.45 : 0.5 }) }));
    await window.nervure.run();
    return performance.now() - t;
  }, settings);
  const overlapParts = await page.evaluate(() => window.nervure.timings().lastBuild);
  // Drawing a big graph: about 5,000 nodes (many narrow intervals, a small radius), then a
  // pan dragged across the canvas; the gaps between animation frames while it moves, and
  // the mean time of one drawing. NERVURE_BENCH_PAN=0 skips it.
  await page.evaluate(() => { window.__phase = "big graph"; });
  let pan = null;
  if (process.env.NERVURE_BENCH_PAN !== "0") {
    const big = Object.assign({}, settings, { cover: { intervals: Number(process.env.NERVURE_BENCH_PAN_INTERVALS || 1500), overlap: 0.3 }, clustering: { kind: "dbscan", eps: 0.15, minPoints: 3 } });
    const tb = Date.now();
    const bigSummary = await page.evaluate(async (s) => { window.nervure.test.nodeLimit(1e9); await window.nervure.applySettings(s); return window.nervure.run(); }, big);
    const bigBuildMs = Date.now() - tb;
    // The layer of a big graph is drawn in slices over a few frames: the pan starts once it is whole.
    await page.waitForFunction(() => !window.nervure.test.drawStats || !window.nervure.test.drawStats().drawing, null, { polling: 50 });
    await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
    const stats = () => (window.nervure.test.drawStats ? window.nervure.test.drawStats() : { count: 0, totalMs: 0, lastMs: NaN });
    const drawn0 = await page.evaluate(`(${stats})()`);
    const box = await page.locator("#graph-canvas").boundingBox();
    const cx = box.x + box.width / 2, cy = box.y + box.height / 2;
    await page.evaluate(() => { window.__frames = []; const tick = (t) => { window.__frames.push(t); if (window.__frames.length < 10000) requestAnimationFrame(tick); }; requestAnimationFrame(tick); });
    await page.mouse.move(cx, cy);
    await page.mouse.down();
    for (let i = 0; i < 120; i++) { await page.mouse.move(cx + 200 * Math.sin(i / 10), cy + 100 * Math.cos(i / 13)); await page.waitForTimeout(8); }
    await page.mouse.up();
    pan = await page.evaluate((d0) => {
      const f = window.__frames, d = [];
      for (let i = 1; i < f.length; i++) d.push(f[i] - f[i - 1]);
      d.sort((a, b) => a - b);
      const q = (p) => d[Math.min(d.length - 1, Math.floor(p * d.length))];
      const d1 = window.nervure.test.drawStats ? window.nervure.test.drawStats() : { count: 0, totalMs: 0 };
      return { frames: d.length, medianFrameMs: q(0.5), p95FrameMs: q(0.95), maxFrameMs: d[d.length - 1], draws: d1.count - d0.count, meanDrawMs: (d1.totalMs - d0.totalMs) / Math.max(1, d1.count - d0.count), firstDrawMs: d0.layerMs === undefined ? d0.lastMs : d0.layerMs };
    }, drawn0);
    Object.assign(pan, { nodes: bigSummary.nodes, edges: bigSummary.edges, buildMs: bigBuildMs });
    // Zooming the same graph with the wheel: the frame gaps while it turns, and how many
    // drawings were stretched copies of the layer (the exact one follows when it rests).
    await page.waitForTimeout(300);
    const z0 = await page.evaluate(`(${stats})()`);
    await page.evaluate(() => { window.__frames = []; const tick = (t) => { window.__frames.push(t); if (window.__frames.length < 10000) requestAnimationFrame(tick); }; requestAnimationFrame(tick); });
    await page.mouse.move(cx, cy);
    for (let i = 0; i < 60; i++) { await page.mouse.wheel(0, i < 30 ? -40 : 40); await page.waitForTimeout(8); }
    await page.waitForTimeout(400);
    pan.zoom = await page.evaluate((d0) => {
      const f = window.__frames, d = [];
      for (let i = 1; i < f.length; i++) d.push(f[i] - f[i - 1]);
      d.sort((a, b) => a - b);
      const q = (p) => d[Math.min(d.length - 1, Math.floor(p * d.length))];
      const d1 = window.nervure.test.drawStats();
      return { frames: d.length, medianFrameMs: q(0.5), p95FrameMs: q(0.95), maxFrameMs: d[d.length - 1], draws: d1.count - d0.count, previews: (d1.previews || 0) - (d0.previews || 0) };
    }, z0);
  }
  const longTasks = await page.evaluate(() => window.__longTasks);
  const longTaskPhases = await page.evaluate(() => window.__longTaskAt.filter((t) => Number(t.split(" ").pop()) > 100));
  const longTasksLoad = await page.evaluate(() => window.__longTaskAt.filter((t) => t.startsWith("load ")).map((t) => Number(t.split(" ").pop())));
  const longTasksStart = await page.evaluate(() => window.__longTaskAt.filter((t) => t.startsWith("page start ")).map((t) => Number(t.split(" ").pop())));
  const peak = first.peak();
  await first.close();
  // The same file on a page with no settings in its address: the automatic settings.
  let auto = null;
  if (process.env.NERVURE_BENCH_AUTO !== "0") auto = await autoRun();
  console.log(JSON.stringify({
    readMs: load.timings.tableReadMs,
    firstGraphMs: load.timings.firstGraphMs,
    firstLookMs: load.timings.firstLookMs,
    fileToFirstGraphMs: load.wallMs,
    firstBuild,
    recolourMs: colourMs,
    overlapChangeMs: overlapMs,
    overlapChangeParts: overlapParts,
    pan,
    peakRendererBytes: peak,
    peakLoadRendererBytes: peakLoad,
    longTasksOver50ms: longTasks.length,
    longestTaskMs: longTasks.length ? Math.max(...longTasks) : 0,
    longestLoadTaskMs: longTasksLoad.length ? Math.max(...longTasksLoad) : 0,
    longestStartTaskMs: longTasksStart.length ? Math.max(...longTasksStart) : 0,
    tasksOver100ms: longTasks.filter((d) => d > 100).length,
    tasksOver100msWhere: longTaskPhases,
    auto,
    summary,
  }));
} finally {
  await first.close();
}
