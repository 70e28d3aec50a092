//! The pipeline over a table held in parts (the partitions of a cluster's data frame),
//! giving the graph that [`crate::engine::build`] gives on the whole table, bit for bit.
//! The Python package's cluster run (`nervure.dask`) drives it: it moves the parts and the
//! small results between machines; every computation on values is here, and the engine's
//! own stages call the same functions on the whole table, so the two cannot drift apart.
//!
//! How each stage is split, and why the result is the same:
//!
//! - **Rows taking part** ([`crate::points::choose_rows`]) are decided row by row; each
//!   part's counts add up ([`crate::points::RowCounts::add`]). Medians for the median
//!   policy are order statistics of the whole column, found by the caller (an exact
//!   selection) and handed to every part.
//! - **Scaling, means, covariance** are running sums ([`crate::points::ColumnSums`],
//!   [`crate::points::SquareSums`], [`crate::filter::linalg::CrossSums`]) taken over the
//!   rows in table order. A run in parts hands the running state from one part to the
//!   next, in table order, so every addition happens in the engine's order and the sums
//!   are the same bits (an ordered fold: the parts' values never move, only d or d × d
//!   numbers do).
//! - **Filters** are then computed point by point ([`part_lens`]) from those global
//!   quantities. The O(n²) filters sum over the engine's stated reference points
//!   ([`crate::filter::reference_points`], at most [`crate::filter::EXACT_LIMIT`]),
//!   gathered in order from the parts that hold them. The neighbour filters need every
//!   point's nearest points among all points: they run on one machine ([`knn_values`]).
//! - **Cover**: the range is the least and greatest filter value (exact in any order);
//!   the balanced cover reads a few order statistics ([`crate::cover::balanced_ranks`]);
//!   each part's points are assigned to elements on their own ([`assign`]).
//! - **Clusters**: each element's points, in table order, are clustered on one machine
//!   ([`element_nodes`]): the same input, so the same labels and nodes.
//! - **Nerve**: node pairs (and triples) sharing rows, counted by a group-by on rows; the
//!   graph, its counts, layout and summary come from them ([`graph_file`]).
//! - **Statistics** of every column per node are made where the node is made
//!   ([`crate::graphfile::statistics_part`]) and joined ([`crate::graphfile::join_statistics`]).
//!
//! Not here: denoising (it needs every point's neighbours among all points before the
//! filter), reading files, moving data.

use std::collections::HashMap;

use crate::cluster;
use crate::cover::{self, Axis};
use crate::engine::{finite_lens, groups_from_labels, mean_in_order, settings_warnings, Summary};
use crate::error::{Error, Result};
use crate::filter::{self, knn, Kernel};
use crate::graph::{self, Edge, Nerve, Node};
use crate::graphfile::{ColumnStats, CoverInfo, EdgeRecord, GraphFile, NodeRecord, TableInfo, GRAPH_FILE_VERSION};
use crate::points::RowCounts;
use crate::settings::{Clustering, Lens, Settings, Spread};
use crate::table::Table;

/// What a filter needs from all points before each part can compute its values.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LensNeeds {
    /// A column's values: nothing.
    Column,
    /// The points' means, then their covariance (principal component, density).
    Covariance,
    /// The points' means and the mean of their squared lengths (root-mean-square eccentricity).
    Norms,
    /// The reference points themselves (mean and largest distance).
    References,
    /// Every point (the neighbour filters): computed on one machine.
    AllPoints,
}

/// What `lens` needs (see [`LensNeeds`]).
pub fn lens_needs(lens: &Lens) -> LensNeeds {
    match lens {
        Lens::Column { .. } => LensNeeds::Column,
        Lens::Principal { .. } | Lens::Density { .. } => LensNeeds::Covariance,
        Lens::Eccentricity { norm: Spread::Rms } => LensNeeds::Norms,
        Lens::Eccentricity { .. } | Lens::LInfinityCentrality => LensNeeds::References,
        Lens::DistanceToMeasure { .. } | Lens::NeighbourDistance { .. } => LensNeeds::AllPoints,
    }
}

/// Refuses what a run in parts does not do, before any work: denoising.
pub fn check_settings(s: &Settings) -> Result<()> {
    s.validate()?;
    if s.denoise.is_some() {
        return Err(Error::settings(
            "denoise",
            "setting rows aside needs every row's nearest rows among all rows before the filter, which a cluster run does not compute; remove 'denoise', or build this graph on one machine",
        ));
    }
    Ok(())
}

