// The clustering part of the benchmark: the same cover elements clustered with the same
// settings natively and as wasm, one element at a time on one thread (what a pool helper of
// the page does with each element), in one run.
//
//   node tests/bench/cluster.mjs DATA.csv [--settings S.json] [--html PAGE.html] [--native BINARY]
//                                [--repeat N] [--no-chromium] [--json]
//
// - native: BINARY (default $CARGO_TARGET_DIR/release/examples/cluster_bench) times each
//   element (without --settings, the automatic settings) and, with --dump, writes each
//   element's points as raw f64 and the settings it used; those files are the input of the
//   other two, so all three cluster the same points;
// - node: the worker's glue and wasm taken out of PAGE.html (default dist/nervure.html),
//   `cluster_points` (the call the page's helpers make) on each element, points in memory;
// - chromium: the same glue and wasm in a Web Worker of a file:// page, the element files
//   given to an <input> and read with FileReaderSync before the clock starts.
// Only the clustering call is timed (not reading or copying the points in). Each wasm runner
// first clusters every element once on a fresh instance ("cold": what a new pool helper
// does, partly on V8's baseline code), then N more passes (--repeat N, default 1), of which
// each element's fastest time is kept ("warm", the ratios' figure); native runs N times and
// keeps each element's fastest. The labels of
// each element are digested (FNV-1a, noise as 2^32-1, as cluster_bench prints them) and must
// agree with the native ones. Prints one line per element and the totals with the ratio
// wasm / native; with --json one JSON line instead.

import { readFileSync, writeFileSync, mkdtempSync, rmSync, readdirSync } from "node:fs";
import { execFileSync } from "node:child_process";
import { tmpdir } from "node:os";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { workerSource, loadInNode } from "./page-wasm.mjs";

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, "..", "..");
const args = process.argv.slice(2);
const opt = (name, dflt) => { const i = args.indexOf(name); return i >= 0 ? args.splice(i, 2)[1] : dflt; };
const flag = (name) => { const i = args.indexOf(name); if (i >= 0) args.splice(i, 1); return i >= 0; };
const targetDir = process.env.CARGO_TARGET_DIR || join(process.env.HOME, ".cache", "nervure-target");
const htmlPath = resolve(opt("--html", join(root, "dist", "nervure.html")));
const native = opt("--native", join(targetDir, "release", "examples", "cluster_bench"));
const settingsPath = opt("--settings", null);
const repeat = Number(opt("--repeat", "1"));
const noChromium = flag("--no-chromium");
const asJson = flag("--json");
const data = args[0];
if (!data) {
  console.error("usage: node tests/bench/cluster.mjs DATA.csv [--settings S.json] [--html PAGE.html] [--native BINARY] [--repeat N] [--no-chromium] [--json]");
  process.exit(2);
}

/** Clusters each element `repeat` times, keeps the fastest time and the labels' digest
 *  (this text runs in node and in the worker). */
const TIMING = `
function digest(labels) {
  let h = 0xcbf29ce484222325n;
  for (let i = 0; i < labels.length; i++) {
    const l = labels[i] < 0 ? 0xffffffffn : BigInt(labels[i]);
    h = BigInt.asUintN(64, (h ^ l) * 0x100000001b3n);
  }
  return h.toString(16).padStart(16, "0");
}
function timeElements(elements, dim, clustering, repeat) {
  const out = elements.map(() => ({ coldS: 0, s: Infinity, digest: null }));
  for (let r = 0; r <= repeat; r++) {
    elements.forEach((points, e) => {
      const t0 = performance.now();
      const labels = wasm_bindgen.cluster_points(points, dim, clustering);
      const s = (performance.now() - t0) / 1000;
      if (r === 0) out[e].coldS = s;
      else out[e].s = Math.min(out[e].s, s);
      if (r === repeat) out[e].digest = digest(labels);
    });
  }
  return out;
}`;

/** Native: per element the fastest of `repeat` runs of cluster_bench (the first also dumps). */
function runNative(dir) {
  const base = [data, ...(settingsPath ? ["--settings", settingsPath] : [])];
  let header = null;
  const elements = [];
  for (let r = 0; r < repeat; r++) {
    const text = execFileSync(native, r === 0 ? [...base, "--dump", dir] : base, { encoding: "utf8", maxBuffer: 1 << 26 });
    for (const line of text.split("\n")) {
      let m = line.match(/^(\d+) elements, (\d+) columns/);
      if (m) header = { elements: Number(m[1]), dim: Number(m[2]) };
      m = line.match(/^element (\d+): (\d+) points, ([\d.]+) s, .*labels ([0-9a-f]{16})/);
      if (!m) continue;
      const e = Number(m[1]);
      const t = { element: e, points: Number(m[2]), s: Number(m[3]), digest: m[4] };
      elements[e] = elements[e] ? Object.assign(elements[e], { s: Math.min(elements[e].s, t.s) }) : t;
    }
  }
  return { ...header, elements };
}

function readElement(dir, e) {
  const b = readFileSync(join(dir, `element-${e}.f64`));
  return new Float64Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
}

