// The page's engine outside the page, for the benchmark's wasm timings (ingest.mjs,
// cluster.mjs): the worker's source as dist/nervure.html holds it, and that source's glue
// and wasm loaded under node.

import { readFileSync } from "node:fs";
import { gunzipSync } from "node:zlib";
import vm from "node:vm";

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