/// The global quantities of one filter, found by the caller over all parts.
#[derive(Debug, Clone)]
pub enum LensPlan {
    /// The filter column's values (index into [`crate::points::Chosen::lens_columns`]).
    Column(usize),
    /// Scores on the principal axis `v` of the points centred on `mu`.
    Principal { mu: Vec<f64>, v: Vec<f64> },
    /// The density from the kernel and the whitened reference points (row-major, in order).
    Density { kernel: Kernel, refs: Vec<f64> },
    /// Root-mean-square eccentricity.
    Rms { mu: Vec<f64>, mean_sq: f64 },
    /// Mean or largest distance to the reference points (row-major, in order).
    Spread { norm: Spread, refs: Vec<f64> },
    /// Values computed elsewhere for this part's points ([`knn_values`]).
    Given(Vec<f64>),
}

impl LensPlan {
    /// The plan of a principal-component filter from the points' covariance (ddof = 1)
    /// and means, after the engine's checks (the component exists, at least 2 points).
    pub fn principal(component: usize, n: usize, mu: Vec<f64>, cov: &ndarray::Array2<f64>) -> Result<LensPlan> {
        filter::check_component(component, mu.len(), n)?;
        Ok(LensPlan::Principal { v: filter::principal_axis(cov, component), mu })
    }
}

/// The filter values of one part's scaled points (row-major, `d` a row) under `plan`;
/// `rows` are their table rows (for the message when a value is not finite), `which`
/// names the filter ("filter" or "second filter (lens2)") as the engine does.
pub fn part_lens(plan: &LensPlan, points: &[f64], d: usize, rows: &[u32], lens_columns: &[(String, Vec<f64>)], which: &str) -> Result<Vec<f64>> {
    let rows_of = || points.chunks_exact(d.max(1));
    let v: Vec<f64> = match plan {
        LensPlan::Column(i) => lens_columns.get(*i).ok_or_else(|| Error::Data("internal: no such filter column".into()))?.1.clone(),
        LensPlan::Principal { mu, v } => rows_of().map(|r| filter::project(r, mu, v)).collect(),
        LensPlan::Density { kernel, refs } => rows_of().map(|r| kernel.value(&kernel.whiten(r), refs)).collect(),
        LensPlan::Rms { mu, mean_sq } => rows_of().map(|r| filter::rms_eccentricity(r, mu, *mean_sq)).collect(),
        LensPlan::Spread { norm, refs } => rows_of().map(|r| filter::spread_to(r, refs, *norm)).collect(),
        LensPlan::Given(v) => v.clone(),
    };
    if v.len() != rows.len() {
        return Err(Error::Data(format!("internal: {} filter values for {} points", v.len(), rows.len())));
    }
    finite_lens(v, rows, which)
}

/// The neighbour filters' values of all `n` points (row-major, `d` a row, in table
/// order), as the engine computes them.
pub fn knn_values(lens: &Lens, points: &[f64], d: usize) -> Result<Vec<f64>> {
    let n = points.len() / d.max(1);
    let x = ndarray::ArrayView2::from_shape((n, d), points).map_err(|e| Error::Data(format!("internal: points: {e}")))?;
    match lens {
        Lens::DistanceToMeasure { k } => knn::knn_lens(x, *k, knn::KnnValue::DistanceToMeasure),
        Lens::NeighbourDistance { k } => knn::knn_lens(x, *k, knn::KnnValue::KthDistance),
        _ => Err(Error::Data("internal: not a neighbour filter".into())),
    }
}

/// The density kernel of `n` points with covariance `cov` (ddof = 1), as the engine makes it.
pub fn density_kernel(cov: ndarray::Array2<f64>, n: usize, bandwidth: Option<f64>) -> Result<Kernel> {
    Kernel::new(cov, n, bandwidth)
}

/// One part's points assigned to the cover elements: for each element, the indices of
/// the part's points in it (increasing). `second` gives the second axis and values of a
/// product cover.
pub fn assign(axis: &Axis, lens: &[f64], second: Option<(&Axis, &[f64])>) -> Vec<Vec<u32>> {
    cover::within(axis, lens, second).elements
}

/// The nodes of one cover element.
#[derive(Debug, Clone, PartialEq)]
pub struct ElementNodes {
    /// Each node's members as positions in the element (increasing).
    pub members: Vec<Vec<u32>>,
    /// Each node's mean filter value (and second filter value).
    pub lens: Vec<f64>,
    pub lens2: Option<Vec<f64>>,
}

