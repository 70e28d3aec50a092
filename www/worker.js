/* worker.js: runs the engine off the page's thread. It reads files in slices, drives the
 * engine and posts results back; it decides nothing about what the page shows.
 *
 * The builder puts the wasm-bindgen glue (global `wasm_bindgen`) and the engine's bytes
 * (`self.NERVURE_WASM_GZIP_BASE64`, gzipped) in front of this file.
 *
 * Messages in:  {id, type: "load", file | text, name}
 *               {id, type: "load", files: [File], add}      several files (added to the list when add)
 *               {id, type: "files", op: "remove" | "sheet" | "plan" | "columns", name, sheet, plan, names}
 *               {id, type: "firstLook", settings, colour}   a first look at a large table (a
 *                                                          graph of a sample; null when not needed)
 *               {id, type: "run", settings, colour: {column, stat} | null}
 *               {id, type: "colour", column, stat}
 *               {id, type: "detail", node}
 *               {id, type: "summaries", fillValues}
 *               {id, type: "check", settings}
 *               {id, type: "diagram"}
 *               {id, type: "suggest", settings, seed}
 *               {id, type: "loadB", file | text, name}     the second table of a comparison
 *               {id, type: "swapB", pairs, settings}        second table = first with columns swapped
 *               {id, type: "rowsB", condition, settings}    second table = other rows of the first
 *               {id, type: "overview", column, maxLevels}   what a row condition on a column can say
 *               {id, type: "runB", settings}
 *               {id, type: "job", job: "bootstrap" | "sweep" | "compare", ...arguments}
 *               {type: "cancel", target}                   stops job `target` between steps, or run
 *                                                          `target` while its elements are on the pool
 *               {id, type: "pool", helpers, minPoints, testDelayMs}   size of the pool (0: cluster here)
 *               {id, type: "cluster", points, dim, clustering}   (to a helper: one element)
 *               {id, type: "memberships"} | {id, type: "explain", nodes} | {id, type: "rowValues", rows, columns}
 *               {id, type: "derivedInfo"} | {id, type: "scatter", x, y, limit} | {id, type: "export", format, colour, stat, fileName}
 *               (load may carry options: {textAsMissing}; run may carry nodeLimit, and then
 *               answers {confirm: {confirmNodes, limit}} for a graph over the limit;
 *               testExhaustMemory / testCrash / testBusy {ms} exist for the recovery tests)
 * Messages out: {id, type: "progress", stage, fraction}    (jobs add done, total; a run's
 *                                                          {stage: "clusters", pool: true} says
 *                                                          it can now be cancelled by message)
 *               {id, type: "result", value}
 *               {id, type: "error", message, fatal, cancelled}
 *
 * A job runs a few draws (or sweep cells) per engine call and yields to the message queue
 * between calls, so a cancel arrives while it runs; other requests run between its steps.
 */
"use strict";

/* Two roles, one script. The page's worker (the main one) reads the file and computes
 * points, lens and cover; the cover elements are then clustered by a pool of helper
 * workers started from this same script (one per core the browser reports), each with
 * its own engine: the main worker sends each helper one element's points as a
 * transferable Float64Array, the helper answers with the labels (Int32Array), and the
 * main worker builds the graph from them (engine.run_with_labels). A helper holds no
 * table. The result is the same as clustering in one worker (tests/element_pool.rs and
 * tests/browser/pool.test.mjs check it).
 */

/** Bytes read from a file per engine call. */
const SLICE_BYTES = 4 * 1024 * 1024;

let lastPanic = null;
const consoleError = console.error.bind(console);
console.error = function (...args) {
  // The engine's panic hook writes here; keep the message for the page.
  lastPanic = args.map(String).join(" ");
  consoleError(...args);
};

function decodeBase64(text) {
  const raw = atob(text);
  const bytes = new Uint8Array(raw.length);
  for (let i = 0; i < raw.length; i++) bytes[i] = raw.charCodeAt(i);
  return bytes;
}

