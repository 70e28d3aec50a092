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

create_exception!(_core, NervureError, PyException, "The engine refused the data or the settings; the message says what and where.");

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
    #[staticmethod]
    fn from_columns(name: String, columns: Vec<(String, Bound<'_, PyAny>, Option<Bound<'_, PyAny>>)>) -> PyResult<Table> {
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
                    out.push(Column::category(col, codes, levels));
                }
            }
        }
        Ok(Table { inner: CoreTable::from_columns(name, out).map_err(err)?, differences: Vec::new() })
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
    ] {
        m.add_function(f)?;
    }
    Ok(())
}