/// Clusters one cover element whose points (row-major, `d` a row) come in table order,
/// with their filter values, as the engine clusters it: the same labels, the clusters
/// below `min_share` of the element dropped, each node's mean filter values.
pub fn element_nodes(points: &[f64], d: usize, lens: &[f64], lens2: Option<&[f64]>, method: &Clustering, min_share: f64) -> ElementNodes {
    let k = lens.len();
    if k == 0 {
        return ElementNodes { members: Vec::new(), lens: Vec::new(), lens2: lens2.map(|_| Vec::new()) };
    }
    let labels = cluster::cluster(points, d, method);
    let positions: Vec<u32> = (0..k as u32).collect();
    let members = groups_from_labels(&positions, &labels, min_share);
    let means = |v: &[f64]| members.iter().map(|m| mean_in_order(m.iter().map(|&p| v[p as usize]))).collect::<Vec<f64>>();
    ElementNodes { lens: means(lens), lens2: lens2.map(means), members }
}

/// Nodes of one element as the statistics read them: members as positions in the
/// element's own table (its rows in table order).
pub fn local_nodes(members: &[Vec<u32>]) -> Vec<Node> {
    members.iter().map(|m| Node { element: 0, members: m.clone() }).collect()
}

/// One node as gathered from the machine that made it.
#[derive(Debug, Clone, PartialEq)]
pub struct PartNode {
    pub element: usize,
    pub size: usize,
    pub lens: f64,
    pub lens2: Option<f64>,
    /// Member rows (0-based table rows, increasing), when kept.
    pub rows: Option<Vec<u32>>,
}

/// Everything gathered from the parts for the graph file.
#[derive(Debug, Clone)]
pub struct Gathered {
    pub table: TableInfo,
    /// The counts of choosing rows, added over all parts.
    pub counts: RowCounts,
    pub axis: Axis,
    pub axis2: Option<Axis>,
    /// Cover elements that hold at least one point.
    pub elements: usize,
    /// Nodes in node order: elements in order, each element's clusters in label order.
    pub nodes: Vec<PartNode>,
    /// Pairs of nodes `(a, b, rows shared)`, any order, each pair once.
    pub pairs: Vec<(u32, u32, u32)>,
    /// Triples of nodes `([a, b, c], rows shared)` with a < b < c, each once.
    pub triples: Vec<([u32; 3], u32)>,
    /// Distinct rows in at least one node.
    pub rows_in_nodes: usize,
    pub statistics: Vec<ColumnStats>,
}

