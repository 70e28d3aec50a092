//! The only WebAssembly surface of the crate (compiled on `wasm32` alone): a thin
//! `Engine` object that the page's worker drives.
//!
//! It converts, and nothing more: bytes and settings in, small results out as plain
//! objects (serde-wasm-bindgen), large ones as typed arrays. Every decision lives in
//! [`crate::engine::Workbench`] and is tested natively; errors carry the engine's own
//! message unchanged, because that message is what the page shows.

use js_sys::{Array, Float64Array, Function, Int32Array, Object, Reflect, Uint32Array, Uint8Array};
use serde::Serialize;
use wasm_bindgen::prelude::*;

use crate::campaign::{Campaign, Plan};
use crate::engine::{NodeStat, Workbench};
use crate::results::{ComparisonOut, ConfidenceOut};
use crate::shape::{self, Bootstrap, Comparing, Grid, Sweeping};
use crate::settings::Settings;
use crate::table::ingest::Ingest;
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

/// The allocator, watched: when a request fails, its size is kept so that the worker can say
/// "out of memory" after the trap that follows (the engine itself cannot report it: a failed
/// allocation aborts).
struct WatchedAllocator;

static FAILED_ALLOCATION: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);

// SAFETY: every call is forwarded unchanged to the system allocator.
unsafe impl std::alloc::GlobalAlloc for WatchedAllocator {
    unsafe fn alloc(&self, layout: std::alloc::Layout) -> *mut u8 {
        note_failure(std::alloc::System.alloc(layout), layout.size())
    }
    unsafe fn alloc_zeroed(&self, layout: std::alloc::Layout) -> *mut u8 {
        note_failure(std::alloc::System.alloc_zeroed(layout), layout.size())
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: std::alloc::Layout) {
        std::alloc::System.dealloc(ptr, layout)
    }
    unsafe fn realloc(&self, ptr: *mut u8, layout: std::alloc::Layout, new_size: usize) -> *mut u8 {
        note_failure(std::alloc::System.realloc(ptr, layout, new_size), new_size)
    }
}

fn note_failure(ptr: *mut u8, size: usize) -> *mut u8 {
    if ptr.is_null() {
        FAILED_ALLOCATION.store(size.max(1), std::sync::atomic::Ordering::Relaxed);
    }
    ptr
}

#[global_allocator]
static ALLOCATOR: WatchedAllocator = WatchedAllocator;

/// `{failedBytes, heldBytes}`: the size of the last allocation that failed (0 if none) and
/// the engine's memory now. Safe to call after a trap: it reads two numbers.
#[wasm_bindgen]
pub fn memory_report() -> JsValue {
    let out = Object::new();
    let failed = FAILED_ALLOCATION.load(std::sync::atomic::Ordering::Relaxed) as f64;
    let held = (core::arch::wasm32::memory_size(0) as f64) * 65536.0;
    set(&out, "failedBytes", &JsValue::from_f64(failed));
    set(&out, "heldBytes", &JsValue::from_f64(held));
    out.into()
}

fn to_js<T: Serialize + ?Sized>(value: &T) -> Result<JsValue, JsValue> {
    value
        .serialize(&serde_wasm_bindgen::Serializer::json_compatible())
        .map_err(|e| JsError::new(&format!("internal: cannot pass a result to the page: {e}")).into())
}

/// A node statistic from the page: a string ("mean", …) or an object (see [`NodeStat`]).
fn stat_from_js(stat: &JsValue) -> Result<NodeStat, JsValue> {
    let text: String = js_sys::JSON::stringify(stat).map_err(|_| fail("setting 'stat': cannot be written as JSON"))?.into();
    let value: serde_json::Value = serde_json::from_str(&text).map_err(fail)?;
    NodeStat::from_json(&value).map_err(fail)
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
    /// How the file was read (decoding, decimal commas, values read as missing).
    notices: &'a [String],
    encoding: &'a str,
}

/// Per-file read options the page may give: `{textAsMissing: [column names]}`.
#[derive(serde::Deserialize, Default)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
struct PageReadOptions {
    #[serde(default)]
    text_as_missing: Vec<String>,
}

