// The ingest part of the benchmark: the same reader code natively, as wasm under node and
// as wasm in the page's worker in headless Chromium, in one run. Prints one JSON line.
//
//   node tests/bench/ingest.mjs DATA.csv [--html PAGE.html] [--native BINARY] [--no-chromium] [--repeat N]
//
// Each runner does what the page does between "file chosen" and "table shown": the file in
// 4 MiB slices through begin_table_with / expect_bytes / push_chunk, then finish_table (the table checked
// against the automatic settings, assembled, summarised) and the worker's table message
// (auto_settings, column_summaries). Times are seconds per phase; `mbPerS` is the file's
// size over the whole load path, `parseMbPerS` over the push_chunk calls alone (parsing
// and typing the cells).
// - native: BINARY (default $CARGO_TARGET_DIR/release/examples/ingest_bench), the same
//   calls on the same slices (read from disk before the clock starts);
// - node: the worker's glue and wasm taken out of PAGE.html (default dist/nervure.html),
//   slices from memory, so the time is the engine's alone;
// - chromium: the same glue and wasm in a Web Worker of a file:// page, the slices read
//   with FileReaderSync from a File given to an <input> (as the page's worker reads).
// With --repeat N each runner runs N times and the fastest run is kept (the machine is shared).

import { readFileSync, writeFileSync, mkdtempSync, rmSync, openSync, readSync, fstatSync, closeSync } from "node:fs";
import { execFileSync } from "node:child_process";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { commandLine, workerSource, loadInNode } from "./page-wasm.mjs";

const { args, opt, flag, htmlPath, native } = commandLine("ingest_bench");
const repeat = Number(opt("--repeat", "1"));
const noChromium = flag("--no-chromium");
const data = args[0];
if (!data) {
  console.error("usage: node tests/bench/ingest.mjs DATA.csv [--html PAGE.html] [--native BINARY] [--no-chromium] [--repeat N]");
  process.exit(2);
}
const SLICE_BYTES = 4 << 20;
const size = fstatSync(openSync(data, "r")).size;

/** The phases, timed the same way in node and in the worker (this text runs in both). */
const PHASES = `
function timeLoad(engine, slices, readSlice, size) {
  const t = { readS: 0, pushS: 0 };
  const now = () => performance.now() / 1000;
  let t0 = now();
  engine.begin_table_with("bench.csv", null);
  if (engine.expect_bytes) engine.expect_bytes(size);
  for (let i = 0; i < slices; i++) {
    const a = now();
    const bytes = readSlice(i);
    const b = now();
    engine.push_chunk(bytes);
    t.readS += b - a;
    t.pushS += now() - b;
  }
  let t1 = now();
  const info = engine.finish_table();
  t.finishS = now() - t1;
  t1 = now();
  const settings = engine.auto_settings();
  engine.column_summaries(new Float64Array((settings.missing && settings.missing.fillValues) || []));
  engine.files();
  t.tableMessageS = now() - t1;
  t.totalS = now() - t0;
  t.rows = info.rows;
  return t;
}`;

function best(runs) {
  return runs.reduce((a, b) => (b.totalS < a.totalS ? b : a));
}

function withRates(t) {
  if (!t || !t.totalS) return t;
  t.parseMbPerS = size / 1e6 / t.pushS;
  t.mbPerS = size / 1e6 / t.totalS;
  return t;
}

async function runNode() {
  await loadInNode(htmlPath, PHASES, ["timeLoad"]);
  const fd = openSync(data, "r");
  const slices = [];
  for (let offset = 0; offset < size; offset += SLICE_BYTES) {
    const b = new Uint8Array(Math.min(SLICE_BYTES, size - offset));
    readSync(fd, b, 0, b.length, offset);
    slices.push(b);
  }
  closeSync(fd);
  const runs = [];
  for (let r = 0; r < repeat; r++) {
    const engine = new globalThis.wasm_bindgen.Engine();
    runs.push(globalThis.timeLoad(engine, slices.length, (i) => slices[i], size));
    engine.free();
  }
  return best(runs);
}

async function runChromium() {
  const { chromium } = await import("playwright-core");
  const dir = mkdtempSync(join(tmpdir(), "nervure-ingest-"));
  try {
    const probe = `
self.onmessage = async function (event) {
  const engine0 = await ready;
  engine0.free();
  const file = event.data.file;
  const reader = new FileReaderSync();
  const runs = [];
  for (let r = 0; r < event.data.repeat; r++) {
    const engine = new wasm_bindgen.Engine();
    const n = Math.ceil(file.size / SLICE_BYTES);
    runs.push(timeLoad(engine, n, (i) => new Uint8Array(reader.readAsArrayBuffer(file.slice(i * SLICE_BYTES, Math.min(file.size, (i + 1) * SLICE_BYTES)))), file.size));
    engine.free();
  }
  self.postMessage(runs);
};`;
    writeFileSync(join(dir, "worker.js"), workerSource(htmlPath) + "\n" + PHASES + "\n" + probe);
    writeFileSync(join(dir, "probe.html"), `<!doctype html><input type="file" id="f">`);
    const context = await chromium.launchPersistentContext(join(dir, "profile"), {
      executablePath: process.env.CHROMIUM || "/usr/bin/chromium", headless: true,
      args: ["--no-sandbox", "--disable-gpu"],
    });
    try {
      const page = await context.newPage();
      await page.goto(pathToFileURL(join(dir, "probe.html")).href);
      const workerText = readFileSync(join(dir, "worker.js"), "utf8");
      await page.setInputFiles("#f", data);
      const runs = await page.evaluate(async ({ text, repeat }) => {
        const url = URL.createObjectURL(new Blob([text], { type: "text/javascript" }));
        const w = new Worker(url);
        const file = document.getElementById("f").files[0];
        return await new Promise((res, rej) => {
          w.onmessage = (e) => res(e.data);
          w.onerror = (e) => rej(new Error(e.message));
          w.postMessage({ file, repeat });
        });
      }, { text: workerText, repeat });
      return best(runs);
    } finally {
      await context.close();
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

function runNative() {
  try {
    const runs = [];
    for (let r = 0; r < repeat; r++) runs.push(JSON.parse(execFileSync(native, [data], { encoding: "utf8" }).trim().split("\n").pop()));
    return best(runs);
  } catch (e) {
    return { failed: String(e.message || e).split("\n")[0] };
  }
}

const out = { bytes: size, html: htmlPath, repeat };
out.native = withRates(runNative());
out.node = withRates(await runNode());
if (!noChromium) out.chromium = withRates(await runChromium());
const ratio = (t, what) => (t && t.totalS && out.native.totalS ? Number((what(t) / what(out.native)).toFixed(2)) : null);
out.ratios = {};
for (const k of ["node", "chromium"]) {
  if (!out[k]) continue;
  out.ratios[k + "VsNative"] = ratio(out[k], (t) => t.totalS);
  out.ratios[k + "VsNativeParse"] = ratio(out[k], (t) => t.pushS);
}
console.log(JSON.stringify(out));
