// The clustering part of the benchmark: the same cover elements clustered with the same
// settings natively and as wasm, one element at a time on one thread (what a pool helper of
// the page does with each element), in one run.
//
//   node tests/bench/cluster.mjs DATA.csv [--settings S.json] [--html PAGE.html] [--native BINARY]
//                                [--repeat N] [--no-chromium] [--json]
//
// - native: BINARY (default $CARGO_TARGET_DIR/release/examples/cluster_bench) runs the whole
//   pipeline once (without --settings, the automatic settings) and writes each element's
//   points as raw f64 and the settings it used (--dump); those files are the input of all
//   three, so all three cluster the same points. Its timed runs are `--from DIR --passes 2`:
//   a fresh process that reads the files and clusters them twice, the second time on memory
//   already taken from the system, as a warm wasm pass does;
// - node: the worker's glue and wasm taken out of PAGE.html (default dist/nervure.html),
//   `cluster_points` (the call the page's helpers make) on each element, points in memory;
// - chromium: the same glue and wasm in a Web Worker of a file:// page, kept open, the
//   element files given to an <input> and read with FileReaderSync before the clock starts.
// Only the clustering call is timed (not reading or copying the points in). Each wasm runner
// first clusters every element once on a fresh instance ("cold": what a new pool helper
// does, partly on V8's baseline code). Then N rounds (--repeat N, default 1), each a native
// pass then a pass of each wasm runner, so that the machine's changing load meets every
// runner alike; each element's fastest time over the rounds is kept ("warm" for wasm, the
// ratios' figure). The labels of each element are digested (FNV-1a, noise as 2^32-1, as
// cluster_bench prints them) and must agree with the native ones. Prints one line per
// element and the totals with the ratio wasm / native; with --json one JSON line instead.

import { readFileSync, writeFileSync, mkdtempSync, rmSync, readdirSync } from "node:fs";
import { execFileSync } from "node:child_process";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { commandLine, workerSource, loadInNode } from "./page-wasm.mjs";

const { args, opt, flag, htmlPath, native } = commandLine("cluster_bench");
const settingsPath = opt("--settings", null);
const repeat = Number(opt("--repeat", "1"));
const noChromium = flag("--no-chromium");
const asJson = flag("--json");
const data = args[0];
if (!data) {
  console.error("usage: node tests/bench/cluster.mjs DATA.csv [--settings S.json] [--html PAGE.html] [--native BINARY] [--repeat N] [--no-chromium] [--json]");
  process.exit(2);
}

/** One pass over the elements: each element's time and the digest of its labels (this
 *  text runs in node and in the worker). */
const TIMING = `
function digest(labels) {
  let h = 0xcbf29ce484222325n;
  for (let i = 0; i < labels.length; i++) {
    const l = labels[i] < 0 ? 0xffffffffn : BigInt(labels[i]);
    h = BigInt.asUintN(64, (h ^ l) * 0x100000001b3n);
  }
  return h.toString(16).padStart(16, "0");
}
function clusterPass(elements, dim, clustering) {
  return elements.map((points) => {
    const t0 = performance.now();
    const labels = wasm_bindgen.cluster_points(points, dim, clustering);
    const s = (performance.now() - t0) / 1000;
    return { s, digest: digest(labels) };
  });
}`;

/** Parses cluster_bench's lines: {elements, dim, list: [{element, points, s, digest}]}. */
function parseNative(text) {
  let header = null;
  const list = [];
  for (const line of text.split("\n")) {
    let m = line.match(/^(\d+) elements, (\d+) columns/);
    if (m) header = { elements: Number(m[1]), dim: Number(m[2]) };
    m = line.match(/^element (\d+): (\d+) points, ([\d.]+) s, .*labels ([0-9a-f]{16})/);
    if (m) list[Number(m[1])] = { element: Number(m[1]), points: Number(m[2]), s: Number(m[3]), digest: m[4] };
  }
  return { ...header, list };
}

function readElement(dir, e) {
  const b = readFileSync(join(dir, `element-${e}.f64`));
  return new Float64Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
}

/** The wasm in node: `pass()` clusters every element once. */
async function nodeRunner(dir, n, dim, clustering) {
  await loadInNode(htmlPath, TIMING, ["clusterPass"]);
  const elements = [];
  for (let e = 0; e < n; e++) elements.push(readElement(dir, e));
  return { pass: async () => globalThis.clusterPass(elements, dim, clustering), close: async () => {} };
}

/** The wasm in a worker of headless Chromium, kept open between passes. */
async function chromiumRunner(dir, n, dim, clustering) {
  const { chromium } = await import("playwright-core");
  const work = mkdtempSync(join(tmpdir(), "nervure-cluster-"));
  const probe = `
let elements = null;
self.onmessage = async function (event) {
  await ready;
  if (!elements) {
    const reader = new FileReaderSync();
    elements = event.data.files.map((f) => new Float64Array(reader.readAsArrayBuffer(f)));
  }
  self.postMessage(clusterPass(elements, event.data.dim, event.data.clustering));
};`;
  const workerText = workerSource(htmlPath) + "\n" + TIMING + "\n" + probe;
  writeFileSync(join(work, "probe.html"), `<!doctype html><input type="file" id="f" multiple>`);
  const context = await chromium.launchPersistentContext(join(work, "profile"), {
    executablePath: process.env.CHROMIUM || "/usr/bin/chromium", headless: true,
    args: ["--no-sandbox", "--disable-gpu"],
  });
  const page = await context.newPage();
  await page.goto(pathToFileURL(join(work, "probe.html")).href);
  await page.setInputFiles("#f", Array.from({ length: n }, (_, e) => join(dir, `element-${e}.f64`)));
  await page.evaluate((text) => {
    window.probe = new Worker(URL.createObjectURL(new Blob([text], { type: "text/javascript" })));
  }, workerText);
  return {
    pass: () => page.evaluate(({ dim, clustering }) => {
      const byName = {};
      for (const f of document.getElementById("f").files) byName[f.name] = f;
      const files = Object.keys(byName).map((_, e) => byName[`element-${e}.f64`]);
      return new Promise((res, rej) => {
        window.probe.onmessage = (ev) => res(ev.data);
        window.probe.onerror = (ev) => rej(new Error(ev.message));
        window.probe.postMessage({ files, dim, clustering });
      });
    }, { dim, clustering }),
    close: async () => { await context.close(); rmSync(work, { recursive: true, force: true }); },
  };
}

