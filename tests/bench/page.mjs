// The page part of the benchmark: opens dist/nervure.html from file:// in headless
// Chromium, gives the file input the data file (as a user's drop would), and measures
// from the file input to the first graph drawn: the read time the page reports, the
// tab's peak memory (resident memory of Chromium's renderer processes, the page's and
// its workers', sampled from /proc every 100 ms), and every main-thread task over 50 ms
// (PerformanceObserver 'longtask'). Then it times re-colouring and, optionally, a change
// of overlap. Prints one JSON line.
//
//   node tests/bench/page.mjs DATA.csv SETTINGS.json

import { readFileSync, readdirSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { chromium } from "playwright-core";

const here = dirname(fileURLToPath(import.meta.url));
// NERVURE_PAGE: another build of the page, to compare two builds side by side.
const pageUrl = pathToFileURL(process.env.NERVURE_PAGE || join(here, "..", "..", "dist", "nervure.html")).href;
const [data, settingsPath] = process.argv.slice(2);
const settings = JSON.parse(readFileSync(settingsPath, "utf8"));
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

const userDataDir = mkdtempSync(join(tmpdir(), "nervure-bench-chromium-"));
const context = await chromium.launchPersistentContext(userDataDir, { executablePath: process.env.CHROMIUM || "/usr/bin/chromium", headless: true, args: FLAGS });
try {
  const page = await context.newPage();
  await page.addInitScript(() => {
    window.__longTasks = [];
    new PerformanceObserver((list) => { for (const e of list.getEntries()) window.__longTasks.push(e.duration); }).observe({ type: "longtask", buffered: true });
  });
  await page.goto(pageUrl);
  // The first graph is built with the benchmark's settings: the page's automatic
  // settings are replaced as soon as the table is read.
  const base = rendererRss(userDataDir);
  let peak = base;
  const sampler = setInterval(() => { peak = Math.max(peak, rendererRss(userDataDir)); }, 100);
  const started = Date.now();
  await page.setInputFiles("#file-input", data);
  await page.waitForFunction(() => window.nervure.summary() !== null && window.nervure.timings().firstGraphMs !== null, null, { timeout: 900000, polling: 50 });
  const autoMs = Date.now() - started;
  const timings = await page.evaluate(() => window.nervure.timings());
  // Now the benchmark's settings (the lens and everything after it recomputed).
  const t0 = Date.now();
  const summary = await page.evaluate(async (s) => { await window.nervure.applySettings(s); return window.nervure.run(); }, settings);
  const buildMs = Date.now() - t0;
  clearInterval(sampler);
  peak = Math.max(peak, rendererRss(userDataDir));
  // Re-colouring: the mean of a chosen column per node.
  const colourMs = await page.evaluate(async (col) => {
    const t = performance.now();
    await window.nervure.colourBy(col);
    return performance.now() - t;
  }, settings.columns[0]);
  // A new overlap: lens re-used.
  const overlapMs = await page.evaluate(async (s) => {
    const t = performance.now();
    await window.nervure.applySettings(Object.assign({}, s, { cover: Object.assign({}, s.cover, { overlap: s.cover.overlap === 0.5 ? 0.45 : 0.5 }) }));
    await window.nervure.run();
    return performance.now() - t;
  }, settings);
  const longTasks = await page.evaluate(() => window.__longTasks);
  console.log(JSON.stringify({
    readMs: timings.tableReadMs,
    firstGraphAutoMs: timings.firstGraphMs,
    fileToAutoGraphMs: autoMs,
    benchmarkBuildMs: buildMs,
    recolourMs: colourMs,
    overlapChangeMs: overlapMs,
    peakRendererBytes: peak,
    longTasksOver50ms: longTasks.length,
    longestTaskMs: longTasks.length ? Math.max(...longTasks) : 0,
    tasksOver100ms: longTasks.filter((d) => d > 100).length,
    summary,
  }));
} finally {
  await context.close();
  rmSync(userDataDir, { recursive: true, force: true });
}