/// The graph file of a run in parts: edges, counts, triangles, layout and summary as the
/// engine makes them from the same nodes ([`crate::engine::build`], then
/// [`GraphFile::of_build`]).
pub fn graph_file(s: &Settings, g: Gathered) -> Result<GraphFile> {
    let (left_out_by_column, filled_by_column) = check_counts(s, &g.table.name, &g.counts)?;
    let min_shared = s.edges.min_shared;
    let n = g.nodes.len() as u32;
    if let Some(bad) = g.pairs.iter().find(|p| p.0 == p.1 || p.0 >= n || p.1 >= n) {
        return Err(Error::Data(format!("internal: node pair ({}, {}) of {n} nodes", bad.0, bad.1)));
    }
    let mut edges: Vec<Edge> =
        g.pairs.iter().filter(|p| p.2 as usize >= min_shared).map(|&(a, b, c)| Edge { a: a.min(b), b: a.max(b), shared: c }).collect();
    edges.sort_unstable_by_key(|e| (e.a, e.b));
    if edges.windows(2).any(|w| (w[0].a, w[0].b) == (w[1].a, w[1].b)) {
        return Err(Error::Data("internal: a node pair was counted twice".into()));
    }
    // A triple that shares at least `min_shared` rows has each pair sharing as many: its
    // sides are edges, as the engine's triangles require.
    let mut triangles: Vec<[u32; 3]> = g.triples.iter().filter(|t| t.1 as usize >= min_shared.max(1)).map(|t| t.0).collect();
    triangles.sort_unstable();
    let nerve = Nerve { nodes: g.nodes.iter().map(|p| Node { element: p.element, members: Vec::new() }).collect(), edges };
    let (components, loops) = nerve.counts();
    let filled_loops = graph::filled_loops(nerve.nodes.len(), &nerve.edges, &triangles);
    let node_lens: Vec<f64> = g.nodes.iter().map(|p| p.lens).collect();
    let sizes: Vec<usize> = g.nodes.iter().map(|p| p.size).collect();
    let layout = crate::layout::layout_sized(&nerve, &sizes, &node_lens, s.seed);
    let kept = g.counts.kept;
    let summary = Summary {
        rows: kept,
        rows_left_out: g.counts.rows - kept,
        rows_not_kept: g.counts.condition.map_or(0, |c| c.not_kept),
        rows_not_kept_missing: g.counts.condition.map_or(0, |c| c.undecided),
        nodes: nerve.nodes.len(),
        edges: nerve.edges.len(),
        components,
        single_node_components: nerve.degrees().iter().filter(|&&d| d == 0).count(),
        loops,
        filled_loops,
        noise_rows: kept - g.rows_in_nodes,
        rows_set_aside: 0,
        elements: g.elements,
        left_out_by_column,
        filled_by_column,
        warnings: settings_warnings(s, kept),
        first_look: None,
    };
    let nodes = g
        .nodes
        .iter()
        .enumerate()
        .map(|(i, p)| NodeRecord {
            id: i,
            element: p.element,
            size: p.size,
            lens: p.lens.is_finite().then_some(p.lens),
            lens2: p.lens2,
            x: Some(layout.positions[i][0]),
            y: Some(layout.positions[i][1]),
            r: Some(layout.radii[i]),
            rows: p.rows.as_ref().map(|r| r.iter().map(|&r| r as usize + 1).collect()),
        })
        .collect();
    Ok(GraphFile {
        version: GRAPH_FILE_VERSION,
        table: Some(g.table),
        settings: s.clone(),
        summary,
        cover: Some(CoverInfo {
            range: (g.axis.lo, g.axis.hi),
            intervals: g.axis.intervals.clone(),
            range2: g.axis2.as_ref().map(|a| (a.lo, a.hi)),
            intervals2: g.axis2.as_ref().map(|a| a.intervals.clone()),
        }),
        nodes,
        edges: nerve.edges.iter().map(|e| EdgeRecord { source: e.a, target: e.b, shared: e.shared }).collect(),
        statistics: g.statistics,
    })
}

/// The table description of a graph file: the columns of `table` (one part, with the
/// settings' derived columns), under `name`, with `rows` rows in all.
/// `ranges` gives each time column's first and last instant and precisions over the
/// whole table ([`time_ranges`] of every part, joined by [`join_time_ranges`]): the file
/// states them.
pub fn table_info(table: &Table, name: &str, rows: usize, ranges: &HashMap<String, TimeRange>) -> TableInfo {
    let mut t = GraphFile::of_table(table);
    t.name = name.to_string();
    t.rows = rows;
    for (info, c) in t.columns.iter_mut().zip(&table.columns) {
        if let (Some(times), Some(r)) = (c.as_times(), ranges.get(&c.name)) {
            let mut whole = times.clone();
            whole.precision = r.precision;
            whole.shown = r.shown;
            info.time = Some(crate::table::TimeSummary::new(&whole, r.first, r.last));
        }
    }
    t
}

/// A time column's first and last instant (seconds) in some rows, and the precisions its
/// values need there ([`crate::timecol::Times`]): what joins over the parts of a table.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TimeRange {
    pub first: Option<f64>,
    pub last: Option<f64>,
    pub precision: crate::timecol::Precision,
    pub shown: crate::timecol::Precision,
}

/// Each time column's [`TimeRange`] in this part.
pub fn time_ranges(table: &Table) -> HashMap<String, TimeRange> {
    table
        .columns
        .iter()
        .filter_map(|c| c.as_times().map(|t| (c, t)))
        .map(|(c, t)| {
            let (lo, hi) = t.seconds.iter().filter(|x| !x.is_nan()).fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &x| (lo.min(x), hi.max(x)));
            (c.name.clone(), TimeRange { first: lo.is_finite().then_some(lo), last: hi.is_finite().then_some(hi), precision: t.precision, shown: t.shown })
        })
        .collect()
}

/// The [`TimeRange`]s of the parts of a table joined: the earliest first, the latest
/// last, the finest precisions.
pub fn join_time_ranges(parts: &[HashMap<String, TimeRange>]) -> HashMap<String, TimeRange> {
    let mut out: HashMap<String, TimeRange> = HashMap::new();
    for p in parts {
        for (c, r) in p {
            out.entry(c.clone())
                .and_modify(|a| {
                    a.first = [a.first, r.first].into_iter().flatten().reduce(f64::min);
                    a.last = [a.last, r.last].into_iter().flatten().reduce(f64::max);
                    a.precision = a.precision.max(r.precision);
                    a.shown = a.shown.max(r.shown);
                })
                .or_insert(*r);
        }
    }
    out
}

