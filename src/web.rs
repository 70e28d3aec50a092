//! The only WebAssembly surface of the crate (compiled on `wasm32` alone): a thin
//! `Engine` object that the page's worker drives.
//!
//! It converts, and nothing more: bytes and settings in, small results out as plain
//! objects (serde-wasm-bindgen), large ones as typed arrays. Every decision lives in
//! [`crate::engine::Workbench`] and is tested natively; errors carry the engine's own
//! message unchanged, because that message is what the page shows.

use js_sys::{Array, Float64Array, Function, Int32Array, Object, Reflect, Uint32Array};
use serde::Serialize;
use wasm_bindgen::prelude::*;

use crate::engine::{NodeStat, Workbench};
use crate::settings::Settings;
use crate::table::{ReadOptions, TableReader};

/// Panics become one `console.error` line with the message and place, instead of an
/// anonymous "unreachable" trap (written here rather than pulling in a crate for it).
fn install_panic_message() {
    use std::sync::Once;
    static ONCE: Once = Once::new();
    ONCE.call_once(|| {
        std::panic::set_hook(Box::new(|info| {
            web_sys::console::error_1(&JsValue::from_str(&format!("nervure engine panic: {info}")));
        }));
    });
}

fn to_js<T: Serialize + ?Sized>(value: &T) -> Result<JsValue, JsValue> {
    value
        .serialize(&serde_wasm_bindgen::Serializer::json_compatible())
        .map_err(|e| JsError::new(&format!("internal: cannot pass a result to the page: {e}")).into())
}

fn fail(e: impl std::fmt::Display) -> JsValue {
    JsError::new(&e.to_string()).into()
}

/// Settings arrive as a JS object; they go through JSON text so that numbers keep the
/// exact types the settings document declares, and [`Settings::from_json`] validates them.
fn settings_from_js(value: &JsValue) -> Result<Settings, JsValue> {
    let text = js_sys::JSON::stringify(value)
        .map_err(|_| fail("setting '(document)': the settings cannot be written as JSON"))?;
    let text: String = text.into();
    Settings::from_json(&text).map_err(fail)
}

fn set(target: &Object, key: &str, value: &JsValue) {
    // Setting a property on a fresh plain object cannot fail.
    let _ = Reflect::set(target, &JsValue::from_str(key), value);
}

#[derive(Serialize)]
#[serde(rename_all = "camelCase")]
struct TableInfo<'a> {
    name: &'a str,
    rows: usize,
    columns: Vec<crate::table::ColumnSummary>,
}

#[wasm_bindgen]
pub struct Engine {
    bench: Workbench,
    reader: Option<TableReader>,
}

#[wasm_bindgen]
impl Engine {
    #[wasm_bindgen(constructor)]
    pub fn new() -> Engine {
        install_panic_message();
        Engine { bench: Workbench::new(), reader: None }
    }

    /// Starts reading a new file; any table being read is dropped.
    pub fn begin_table(&mut self, name: &str) {
        self.reader = Some(TableReader::new(name, ReadOptions::default()));
    }

    /// The next bytes of the file, in order.
    pub fn push_chunk(&mut self, chunk: &[u8]) -> Result<(), JsValue> {
        let reader = self.reader.as_mut().ok_or_else(|| fail("internal: push_chunk before begin_table"))?;
        reader.push(chunk).map_err(fail)
    }

    /// Ends the file; the table replaces the previous one. Returns `{name, rows, columns}`.
    pub fn finish_table(&mut self) -> Result<JsValue, JsValue> {
        let reader = self.reader.take().ok_or_else(|| fail("internal: finish_table before begin_table"))?;
        let table = reader.finish().map_err(fail)?;
        self.bench.set_table(table);
        self.table_info(&[])
    }

    /// Column summaries with `fill_values` counted as missing: `{name, rows, columns}`.
    pub fn column_summaries(&self, fill_values: &[f64]) -> Result<JsValue, JsValue> {
        self.table_info(fill_values)
    }

    /// Concrete first settings for the table.
    pub fn auto_settings(&self) -> Result<JsValue, JsValue> {
        to_js(&self.bench.auto_settings().map_err(fail)?)
    }

    /// Validates a settings object and returns it as the engine reads it.
    pub fn check_settings(&self, settings: &JsValue) -> Result<JsValue, JsValue> {
        to_js(&settings_from_js(settings)?)
    }

    /// Builds the graph; `progress(stage, fraction)` is called as stages advance.
    /// Returns the summary.
    pub fn run(&mut self, settings: JsValue, progress: &Function) -> Result<JsValue, JsValue> {
        let settings = settings_from_js(&settings)?;
        let mut report = |stage: &str, fraction: f64| {
            let _ = progress.call2(&JsValue::NULL, &JsValue::from_str(stage), &JsValue::from_f64(fraction));
        };
        let summary = self.bench.run(&settings, &mut report).map_err(fail)?;
        to_js(&summary)
    }

    /// Points, lens and cover for `settings` (cached stages re-used); returns how many cover
    /// elements a pool of workers should cluster, 0 when nothing needs clustering (then
    /// call `run`).
    pub fn prepare_elements(&mut self, settings: JsValue, progress: &Function) -> Result<usize, JsValue> {
        let settings = settings_from_js(&settings)?;
        let mut report = |stage: &str, fraction: f64| {
            let _ = progress.call2(&JsValue::NULL, &JsValue::from_str(stage), &JsValue::from_f64(fraction));
        };
        self.bench.prepare_elements(&settings, &mut report).map_err(fail)
    }

