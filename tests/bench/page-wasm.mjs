// The page's engine outside the page, for the benchmark's wasm timings (ingest.mjs,
// cluster.mjs): the worker's source as dist/nervure.html holds it, and that source's glue
// and wasm loaded under node.

import { readFileSync } from "node:fs";
import { gunzipSync } from "node:zlib";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import vm from "node:vm";

/** The command line both scripts share: `--html PAGE` (default dist/nervure.html) and
 *  `--native BINARY` (default the release example `example` under $CARGO_TARGET_DIR)
 *  taken out of the arguments; `opt(name, default)` and `flag(name)` take out others, and
 *  `args` keeps what is left. */
export function commandLine(example) {
  const args = process.argv.slice(2);
  const opt = (name, dflt) => { const i = args.indexOf(name); return i >= 0 ? args.splice(i, 2)[1] : dflt; };
  const flag = (name) => { const i = args.indexOf(name); if (i >= 0) args.splice(i, 1); return i >= 0; };
  const root = join(dirname(fileURLToPath(import.meta.url)), "..", "..");
  const targetDir = process.env.CARGO_TARGET_DIR || join(process.env.HOME, ".cache", "nervure-target");
  const htmlPath = resolve(opt("--html", join(root, "dist", "nervure.html")));
  const native = opt("--native", join(targetDir, "release", "examples", example));
  return { args, opt, flag, htmlPath, native };
}

/** The worker's source as the page holds it: glue, then the wasm, then worker.js. */
export function workerSource(htmlPath) {
  const html = readFileSync(htmlPath, "utf8");
  const open = html.indexOf('id="nervure-worker-source">');
  return html.slice(html.indexOf(">", open) + 1, html.indexOf("</script>", open));
}

/** Runs the page's glue with `extra` (script text whose functions `names` are made global)
 *  in this node process and starts its wasm; `globalThis.wasm_bindgen` is then the
 *  worker's. */
export async function loadInNode(htmlPath, extra, names) {
  const source = workerSource(htmlPath);
  const marker = 'self.NERVURE_WASM_GZIP_BASE64 = "';
  const at = source.indexOf(marker);
  const wasm = gunzipSync(Buffer.from(source.slice(at + marker.length, source.indexOf('"', at + marker.length)), "base64"));
  globalThis.self = globalThis;
  const exported = names.map((n) => `globalThis.${n} = ${n};`).join("\n");
  vm.runInThisContext(source.slice(0, at) + "\n;globalThis.wasm_bindgen = wasm_bindgen;\n" + extra + "\n;" + exported);
  await globalThis.wasm_bindgen({ module_or_path: wasm });
}