/// One part of the table with the settings' derived columns appended.
pub fn with_derived(table: &Table, s: &Settings) -> Result<Table> {
    if s.derived.is_empty() {
        return Ok(table.clone());
    }
    Ok(crate::derive::with_derived(table, &s.derived, &s.missing.fill_values)?.0)
}

/// How [`read_cells`] reads one part of a text column.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CellsMode {
    /// As the reader reads a whole file: numbers until a text turns up.
    Auto,
    /// A part before the one holding the column's first text: its numbers become their
    /// texts, as the reader turns earlier numbers into texts.
    NumbersAsText,
    /// A part after it: every cell is kept as text.
    Text,
}

/// One part of a column read from its cells' text as the engine's reader reads a column
/// (the default missing markers, numbers, texts), so a table read in parts by another
/// reader (the cells of a CSV file as text) gets the engine's column types and values.
/// A column of text is returned as a category column: whether it is a time column is
/// decided from the levels of the whole column ([`crate::table::Column::from_text`]).
/// `first_row` is the table row of the part's first cell.
pub fn read_cells<'a>(name: &str, cells: impl IntoIterator<Item = &'a str>, first_row: usize, mode: CellsMode) -> Result<crate::table::Column> {
    use crate::table::cells::{ColumnBuilder, MissingTokens};
    let missing = MissingTokens::new(&crate::table::ReadOptions::default().missing_tokens);
    let mut b = ColumnBuilder::new(name.to_string());
    if mode == CellsMode::Text {
        b = b.as_text();
    }
    for (i, cell) in cells.into_iter().enumerate() {
        b.push(cell.as_bytes(), first_row + i + 1, &missing).map_err(|_| Error::Input(format!("column '{name}', data row {}: the cell is not UTF-8 text", first_row + i + 1)))?;
    }
    if mode == CellsMode::NumbersAsText {
        b = b.as_text();
    }
    // Typed as time or text later, from the whole column's levels (the cluster run hands
    // them to `Column::from_text` with each part's codes).
    Ok(b.finish_typed(false))
}

/// The cells of `column` that have a value under the settings' missing-value rule, in
/// the rows the row condition keeps (for the medians of the median policy).
pub fn present(table: &Table, column: &str, s: &Settings) -> Result<Vec<f64>> {
    let raw = table.numbers(column, "missing.perColumn")?;
    let fills = s.missing.fills_for(column);
    let keep = crate::subset::flags(table, s)?.map(|f| f.0);
    Ok(raw
        .iter()
        .enumerate()
        .filter(|&(r, &x)| keep.as_ref().is_none_or(|k| k[r]) && !crate::points::is_missing(x, fills))
        .map(|(_, &x)| x)
        .collect())
}

/// The rows of one part (with the settings' derived columns) that take part, as
/// [`crate::points::choose_rows`] chooses them among the rows the row condition keeps
/// (the verdict of a row reads that row alone), with what the condition set aside
/// counted so that the parts' counts add up to the whole table's
/// ([`RowCounts::add`], then [`check_counts`]).
pub fn choose(table: &Table, s: &Settings, first_row: u32, medians: &[(String, Option<f64>)]) -> Result<crate::points::Chosen> {
    let flags = crate::subset::flags(table, s)?;
    let mut c = crate::points::choose_rows(table, s, first_row, Some(medians), flags.as_ref().map(|f| &f.0[..]))?;
    c.counts.condition = flags.map(|(keep, undecided)| crate::points::ConditionCounts {
        not_kept: keep.iter().filter(|&&k| !k).count(),
        undecided,
        first_kept: keep.iter().position(|&k| k).map(|r| r + first_row as usize),
    });
    Ok(c)
}

/// The whole table's counts checked as the engine checks them: the row condition keeps
/// at least two rows of the table named `name`, a chosen column has a value somewhere,
/// some row takes part. Returns the rows left out and filled per column.
pub fn check_counts(s: &Settings, name: &str, counts: &RowCounts) -> Result<(Vec<(String, usize)>, Vec<(String, usize)>)> {
    if let Some(c) = &counts.condition {
        crate::subset::check_kept(s, name, counts.rows + c.not_kept, counts.rows, c.undecided, c.first_kept)?;
    }
    counts.finish_words(s.keep_rows.as_deref().map(|t| (t, counts.rows)))
}