#[wasm_bindgen]
pub struct Engine {
    bench: Workbench,
    reader: Option<Ingest>,
    /// The files loaded, kept one by one (see [`crate::campaign`]).
    campaign: Campaign,
    notices: Vec<String>,
    encoding: &'static str,
    /// Graphs with more nodes than this are not laid out until asked again with 0 (no limit).
    node_limit: usize,
    /// The second table of a comparison, and its reader.
    bench_b: Workbench,
    reader_b: Option<TableReader>,
    /// When the second table is a subset of the first: its row condition, which replaces
    /// the settings' own for the second table ([`shape::swap::second_settings`]).
    second_rows: Option<String>,
    /// Step-wise jobs of the shape panel (see the functions at the end).
    boot: Option<Bootstrap>,
    sweeping: Option<Sweeping>,
    comparing: Option<Comparing>,
}

#[wasm_bindgen]
impl Engine {
    #[wasm_bindgen(constructor)]
    pub fn new() -> Engine {
        install_panic_message();
        Engine {
            bench: Workbench::new(),
            reader: None,
            notices: Vec::new(),
            encoding: "UTF-8",
            node_limit: 0,
            bench_b: Workbench::new(),
            reader_b: None,
            second_rows: None,
            boot: None,
            sweeping: None,
            comparing: None,
            campaign: Campaign::new(),
        }
    }

    /// Starts reading a new file (CSV, ICARTT or spreadsheet, told by content); any file
    /// being read is dropped.
    pub fn begin_table(&mut self, name: &str) {
        self.reader = Some(Ingest::new(name, ReadOptions::default()));
    }

    /// Starts reading a new file with read options `{textAsMissing: [...]}`.
    pub fn begin_table_with(&mut self, name: &str, options: JsValue) -> Result<(), JsValue> {
        let page: PageReadOptions = if options.is_undefined() || options.is_null() {
            PageReadOptions::default()
        } else {
            serde_wasm_bindgen::from_value(options).map_err(|e| fail(format!("internal: read options: {e}")))?
        };
        self.reader = Some(Ingest::new(name, ReadOptions { text_as_missing: page.text_as_missing, ..ReadOptions::default() }));
        Ok(())
    }

    /// Graphs of more than `limit` nodes (0: no limit) are not drawn: `run` returns
    /// `{confirmNodes: n}` instead of a summary, before the edges and the layout.
    pub fn set_node_limit(&mut self, limit: u32) {
        self.node_limit = limit as usize;
    }

    /// Test hook: allocates 64 MiB blocks until the allocator fails (the call then traps),
    /// so that the page's recovery from running out of memory can be tested.
    pub fn exhaust_memory_for_test(&mut self) -> usize {
        let mut blocks: Vec<Vec<u8>> = Vec::new();
        loop {
            let mut b = Vec::with_capacity(64 << 20);
            b.push(1u8);
            blocks.push(b);
            if blocks.len() > 1 << 16 {
                return blocks.len();
            }
        }
    }

    /// The size in bytes of the file being read, when known (a `File`'s `size`): its
    /// columns are then sized for it instead of growing by doubling. Changes no value.
    pub fn expect_bytes(&mut self, total: f64) {
        if let Some(r) = self.reader.as_mut() {
            r.expect_bytes(total as u64);
        }
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
        // A table the page cannot start from is refused before it replaces the one shown.
        let auto = crate::auto::auto_choice(&part.table).map_err(fail)?;
        self.notices = part.note.notes.clone();
        self.encoding = part.note.encoding;
        self.campaign.clear();
        self.campaign.add(part);
        // One file and no plan: the table assembled is that file's table, so its automatic
        // settings are the ones just made (the worker asks for them next).
        let table = self.campaign.assemble().map_err(fail)?;
        self.bench.set_table_with_auto(table, auto);
        self.table_info(&[])
    }