async function runNode(dir, n, dim, clustering) {
  await loadInNode(htmlPath, TIMING, ["timeElements"]);
  const elements = [];
  for (let e = 0; e < n; e++) elements.push(readElement(dir, e));
  return globalThis.timeElements(elements, dim, clustering, repeat);
}

async function runChromium(dir, n, dim, clustering) {
  const { chromium } = await import("playwright-core");
  const work = mkdtempSync(join(tmpdir(), "nervure-cluster-"));
  try {
    const probe = `
self.onmessage = async function (event) {
  await ready;
  const reader = new FileReaderSync();
  const elements = event.data.files.map((f) => new Float64Array(reader.readAsArrayBuffer(f)));
  self.postMessage(timeElements(elements, event.data.dim, event.data.clustering, event.data.repeat));
};`;
    const workerText = workerSource(htmlPath) + "\n" + TIMING + "\n" + probe;
    writeFileSync(join(work, "probe.html"), `<!doctype html><input type="file" id="f" multiple>`);
    const context = await chromium.launchPersistentContext(join(work, "profile"), {
      executablePath: process.env.CHROMIUM || "/usr/bin/chromium", headless: true,
      args: ["--no-sandbox", "--disable-gpu"],
    });
    try {
      const page = await context.newPage();
      await page.goto(pathToFileURL(join(work, "probe.html")).href);
      await page.setInputFiles("#f", Array.from({ length: n }, (_, e) => join(dir, `element-${e}.f64`)));
      return await page.evaluate(async ({ text, dim, clustering, repeat }) => {
        const w = new Worker(URL.createObjectURL(new Blob([text], { type: "text/javascript" })));
        const byName = {};
        for (const f of document.getElementById("f").files) byName[f.name] = f;
        const files = Object.keys(byName).map((_, e) => byName[`element-${e}.f64`]);
        return await new Promise((res, rej) => {
          w.onmessage = (ev) => res(ev.data);
          w.onerror = (ev) => rej(new Error(ev.message));
          w.postMessage({ files, dim, clustering, repeat });
        });
      }, { text: workerText, dim, clustering, repeat });
    } finally {
      await context.close();
    }
  } finally {
    rmSync(work, { recursive: true, force: true });
  }
}

const dir = mkdtempSync(join(tmpdir(), "nervure-elements-"));
try {
  const nat = runNative(dir);
  const clustering = JSON.parse(readFileSync(join(dir, "settings.json"), "utf8")).clustering;
  const n = readdirSync(dir).filter((f) => f.endsWith(".f64")).length;
  const runners = { node: await runNode(dir, n, nat.dim, clustering) };
  if (!noChromium) runners.chromium = await runChromium(dir, n, nat.dim, clustering);
  const total = (list) => list.reduce((a, t) => a + t.s, 0);
  const out = { data, settings: settingsPath || "automatic", clustering, dim: nat.dim, repeat, elements: [], totals: { nativeS: total(nat.elements) } };
  for (let e = 0; e < n; e++) {
    const row = { element: e, points: nat.elements[e].points, nativeS: nat.elements[e].s };
    for (const [k, list] of Object.entries(runners)) {
      row[k + "S"] = list[e].s;
      row[k + "ColdS"] = list[e].coldS;
      row[k + "Ratio"] = list[e].s / nat.elements[e].s;
      row[k + "LabelsAgree"] = list[e].digest === nat.elements[e].digest;
    }
    out.elements.push(row);
  }
  for (const [k, list] of Object.entries(runners)) {
    out.totals[k + "S"] = total(list);
    out.totals[k + "ColdS"] = list.reduce((a, t) => a + t.coldS, 0);
    out.totals[k + "ColdRatio"] = out.totals[k + "ColdS"] / out.totals.nativeS;
    out.totals[k + "Ratio"] = total(list) / out.totals.nativeS;
    out.totals[k + "LabelsAgree"] = out.elements.every((r) => r[k + "LabelsAgree"]);
  }
  if (asJson) {
    console.log(JSON.stringify(out));
  } else {
    const names = Object.keys(runners);
    const f = (x) => x.toFixed(4);
    const ratio = (x) => (Number.isFinite(x) ? x.toFixed(2) + "x" : "-");
    console.log(`clustering ${JSON.stringify(clustering)}, ${nat.dim} columns, ${n} elements, native fastest of ${repeat}, wasm warm (fastest of ${repeat} passes after a first); seconds, ratio wasm / native, labels same as native`);
    for (const r of out.elements) {
      console.log(`  element ${r.element} (${r.points} points): native ${f(r.nativeS)}` + names.map((k) => `; ${k} ${f(r[k + "S"])} (${ratio(r[k + "Ratio"])}, labels ${r[k + "LabelsAgree"] ? "same" : "DIFFER"})`).join(""));
    }
    const t = out.totals;
    console.log(`  total: native ${f(t.nativeS)}` + names.map((k) => `; ${k} ${f(t[k + "S"])} (${ratio(t[k + "Ratio"])}, labels ${t[k + "LabelsAgree"] ? "all same" : "DIFFER"})`).join(""));
    console.log(`  total, wasm's first pass (cold):` + names.map((k) => ` ${k} ${f(t[k + "ColdS"])} (${ratio(t[k + "ColdRatio"])})`).join(";"));
  }
} finally {
  rmSync(dir, { recursive: true, force: true });
}
