//! The Python surface of the Nervure core (`nervure._core`), as thin as the page's
//! (`src/web.rs`): it converts and calls, nothing more. Documents (settings, results)
//! cross as JSON text, the very text the command-line runner writes, so the two can be
//! compared byte for byte; large arrays cross as NumPy arrays that take over the Rust
//! vectors (no copy). Every long call runs with the GIL released, and the step-wise
//! computations look for Ctrl-C (KeyboardInterrupt) between steps. Errors are
//! `nervure.NervureError` carrying the engine's own message.
//!
//! The pure-Python package (`python/nervure/`) builds its DataFrames and graphs on this.

use std::path::PathBuf;

use numpy::{IntoPyArray, PyArray1, PyArray2, PyReadonlyArray1, PyReadonlyArray2, PyUntypedArrayMethods};
use pyo3::create_exception;
use pyo3::exceptions::PyException;
use pyo3::prelude::*;
use pyo3::types::PyDict;

use nervure::settings::Settings;
use nervure::table::{Column, Table as CoreTable, MISSING_CODE};
use nervure::Workbench;

// Named by its full path, so that pickle finds it again: an error raised on a Dask
// worker reaches the caller as this class.
create_exception!(nervure._core, NervureError, PyException, "The engine refused the data or the settings; the message says what and where.");

fn err(e: impl std::fmt::Display) -> PyErr {
    NervureError::new_err(e.to_string())
}

fn settings(text: &str) -> PyResult<Settings> {
    Settings::from_json(text).map_err(err)
}

fn json<T: serde::Serialize>(v: &T) -> String {
    serde_json::to_string(v).expect("results serialise")
}

/// A progress call for the step-wise computations: between steps it takes the GIL for a
/// moment to see whether Python has a signal waiting (Ctrl-C), and stops the work if so.
fn interruptible() -> impl FnMut(usize, usize) -> bool {
    move |_, _| Python::attach(|py| py.check_signals().is_ok())
}

/// A cancelled computation becomes KeyboardInterrupt (the signal that cancelled it).
fn finish<T>(py: Python<'_>, r: nervure::Result<T>) -> PyResult<T> {
    match r {
        Err(nervure::Error::Cancelled) => Err(py.check_signals().err().unwrap_or_else(|| pyo3::exceptions::PyKeyboardInterrupt::new_err("stopped"))),
        other => other.map_err(err),
    }
}

/// A table: typed columns, read from files as the page reads them or made from arrays.
#[pyclass(module = "nervure._core", frozen)]
#[derive(Clone)]
struct Table {
    inner: CoreTable,
    /// Measurement-minus-model derived columns offered after an alignment.
    differences: Vec<nervure::settings::Derived>,
}

#[pymethods]
impl Table {
    /// Reads files (CSV or delimited text, ICARTT, .xlsx; told apart by content), stacked
    /// with a `source_file` column when several, `model` files aligned on time by the
    /// alignment document `align` (JSON text).
    #[staticmethod]
    #[pyo3(signature = (paths, model=Vec::new(), align=None, sheet=None))]
    fn read(py: Python<'_>, paths: Vec<PathBuf>, model: Vec<PathBuf>, align: Option<String>, sheet: Option<String>) -> PyResult<Table> {
        let align = align.map(|t| serde_json::from_str(&t).map_err(|e| err(format!("setting 'align': {e}")))).transpose()?;
        py.detach(|| {
            let mut c = nervure::campaign::from_paths(&paths, &model, align, sheet.as_deref(), &mut |_, _, _| {})?;
            let inner = c.assemble()?;
            let differences = c.info().map(|i| i.differences.clone()).unwrap_or_default();
            Ok::<_, nervure::Error>(Table { inner, differences })
        })
        .map_err(err)
    }

    /// A table from columns `(name, values, kind)`: numbers as a float64 array (NaN
    /// missing) with `kind` None; instants as float64 seconds since 1970 UTC (NaN missing)
    /// with `kind` "time" (no zone written) or "time-utc" (written in UTC: a frame's
    /// zone-aware column); categories as int64 codes into `kind`, a list of levels (-1
    /// missing). The values are copied once into the table.
    /// `first_text` names, for a category column, the first data row holding a text and
    /// that text (the engine then says where, when the column is chosen as a number).
    /// `as_read` types a category column as the CSV reader types a column of text (a time
    /// column when its levels are date-times): given the whole table's levels, one part of
    /// a CSV file then gets the reader's column.
    #[staticmethod]
    #[pyo3(signature = (name, columns, first_text=std::collections::HashMap::new(), as_read=false))]
    fn from_columns(
        name: String,
        columns: Vec<(String, Bound<'_, PyAny>, Option<Bound<'_, PyAny>>)>,
        first_text: std::collections::HashMap<String, (usize, String)>,
        as_read: bool,
    ) -> PyResult<Table> {
        let mut out = Vec::with_capacity(columns.len());
        for (col, values, kind) in columns {
            let time_zone = match kind.as_ref().and_then(|k| k.extract::<String>().ok()).as_deref() {
                Some("time") => Some(nervure::timecol::Zone::Unwritten),
                Some("time-utc") => Some(nervure::timecol::Zone::Offset(0)),
                Some(other) => return Err(err(format!("column '{col}': unknown kind '{other}' (use None, \"time\", \"time-utc\" or a list of levels)"))),
                None => None,
            };
            let levels: Option<Vec<String>> = match (&kind, &time_zone) {
                (Some(k), None) => Some(k.extract().map_err(|_| err(format!("column '{col}': levels must be a list of text")))?),
                _ => None,
            };
            if let Some(zone) = time_zone {
                let v: PyReadonlyArray1<f64> = values.extract().map_err(|_| err(format!("column '{col}': instants must be a float64 array of seconds since 1970 UTC")))?;
                out.push(Column::of(col, nervure::table::ColumnData::times(v.as_array().to_vec(), zone)));
                continue;
            }
            match levels {
                None => {
                    let v: PyReadonlyArray1<f64> = values.extract().map_err(|_| err(format!("column '{col}': numbers must be a float64 array")))?;
                    out.push(Column::number(col, v.as_array().to_vec()));
                }
                Some(levels) => {
                    let v: PyReadonlyArray1<i64> = values.extract().map_err(|_| err(format!("column '{col}': category codes must be an int64 array")))?;
                    let k = levels.len() as i64;
                    let mut codes = Vec::with_capacity(v.len());
                    for (row, &c) in v.as_array().iter().enumerate() {
                        if c >= k || c < -1 {
                            return Err(err(format!("column '{col}', data row {}: code {c} is not one of the {k} levels", row + 1)));
                        }
                        codes.push(if c < 0 { MISSING_CODE } else { c as u32 });
                    }
                    let mut c = if as_read { Column::from_text(col.clone(), codes, levels) } else { Column::category(col.clone(), codes, levels) };
                    c.first_text = first_text.get(&col).cloned();
                    out.push(c);
                }
            }
        }
        Ok(Table { inner: CoreTable::from_columns(name, out).map_err(err)?, differences: Vec::new() })
    }