    /// Ends the file and adds it to the files loaded (the table is made by `assemble`).
    pub fn finish_file(&mut self) -> Result<(), JsValue> {
        let reader = self.reader.take().ok_or_else(|| fail("internal: finish_file before begin_table"))?;
        let part = reader.finish(None).map_err(fail)?;
        // Each file's notices are in its report in the file list.
        self.notices.clear();
        self.encoding = part.note.encoding;
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
    pub fn auto_settings(&mut self) -> Result<JsValue, JsValue> {
        to_js(&self.bench.auto_settings().map_err(fail)?)
    }

    /// Help for a last graph that is mostly noise or dust: `{kind, what, how, eps,
    /// minPoints, settings}`, or null.
    pub fn scale_help(&self) -> Result<JsValue, JsValue> {
        to_js(&self.bench.scale_help().map_err(fail)?)
    }

    /// The numeric columns the automatic settings left out, each `{column, reason, why}`.
    pub fn auto_left_out(&mut self) -> Result<JsValue, JsValue> {
        to_js(&self.bench.auto_choice().map_err(fail)?.left_out)
    }

    /// Validates a settings object and returns it as the engine reads it.
    pub fn check_settings(&self, settings: &JsValue) -> Result<JsValue, JsValue> {
        to_js(&settings_from_js(settings)?)
    }

    /// Reads a settings file's text (never parsed by the page: a hostile file nested
    /// thousands deep cannot then break the worker's message passing) and returns the
    /// document as the engine reads it, or the engine's message naming `file_name`.
    pub fn read_settings_file(&self, text: &str, file_name: &str) -> Result<JsValue, JsValue> {
        to_js(&Settings::from_file_text(text, file_name).map_err(fail)?)
    }

    /// Opens a graph file ([`crate::graphfile`]) in place of any table and graph:
    /// `{table: {name, rows, columns}, settings, summary, rowsKnown}`; the graph is then
    /// read with `graph()`. A file that cannot be read changes nothing.
    pub fn open_graph(&mut self, text: &str, file_name: &str) -> Result<JsValue, JsValue> {
        let file = crate::graphfile::GraphFile::from_json(text, file_name).map_err(fail)?;
        self.campaign.clear();
        self.notices.clear();
        self.boot = None;
        self.sweeping = None;
        self.comparing = None;
        self.bench.open_graph(file);
        let f = self.bench.opened().expect("just opened");
        #[derive(Serialize)]
        #[serde(rename_all = "camelCase")]
        struct Opened<'a> {
            table: Option<&'a crate::graphfile::TableInfo>,
            settings: &'a Settings,
            summary: &'a crate::engine::Summary,
            rows_known: bool,
            version: u32,
        }
        to_js(&Opened { table: f.table.as_ref(), settings: &f.settings, summary: &f.summary, rows_known: f.has_rows(), version: f.version })
    }

    /// The first look at a large table (see `first_look.rs`): builds the graph of a seeded
    /// sample and makes it the graph shown; returns its summary (with `firstLook: {sampled,
    /// of}`), or null when the table is too small to need one.
    pub fn first_look(&mut self, settings: JsValue, progress: &Function) -> Result<JsValue, JsValue> {
        let settings = settings_from_js(&settings)?;
        let mut report = |stage: &str, fraction: f64| {
            let _ = progress.call2(&JsValue::NULL, &JsValue::from_str(stage), &JsValue::from_f64(fraction));
        };
        match self.bench.first_look(&settings, &mut report).map_err(fail)? {
            Some(summary) => to_js(&summary),
            None => Ok(JsValue::NULL),
        }
    }

