//! The only WebAssembly surface of the crate (compiled on `wasm32` alone): a thin
//! `Engine` object that the page's worker drives.
//!
//! It converts, and nothing more: bytes and settings in, small results out as plain
//! objects (serde-wasm-bindgen), large ones as typed arrays. Every decision lives in
//! [`crate::engine::Workbench`] and is tested natively; errors carry the engine's own
//! message unchanged, because that message is what the page shows.

use js_sys::{Float64Array, Function, Object, Reflect, Uint32Array};
use serde::Serialize;
use wasm_bindgen::prelude::*;

use crate::campaign::{Campaign, Plan};
use crate::engine::{NodeStat, Workbench};
use crate::settings::Settings;
use crate::table::ingest::Ingest;

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
    reader: Option<Ingest>,
    /// The files loaded, kept one by one (see [`crate::campaign`]).
    campaign: Campaign,
}

#[wasm_bindgen]
impl Engine {
    #[wasm_bindgen(constructor)]
    pub fn new() -> Engine {
        install_panic_message();
        Engine { bench: Workbench::new(), reader: None, campaign: Campaign::new() }
    }

    /// Starts reading a new file (CSV, ICARTT or spreadsheet, told by content); any file
    /// being read is dropped.
    pub fn begin_table(&mut self, name: &str) {
        self.reader = Some(Ingest::new(name));
    }

    /// The next bytes of the file, in order.
    pub fn push_chunk(&mut self, chunk: &[u8]) -> Result<(), JsValue> {
        let reader = self.reader.as_mut().ok_or_else(|| fail("internal: push_chunk before begin_table"))?;
        reader.push(chunk).map_err(fail)
    }

    /// Ends the file; it replaces every file loaded before. Returns `{name, rows, columns}`.
    pub fn finish_table(&mut self) -> Result<JsValue, JsValue> {
        let reader = self.reader.take().ok_or_else(|| fail("internal: finish_table before begin_table"))?;
        let part = reader.finish(None).map_err(fail)?;
        self.campaign.clear();
        self.campaign.add(part);
        self.assemble()
    }

    /// Ends the file and adds it to the files loaded (the table is made by `assemble`).
    pub fn finish_file(&mut self) -> Result<(), JsValue> {
        let reader = self.reader.take().ok_or_else(|| fail("internal: finish_file before begin_table"))?;
        let part = reader.finish(None).map_err(fail)?;
        self.campaign.add(part);
        Ok(())
    }

    /// Drops every file loaded.
    pub fn clear_files(&mut self) {
        self.campaign.clear();
    }

    /// Removes one loaded file (call `assemble` after).
    pub fn remove_file(&mut self, name: &str) -> Result<(), JsValue> {
        self.campaign.remove(name).map_err(fail)
    }

    /// Reads another sheet of a loaded spreadsheet (call `assemble` after).
    pub fn choose_sheet(&mut self, name: &str, sheet: &str) -> Result<(), JsValue> {
        self.campaign.choose_sheet(name, sheet).map_err(fail)
    }

    /// Sets the alignment plan `{measurement, model, align}`, or clears it with `null`
    /// (call `assemble` after).
    pub fn set_plan(&mut self, plan: JsValue) -> Result<(), JsValue> {
        let plan: Option<Plan> = if plan.is_null() || plan.is_undefined() {
            None
        } else {
            let text: String = js_sys::JSON::stringify(&plan).map_err(|_| fail("the plan cannot be written as JSON"))?.into();
            Some(serde_json::from_str(&text).map_err(|e| fail(format!("setting 'plan': {e}")))?)
        };
        self.campaign.set_plan(plan).map_err(fail)
    }

    /// Makes the table from the files loaded (merged, or aligned by the plan); it replaces
    /// the previous table. Returns `{name, rows, columns}`.
    pub fn assemble(&mut self) -> Result<JsValue, JsValue> {
        let table = self.campaign.assemble().map_err(fail)?;
        self.bench.set_table(table);
        self.table_info(&[])
    }

    /// The file list: `{files: [report], plan, alignment, differences}`.
    pub fn files(&self) -> Result<JsValue, JsValue> {
        to_js(&self.campaign.info())
    }

    /// Column summaries of the named files merged (all when the list is empty).
    pub fn file_columns(&self, names: JsValue) -> Result<JsValue, JsValue> {
        let names: Vec<String> = serde_wasm_bindgen::from_value(names).map_err(|e| fail(format!("file names: {e}")))?;
        to_js(&self.campaign.columns_of(&names).map_err(fail)?)
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