    /// One part of a table from its cells' text (a list of str per column), each column
    /// read as the engine's reader reads a column; `modes` per column: "auto",
    /// "numbersAsText" (a part before the column's first text) or "text" (after it).
    /// `first_row` is the table row of the first cell. Returns the table and, per column
    /// that holds text here, its first text as (data row, text).
    #[staticmethod]
    #[allow(clippy::type_complexity)]
    fn from_cells(py: Python<'_>, name: String, columns: Vec<(String, Vec<String>, String)>, first_row: usize) -> PyResult<(Table, std::collections::HashMap<String, (usize, String)>)> {
        use nervure::parts::CellsMode;
        let mut out = Vec::with_capacity(columns.len());
        let mut firsts = std::collections::HashMap::new();
        for (col, cells, mode) in columns {
            let mode = match mode.as_str() {
                "auto" => CellsMode::Auto,
                "numbersAsText" => CellsMode::NumbersAsText,
                "text" => CellsMode::Text,
                other => return Err(err(format!("unknown cells mode '{other}'"))),
            };
            let c = py.detach(|| nervure::parts::read_cells(&col, cells.iter().map(|s| s.as_str()), first_row, mode)).map_err(err)?;
            if let Some(t) = &c.first_text {
                firsts.insert(col.clone(), t.clone());
            }
            out.push(c);
        }
        Ok((Table { inner: CoreTable::from_columns(name, out).map_err(err)?, differences: Vec::new() }, firsts))
    }

    #[getter]
    fn name(&self) -> String {
        self.inner.name.clone()
    }

    #[getter]
    fn rows(&self) -> usize {
        self.inner.n_rows
    }

    /// Column summaries as the page's column list shows them (JSON).
    fn summaries(&self) -> String {
        json(&self.inner.summaries(&[]))
    }

    /// The derived columns an alignment offers (JSON list of `{name, expression}`).
    fn differences(&self) -> String {
        json(&self.differences)
    }

    /// One column's values: numbers as float64 (NaN missing), categories as
    /// `(int64 codes, levels)` (-1 missing). A copy.
    fn column<'py>(&self, py: Python<'py>, name: &str) -> PyResult<Bound<'py, PyAny>> {
        let c = self.inner.column(name).ok_or_else(|| err(format!("no column named '{name}' in {}", self.inner.name)))?;
        Ok(match &c.data {
            nervure::table::ColumnData::Number(v) => v.as_slice().to_vec().into_pyarray(py).into_any(),
            // A time column: its instants as float64 seconds since 1970 UTC (NaN missing).
            nervure::table::ColumnData::Time(t) => t.seconds.as_slice().to_vec().into_pyarray(py).into_any(),
            nervure::table::ColumnData::Category { codes, levels } => {
                let codes: Vec<i64> = codes.iter().map(|&c| if c == MISSING_CODE { -1 } else { c as i64 }).collect();
                (codes.into_pyarray(py), levels.clone()).into_pyobject(py)?.into_any()
            }
        })
    }

    /// The second table of a comparison by swapped columns: `pairs` are
    /// `(stands_in, for_column)`.
    fn swapped(&self, pairs: Vec<(String, String)>, settings_json: &str) -> PyResult<Table> {
        let s = settings(settings_json)?;
        Ok(Table { inner: nervure::shape::swap::second_table(&self.inner, &pairs, &s).map_err(err)?, differences: Vec::new() })
    }
}

/// A table and the cached stages of the graphs built on it (the page's engine), or a
/// graph opened from a graph file with no table.
#[pyclass(module = "nervure._core")]
struct Bench {
    inner: Workbench,
}

#[pymethods]
impl Bench {
    #[new]
    fn new(table: &Table) -> Bench {
        let mut inner = Workbench::new();
        // Column values are shared, not copied.
        inner.set_table(table.inner.clone());
        Bench { inner }
    }

    /// A graph file's text (see docs/graph-file.md), opened with no table.
    #[staticmethod]
    fn open(text: &str, name: &str) -> PyResult<Bench> {
        let f = nervure::graphfile::GraphFile::from_json(text, name).map_err(err)?;
        let mut inner = Workbench::new();
        inner.open_graph(f);
        Ok(Bench { inner })
    }

    /// The automatic first settings (JSON), as the page makes them.
    fn auto_settings(&mut self, py: Python<'_>) -> PyResult<String> {
        py.detach(|| self.inner.auto_settings().map(|s| s.to_json())).map_err(err)
    }

    /// Builds the graph of `settings_json`, re-using cached stages; returns the summary (JSON).
    fn run(&mut self, py: Python<'_>, settings_json: &str) -> PyResult<String> {
        let s = settings(settings_json)?;
        py.detach(|| self.inner.run(&s, &mut |_, _| {})).map(|summary| json(&summary)).map_err(err)
    }

    /// The table with the last run's derived columns.
    fn table(&self) -> PyResult<Table> {
        let t = self.inner.table().ok_or_else(|| err("no table: this graph was opened from a graph file"))?;
        Ok(Table { inner: t.clone(), differences: Vec::new() })
    }

    /// The settings of the last graph (JSON).
    fn settings(&self) -> PyResult<String> {
        Ok(self.last()?.settings.to_json())
    }

    /// The summary of the last graph (JSON).
    fn summary(&self) -> PyResult<String> {
        Ok(json(&self.last()?.summary))
    }

    /// The last graph as arrays (each a NumPy array that owns the engine's vector):
    /// `size, element, lens, lens2 (or None), x, y` per node; `source, target, shared`
    /// per edge; member rows as CSR, node `i` holding 0-based table rows
    /// `rows[offsets[i]:offsets[i + 1]]` (empty when a graph file came without rows).
    fn arrays<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyDict>> {
        let b = self.last()?;
        let d = PyDict::new(py);
        let nodes = &b.nerve.nodes;
        let sizes: Vec<u64> = self.inner.node_sizes().iter().map(|&k| k as u64).collect();
        d.set_item("size", sizes.into_pyarray(py))?;
        d.set_item("element", nodes.iter().map(|n| n.element as u64).collect::<Vec<_>>().into_pyarray(py))?;
        d.set_item("lens", b.node_lens.clone().into_pyarray(py))?;
        d.set_item("lens2", b.second.as_ref().map(|a| a.node_lens.clone().into_pyarray(py)))?;
        d.set_item("x", b.layout.positions.iter().map(|p| p[0]).collect::<Vec<_>>().into_pyarray(py))?;
        d.set_item("y", b.layout.positions.iter().map(|p| p[1]).collect::<Vec<_>>().into_pyarray(py))?;
        d.set_item("r", b.layout.radii.clone().into_pyarray(py))?;
        d.set_item("source", b.nerve.edges.iter().map(|e| e.a).collect::<Vec<_>>().into_pyarray(py))?;
        d.set_item("target", b.nerve.edges.iter().map(|e| e.b).collect::<Vec<_>>().into_pyarray(py))?;
        d.set_item("shared", b.nerve.edges.iter().map(|e| e.shared).collect::<Vec<_>>().into_pyarray(py))?;
        let mut offsets = Vec::with_capacity(nodes.len() + 1);
        offsets.push(0u64);
        let mut rows: Vec<u32> = Vec::with_capacity(nodes.iter().map(|n| n.members.len()).sum());
        for n in nodes {
            rows.extend_from_slice(&n.members);
            offsets.push(rows.len() as u64);
        }
        d.set_item("offsets", offsets.into_pyarray(py))?;
        d.set_item("rows", rows.into_pyarray(py))?;
        d.set_item("rows_known", self.inner.members_known())?;
        Ok(d)
    }