    /// Builds the graph; `progress(stage, fraction)` is called as stages advance.
    /// Returns the summary.
    pub fn run(&mut self, settings: JsValue, progress: &Function) -> Result<JsValue, JsValue> {
        let settings = settings_from_js(&settings)?;
        let mut report = |stage: &str, fraction: f64| {
            let _ = progress.call2(&JsValue::NULL, &JsValue::from_str(stage), &JsValue::from_f64(fraction));
        };
        if self.node_limit > 0 {
            let nodes = self.bench.node_count(&settings, &mut report).map_err(fail)?;
            if nodes > self.node_limit {
                let out = Object::new();
                set(&out, "confirmNodes", &JsValue::from_f64(nodes as f64));
                set(&out, "limit", &JsValue::from_f64(self.node_limit as f64));
                return Ok(out.into());
            }
        }
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

    /// Takes one `Int32Array` of labels per cover element (as `cluster_points` returns
    /// them) as the clusters of `settings`; `run` then does no clustering.
    pub fn set_element_labels(&mut self, settings: JsValue, labels: Array) -> Result<(), JsValue> {
        let settings = settings_from_js(&settings)?;
        let labels: Vec<crate::cluster::Labels> = labels
            .iter()
            .map(|l| Int32Array::from(l).to_vec().into_iter().map(|x| (x >= 0).then_some(x as u32)).collect())
            .collect();
        self.bench.set_element_labels(&settings, labels).map_err(fail)
    }

    /// The last graph as typed arrays: `{nodeSizes, nodeElements, edgeA, edgeB, edgeShared,
    /// positions, radii, nodeComponent, componentRows}` (positions interleaved x, y; radii
    /// of the discs in the same units, see [`crate::layout`]; each node's component and
    /// each component's distinct rows), or `null` before the first run.
    pub fn graph(&self) -> JsValue {
        graph_arrays(self.bench.last(), &self.bench.node_sizes())
    }

    /// One value per node of the last graph: `stat` of `column` over its rows. `stat` is
    /// a string ("mean", "median", "spread") or an object such as
    /// `{kind: "shareAbove", threshold: 2.5}` (see [`NodeStat`]).
    pub fn node_values(&self, column: &str, stat: &JsValue) -> Result<Float64Array, JsValue> {
        let values = self.bench.node_values(column, stat_from_js(stat)?).map_err(fail)?;
        Ok(Float64Array::from(&values[..]))
    }

    /// Each node's mean lens value: `axis` 0 (or absent) for `lens`, 1 for `lens2`.
    pub fn node_lens_values(&self, axis: Option<u32>) -> Result<Float64Array, JsValue> {
        let values = self.bench.node_lens_values(axis.unwrap_or(0) as usize).map_err(fail)?;
        Ok(Float64Array::from(&values[..]))
    }

    /// The lens histogram with the cover's intervals: `{edges, counts, intervals: [[a, b, rows]]}`
    /// for `lens` (`axis` 0 or absent) or `lens2` (1).
    pub fn lens_histogram(&self, bins: u32, axis: Option<u32>) -> Result<JsValue, JsValue> {
        to_js(&self.bench.lens_histogram(bins as usize, axis.unwrap_or(0) as usize).map_err(fail)?)
    }

    /// Size, cover element, per-column statistics and first member rows of one node.
    pub fn node_detail(&self, node: usize) -> Result<JsValue, JsValue> {
        to_js(&self.bench.node_detail(node).map_err(fail)?)
    }

    /// Members of every node of the last graph, as CSR typed arrays: node `i` holds table
    /// rows `rows[offsets[i] .. offsets[i + 1]]` (0-based, increasing). `null` before a run.
    pub fn memberships(&self) -> JsValue {
        let Some(build) = self.bench.last() else { return JsValue::NULL };
        let mut offsets: Vec<u32> = Vec::with_capacity(build.nerve.nodes.len() + 1);
        let mut rows: Vec<u32> = Vec::new();
        offsets.push(0);
        for n in &build.nerve.nodes {
            rows.extend_from_slice(&n.members);
            offsets.push(rows.len() as u32);
        }
        let out = Object::new();
        set(&out, "offsets", &Uint32Array::from(&offsets[..]).into());
        set(&out, "rows", &Uint32Array::from(&rows[..]).into());
        out.into()
    }

    /// Columns ranked by how much the rows of `nodes` differ from the rest:
    /// `{columns: [numeric, by KS], categories: [text, by total variation distance]}`.
    pub fn explain(&mut self, nodes: &[u32]) -> Result<JsValue, JsValue> {
        let nodes: Vec<usize> = nodes.iter().map(|&n| n as usize).collect();
        to_js(&self.bench.explain(&nodes).map_err(fail)?)
    }

    /// The union of the rows of `nodes` (0-based table rows, increasing).
    pub fn rows_of(&self, nodes: &[u32]) -> Result<Uint32Array, JsValue> {
        let nodes: Vec<usize> = nodes.iter().map(|&n| n as usize).collect();
        Ok(Uint32Array::from(&self.bench.rows_of(&nodes).map_err(fail)?[..]))
    }

    /// Cells of table rows `rows` for `columns` (every column when empty):
    /// `{columns, dataRows, cells}`.
    pub fn row_values(&self, rows: &[u32], columns: JsValue) -> Result<JsValue, JsValue> {
        let columns: Vec<String> = if columns.is_undefined() || columns.is_null() {
            Vec::new()
        } else {
            serde_wasm_bindgen::from_value(columns).map_err(|e| fail(format!("internal: columns must be a list of names: {e}")))?
        };
        to_js(&self.bench.row_values(rows, &columns).map_err(fail)?)
    }

    /// What a row condition on `column` can be written from: `{name, kind, missing, min,
    /// max, levels: [[value, rows]], moreLevels, first, last}` (see
    /// [`crate::subset::ColumnOverview`]), at most `max_levels` values listed.
    pub fn column_overview(&self, column: &str, max_levels: usize) -> Result<JsValue, JsValue> {
        to_js(&self.bench.column_overview(column, max_levels).map_err(fail)?)
    }

    /// What the derived columns of the last run found: `[{name, missing, undefined}]`.
    pub fn derived_info(&self) -> Result<JsValue, JsValue> {
        to_js(self.bench.derived_info())
    }

    /// A sample of at most `limit` rows with two values each: `x`, `y` column names, or
    /// both empty for principal components 1 and 2. `{rows, x, y, total, xLabel, yLabel}`
    /// with typed arrays.
    pub fn scatter(&self, x: &str, y: &str, limit: usize) -> Result<JsValue, JsValue> {
        let axes = if x.is_empty() && y.is_empty() {
            crate::scatter::Axes::Principal
        } else {
            crate::scatter::Axes::Columns(x.to_string(), y.to_string())
        };
        let d = self.bench.scatter(&axes, limit).map_err(fail)?;
        let out = Object::new();
        set(&out, "rows", &Uint32Array::from(&d.rows[..]).into());
        set(&out, "x", &Float64Array::from(&d.x[..]).into());
        set(&out, "y", &Float64Array::from(&d.y[..]).into());
        set(&out, "total", &JsValue::from_f64(d.total as f64));
        set(&out, "xLabel", &JsValue::from_str(&d.x_label));
        set(&out, "yLabel", &JsValue::from_str(&d.y_label));
        set(&out, "setAside", &Uint32Array::from(&d.set_aside[..]).into());
        Ok(out.into())
    }

    /// The last graph as text in one of the export formats: "json", "graphml" (with the
    /// colouring's node values, column `colour_column` and statistic `stat` as for
    /// `node_values`, when the column is not empty), "memberships", "report" (naming
    /// `file_name`).
    pub fn export(&self, format: &str, colour_column: &str, stat: &JsValue, file_name: &str) -> Result<String, JsValue> {
        let build = self.bench.last().ok_or_else(|| fail("no graph has been built yet"))?;
        match format {
            "json" => Ok(self.bench.graph_file(true).map_err(fail)?.to_json()),
            "graphml" => {
                let extra = if colour_column.is_empty() {
                    Vec::new()
                } else {
                    let stat = if stat.is_undefined() || stat.is_null() { NodeStat::Mean } else { stat_from_js(stat)? };
                    crate::export::colour_attributes(&self.bench, colour_column, stat).map_err(fail)?
                };
                Ok(crate::export::graphml_sized(build, &self.bench.node_sizes(), &extra))
            }
            "memberships" if !self.bench.members_known() => {
                Err(fail("this graph file was written without its member rows, so there are no memberships to export"))
            }
            "memberships" => Ok(crate::export::memberships_csv(build)),
            "report" => Ok(crate::export::report(build, file_name, self.bench.table())),
            other => Err(fail(format!("internal: unknown export format '{other}'"))),
        }
    }
}

/// The shape panel's surface: the diagram of the current graph, and the bootstrap, the
/// sweep and the comparison run a few draws (or cells) per call, so the worker can read
/// its messages (a cancel) between calls. Each job is `*_begin` (returns the number of
/// steps in all), `*_step(k)` (returns the number done), `*_finish` (the result), and
/// `*_drop` (cancel). Logic lives in [`crate::shape`].
#[wasm_bindgen]
impl Engine {
    /// The extended persistence diagram of the last graph, one typed array per field
    /// (a graph of 19 000 nodes has some 8 000 features: as objects with arrays of nodes
    /// they held the page for 20 ms on arrival): `{kinds: [name], kind: Uint8Array (index
    /// into kinds), birth, death, persistence: Float64Array, birthNode, deathNode:
    /// Uint32Array, nodes: Uint32Array, offsets: Uint32Array}`, feature `i` being carried
    /// by `nodes[offsets[i] .. offsets[i + 1]]` ([`shape::support`]); `null` before the
    /// first run.
    pub fn diagram(&self) -> Result<JsValue, JsValue> {
        let Some(b) = self.bench.last() else { return Ok(JsValue::NULL) };
        let f = crate::results::diagram(b).features;
        let kind: Vec<u8> = f.iter().map(|x| shape::Kind::ALL.iter().position(|k| *k == x.kind).unwrap_or(0) as u8).collect();
        let mut offsets = Vec::with_capacity(f.len() + 1);
        offsets.push(0u32);
        let mut nodes: Vec<u32> = Vec::new();
        for x in &f {
            nodes.extend_from_slice(x.nodes.as_deref().unwrap_or(&[]));
            offsets.push(nodes.len() as u32);
        }
        let floats = |g: fn(&crate::results::FeatureOut) -> f64| Float64Array::from(&f.iter().map(g).collect::<Vec<_>>()[..]);
        let ints = |g: fn(&crate::results::FeatureOut) -> u32| Uint32Array::from(&f.iter().map(g).collect::<Vec<_>>()[..]);
        let out = Object::new();
        set(&out, "kinds", &to_js(&shape::Kind::ALL)?);
        set(&out, "kind", &Uint8Array::from(&kind[..]).into());
        set(&out, "birth", &floats(|x| x.birth).into());
        set(&out, "death", &floats(|x| x.death).into());
        set(&out, "persistence", &floats(|x| x.persistence).into());
        set(&out, "birthNode", &ints(|x| x.birth_node).into());
        set(&out, "deathNode", &ints(|x| x.death_node).into());
        set(&out, "nodes", &Uint32Array::from(&nodes[..]).into());
        set(&out, "offsets", &Uint32Array::from(&offsets[..]).into());
        Ok(out.into())
    }