/** Inflates gzipped bytes with the browser's own DecompressionStream (no request made). */
async function gunzip(bytes) {
  const stream = new Blob([bytes]).stream().pipeThrough(new DecompressionStream("gzip"));
  return new Uint8Array(await new Response(stream).arrayBuffer());
}

/** A module of one function that returns a SIMD constant (`v128.const`): valid only where
 *  WebAssembly has SIMD, which the engine is built with (.cargo/config.toml). */
const SIMD_PROBE = new Uint8Array([
  0x00, 0x61, 0x73, 0x6d, 0x01, 0x00, 0x00, 0x00, // "\0asm", version 1
  0x01, 0x05, 0x01, 0x60, 0x00, 0x01, 0x7b, // types: () -> v128
  0x03, 0x02, 0x01, 0x00, // one function of type 0
  0x0a, 0x16, 0x01, 0x14, 0x00, 0xfd, 0x0c, // code: no locals, v128.const ...
  0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0x0b, // ... sixteen zero bytes, end
]);

/** What the engine needs of the browser, or null when it has it all. */
function missingFeature() {
  if (typeof WebAssembly !== "object") return "WebAssembly";
  if (!WebAssembly.validate(SIMD_PROBE)) return "WebAssembly SIMD";
  if (typeof DecompressionStream !== "function") return "DecompressionStream";
  return null;
}

const ready = (async function () {
  const missing = missingFeature();
  if (missing) {
    const e = new Error("this browser lacks " + missing + ", which the engine needs; Chrome or Edge 91, Firefox 113, Safari 16.4 and later have everything it needs");
    e.unsupported = true; // not fatal: a restart cannot help
    throw e;
  }
  const wasm = await gunzip(decodeBase64(self.NERVURE_WASM_GZIP_BASE64));
  await wasm_bindgen({ module_or_path: wasm });
  self.NERVURE_WASM_GZIP_BASE64 = null;
  return new wasm_bindgen.Engine();
})();
// A failed start is reported to each request that waits on it, not as an unhandled error.
ready.catch(function () {});

/** Posts progress at most every 40 ms, and always the end of a stage. */
function progressPoster(id) {
  let last = 0;
  return function (stage, fraction) {
    const now = performance.now();
    if (fraction < 1 && now - last < 40) return;
    last = now;
    self.postMessage({ id, type: "progress", stage, fraction });
  };
}

/** Read options of the file being loaded ({textAsMissing}), or null. */
let readOptions = null;

function readFileInto(engine, file, name, progress) {
  engine.begin_table_with(name, readOptions);
  const reader = new FileReaderSync();
  const size = file.size;
  engine.expect_bytes(size);
  progress("reading", 0);
  for (let offset = 0; offset < size; offset += SLICE_BYTES) {
    const buffer = reader.readAsArrayBuffer(file.slice(offset, Math.min(size, offset + SLICE_BYTES)));
    engine.push_chunk(new Uint8Array(buffer));
    progress("reading", Math.min(1, (offset + SLICE_BYTES) / size));
  }
  progress("reading", 1);
}

function readTextInto(engine, text, name, progress) {
  engine.begin_table_with(name, readOptions);
  const bytes = new TextEncoder().encode(text);
  progress("reading", 0);
  for (let offset = 0; offset < bytes.length; offset += SLICE_BYTES) {
    engine.push_chunk(bytes.subarray(offset, Math.min(bytes.length, offset + SLICE_BYTES)));
    progress("reading", Math.min(1, (offset + SLICE_BYTES) / bytes.length));
  }
  progress("reading", 1);
}

/* ---------------------------------------------------------------- pool */