    /// One value per node: `stat` (JSON, as in the page: "mean", "median", "spread" or
    /// `{"kind": "shareAbove", "threshold": t}`) of `column`; the share of the most common
    /// level for a category column.
    fn node_values<'py>(&self, py: Python<'py>, column: &str, stat: &str) -> PyResult<Bound<'py, PyArray1<f64>>> {
        let v: serde_json::Value = serde_json::from_str(stat).map_err(|e| err(format!("setting 'stat': {e}")))?;
        let stat = nervure::NodeStat::from_json(&v).map_err(err)?;
        Ok(self.inner.node_values(column, stat).map_err(err)?.into_pyarray(py))
    }

    /// Per-node statistics of every column, as the graph file carries them (JSON list).
    fn statistics(&self, py: Python<'_>) -> PyResult<String> {
        let f = py.detach(|| self.inner.graph_file(false)).map_err(err)?;
        Ok(json(&f.statistics))
    }

    /// The inspector's view of one node (JSON).
    fn node_detail(&self, node: usize) -> PyResult<String> {
        Ok(json(&self.inner.node_detail(node).map_err(err)?))
    }

    /// The graph file (see docs/graph-file.md), with member rows when `rows`.
    fn graph_file(&self, py: Python<'_>, rows: bool) -> PyResult<String> {
        py.detach(|| self.inner.graph_file(rows).map(|f| f.to_json())).map_err(err)
    }

    /// The extended persistence diagram with each feature's nodes (JSON).
    fn diagram(&self, py: Python<'_>) -> PyResult<String> {
        let b = self.last()?;
        Ok(py.detach(|| json(&nervure::results::diagram(b))))
    }

    /// How the rows of `nodes` differ from the rest (JSON).
    fn explain(&mut self, py: Python<'_>, nodes: Vec<usize>) -> PyResult<String> {
        py.detach(|| self.inner.explain(&nodes)).map(|c| json(&c)).map_err(err)
    }

    /// As `explain`, for the rows where `condition` holds against the other rows kept.
    fn explain_where(&mut self, py: Python<'_>, condition: &str) -> PyResult<String> {
        py.detach(|| self.inner.explain_where(condition)).map(|c| json(&c)).map_err(err)
    }

    /// The page's other exports: "graphml" (coloured by `colour` with `stat` when given),
    /// "memberships", "report" (naming `file_name`).
    #[pyo3(signature = (format, colour=None, stat="\"mean\"", file_name=""))]
    fn export(&self, format: &str, colour: Option<&str>, stat: &str, file_name: &str) -> PyResult<String> {
        let b = self.last()?;
        match format {
            "graphml" => {
                let extra = match colour {
                    None => Vec::new(),
                    Some(c) => {
                        let v: serde_json::Value = serde_json::from_str(stat).map_err(|e| err(format!("setting 'stat': {e}")))?;
                        nervure::export::colour_attributes(&self.inner, c, nervure::NodeStat::from_json(&v).map_err(err)?).map_err(err)?
                    }
                };
                Ok(nervure::export::graphml_sized(b, &self.inner.node_sizes(), &extra))
            }
            "memberships" if !self.inner.members_known() => Err(err("this graph file was written without its member rows, so there are no memberships to export")),
            "memberships" => Ok(nervure::export::memberships_csv(b)),
            "report" => Ok(nervure::export::report(b, file_name, self.inner.table())),
            other => Err(err(format!("unknown export '{other}': use graphml, memberships or report (the graph file is graph_file)"))),
        }
    }
}

impl Bench {
    fn last(&self) -> PyResult<&nervure::Build> {
        self.inner.last().ok_or_else(|| err("no graph has been built yet"))
    }
}

/// Checks a settings document; returns it as the engine reads it (JSON).
#[pyfunction]
fn check_settings(text: &str) -> PyResult<String> {
    Ok(settings(text)?.to_json())
}

/// Reads a settings file's text as the page does (nesting limit, messages naming the file).
#[pyfunction]
fn read_settings(text: &str, file_name: &str) -> PyResult<String> {
    Ok(Settings::from_file_text(text, file_name).map_err(err)?.to_json())
}

/// The resampling test (JSON, as `nervure resample` writes it).
#[pyfunction]
fn resample(py: Python<'_>, table: &Table, settings_json: &str, draws: usize, alpha: f64, seed: u64) -> PyResult<String> {
    let s = settings(settings_json)?;
    let r = py.detach(|| nervure::results::resample(&table.inner, &s, draws, alpha, seed, &mut interruptible()));
    finish(py, r).map(|o| json(&o))
}

/// A grid of settings (JSON, as `nervure grid` writes it); `grid_json` is
/// `{"intervals": [..], "overlaps": [..], "eps": [..]}`.
#[pyfunction]
fn grid(py: Python<'_>, table: &Table, settings_json: &str, grid_json: &str, draws: usize, alpha: f64, seed: u64) -> PyResult<String> {
    let s = settings(settings_json)?;
    let g: nervure::shape::Grid = serde_json::from_str(grid_json).map_err(|e| err(format!("sweep grid: {e}")))?;
    let r = py.detach(|| nervure::results::grid(&table.inner, &s, &g, draws, alpha, seed, &mut interruptible()));
    finish(py, r).map(|o| json(&o))
}

/// Two tables' shapes compared (JSON, as `nervure compare` writes it). Both tables must
/// have been built with the settings (their derived columns made): pass `Bench.table()`.
#[pyfunction]
fn compare(py: Python<'_>, a: &Table, b: &Table, settings_json: &str, draws: usize, alpha: f64, seed: u64) -> PyResult<String> {
    let s = settings(settings_json)?;
    let r = py.detach(|| nervure::results::compare(&a.inner, &b.inner, &s, draws, alpha, seed, &mut interruptible()));
    finish(py, r).map(|o| json(&o))
}

/// Settings suggested by the parameter rule (JSON, as `nervure suggest` writes it).
#[pyfunction]
fn suggest(py: Python<'_>, table: &Table, settings_json: &str, seed: u64) -> PyResult<String> {
    let s = settings(settings_json)?;
    py.detach(|| nervure::shape::suggest(&table.inner, &s, seed)).map(|o| json(&o)).map_err(err)
}

// ---- the stages one at a time (for runs spread over processes or machines) ----

/// The points stage: the chosen columns scaled, as an n × d float64 array, with the
/// 0-based table row of each point and the rows left out per column (JSON).
#[pyfunction]
fn stage_points<'py>(py: Python<'py>, table: &Table, settings_json: &str) -> PyResult<(Bound<'py, PyArray2<f64>>, Bound<'py, PyArray1<u32>>, String)> {
    let s = settings(settings_json)?;
    let p = py.detach(|| nervure::points::build_points(&table.inner, &s)).map_err(err)?;
    let info = serde_json::json!({"columns": p.columns, "leftOut": p.left_out, "leftOutByColumn": p.left_out_by_column, "filledByColumn": p.filled_by_column});
    Ok((p.data.into_pyarray(py), p.rows.into_pyarray(py), info.to_string()))
}