    pub fn bootstrap_begin(&mut self, settings: JsValue, draws: usize, alpha: f64, seed: f64) -> Result<usize, JsValue> {
        let s = settings_from_js(&settings)?;
        let table = self.bench.table().ok_or_else(|| fail("no table is loaded yet; open a CSV file first"))?;
        let b = Bootstrap::new(table, &s, draws, alpha, seed_of(seed)?).map_err(fail)?;
        self.boot = Some(b);
        Ok(draws)
    }

    pub fn bootstrap_step(&mut self, k: usize) -> Result<usize, JsValue> {
        Ok(self.boot.as_mut().ok_or_else(|| fail("internal: bootstrap_step without bootstrap_begin"))?.step(k))
    }

    /// `{alpha, draws, threshold, distances, features: [{kind, birth, death, birthNode,
    /// deathNode, persistence, significant}]}`.
    pub fn bootstrap_finish(&mut self) -> Result<JsValue, JsValue> {
        let c = self.boot.take().ok_or_else(|| fail("internal: bootstrap_finish without bootstrap_begin"))?.finish();
        to_js(&ConfidenceOut::new(&c))
    }

    pub fn bootstrap_drop(&mut self) {
        self.boot = None;
    }

    /// Settings suggested by the parameter rule, with its values, changes and warnings.
    pub fn suggest(&self, settings: JsValue, seed: f64) -> Result<JsValue, JsValue> {
        let s = settings_from_js(&settings)?;
        let table = self.bench.table().ok_or_else(|| fail("no table is loaded yet; open a CSV file first"))?;
        to_js(&shape::suggest(table, &s, seed_of(seed)?).map_err(fail)?)
    }