    /// Cover element `e`'s points, row-major, `point_dim()` values a row.
    pub fn element_points(&self, e: usize) -> Result<Float64Array, JsValue> {
        Ok(Float64Array::from(&self.bench.element_points(e).map_err(fail)?[..]))
    }

    /// Number of points in each cover element, after `prepare_elements`.
    pub fn element_sizes(&self) -> Uint32Array {
        let sizes: Vec<u32> = self.bench.element_sizes().iter().map(|&k| k as u32).collect();
        Uint32Array::from(&sizes[..])
    }

    pub fn point_dim(&self) -> usize {
        self.bench.point_dim()
    }

    /// Builds the graph from one `Int32Array` of labels per cover element (as
    /// `cluster_points` returns them). Returns the summary.
    pub fn run_with_labels(&mut self, settings: JsValue, labels: Array, progress: &Function) -> Result<JsValue, JsValue> {
        let settings = settings_from_js(&settings)?;
        let labels: Vec<crate::cluster::Labels> = labels
            .iter()
            .map(|l| {
                let v = Int32Array::from(l).to_vec();
                v.into_iter().map(|x| (x >= 0).then_some(x as u32)).collect()
            })
            .collect();
        let mut report = |stage: &str, fraction: f64| {
            let _ = progress.call2(&JsValue::NULL, &JsValue::from_str(stage), &JsValue::from_f64(fraction));
        };
        let summary = self.bench.run_with_labels(&settings, labels, &mut report).map_err(fail)?;
        to_js(&summary)
    }

    /// The last graph as typed arrays: `{nodeSizes, nodeElements, edgeA, edgeB, edgeShared,
    /// positions}` (positions interleaved x, y), or `null` before the first run.
    pub fn graph(&self) -> JsValue {
        let Some(build) = self.bench.last() else { return JsValue::NULL };
        let nodes = &build.nerve.nodes;
        let edges = &build.nerve.edges;
        let sizes: Vec<u32> = nodes.iter().map(|n| n.members.len() as u32).collect();
        let elements: Vec<u32> = nodes.iter().map(|n| n.element as u32).collect();
        let a: Vec<u32> = edges.iter().map(|e| e.a).collect();
        let b: Vec<u32> = edges.iter().map(|e| e.b).collect();
        let shared: Vec<u32> = edges.iter().map(|e| e.shared).collect();
        let positions: Vec<f64> = build.layout.iter().flat_map(|p| [p[0], p[1]]).collect();
        let out = Object::new();
        set(&out, "nodeSizes", &Uint32Array::from(&sizes[..]).into());
        set(&out, "nodeElements", &Uint32Array::from(&elements[..]).into());
        set(&out, "edgeA", &Uint32Array::from(&a[..]).into());
        set(&out, "edgeB", &Uint32Array::from(&b[..]).into());
        set(&out, "edgeShared", &Uint32Array::from(&shared[..]).into());
        set(&out, "positions", &Float64Array::from(&positions[..]).into());
        out.into()
    }

    /// One value per node of the last graph: `stat` (e.g. "mean") of `column` over its rows.
    pub fn node_values(&self, column: &str, stat: &str) -> Result<Float64Array, JsValue> {
        let stat: NodeStat = serde_json::from_value(serde_json::Value::String(stat.to_string()))
            .map_err(|_| fail(format!("unknown node statistic '{stat}'")))?;
        let values = self.bench.node_values(column, stat).map_err(fail)?;
        Ok(Float64Array::from(&values[..]))
    }

    /// Size, cover element, per-column statistics and first member rows of one node.
    pub fn node_detail(&self, node: usize) -> Result<JsValue, JsValue> {
        to_js(&self.bench.node_detail(node).map_err(fail)?)
    }
}

/// Clusters one cover element's points (row-major, `dim` values a row) with the
/// `clustering` part of a settings document; one label per point, -1 for noise. Used by
/// the page's helper workers, which hold no table.
#[wasm_bindgen]
pub fn cluster_points(points: &[f64], dim: usize, clustering: &JsValue) -> Result<Int32Array, JsValue> {
    install_panic_message();
    let text: String = js_sys::JSON::stringify(clustering).map_err(|_| fail("setting 'clustering': cannot be written as JSON"))?.into();
    let method: crate::settings::Clustering = serde_json::from_str(&text).map_err(|e| fail(format!("setting 'clustering': {e}")))?;
    if dim == 0 || points.len() % dim != 0 {
        return Err(fail(format!("internal: {} values do not make rows of {dim}", points.len())));
    }
    let labels = crate::cluster::cluster(points, dim, &method);
    let out: Vec<i32> = labels.iter().map(|l| l.map_or(-1, |c| c as i32)).collect();
    Ok(Int32Array::from(&out[..]))
}

impl Engine {
    fn table_info(&self, fill_values: &[f64]) -> Result<JsValue, JsValue> {
        let table = self.bench.table().ok_or_else(|| fail("no table is loaded yet; open a CSV file first"))?;
        to_js(&TableInfo { name: &table.name, rows: table.n_rows, columns: table.summaries(fill_values) })
    }
}

impl Default for Engine {
    fn default() -> Self {
        Engine::new()
    }
}