/// The lens stage: filter values of the points (and of the second filter, or None).
#[pyfunction]
fn stage_lens<'py>(py: Python<'py>, table: &Table, settings_json: &str) -> PyResult<(Bound<'py, PyArray1<f64>>, Option<Bound<'py, PyArray1<f64>>>)> {
    let s = settings(settings_json)?;
    let (first, second) = py
        .detach(|| {
            let p = nervure::points::build_points(&table.inner, &s)?;
            nervure::engine::lens_stage(&table.inner, &p, &s)
        })
        .map_err(err)?;
    Ok((first.into_pyarray(py), second.map(|v| v.into_pyarray(py))))
}

/// The cover stage: the elements as CSR over point indices (`offsets`, `members`), and
/// the first filter's intervals as an m × 2 array.
#[pyfunction]
#[pyo3(signature = (settings_json, lens, lens2=None))]
fn stage_cover<'py>(
    py: Python<'py>,
    settings_json: &str,
    lens: PyReadonlyArray1<f64>,
    lens2: Option<PyReadonlyArray1<f64>>,
) -> PyResult<(Bound<'py, PyArray1<u64>>, Bound<'py, PyArray1<u32>>, Bound<'py, PyArray2<f64>>)> {
    let s = settings(settings_json)?;
    s.validate().map_err(err)?;
    let first = lens.as_slice().map_err(|_| err("lens: a contiguous float64 array"))?;
    let second = lens2.as_ref().map(|l| l.as_slice().map_err(|_| err("lens2: a contiguous float64 array"))).transpose()?;
    let c = nervure::engine::cover_stage(first, second, &s);
    let mut offsets = vec![0u64];
    let mut members = Vec::new();
    for e in &c.elements {
        members.extend_from_slice(e);
        offsets.push(members.len() as u64);
    }
    let iv: Vec<Vec<f64>> = c.intervals.iter().map(|&(a, b)| vec![a, b]).collect();
    let iv = numpy::PyArray2::from_vec2(py, &iv).map_err(err)?;
    Ok((offsets.into_pyarray(py), members.into_pyarray(py), iv))
}

/// The clustering of one cover element: `points` (k × d, C order) under the settings'
/// clustering; one label per point, -1 for noise.
#[pyfunction]
fn stage_cluster<'py>(py: Python<'py>, points: PyReadonlyArray2<f64>, clustering_json: &str) -> PyResult<Bound<'py, PyArray1<i64>>> {
    let method: nervure::settings::Clustering = serde_json::from_str(clustering_json).map_err(|e| err(format!("setting 'clustering': {e}")))?;
    let d = points.shape()[1];
    let flat = points.as_slice().map_err(|_| err("points: a C-contiguous float64 array"))?;
    let labels = py.detach(|| nervure::cluster::cluster(flat, d, &method));
    Ok(labels.iter().map(|l| l.map_or(-1, |c| c as i64)).collect::<Vec<_>>().into_pyarray(py))
}

/// The nerve of nodes given as CSR member rows (0-based table rows, increasing in each
/// node) with their cover elements: edges `(source, target, shared)` and
/// `(components, loops)`.
#[pyfunction]
#[allow(clippy::type_complexity)]
fn stage_nerve<'py>(
    py: Python<'py>,
    offsets: PyReadonlyArray1<u64>,
    rows: PyReadonlyArray1<u32>,
    elements: PyReadonlyArray1<u64>,
    n_rows: usize,
    min_shared: usize,
) -> PyResult<(Bound<'py, PyArray1<u32>>, Bound<'py, PyArray1<u32>>, Bound<'py, PyArray1<u32>>, (usize, usize))> {
    let (o, r, e) = (offsets.as_array(), rows.as_array(), elements.as_array());
    if o.len() != e.len() + 1 {
        return Err(err("offsets has one more entry than there are nodes (elements)"));
    }
    let mut nodes = Vec::with_capacity(e.len());
    for i in 0..e.len() {
        let members: Vec<u32> = r.slice(numpy::ndarray::s![o[i] as usize..o[i + 1] as usize]).to_vec();
        if members.iter().any(|&m| m as usize >= n_rows) || members.windows(2).any(|w| w[0] >= w[1]) {
            return Err(err(format!("node {i}: member rows must increase and lie below {n_rows}")));
        }
        nodes.push(nervure::graph::Node { element: e[i] as usize, members });
    }
    let nerve = py.detach(|| nervure::graph::Nerve::new(nodes, n_rows, min_shared.max(1)));
    let counts = nerve.counts();
    let (a, b, s): (Vec<u32>, Vec<u32>, Vec<u32>) = nerve.edges.iter().map(|x| (x.a, x.b, x.shared)).fold((vec![], vec![], vec![]), |mut acc, (a, b, s)| {
        acc.0.push(a);
        acc.1.push(b);
        acc.2.push(s);
        acc
    });
    Ok((a.into_pyarray(py), b.into_pyarray(py), s.into_pyarray(py), counts))
}

/// Per-node statistics of every column of `table` over nodes given as CSR member rows
/// (JSON, as the graph file's `statistics`).
#[pyfunction]
fn stage_statistics(py: Python<'_>, table: &Table, offsets: PyReadonlyArray1<u64>, rows: PyReadonlyArray1<u32>, settings_json: &str) -> PyResult<String> {
    let s = settings(settings_json)?;
    let (o, r) = (offsets.as_array(), rows.as_array());
    let nodes: Vec<nervure::graph::Node> = (0..o.len().saturating_sub(1))
        .map(|i| nervure::graph::Node { element: 0, members: r.slice(numpy::ndarray::s![o[i] as usize..o[i + 1] as usize]).to_vec() })
        .collect();
    if let Some(bad) = nodes.iter().flat_map(|n| &n.members).find(|&&m| m as usize >= table.inner.n_rows) {
        return Err(err(format!("row {bad} is past the table's {} rows", table.inner.n_rows)));
    }
    Ok(py.detach(|| json(&nervure::graphfile::node_statistics(&table.inner, &nodes, &s.missing))))
}

// ---- the pipeline over a table held in parts (nervure.dask; see src/parts.rs) ----

fn f64s<'py>(py: Python<'py>, v: Vec<f64>) -> Bound<'py, PyArray1<f64>> {
    v.into_pyarray(py)
}

fn slice<'a>(a: &'a PyReadonlyArray1<'_, f64>, what: &str) -> PyResult<&'a [f64]> {
    a.as_slice().map_err(|_| err(format!("{what}: a contiguous float64 array")))
}

fn matrix<'py>(py: Python<'py>, flat: Vec<f64>, d: usize) -> PyResult<Bound<'py, PyArray2<f64>>> {
    let m = if d == 0 { 0 } else { flat.len() / d };
    Ok(numpy::ndarray::Array2::from_shape_vec((m, d), flat).map_err(err)?.into_pyarray(py))
}

fn rows2<'a>(a: &'a PyReadonlyArray2<'_, f64>, what: &str) -> PyResult<(&'a [f64], usize)> {
    Ok((a.as_slice().map_err(|_| err(format!("{what}: a C-contiguous float64 array")))?, a.shape()[1]))
}

/// One part of a table with the settings' derived columns appended.
#[pyfunction]
fn part_derived(table: &Table, settings_json: &str) -> PyResult<Table> {
    let s = settings(settings_json)?;
    Ok(Table { inner: nervure::parts::with_derived(&table.inner, &s).map_err(err)?, differences: Vec::new() })
}