    /// `grid` is `{intervals: [..], overlaps: [..], eps: [..]}`; `draws` 0 skips significance.
    pub fn sweep_begin(&mut self, settings: JsValue, grid: JsValue, draws: usize, alpha: f64, seed: f64) -> Result<usize, JsValue> {
        let s = settings_from_js(&settings)?;
        let text: String = js_sys::JSON::stringify(&grid).map_err(|_| fail("sweep grid: cannot be written as JSON"))?.into();
        let grid: Grid = serde_json::from_str(&text).map_err(|e| fail(format!("sweep grid: {e}")))?;
        let table = self.bench.table().ok_or_else(|| fail("no table is loaded yet; open a CSV file first"))?;
        let sw = Sweeping::new(table, &s, &grid, draws, alpha, seed_of(seed)?).map_err(fail)?;
        let total = sw.total();
        self.sweeping = Some(sw);
        Ok(total)
    }

    pub fn sweep_step(&mut self, k: usize) -> Result<usize, JsValue> {
        self.sweeping.as_mut().ok_or_else(|| fail("internal: sweep_step without sweep_begin"))?.step(k).map_err(fail)
    }

    /// The cells, in order: `[{intervals, overlap, eps, nodes, components, loops,
    /// significant, significantLoops, threshold}]`.
    pub fn sweep_finish(&mut self) -> Result<JsValue, JsValue> {
        to_js(&self.sweeping.take().ok_or_else(|| fail("internal: sweep_finish without sweep_begin"))?.finish().map_err(fail)?)
    }