const pool = {
  helpers: Math.max(1, Math.min(8, (self.navigator && navigator.hardwareConcurrency) || 2)),
  /** Below this many element points in all, clustering stays in this worker. */
  minPoints: 20000,
  workers: null,
  nextId: 1,
  /** This script's text, from the page (a blob: URL made here can start workers). */
  source: null,
  url: null,
  /** Elements clustered by helpers since this worker started (for tests). */
  elementsOnPool: 0,
  /** Helper workers started since this worker started, and runs cancelled while on the
   *  pool (for tests: a cancel on the pool keeps the helpers). */
  helpersStarted: 0,
  cancelledRuns: 0,
  elementsSent: 0,
  /** Milliseconds each helper waits before clustering an element (tests only). */
  testDelayMs: 0,
};

/** Settings of the last graph this worker built and returned (the graph the page shows). */
let shownSettings = null;
/** Whether the graph shown is a first look (the engine's graph, not yet the full one). */
let shownIsFirstLook = false;

function startHelpers() {
  if (pool.workers && pool.workers.length === pool.helpers) return pool.workers;
  if (pool.workers) pool.workers.forEach((h) => h.worker.terminate());
  pool.workers = [];
  for (let i = 0; i < pool.helpers; i++) {
    if (!pool.url) pool.url = URL.createObjectURL(new Blob([pool.source], { type: "text/javascript" }));
    const worker = new Worker(pool.url);
    pool.helpersStarted++;
    const helper = { worker, waiting: new Map() };
    worker.onmessage = function (event) {
      const m = event.data;
      if (m.type === "progress") return;
      const w = helper.waiting.get(m.id);
      if (!w) return;
      helper.waiting.delete(m.id);
      if (m.type === "result") w.resolve(m.value);
      else w.reject(new Error(m.message));
    };
    worker.onerror = function (event) {
      event.preventDefault();
      for (const w of helper.waiting.values()) w.reject(new Error("a clustering helper stopped" + (event.message ? " (" + event.message + ")" : "")));
      helper.waiting.clear();
      pool.workers = null;
    };
    pool.workers.push(helper);
  }
  return pool.workers;
}

function askHelper(helper, payload, transfer) {
  const id = pool.nextId++;
  return new Promise(function (resolve, reject) {
    helper.waiting.set(id, { resolve, reject });
    helper.worker.postMessage(Object.assign({ id }, payload), transfer);
  });
}

/** Whether this run's elements go to the pool: helpers allowed, workers available here,
 *  and enough points to be worth the copies. */
function usePool(engine, count) {
  if (pool.helpers < 1 || count < 2 || typeof Worker === "undefined" || !pool.source) return false;
  const sizes = engine.element_sizes();
  let total = 0;
  for (let i = 0; i < sizes.length; i++) total += sizes[i];
  return total >= pool.minPoints;
}

/** Thrown when a build is cancelled while its elements are on the pool. */
class Cancelled extends Error {}

/** Clusters every cover element on the pool, largest first; resolves with one Int32Array
 *  of labels per element, in element order. A cancel of run `runId` stops it between
 *  elements: no further element is sent, the labels of those under way are dropped when
 *  they come back (the helpers finish them and stay, ready for the next build), and it
 *  rejects with Cancelled. */
async function clusterOnPool(engine, settings, count, progress, runId) {
  const helpers = startHelpers();
  const dim = engine.point_dim();
  const sizes = engine.element_sizes();
  const order = Array.from({ length: count }, (_, i) => i).sort((a, b) => sizes[b] - sizes[a] || a - b);
  let total = 0;
  for (let i = 0; i < count; i++) total += sizes[i];
  const labels = new Array(count);
  let next = 0, done = 0;
  // The page may cancel from here on without ending this worker.
  self.postMessage({ id: runId, type: "progress", stage: "clusters", fraction: 0, pool: true });
  let halted = false;
  const stopped = () => halted || cancelled.has(runId);
  async function drive(helper) {
    while (next < order.length && !stopped()) {
      const e = order[next++];
      const points = engine.element_points(e);
      pool.elementsSent++;
      const got = await askHelper(helper, { type: "cluster", points, dim, clustering: settings.clustering, testDelayMs: pool.testDelayMs }, [points.buffer]);
      if (stopped()) return;
      labels[e] = got;
      done += sizes[e];
      pool.elementsOnPool++;
      progress("clusters", done / Math.max(1, total));
    }
  }
  // A cancel answers at once; the elements under way are left to finish and dropped.
  const cancel = new Promise(function (_, reject) { poolCancels.set(runId, function (e) { halted = true; reject(e); }); });
  try {
    await Promise.race([Promise.all(helpers.map(drive)), cancel]);
  } finally {
    poolCancels.delete(runId);
  }
  if (stopped()) { halted = true; throw new Cancelled("cancelled"); }
  return labels;
}