/// The columns under the median policy among the chosen and filter columns.
#[pyfunction]
fn median_columns(settings_json: &str) -> PyResult<Vec<String>> {
    Ok(nervure::points::median_columns(&settings(settings_json)?))
}

/// The cells of `column` with a value under the settings' missing-value rule.
#[pyfunction]
fn part_present<'py>(py: Python<'py>, table: &Table, column: &str, settings_json: &str) -> PyResult<Bound<'py, PyArray1<f64>>> {
    Ok(f64s(py, nervure::parts::present(&table.inner, column, &settings(settings_json)?).map_err(err)?))
}

/// The NumPy median of an even count from its two middle values.
#[pyfunction]
fn middle_of(lower: f64, upper: f64) -> f64 {
    nervure::missing::middle_of(lower, upper)
}

/// The rows of one part that take part: (table rows, values m × d before scaling, each
/// filter column's values, the counts as JSON).
#[pyfunction]
#[allow(clippy::type_complexity)]
fn part_choose<'py>(
    py: Python<'py>,
    table: &Table,
    settings_json: &str,
    first_row: u32,
    medians: Vec<(String, Option<f64>)>,
) -> PyResult<(Bound<'py, PyArray1<u32>>, Bound<'py, PyArray2<f64>>, Vec<Bound<'py, PyArray1<f64>>>, String)> {
    let s = settings(settings_json)?;
    let c = py.detach(|| nervure::parts::choose(&table.inner, &s, first_row, &medians)).map_err(err)?;
    let lens = c.lens_columns.into_iter().map(|(_, v)| f64s(py, v)).collect();
    Ok((c.rows.into_pyarray(py), matrix(py, c.raw, s.columns.len())?, lens, json(&c.counts)))
}

/// The counts of all parts added (JSON list in, JSON out); refuses, with the engine's
/// message, a row condition keeping fewer than two rows of the table `name`, a column
/// with no value in any row or no row taking part.
#[pyfunction]
fn total_counts(parts: Vec<String>, settings_json: &str, name: &str) -> PyResult<String> {
    let s = settings(settings_json)?;
    let mut total: Option<nervure::points::RowCounts> = None;
    for p in parts {
        let c: nervure::points::RowCounts = serde_json::from_str(&p).map_err(err)?;
        match &mut total {
            None => total = Some(c),
            Some(t) => t.add(&c).map_err(err)?,
        }
    }
    let total = total.ok_or_else(|| err("the table has no part"))?;
    nervure::parts::check_counts(&s, name, &total).map_err(err)?;
    Ok(json(&total))
}

/// Running column sums continued over `rows` (m × d): state (count, sum, lo, hi).
#[pyfunction]
#[allow(clippy::type_complexity)]
fn add_sums<'py>(
    py: Python<'py>,
    count: usize,
    sum: PyReadonlyArray1<f64>,
    lo: PyReadonlyArray1<f64>,
    hi: PyReadonlyArray1<f64>,
    rows: PyReadonlyArray2<f64>,
) -> PyResult<(usize, Bound<'py, PyArray1<f64>>, Bound<'py, PyArray1<f64>>, Bound<'py, PyArray1<f64>>)> {
    let mut a = nervure::points::ColumnSums { count, sum: slice(&sum, "sum")?.to_vec(), lo: slice(&lo, "lo")?.to_vec(), hi: slice(&hi, "hi")?.to_vec() };
    a.add_rows(rows2(&rows, "rows")?.0);
    Ok((a.count, f64s(py, a.sum), f64s(py, a.lo), f64s(py, a.hi)))
}

/// Running sums of squared deviations from `means`, continued over `rows`.
#[pyfunction]
fn add_squares<'py>(py: Python<'py>, means: PyReadonlyArray1<f64>, sq: PyReadonlyArray1<f64>, rows: PyReadonlyArray2<f64>) -> PyResult<Bound<'py, PyArray1<f64>>> {
    let mut a = nervure::points::SquareSums { means: slice(&means, "means")?.to_vec(), sq: slice(&sq, "sq")?.to_vec() };
    a.add_rows(rows2(&rows, "rows")?.0);
    Ok(f64s(py, a.sq))
}

/// Running sums of products of centred columns (about `mu`), continued over `rows`:
/// state (c as d × d flat, count).
#[pyfunction]
fn add_cross<'py>(py: Python<'py>, mu: PyReadonlyArray1<f64>, c: PyReadonlyArray1<f64>, count: usize, rows: PyReadonlyArray2<f64>) -> PyResult<(Bound<'py, PyArray1<f64>>, usize)> {
    let mut a = nervure::filter::linalg::CrossSums { mu: slice(&mu, "mu")?.to_vec(), c: slice(&c, "c")?.to_vec(), count };
    a.add_rows(rows2(&rows, "rows")?.0);
    Ok((f64s(py, a.c), a.count))
}

/// A running sum of the points' squared lengths, continued over `rows`.
#[pyfunction]
fn add_norms(sum: f64, rows: PyReadonlyArray2<f64>) -> PyResult<f64> {
    let (flat, d) = rows2(&rows, "rows")?;
    Ok(flat.chunks_exact(d.max(1)).fold(sum, |a, r| a + nervure::filter::norm_sq(r)))
}

fn cross(mu: &[f64], c: &[f64], count: usize, ddof: usize) -> numpy::ndarray::Array2<f64> {
    nervure::filter::linalg::CrossSums { mu: mu.to_vec(), c: c.to_vec(), count }.finish(ddof)
}

/// (shift, scale) per chosen column (m × 2) from the sums (and squares for the z-score);
/// the engine's message for a column that cannot be scaled.
#[pyfunction]
#[pyo3(signature = (settings_json, count, sum, lo, hi, sq=None))]
fn scales<'py>(
    py: Python<'py>,
    settings_json: &str,
    count: usize,
    sum: PyReadonlyArray1<f64>,
    lo: PyReadonlyArray1<f64>,
    hi: PyReadonlyArray1<f64>,
    sq: Option<PyReadonlyArray1<f64>>,
) -> PyResult<Bound<'py, PyArray2<f64>>> {
    let s = settings(settings_json)?;
    let sums = nervure::points::ColumnSums { count, sum: slice(&sum, "sum")?.to_vec(), lo: slice(&lo, "lo")?.to_vec(), hi: slice(&hi, "hi")?.to_vec() };
    let squares = sq.as_ref().map(|q| Ok::<_, PyErr>(nervure::points::SquareSums { means: sums.means(), sq: slice(q, "sq")?.to_vec() })).transpose()?;
    let sc = nervure::points::scales(s.scaling, &s.columns, &sums, squares.as_ref()).map_err(err)?;
    matrix(py, sc.iter().flat_map(|&(a, b)| [a, b]).collect(), 2)
}

/// Rows (m × d) scaled by `scales` (d × 2).
#[pyfunction]
fn scale_rows<'py>(py: Python<'py>, rows: PyReadonlyArray2<f64>, scales: PyReadonlyArray2<f64>) -> PyResult<Bound<'py, PyArray2<f64>>> {
    let (flat, d) = rows2(&rows, "rows")?;
    let sc: Vec<(f64, f64)> = rows2(&scales, "scales")?.0.chunks_exact(2).map(|p| (p[0], p[1])).collect();
    matrix(py, nervure::points::scale_rows(flat.to_vec(), &sc), d)
}