    pub fn sweep_drop(&mut self) {
        self.sweeping = None;
    }

    /// The second table of a comparison, read like the first.
    pub fn begin_table_b(&mut self, name: &str) {
        self.reader_b = Some(TableReader::new(name, ReadOptions::default()));
    }

    /// As [`Engine::expect_bytes`], for the second table.
    pub fn expect_bytes_b(&mut self, total: f64) {
        if let Some(r) = self.reader_b.as_mut() {
            r.expect_bytes(total as u64);
        }
    }

    pub fn push_chunk_b(&mut self, chunk: &[u8]) -> Result<(), JsValue> {
        self.reader_b.as_mut().ok_or_else(|| fail("internal: push_chunk_b before begin_table_b"))?.push(chunk).map_err(fail)
    }

    pub fn finish_table_b(&mut self) -> Result<JsValue, JsValue> {
        let table = self.reader_b.take().ok_or_else(|| fail("internal: finish_table_b before begin_table_b"))?.finish().map_err(fail)?;
        self.comparing = None;
        self.second_rows = None;
        self.bench_b.set_table(table);
        let t = self.bench_b.table().expect("just set");
        to_js(&TableInfo { name: &t.name, rows: t.n_rows, columns: t.summaries(&[]), notices: &[], encoding: "UTF-8" })
    }

    /// The second table made from the first by columns standing in for others
    /// ([`shape::swap`]): `pairs` is `[[standsIn, forColumn], ..]`; the derived columns of
    /// `settings` are left out (the second table's run makes its own).
    pub fn table_b_from_columns(&mut self, pairs: JsValue, settings: JsValue) -> Result<JsValue, JsValue> {
        let s = settings_from_js(&settings)?;
        let text: String = js_sys::JSON::stringify(&pairs).map_err(|_| fail("column swap: cannot be written as JSON"))?.into();
        let pairs: Vec<(String, String)> = serde_json::from_str(&text).map_err(|e| fail(format!("column swap: {e}")))?;
        let a = self.bench.table().ok_or_else(|| fail("no table is loaded yet; open a CSV file first"))?;
        let table = shape::swap::second_table(a, &pairs, &s).map_err(fail)?;
        self.comparing = None;
        self.second_rows = None;
        self.bench_b.set_table(table);
        let t = self.bench_b.table().expect("just set");
        to_js(&TableInfo { name: &t.name, rows: t.n_rows, columns: t.summaries(&[]), notices: &[], encoding: "UTF-8" })
    }

    /// The second table made of other rows of the first ([`shape::swap::subset`]): the
    /// first table under the row condition `condition`, which must keep two rows or more.
    /// Returns `{name, rows, columns, keepRows}`, `rows` being the rows it keeps.
    pub fn table_b_from_rows(&mut self, condition: &str, settings: JsValue) -> Result<JsValue, JsValue> {
        let s = settings_from_js(&settings)?;
        let a = self.bench.table().ok_or_else(|| fail("no table is loaded yet; open a CSV file first"))?;
        let (table, rows) = shape::swap::subset(a, &s, condition).map_err(fail)?;
        self.comparing = None;
        self.second_rows = Some(condition.to_string());
        self.bench_b.set_table(table);
        let t = self.bench_b.table().expect("just set");
        let out = TableInfo { name: &t.name, rows: rows.kept, columns: t.summaries(&[]), notices: &[], encoding: "UTF-8" };
        let value = to_js(&out)?;
        set(&Object::from(value.clone()), "keepRows", &JsValue::from_str(condition));
        Ok(value)
    }

    /// Builds the second table's graph with `settings` (its own row condition in place of
    /// the settings' one when it is a subset of the first); returns its summary.
    pub fn run_b(&mut self, settings: JsValue) -> Result<JsValue, JsValue> {
        let s = shape::swap::second_settings(&settings_from_js(&settings)?, self.second_rows.as_deref());
        if self.bench_b.table().is_none() {
            return Err(fail("no second table is loaded yet; open a second CSV file to compare with"));
        }
        to_js(&self.bench_b.run(&s, &mut |_: &str, _: f64| {}).map_err(|e| fail(format!("second table: {e}")))?)
    }