/** Run id -> rejects the wait of that run's elements on the pool (see clusterOnPool). */
const poolCancels = new Map();

/** A build: on the pool when it is worth it, else in this worker. `times` gets the
 *  milliseconds of each part (prepare: points, lens, cover; pool: clustering on the
 *  helpers, labels taken in; build: clustering here when not on the pool, the graph and
 *  its layout). */
async function runBuild(engine, settings, progress, times, runId) {
  let t = performance.now();
  const lap = (name) => { const now = performance.now(); times[name] = now - t; t = now; };
  const count = engine.prepare_elements(settings, progress);
  lap("prepareMs");
  times.elements = count;
  times.onPool = false;
  if (count > 0 && usePool(engine, count)) {
    times.onPool = true;
    const labels = await clusterOnPool(engine, settings, count, progress, runId);
    engine.set_element_labels(settings, labels);
    lap("poolMs");
  }
  const summary = engine.run(settings, progress);
  lap("buildMs");
  return summary;
}

/** The buffers of a graph's typed arrays (Engine.graph), handed over rather than copied. */
function graphTransfer(g) {
  return g ? Object.values(g).map((a) => a.buffer) : [];
}

function graphMessage(engine) {
  const g = engine.graph();
  return { value: g || null, transfer: graphTransfer(g) };
}

/** The node colours asked for with a graph ({column, stat, lens} or null), their buffer
 *  added to `transfer`. */
function colourMessage(engine, asked, transfer) {
  if (!asked || !asked.column) return null;
  const values = asked.lens ? engine.node_lens_values(0) : engine.node_values(asked.column, asked.stat || "mean");
  transfer.push(values.buffer);
  return { column: asked.column, values };
}

/** The table just made, its first settings and the file list. */
function tableMessage(engine) {
  const settings = engine.auto_settings();
  // The column list counts the automatic fill values as missing, as the build will.
  const fill = (settings.missing && settings.missing.fillValues) || [];
  const table = engine.column_summaries(new Float64Array(fill));
  return { table, settings, files: engine.files(), leftOut: engine.auto_left_out() };
}