fn lens_of(s: &Settings, which: usize) -> PyResult<&nervure::settings::Lens> {
    match which {
        1 => Ok(&s.lens),
        2 => s.lens2.as_ref().ok_or_else(|| err("the settings have no second filter")),
        _ => Err(err("which: 1 or 2")),
    }
}

fn cover_of(s: &Settings, which: usize) -> &nervure::settings::CoverSettings {
    if which == 2 { s.cover2.as_ref().unwrap_or(&s.cover) } else { &s.cover }
}

/// Refuses what a cluster run does not do (denoising), after the settings' own checks.
#[pyfunction]
fn parts_check(settings_json: &str) -> PyResult<()> {
    nervure::parts::check_settings(&settings(settings_json)?).map_err(err)
}

/// What filter `which` (1 or 2) needs from all points: "column", "covariance", "norms",
/// "references" or "all".
#[pyfunction]
fn lens_needs(settings_json: &str, which: usize) -> PyResult<&'static str> {
    use nervure::parts::LensNeeds::*;
    Ok(match nervure::parts::lens_needs(lens_of(&settings(settings_json)?, which)?) {
        Column => "column",
        Covariance => "covariance",
        Norms => "norms",
        References => "references",
        AllPoints => "all",
    })
}

/// The point indices (among `n`) the O(n²) filters sum over.
#[pyfunction]
fn reference_points<'py>(py: Python<'py>, n: usize, seed: u64) -> Bound<'py, PyArray1<u64>> {
    nervure::filter::reference_points(n, nervure::filter::EXACT_LIMIT, seed).into_iter().map(|i| i as u64).collect::<Vec<_>>().into_pyarray(py)
}

/// The principal axis of filter `which` from the covariance sums (ddof = 1), after the
/// engine's checks for `n` points.
#[pyfunction]
fn principal_axis<'py>(py: Python<'py>, settings_json: &str, which: usize, n: usize, mu: PyReadonlyArray1<f64>, c: PyReadonlyArray1<f64>, count: usize) -> PyResult<Bound<'py, PyArray1<f64>>> {
    let s = settings(settings_json)?;
    let component = match lens_of(&s, which)? {
        nervure::settings::Lens::Principal { component } => *component,
        _ => return Err(err("not a principal-component filter")),
    };
    let mu = slice(&mu, "mu")?.to_vec();
    let cov = cross(&mu, slice(&c, "c")?, count, 1);
    match nervure::parts::LensPlan::principal(component, n, mu, &cov).map_err(err)? {
        nervure::parts::LensPlan::Principal { v, .. } => Ok(f64s(py, v)),
        _ => unreachable!("a principal plan"),
    }
}

fn kernel(s: &Settings, which: usize, n: usize, mu: &[f64], c: &[f64], count: usize) -> PyResult<nervure::filter::Kernel> {
    let bandwidth = match lens_of(s, which)? {
        nervure::settings::Lens::Density { bandwidth } => *bandwidth,
        _ => return Err(err("not a density filter")),
    };
    nervure::parts::density_kernel(cross(mu, c, count, 1), n, bandwidth).map_err(err)
}

/// Points (m × d) whitened by the density kernel of filter `which` (for its reference points).
#[pyfunction]
#[allow(clippy::too_many_arguments)]
fn density_whiten<'py>(
    py: Python<'py>,
    settings_json: &str,
    which: usize,
    n: usize,
    mu: PyReadonlyArray1<f64>,
    c: PyReadonlyArray1<f64>,
    count: usize,
    points: PyReadonlyArray2<f64>,
) -> PyResult<Bound<'py, PyArray2<f64>>> {
    let s = settings(settings_json)?;
    let k = kernel(&s, which, n, slice(&mu, "mu")?, slice(&c, "c")?, count)?;
    let (flat, d) = rows2(&points, "points")?;
    matrix(py, flat.chunks_exact(d.max(1)).flat_map(|r| k.whiten(r)).collect(), d)
}

/// The neighbour filter `which` of all points (m × d, in table order), on this machine.
#[pyfunction]
fn knn_values<'py>(py: Python<'py>, settings_json: &str, which: usize, points: PyReadonlyArray2<f64>) -> PyResult<Bound<'py, PyArray1<f64>>> {
    let s = settings(settings_json)?;
    let (flat, d) = rows2(&points, "points")?;
    let lens = lens_of(&s, which)?.clone();
    Ok(f64s(py, py.detach(|| nervure::parts::knn_values(&lens, flat, d)).map_err(err)?))
}

/// The filter values of one part's scaled points (m × d) from the global quantities of
/// `plan` ("column", "principal", "density", "norms", "references", "given"); `rows` are
/// the points' table rows, for the engine's message naming a row without a finite value.
#[pyfunction]
#[pyo3(signature = (settings_json, which, plan, points, rows, lens_columns, index=0, n=0, mu=None, v=None, c=None, count=0, mean_sq=0.0, refs=None, values=None))]
#[allow(clippy::too_many_arguments)]
fn part_lens<'py>(
    py: Python<'py>,
    settings_json: &str,
    which: usize,
    plan: &str,
    points: PyReadonlyArray2<f64>,
    rows: PyReadonlyArray1<u32>,
    lens_columns: Vec<PyReadonlyArray1<f64>>,
    index: usize,
    n: usize,
    mu: Option<PyReadonlyArray1<f64>>,
    v: Option<PyReadonlyArray1<f64>>,
    c: Option<PyReadonlyArray1<f64>>,
    count: usize,
    mean_sq: f64,
    refs: Option<PyReadonlyArray2<f64>>,
    values: Option<PyReadonlyArray1<f64>>,
) -> PyResult<Bound<'py, PyArray1<f64>>> {
    use nervure::parts::LensPlan;
    let s = settings(settings_json)?;
    let need = |a: &Option<PyReadonlyArray1<f64>>, what: &str| -> PyResult<Vec<f64>> { Ok(slice(a.as_ref().ok_or_else(|| err(format!("{what} missing")))?, what)?.to_vec()) };
    let refs_flat = || -> PyResult<Vec<f64>> { Ok(rows2(refs.as_ref().ok_or_else(|| err("refs missing"))?, "refs")?.0.to_vec()) };
    let plan = match plan {
        "column" => LensPlan::Column(index),
        "principal" => LensPlan::Principal { mu: need(&mu, "mu")?, v: need(&v, "v")? },
        "density" => LensPlan::Density { kernel: kernel(&s, which, n, &need(&mu, "mu")?, &need(&c, "c")?, count)?, refs: refs_flat()? },
        "norms" => LensPlan::Rms { mu: need(&mu, "mu")?, mean_sq },
        "references" => LensPlan::Spread {
            norm: match lens_of(&s, which)? {
                nervure::settings::Lens::Eccentricity { norm } => *norm,
                _ => nervure::settings::Spread::Max,
            },
            refs: refs_flat()?,
        },
        "given" => LensPlan::Given(need(&values, "values")?),
        other => return Err(err(format!("unknown filter plan '{other}'"))),
    };
    let (flat, d) = rows2(&points, "points")?;
    let rows = rows.as_slice().map_err(|_| err("rows: a contiguous uint32 array"))?;
    let cols: Vec<(String, Vec<f64>)> = lens_columns.iter().map(|a| Ok((String::new(), slice(a, "lens column")?.to_vec()))).collect::<PyResult<_>>()?;
    let which_name = if which == 2 { "second filter (lens2)" } else { "filter" };
    Ok(f64s(py, py.detach(|| nervure::parts::part_lens(&plan, flat, d, rows, &cols, which_name)).map_err(err)?))
}