    /// The second table's last graph, as [`Engine::graph`] gives the first's.
    pub fn graph_b(&self) -> JsValue {
        graph_arrays(self.bench_b.last(), &self.bench_b.node_sizes())
    }

    /// Starts the comparison of the two tables' graphs under `settings` (both must have
    /// been built with them: [`Engine::run`], [`Engine::run_b`]); returns 2 × `draws`.
    pub fn compare_begin(&mut self, settings: JsValue, draws: usize, alpha: f64, seed: f64) -> Result<usize, JsValue> {
        let s = settings_from_js(&settings)?;
        let s_b = shape::swap::second_settings(&s, self.second_rows.as_deref());
        let a = self.bench.table().ok_or_else(|| fail("no table is loaded yet; open a CSV file first"))?;
        let b = self.bench_b.table().ok_or_else(|| fail("no second table is loaded yet; open a second CSV file to compare with"))?;
        let c = Comparing::new_pair((a, &s), (b, &s_b), draws, alpha, seed_of(seed)?).map_err(fail)?;
        let total = c.total();
        self.comparing = Some(c);
        Ok(total)
    }

    pub fn compare_step(&mut self, k: usize) -> Result<usize, JsValue> {
        Ok(self.comparing.as_mut().ok_or_else(|| fail("internal: compare_step without compare_begin"))?.step(k))
    }

    /// `{distance, threshold, alpha, differ, a, b}`, `a` and `b` as from `bootstrap_finish`.
    pub fn compare_finish(&mut self) -> Result<JsValue, JsValue> {
        let c = self.comparing.take().ok_or_else(|| fail("internal: compare_finish without compare_begin"))?.finish();
        to_js(&ComparisonOut::new(&c))
    }

    pub fn compare_drop(&mut self) {
        self.comparing = None;
    }
}

/// Seeds cross as JS numbers: whole, 0 to 2^53.
fn seed_of(x: f64) -> Result<u64, JsValue> {
    if x.is_finite() && x >= 0.0 && x.fract() == 0.0 && x <= 9_007_199_254_740_992.0 {
        Ok(x as u64)
    } else {
        Err(fail(format!("seed: {x} is not a whole number from 0 to 2^53")))
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
        to_js(&TableInfo {
            name: &table.name,
            rows: table.n_rows,
            columns: table.summaries(fill_values),
            notices: &self.notices,
            encoding: self.encoding,
        })
    }
}

/// A graph as typed arrays, as [`Engine::graph`] gives them, for [`Engine::graph_b`].
fn graph_arrays(build: Option<&crate::engine::Build>, sizes: &[usize]) -> JsValue {
    let Some(build) = build else { return JsValue::NULL };
    let nodes = &build.nerve.nodes;
    let edges = &build.nerve.edges;
    let sizes: Vec<u32> = sizes.iter().map(|&k| k as u32).collect();
    let elements: Vec<u32> = nodes.iter().map(|n| n.element as u32).collect();
    let a: Vec<u32> = edges.iter().map(|e| e.a).collect();
    let b: Vec<u32> = edges.iter().map(|e| e.b).collect();
    let shared: Vec<u32> = edges.iter().map(|e| e.shared).collect();
    let positions: Vec<f64> = build.layout.positions.iter().flat_map(|p| [p[0], p[1]]).collect();
    let out = Object::new();
    set(&out, "nodeSizes", &Uint32Array::from(&sizes[..]).into());
    set(&out, "nodeElements", &Uint32Array::from(&elements[..]).into());
    set(&out, "edgeA", &Uint32Array::from(&a[..]).into());
    set(&out, "edgeB", &Uint32Array::from(&b[..]).into());
    set(&out, "edgeShared", &Uint32Array::from(&shared[..]).into());
    set(&out, "positions", &Float64Array::from(&positions[..]).into());
    set(&out, "radii", &Float64Array::from(&build.layout.radii[..]).into());
    let component = build.nerve.component_of();
    set(&out, "componentRows", &Uint32Array::from(&build.nerve.rows_by_component(&component)[..]).into());
    set(&out, "nodeComponent", &Uint32Array::from(&component[..]).into());
    out.into()
}

impl Default for Engine {
    fn default() -> Self {
        Engine::new()
    }
}