async function handle(engine, msg) {
  const id = msg.id;
  const progress = progressPoster(id);
  switch (msg.type) {
    case "load": {
      readOptions = msg.options || null;
      shownSettings = null;
      shownIsFirstLook = false;
      if (msg.files) {
        if (!msg.add) engine.clear_files();
        msg.files.forEach(function (file, i) {
          const n = msg.files.length;
          const perFile = function (stage, fraction) { progress(stage, (i + fraction) / n); };
          readFileInto(engine, file, file.name, perFile);
          engine.finish_file();
        });
        engine.assemble();
      } else {
        if (msg.file) readFileInto(engine, msg.file, msg.name, progress);
        else readTextInto(engine, msg.text, msg.name, progress);
        engine.finish_table();
      }
      return { value: tableMessage(engine) };
    }
    case "files": {
      if (msg.op === "columns") return { value: engine.file_columns(msg.names || []) };
      shownSettings = null;
      shownIsFirstLook = false;
      if (msg.op === "remove") engine.remove_file(msg.name);
      else if (msg.op === "sheet") engine.choose_sheet(msg.name, msg.sheet);
      else if (msg.op === "plan") engine.set_plan(msg.plan === undefined ? null : msg.plan);
      else throw new Error("internal: unknown file operation '" + msg.op + "'");
      engine.assemble();
      return { value: tableMessage(engine) };
    }
    case "firstLook": {
      const summary = engine.first_look(msg.settings, progress);
      if (!summary) return { value: null };
      shownIsFirstLook = true;
      const graph = graphMessage(engine);
      const colour = colourMessage(engine, msg.colour, graph.transfer);
      return { value: { summary, graph: graph.value, colour }, transfer: graph.transfer };
    }
    case "run": {
      // A newer run is already waiting: skip this one, its settings are out of date.
      if (msg.id !== latestRun) return { value: { superseded: true } };
      engine.set_node_limit(msg.nodeLimit || 0);
      const times = {};
      let summary;
      try {
        summary = await runBuild(engine, msg.settings, progress, times, id);
      } catch (e) {
        if (!(e instanceof Cancelled)) throw e;
        cancelled.delete(id);
        pool.cancelledRuns++;
        self.postMessage({ id, type: "error", fatal: false, cancelled: true, message: "Build cancelled; the graph shown is the previous one, with its settings." });
        // The engine's stages went ahead to the cancelled settings: take those of the graph
        // shown again (a rebuild from cached stages; only the cover, for a new overlap).
        // A first look shown stays as it is: the engine still holds it as its graph.
        if (shownSettings && !shownIsFirstLook) await runBuild(engine, shownSettings, function () {}, {}, 0);
        return { silent: true };
      }
      if (summary && summary.confirmNodes !== undefined) return { value: { confirm: summary } };
      shownSettings = msg.settings;
      shownIsFirstLook = false;
      const t0 = performance.now();
      const graph = graphMessage(engine);
      const colour = colourMessage(engine, msg.colour, graph.transfer);
      times.graphAndColourMs = performance.now() - t0;
      const help = engine.scale_help();
      return { value: { summary, graph: graph.value, colour, times, help }, transfer: graph.transfer };
    }
    case "colour": {
      const values = msg.lens ? engine.node_lens_values(0) : engine.node_values(msg.column, msg.stat || "mean");
      return { value: { column: msg.column, values }, transfer: [values.buffer] };
    }
    case "lensHistogram":
      return { value: engine.lens_histogram(msg.bins, msg.axis || 0) };
    case "detail":
      return { value: engine.node_detail(msg.node) };
    case "summaries":
      return { value: engine.column_summaries(new Float64Array(msg.fillValues || [])) };
    case "check":
      return { value: engine.check_settings(msg.settings) };
    case "readSettings":
      // The file's text goes to the engine unparsed: a document nested thousands deep
      // would break the structured clone of a parsed object.
      return { value: engine.read_settings_file(msg.text, msg.name) };
    case "openGraph": {
      const info = engine.open_graph(msg.text, msg.name);
      shownSettings = info.settings;
      const graph = graphMessage(engine);
      info.graph = graph.value;
      return { value: info, transfer: graph.transfer };
    }
    case "diagram": {
      // Columns of typed arrays (Engine::diagram), handed over rather than copied.
      const d = engine.diagram();
      if (!d) return { value: null };
      return { value: d, transfer: [d.kind.buffer, d.birth.buffer, d.death.buffer, d.persistence.buffer, d.birthNode.buffer, d.deathNode.buffer, d.nodes.buffer, d.offsets.buffer] };
    }
    case "suggest":
      return { value: engine.suggest(msg.settings, msg.seed) };
    case "loadB": {
      const second = { begin_table_with: (n) => engine.begin_table_b(n), expect_bytes: (b) => engine.expect_bytes_b(b), push_chunk: (c) => engine.push_chunk_b(c) };
      if (msg.file) readFileInto(second, msg.file, msg.name, progress);
      else readTextInto(second, msg.text, msg.name, progress);
      return { value: engine.finish_table_b() };
    }
    case "swapB":
      return { value: engine.table_b_from_columns(msg.pairs, msg.settings) };
    case "rowsB":
      return { value: engine.table_b_from_rows(msg.condition, msg.settings) };
    case "overview":
      return { value: engine.column_overview(msg.column, msg.maxLevels || 60) };
    case "runB": {
      const summary = engine.run_b(msg.settings);
      const g = engine.graph_b();
      return { value: { summary, graph: g }, transfer: graphTransfer(g) };
    }
    case "pool":
      if (typeof msg.helpers === "number") pool.helpers = Math.max(0, Math.min(16, msg.helpers | 0));
      if (typeof msg.minPoints === "number") pool.minPoints = msg.minPoints;
      if (typeof msg.testDelayMs === "number") pool.testDelayMs = msg.testDelayMs;
      return { value: { helpers: pool.helpers, minPoints: pool.minPoints, elementsOnPool: pool.elementsOnPool, elementsSent: pool.elementsSent, helpersStarted: pool.helpersStarted, cancelledRuns: pool.cancelledRuns } };
    case "cluster": {
      if (msg.testDelayMs) {
        const end = performance.now() + msg.testDelayMs;
        while (performance.now() < end) { /* a slow element, for the cancel tests */ }
      }
      const labels = wasm_bindgen.cluster_points(msg.points, msg.dim, msg.clustering);
      return { value: labels, transfer: [labels.buffer] };
    }
    case "memberships": {
      const m = engine.memberships();
      return { value: m, transfer: m ? [m.offsets.buffer, m.rows.buffer] : [] };
    }
    case "explain":
      return { value: engine.explain(new Uint32Array(msg.nodes)) };
    case "rowValues":
      return { value: engine.row_values(new Uint32Array(msg.rows), msg.columns || null) };
    case "derivedInfo":
      return { value: engine.derived_info() };
    case "scatter": {
      const d = engine.scatter(msg.x || "", msg.y || "", msg.limit);
      return { value: d, transfer: [d.rows.buffer, d.x.buffer, d.y.buffer] };
    }
    case "export":
      return { value: engine.export(msg.format, msg.colour || "", msg.stat || "mean", msg.fileName || "") };
    case "testExhaustMemory":
      return { value: engine.exhaust_memory_for_test() };
    case "testCrash":
      setTimeout(function () { throw new Error("test: the worker stopped"); }, 0);
      return { value: null };
    case "testBusy": {
      const end = performance.now() + (msg.ms || 0);
      while (performance.now() < end) { /* a long synchronous step, as a big build is */ }
      return { value: null };
    }
    default:
      throw new Error("internal: unknown request '" + msg.type + "'");
  }
}