/// The intervals (m × 2) of filter `which`'s uniform cover over [lo, hi].
#[pyfunction]
fn uniform_intervals<'py>(py: Python<'py>, settings_json: &str, which: usize, lo: f64, hi: f64) -> PyResult<Bound<'py, PyArray2<f64>>> {
    let s = settings(settings_json)?;
    let a = nervure::cover::uniform_axis(lo, hi, cover_of(&s, which));
    matrix(py, a.intervals.iter().flat_map(|&(x, y)| [x, y]).collect(), 2)
}

/// The ranks (among `len` filter values) filter `which`'s balanced cover reads.
#[pyfunction]
fn balanced_ranks<'py>(py: Python<'py>, settings_json: &str, which: usize, len: usize) -> PyResult<Bound<'py, PyArray1<u64>>> {
    let s = settings(settings_json)?;
    let c = cover_of(&s, which);
    Ok(nervure::cover::balanced_ranks(len, c.intervals, c.overlap).into_iter().map(|k| k as u64).collect::<Vec<_>>().into_pyarray(py))
}

/// The intervals of filter `which`'s balanced cover from the values at `ranks`.
#[pyfunction]
fn balanced_intervals<'py>(py: Python<'py>, settings_json: &str, which: usize, len: usize, ranks: Vec<usize>, values: Vec<f64>) -> PyResult<Bound<'py, PyArray2<f64>>> {
    let s = settings(settings_json)?;
    let c = cover_of(&s, which);
    let known: std::collections::HashMap<usize, f64> = ranks.into_iter().zip(values).collect();
    let mut missing = None;
    let iv = nervure::cover::balanced_intervals_by(len, c.intervals, c.overlap, |k| *known.get(&k).unwrap_or_else(|| {
        missing = Some(k);
        &f64::NAN
    }));
    if let Some(k) = missing {
        return Err(err(format!("internal: the value of rank {k} was not given")));
    }
    matrix(py, iv.iter().flat_map(|&(x, y)| [x, y]).collect(), 2)
}

fn axis_from(lo: f64, hi: f64, iv: &PyReadonlyArray2<f64>) -> PyResult<nervure::cover::Axis> {
    Ok(nervure::cover::Axis { lo, hi, intervals: rows2(iv, "intervals")?.0.chunks_exact(2).map(|p| (p[0], p[1])).collect() })
}

/// One part's points assigned to the cover's elements: (element, point index) pairs,
/// by element, then point.
#[pyfunction]
#[pyo3(signature = (lens, intervals, lens2=None, intervals2=None))]
fn part_assign<'py>(
    py: Python<'py>,
    lens: PyReadonlyArray1<f64>,
    intervals: PyReadonlyArray2<f64>,
    lens2: Option<PyReadonlyArray1<f64>>,
    intervals2: Option<PyReadonlyArray2<f64>>,
) -> PyResult<(Bound<'py, PyArray1<u32>>, Bound<'py, PyArray1<u32>>)> {
    let a1 = axis_from(0.0, 0.0, &intervals)?;
    let second = match (&lens2, &intervals2) {
        (Some(l), Some(iv)) => Some((axis_from(0.0, 0.0, iv)?, slice(l, "lens2")?)),
        _ => None,
    };
    let elements = nervure::parts::assign(&a1, slice(&lens, "lens")?, second.as_ref().map(|(a, v)| (a, *v)));
    let (mut e, mut p) = (Vec::new(), Vec::new());
    for (k, m) in elements.into_iter().enumerate() {
        e.extend(std::iter::repeat_n(k as u32, m.len()));
        p.extend(m);
    }
    Ok((e.into_pyarray(py), p.into_pyarray(py)))
}

/// One cover element clustered (its points m × d in table order, their filter values):
/// node members as positions (CSR: offsets, positions) and each node's mean filter values.
#[pyfunction]
#[pyo3(signature = (settings_json, points, lens, lens2=None))]
#[allow(clippy::type_complexity)]
fn element_nodes<'py>(
    py: Python<'py>,
    settings_json: &str,
    points: PyReadonlyArray2<f64>,
    lens: PyReadonlyArray1<f64>,
    lens2: Option<PyReadonlyArray1<f64>>,
) -> PyResult<(Bound<'py, PyArray1<u64>>, Bound<'py, PyArray1<u32>>, Bound<'py, PyArray1<f64>>, Option<Bound<'py, PyArray1<f64>>>)> {
    let s = settings(settings_json)?;
    let (flat, d) = rows2(&points, "points")?;
    let l1 = slice(&lens, "lens")?;
    let l2 = lens2.as_ref().map(|l| slice(l, "lens2")).transpose()?;
    if flat.len() != l1.len() * d || l2.is_some_and(|v| v.len() != l1.len()) {
        return Err(err("points and filter values differ in length"));
    }
    let got = py.detach(|| nervure::parts::element_nodes(flat, d, l1, l2, &s.clustering, s.min_cluster_share));
    let mut offsets = vec![0u64];
    let mut positions = Vec::new();
    for m in &got.members {
        positions.extend_from_slice(m);
        offsets.push(positions.len() as u64);
    }
    Ok((offsets.into_pyarray(py), positions.into_pyarray(py), f64s(py, got.lens), got.lens2.map(|v| f64s(py, v))))
}

fn csr_nodes(offsets: &PyReadonlyArray1<u64>, rows: &PyReadonlyArray1<u32>, n_rows: usize) -> PyResult<Vec<nervure::graph::Node>> {
    let (o, r) = (offsets.as_array(), rows.as_array());
    let nodes: Vec<nervure::graph::Node> =
        (0..o.len().saturating_sub(1)).map(|i| nervure::graph::Node { element: 0, members: r.slice(numpy::ndarray::s![o[i] as usize..o[i + 1] as usize]).to_vec() }).collect();
    if let Some(bad) = nodes.iter().flat_map(|n| &n.members).find(|&&m| m as usize >= n_rows) {
        return Err(err(format!("row {bad} is past the table's {n_rows} rows")));
    }
    Ok(nodes)
}

/// Per-node statistics of every column of one element's table (its rows in table
/// order) over nodes given as positions (CSR), to be joined (JSON).
#[pyfunction]
fn element_statistics(py: Python<'_>, table: &Table, offsets: PyReadonlyArray1<u64>, positions: PyReadonlyArray1<u32>, settings_json: &str) -> PyResult<String> {
    let s = settings(settings_json)?;
    let nodes = csr_nodes(&offsets, &positions, table.inner.n_rows)?;
    Ok(py.detach(|| json(&nervure::graphfile::statistics_part(&table.inner, &nodes, &s.missing))))
}

/// The statistics of all nodes from the elements' parts, in node order (JSON list of
/// JSON texts in, JSON out).
#[pyfunction]
fn join_statistics(py: Python<'_>, parts: Vec<String>) -> PyResult<String> {
    py.detach(|| {
        let parts: Vec<Vec<nervure::graphfile::StatsPart>> = parts.iter().map(|p| serde_json::from_str(p)).collect::<Result<_, _>>().map_err(err)?;
        nervure::graphfile::join_statistics(parts).map(|s| json(&s)).map_err(err)
    })
}