const dir = mkdtempSync(join(tmpdir(), "nervure-elements-"));
const runners = {};
try {
  // The elements and their settings, dumped once by a run of the whole pipeline.
  const dumped = parseNative(execFileSync(native, [data, ...(settingsPath ? ["--settings", settingsPath] : []), "--dump", dir], { encoding: "utf8", maxBuffer: 1 << 26 }));
  const clustering = JSON.parse(readFileSync(join(dir, "settings.json"), "utf8")).clustering;
  const n = dumped.elements;
  runners.node = await nodeRunner(dir, n, dumped.dim, clustering);
  if (!noChromium) runners.chromium = await chromiumRunner(dir, n, dumped.dim, clustering);
  // Each wasm runner's first pass is its cold one. Then `repeat` rounds, each a native run
  // (a fresh process clustering the dumped elements twice: its second pass, like a warm wasm
  // pass, reuses memory it already has from the system) and a pass of each wasm runner, one
  // after the other: the machine's load changes over seconds, and every runner meets it
  // alike. Each element's fastest time of the rounds is kept, for every runner.
  const best = {};
  for (const [k, r] of Object.entries(runners)) {
    best[k] = (await r.pass()).map((t) => ({ coldS: t.s, s: Infinity, digest: t.digest }));
  }
  const nat = dumped.list.map((t) => ({ ...t, s: Infinity }));
  for (let round = 0; round < repeat; round++) {
    parseNative(execFileSync(native, ["--from", dir, "--passes", "2"], { encoding: "utf8" })).list.forEach((t, e) => {
      nat[e].s = Math.min(nat[e].s, t.s);
      if (t.digest !== nat[e].digest) nat[e].digest = "differs between native runs";
    });
    for (const [k, r] of Object.entries(runners)) {
      (await r.pass()).forEach((t, e) => {
        best[k][e].s = Math.min(best[k][e].s, t.s);
        if (t.digest !== best[k][e].digest) best[k][e].digest = "differs between passes";
      });
    }
  }
  const total = (list) => list.reduce((a, t) => a + t.s, 0);
  const out = { data, settings: settingsPath || "automatic", clustering, dim: dumped.dim, repeat, elements: [], totals: { nativeS: total(nat) } };
  for (let e = 0; e < n; e++) {
    const row = { element: e, points: nat[e].points, nativeS: nat[e].s };
    for (const [k, list] of Object.entries(best)) {
      row[k + "S"] = list[e].s;
      row[k + "ColdS"] = list[e].coldS;
      row[k + "Ratio"] = list[e].s / nat[e].s;
      row[k + "LabelsAgree"] = list[e].digest === nat[e].digest;
    }
    out.elements.push(row);
  }
  for (const [k, list] of Object.entries(best)) {
    out.totals[k + "S"] = total(list);
    out.totals[k + "ColdS"] = list.reduce((a, t) => a + t.coldS, 0);
    out.totals[k + "ColdRatio"] = out.totals[k + "ColdS"] / out.totals.nativeS;
    out.totals[k + "Ratio"] = total(list) / out.totals.nativeS;
    out.totals[k + "LabelsAgree"] = out.elements.every((r) => r[k + "LabelsAgree"]);
  }
  if (asJson) {
    console.log(JSON.stringify(out));
  } else {
    const names = Object.keys(best);
    const f = (x) => x.toFixed(4);
    const ratio = (x) => (Number.isFinite(x) ? x.toFixed(2) + "x" : "-");
    console.log(`clustering ${JSON.stringify(clustering)}, ${dumped.dim} columns, ${n} elements, fastest of ${repeat} rounds (each: native, then each wasm runner; wasm warm, after a first pass); seconds, ratio wasm / native, labels same as native`);
    for (const r of out.elements) {
      console.log(`  element ${r.element} (${r.points} points): native ${f(r.nativeS)}` + names.map((k) => `; ${k} ${f(r[k + "S"])} (${ratio(r[k + "Ratio"])}, labels ${r[k + "LabelsAgree"] ? "same" : "DIFFER"})`).join(""));
    }
    const t = out.totals;
    console.log(`  total: native ${f(t.nativeS)}` + names.map((k) => `; ${k} ${f(t[k + "S"])} (${ratio(t[k + "Ratio"])}, labels ${t[k + "LabelsAgree"] ? "all same" : "DIFFER"})`).join(""));
    console.log(`  total, wasm's first pass (cold):` + names.map((k) => ` ${k} ${f(t[k + "ColdS"])} (${ratio(t[k + "ColdRatio"])})`).join(";"));
  }
} finally {
  for (const r of Object.values(runners)) await r.close();
  rmSync(dir, { recursive: true, force: true });
}