/** Requests run one at a time, in arrival order. */
let queue = Promise.resolve();

/** Id of the last run asked for. */
let latestRun = 0;

/* ---- step-wise jobs ---- */

/** Each job's engine calls: begin returns the number of steps, step(k) the number done. */
const JOBS = {
  bootstrap: {
    begin: (e, m) => e.bootstrap_begin(m.settings, m.draws, m.alpha, m.seed),
    step: (e, k) => e.bootstrap_step(k), finish: (e) => e.bootstrap_finish(), drop: (e) => e.bootstrap_drop(),
  },
  sweep: {
    begin: (e, m) => e.sweep_begin(m.settings, m.grid, m.draws || 0, m.alpha, m.seed),
    step: (e, k) => e.sweep_step(k), finish: (e) => e.sweep_finish(), drop: (e) => e.sweep_drop(),
  },
  compare: {
    begin: (e, m) => e.compare_begin(m.settings, m.draws, m.alpha, m.seed),
    step: (e, k) => e.compare_step(k), finish: (e) => e.compare_finish(), drop: (e) => e.compare_drop(),
  },
};

/** Time one step should take: short enough for a cancel to feel immediate. */
const STEP_TARGET_MS = 60;

/** Ids of jobs asked to stop. */
const cancelled = new Set();

/** Runs fn(engine) in its turn in the request queue; resolves with its value. */
function enqueue(fn) {
  const p = queue.then(async function () { return fn(await ready); });
  queue = p.then(function () {}, function () {});
  return p;
}