/// The graph file's table description of a part (with derived columns) under `name`,
/// with `rows` rows in all, each time column's first and last instant and precision
/// joined from every part's `time_ranges` (JSON texts) (JSON).
#[pyfunction]
#[pyo3(signature = (table, name, rows, ranges=Vec::new()))]
fn table_info(table: &Table, name: &str, rows: usize, ranges: Vec<String>) -> PyResult<String> {
    let parts: Vec<std::collections::HashMap<String, nervure::parts::TimeRange>> =
        ranges.iter().map(|r| serde_json::from_str(r)).collect::<Result<_, _>>().map_err(err)?;
    Ok(json(&nervure::parts::table_info(&table.inner, name, rows, &nervure::parts::join_time_ranges(&parts))))
}

/// Each time column's first and last instant and precisions in one part (JSON).
#[pyfunction]
fn time_ranges(table: &Table) -> String {
    json(&nervure::parts::time_ranges(&table.inner))
}

/// The graph file (JSON text) of a run in parts from what was gathered: see
/// `nervure::parts::Gathered` for each argument.
#[pyfunction]
#[pyo3(signature = (settings_json, table_json, counts_json, lo, hi, intervals, axis2, elements, node_element, node_size, node_lens, node_lens2, node_rows, pairs, triples, rows_in_nodes, statistics_json))]
#[allow(clippy::too_many_arguments)]
fn graph_file_of_parts(
    py: Python<'_>,
    settings_json: &str,
    table_json: &str,
    counts_json: &str,
    lo: f64,
    hi: f64,
    intervals: PyReadonlyArray2<f64>,
    axis2: Option<(f64, f64, PyReadonlyArray2<f64>)>,
    elements: usize,
    node_element: PyReadonlyArray1<u64>,
    node_size: PyReadonlyArray1<u64>,
    node_lens: PyReadonlyArray1<f64>,
    node_lens2: Option<PyReadonlyArray1<f64>>,
    node_rows: Option<(PyReadonlyArray1<u64>, PyReadonlyArray1<u32>)>,
    pairs: (PyReadonlyArray1<u32>, PyReadonlyArray1<u32>, PyReadonlyArray1<u32>),
    triples: (PyReadonlyArray1<u32>, PyReadonlyArray1<u32>, PyReadonlyArray1<u32>, PyReadonlyArray1<u32>),
    rows_in_nodes: usize,
    statistics_json: &str,
) -> PyResult<String> {
    let s = settings(settings_json)?;
    let table: nervure::graphfile::TableInfo = serde_json::from_str(table_json).map_err(err)?;
    let counts: nervure::points::RowCounts = serde_json::from_str(counts_json).map_err(err)?;
    let statistics: Vec<nervure::graphfile::ColumnStats> = serde_json::from_str(statistics_json).map_err(err)?;
    let (ne, ns, nl) = (node_element.as_array(), node_size.as_array(), node_lens.as_array());
    let nl2 = node_lens2.as_ref().map(|a| a.as_array());
    let members = node_rows.as_ref().map(|(o, r)| csr_nodes(o, r, table.rows)).transpose()?;
    if ns.len() != ne.len() || nl.len() != ne.len() || members.as_ref().is_some_and(|m| m.len() != ne.len()) {
        return Err(err("node arrays differ in length"));
    }
    let nodes = (0..ne.len())
        .map(|i| nervure::parts::PartNode {
            element: ne[i] as usize,
            size: ns[i] as usize,
            lens: nl[i],
            lens2: nl2.as_ref().map(|a| a[i]),
            rows: members.as_ref().map(|m| m[i].members.clone()),
        })
        .collect();
    let (pa, pb, pc) = (pairs.0.as_array(), pairs.1.as_array(), pairs.2.as_array());
    let (ta, tb, tc, tk) = (triples.0.as_array(), triples.1.as_array(), triples.2.as_array(), triples.3.as_array());
    let gathered = nervure::parts::Gathered {
        table,
        counts,
        axis: axis_from(lo, hi, &intervals)?,
        axis2: axis2.as_ref().map(|(l, h, iv)| axis_from(*l, *h, iv)).transpose()?,
        elements,
        nodes,
        pairs: (0..pa.len()).map(|i| (pa[i], pb[i], pc[i])).collect(),
        triples: (0..ta.len()).map(|i| ([ta[i], tb[i], tc[i]], tk[i])).collect(),
        rows_in_nodes,
        statistics,
    };
    py.detach(|| nervure::parts::graph_file(&s, gathered).map(|f| f.to_json())).map_err(err)
}

#[pymodule]
fn _core(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add("NervureError", m.py().get_type::<NervureError>())?;
    m.add("GRAPH_FILE_VERSION", nervure::graphfile::GRAPH_FILE_VERSION)?;
    m.add("SETTINGS_VERSION", nervure::settings::SETTINGS_VERSION)?;
    m.add_class::<Table>()?;
    m.add_class::<Bench>()?;
    for f in [
        wrap_pyfunction!(check_settings, m)?,
        wrap_pyfunction!(read_settings, m)?,
        wrap_pyfunction!(resample, m)?,
        wrap_pyfunction!(grid, m)?,
        wrap_pyfunction!(compare, m)?,
        wrap_pyfunction!(suggest, m)?,
        wrap_pyfunction!(stage_points, m)?,
        wrap_pyfunction!(stage_lens, m)?,
        wrap_pyfunction!(stage_cover, m)?,
        wrap_pyfunction!(stage_cluster, m)?,
        wrap_pyfunction!(stage_nerve, m)?,
        wrap_pyfunction!(stage_statistics, m)?,
        wrap_pyfunction!(part_derived, m)?,
        wrap_pyfunction!(median_columns, m)?,
        wrap_pyfunction!(part_present, m)?,
        wrap_pyfunction!(middle_of, m)?,
        wrap_pyfunction!(part_choose, m)?,
        wrap_pyfunction!(total_counts, m)?,
        wrap_pyfunction!(add_sums, m)?,
        wrap_pyfunction!(add_squares, m)?,
        wrap_pyfunction!(add_cross, m)?,
        wrap_pyfunction!(add_norms, m)?,
        wrap_pyfunction!(scales, m)?,
        wrap_pyfunction!(scale_rows, m)?,
        wrap_pyfunction!(parts_check, m)?,
        wrap_pyfunction!(lens_needs, m)?,
        wrap_pyfunction!(reference_points, m)?,
        wrap_pyfunction!(principal_axis, m)?,
        wrap_pyfunction!(density_whiten, m)?,
        wrap_pyfunction!(knn_values, m)?,
        wrap_pyfunction!(part_lens, m)?,
        wrap_pyfunction!(uniform_intervals, m)?,
        wrap_pyfunction!(balanced_ranks, m)?,
        wrap_pyfunction!(balanced_intervals, m)?,
        wrap_pyfunction!(part_assign, m)?,
        wrap_pyfunction!(element_nodes, m)?,
        wrap_pyfunction!(element_statistics, m)?,
        wrap_pyfunction!(join_statistics, m)?,
        wrap_pyfunction!(table_info, m)?,
        wrap_pyfunction!(time_ranges, m)?,
        wrap_pyfunction!(graph_file_of_parts, m)?,
    ] {
        m.add_function(f)?;
    }
    Ok(())
}