/** Resolves after the worker has read the messages waiting for it. */
function yieldToMessages() {
  return new Promise(function (resolve) {
    const ch = new MessageChannel();
    ch.port1.onmessage = function () { ch.port1.close(); resolve(); };
    ch.port2.postMessage(0);
  });
}

async function runJob(msg) {
  const job = JOBS[msg.job];
  const id = msg.id;
  if (!job) { self.postMessage({ id, type: "error", fatal: false, message: "internal: unknown job '" + msg.job + "'" }); return; }
  let begun = false;
  try {
    const total = await enqueue((e) => job.begin(e, msg));
    begun = true;
    let done = 0, k = 1;
    self.postMessage({ id, type: "progress", stage: msg.job, fraction: 0, done, total });
    while (done < total) {
      await yieldToMessages();
      if (cancelled.has(id)) break;
      const t0 = performance.now();
      done = await enqueue((e) => job.step(e, k));
      const ms = performance.now() - t0;
      // Next step: about STEP_TARGET_MS of work, at most doubling.
      k = Math.max(1, Math.min(2 * k, Math.round(k * STEP_TARGET_MS / Math.max(ms, 1))));
      self.postMessage({ id, type: "progress", stage: msg.job, fraction: done / total, done, total });
    }
    if (cancelled.has(id)) {
      cancelled.delete(id);
      await enqueue((e) => job.drop(e));
      self.postMessage({ id, type: "error", fatal: false, cancelled: true, message: "Stopped before the end; nothing was changed." });
      return;
    }
    const value = await enqueue((e) => job.finish(e));
    self.postMessage({ id, type: "result", value });
  } catch (e) {
    cancelled.delete(id);
    const fatal = e instanceof WebAssembly.RuntimeError;
    if (begun && !fatal) await enqueue((en) => job.drop(en)).catch(function () {});
    const message = fatal
      ? "Internal error in the engine" + (lastPanic ? " (" + lastPanic + ")" : "") + ". The engine was restarted; please report this with the file's shape and your settings."
      : (e && e.message ? e.message : String(e));
    self.postMessage({ id, type: "error", fatal, message });
  }
}

self.onmessage = function (event) {
  const msg = event.data;
  if (msg.type === "cancel") {
    cancelled.add(msg.target);
    const stopPool = poolCancels.get(msg.target);
    if (stopPool) stopPool(new Cancelled("cancelled"));
    return;
  }
  if (msg.type === "job") { runJob(msg); return; }
  if (msg.type === "helper-source") {
    pool.source = msg.source;
    return;
  }
  if (msg.type === "run") latestRun = msg.id;
  queue = queue.then(async function () {
    let engine;
    try {
      engine = await ready;
    } catch (e) {
      self.postMessage({ id: msg.id, type: "error", fatal: !(e && e.unsupported), message: "The engine could not start in this browser: " + (e && e.message ? e.message : String(e)) });
      return;
    }
    try {
      lastPanic = null;
      const out = await handle(engine, msg);
      if (!out.silent) self.postMessage({ id: msg.id, type: "result", value: out.value }, out.transfer || []);
    } catch (e) {
      // A trap (RuntimeError) means the engine panicked: its state is lost.
      const fatal = e instanceof WebAssembly.RuntimeError;
      const memory = fatal ? wasm_bindgen.memory_report() : null;
      const mb = (b) => Math.round(b / 1048576).toLocaleString("en") + " MB";
      const message = fatal && memory.failedBytes > 0
        ? "The engine ran out of memory: it asked for " + mb(memory.failedBytes) + " more while holding " + mb(memory.heldBytes) + ". The engine was restarted. Try fewer rows or columns, or settings that build less (fewer intervals, a smaller radius)."
        : fatal
        ? "Internal error in the engine" + (lastPanic ? " (" + lastPanic + ")" : "") + ". The engine was restarted; please report this with the file's shape and your settings."
        : (e && e.message ? e.message : String(e));
      self.postMessage({ id: msg.id, type: "error", fatal, message });
    }
  });
};
