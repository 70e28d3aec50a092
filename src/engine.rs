//! The pipeline, stage by stage, with each stage's result cached under the part of the
//! settings it reads, so a change downstream never recomputes upstream: changing the
//! overlap re-uses the lens; re-colouring re-uses the graph.
//!
//! [`build`] runs the whole pipeline once (the command-line runner, the tests);
//! [`Workbench`] keeps a table and the cached stages for the page.

use serde::Serialize;

use crate::cluster;
use crate::cover::{self, Cover};
use crate::derive::{self, DerivedInfo};
use crate::explain::{self, Contrast, SortedColumns};
use crate::error::{Error, Result};
use crate::filter;
use crate::graph::{Nerve, Node};
use crate::layout;
use crate::points::{self, Points, PointsKey};
use crate::settings::{Clustering, CoverSettings, Derived, EdgeRule, Lens, Missing, Settings};
use crate::subset::{self, RowSubset};
use crate::table::{ColumnData, Table, MISSING_CODE};

/// What one run produced, with the settings that produced it.
#[derive(Debug, Clone, PartialEq)]
pub struct Build {
    pub settings: Settings,
    pub summary: Summary,
    pub nerve: Nerve,
    /// Where each node is drawn and its disc's radius; the drawing lies in [-1, 1].
    pub layout: layout::Layout,
    /// Mean lens value of each node's rows.
    pub node_lens: Vec<f64>,
    /// The lens's range over the rows used.
    pub lens_range: (f64, f64),
    /// The first filter's intervals (element `e` lies in `intervals[cover.cell(e).0]`).
    pub intervals: Vec<(f64, f64)>,
    /// The second filter's axis, for a product cover.
    pub second: Option<SecondAxis>,
}

/// The second filter of a product cover, as built.
#[derive(Debug, Clone, PartialEq)]
pub struct SecondAxis {
    pub lens_range: (f64, f64),
    pub intervals: Vec<(f64, f64)>,
    /// Mean second-lens value of each node's rows.
    pub node_lens: Vec<f64>,
}

impl Build {
    /// The (first, second) interval indices of element `e`.
    pub fn cell(&self, e: usize) -> (usize, Option<usize>) {
        match &self.second {
            None => (e, None),
            Some(a) => (e / a.intervals.len(), Some(e % a.intervals.len())),
        }
    }

    /// The first filter's interval of element `e` (NaN when unknown), and the second's.
    pub fn element_intervals(&self, e: usize) -> ((f64, f64), Option<(f64, f64)>) {
        let (i, j) = self.cell(e);
        let second = match (j, &self.second) {
            (Some(j), Some(a)) => a.intervals.get(j).copied(),
            _ => None,
        };
        (self.intervals.get(i).copied().unwrap_or((f64::NAN, f64::NAN)), second)
    }
}

/// The most levels of one category column a comparison lists (the statistics count all).
pub const CONTRAST_LEVELS: usize = 30;

#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct Summary {
    /// Rows that took part (kept by the row condition, with a value in every chosen column).
    pub rows: usize,
    /// Rows kept by the row condition but left out for a missing value in a chosen column.
    pub rows_left_out: usize,
    /// Rows the row condition (`keepRows`) did not keep; 0 without a condition.
    /// `rows + rows_left_out + rows_set_aside + rows_not_kept` is the table's row count.
    #[serde(default)]
    pub rows_not_kept: usize,
    /// Of `rows_not_kept`, rows where the condition could not be decided because a value
    /// it reads is missing there (see [`crate::derive::condition`]).
    #[serde(default)]
    pub rows_not_kept_missing: usize,
    pub nodes: usize,
    pub edges: usize,
    pub components: usize,
    /// Components of one node (a node sharing rows with no other).
    pub single_node_components: usize,
    pub loops: usize,
    /// Loops of the nerve once the triangles where three nodes share rows are filled
    /// ([`Nerve::filled_loops`]); equal to `loops` unless three cover elements meet.
    pub filled_loops: usize,
    /// Rows that took part but fell in no node (DBSCAN noise in every element they are in,
    /// or only in clusters below `minClusterShare`).
    pub noise_rows: usize,
    /// Rows that had every value but were set aside by denoising (`settings.denoise`);
    /// not counted in `rows`.
    #[serde(default)]
    pub rows_set_aside: usize,
    /// Cover elements that held at least one row.
    pub elements: usize,
    pub left_out_by_column: Vec<(String, usize)>,
    /// For each column under the median policy, how many rows that took part took its median.
    pub filled_by_column: Vec<(String, usize)>,
    /// Settings that gave a graph but probably not the one wanted, one sentence each
    /// (absent from the JSON when there is none).
    #[serde(skip_serializing_if = "Vec::is_empty", default)]
    pub warnings: Vec<String>,
    /// Set on a first look ([`Workbench::first_look`]): the graph is of a sample, and the
    /// row counts above count the sample's rows (`rowsNotKept` stays the condition's).
    #[serde(skip_serializing_if = "Option::is_none", default)]
    pub first_look: Option<crate::first_look::FirstLookOf>,
}

/// Statistic of a numeric column over a node's rows that have a value there.
///
/// JSON: `{"kind": "mean"}`, `{"kind": "median"}`, `{"kind": "spread"}`,
/// `{"kind": "shareAbove", "threshold": 2.5}`; [`NodeStat::from_json`] also takes the
/// bare strings `"mean"`, `"median"` and `"spread"`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, serde::Deserialize)]
#[serde(tag = "kind", rename_all = "camelCase", rename_all_fields = "camelCase", deny_unknown_fields)]
pub enum NodeStat {
    Mean,
    /// NumPy's `median` (the mean of the two middle values for an even count).
    Median,
    /// Standard deviation with ddof = 0 (the population formula, NumPy's `std` default).
    Spread,
    /// Share of the node's rows with a value that are strictly above `threshold`.
    ShareAbove { threshold: f64 },
}

impl NodeStat {
    /// Reads a statistic from its JSON (see above); the error names the field `stat`.
    pub fn from_json(v: &serde_json::Value) -> Result<NodeStat> {
        let v = match v {
            serde_json::Value::String(k) => serde_json::json!({ "kind": k }),
            v => v.clone(),
        };
        serde_json::from_value(v).map_err(|e| {
            Error::settings("stat", format!("{e}; use {{\"kind\": \"mean\"}}, \"median\", \"spread\" or {{\"kind\": \"shareAbove\", \"threshold\": NUMBER}}"))
        })
    }

    /// The statistic of `values` (reordered), NaN when empty.
    pub fn of(&self, values: &mut [f64]) -> f64 {
        let k = values.len();
        if k == 0 {
            return f64::NAN;
        }
        let mean = || values.iter().sum::<f64>() / k as f64;
        match *self {
            NodeStat::Mean => mean(),
            NodeStat::Median => crate::missing::median_in_place(values).unwrap_or(f64::NAN),
            NodeStat::Spread => {
                let m = mean();
                (values.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / k as f64).sqrt()
            }
            NodeStat::ShareAbove { threshold } => values.iter().filter(|&&x| x > threshold).count() as f64 / k as f64,
        }
    }
}

/// A histogram of the lens values with the cover's intervals, for drawing where the
/// cover cuts: `edges` (bins + 1, increasing) and `counts` as `numpy.histogram(values,
/// bins)` gives them (equal bins over [min, max], the last bin closed; a constant lens
/// gets the range [v - 0.5, v + 0.5], as NumPy does), and each interval with the number
/// of rows whose value it holds. JSON: `{"edges": [..], "counts": [..], "intervals": [[a, b, rows], ..]}`.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct LensHistogram {
    pub edges: Vec<f64>,
    pub counts: Vec<usize>,
    pub intervals: Vec<(f64, f64, usize)>,
}

/// [`LensHistogram`] of `values` with `intervals`.
pub fn lens_histogram(values: &[f64], bins: usize, intervals: &[(f64, f64)]) -> Result<LensHistogram> {
    if bins == 0 || bins > 100_000 {
        return Err(Error::settings("bins", format!("{bins} bins: choose 1 to 100000")));
    }
    let (mut lo, mut hi) = values.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| (a.min(v), b.max(v)));
    if values.is_empty() {
        (lo, hi) = (0.0, 1.0);
    } else if lo == hi {
        (lo, hi) = (lo - 0.5, hi + 0.5);
    }
    // numpy.linspace(lo, hi, bins + 1): lo + i * step, the last edge hi exactly.
    let step = (hi - lo) / bins as f64;
    let edges: Vec<f64> = (0..=bins).map(|i| if i == bins { hi } else { lo + i as f64 * step }).collect();
    let mut counts = vec![0usize; bins];
    for &v in values {
        // NumPy's rule: an index from arithmetic, corrected against the edges themselves.
        let mut i = (((v - lo) / (hi - lo)) * bins as f64) as usize;
        i = i.min(bins - 1);
        if v < edges[i] {
            i = i.saturating_sub(1);
        } else if i + 1 < bins && v >= edges[i + 1] {
            i += 1;
        }
        counts[i] += 1;
    }
    let mut sorted = values.to_vec();
    sorted.sort_unstable_by(f64::total_cmp);
    let intervals = intervals
        .iter()
        .map(|&(a, b)| (a, b, sorted.partition_point(|&v| v <= b) - sorted.partition_point(|&v| v < a)))
        .collect();
    Ok(LensHistogram { edges, counts, intervals })
}

#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct NodeColumn {
    pub name: String,
    pub kind: &'static str,
    pub mean: Option<f64>,
    pub min: Option<f64>,
    pub max: Option<f64>,
    pub missing: usize,
    /// For a category column: the most common value and its share of the node's rows.
    pub top: Option<String>,
    pub top_share: Option<f64>,
    /// For a time column: the node's first and last instants, as ISO 8601 text in the
    /// column's zone (`min` and `max` are the same instants in seconds).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub first: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub last: Option<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct NodeDetail {
    pub node: usize,
    pub size: usize,
    pub element: usize,
    pub interval: (f64, f64),
    pub degree: usize,
    /// The second filter's interval, for a product cover.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub interval2: Option<(f64, f64)>,
    pub columns: Vec<NodeColumn>,
    /// The first member rows, as 1-based data rows of the file.
    pub rows: Vec<usize>,
}

/// Clusters of every cover element, as nodes, and the rows that fell in none.
#[derive(Debug, Clone, PartialEq)]
struct Clustered {
    nodes: Vec<Node>,
    noise_rows: usize,
}

type LensKey = (PointsKey, Lens, Option<Lens>, u64);
type CoverKey = (LensKey, CoverSettings, Option<CoverSettings>);
/// The clustering, and the smallest share of its element a cluster needs (as bits).
type ClusterKey = (CoverKey, Clustering, u64);
type GraphKey = (ClusterKey, EdgeRule);

fn lens_key(s: &Settings) -> LensKey {
    (PointsKey::of(s), s.lens.clone(), s.lens2.clone(), s.seed)
}
fn cover_key(s: &Settings) -> CoverKey {
    (lens_key(s), s.cover.clone(), s.lens2.as_ref().map(|_| second_cover(s).clone()))
}

/// The second filter's cover settings: `cover2`, or `cover` when absent.
fn second_cover(s: &Settings) -> &CoverSettings {
    s.cover2.as_ref().unwrap_or(&s.cover)
}

/// The lens values of the points: the first filter's, and the second's for a product cover.
#[derive(Debug, Clone, PartialEq)]
struct Lenses {
    first: Vec<f64>,
    second: Option<Vec<f64>>,
}

fn make_cover(l: &Lenses, s: &Settings) -> Cover {
    cover::build(&l.first, &s.cover, l.second.as_deref().map(|v| (v, second_cover(s))))
}
fn cluster_key(s: &Settings) -> ClusterKey {
    (cover_key(s), s.clustering.clone(), s.min_cluster_share.to_bits())
}
fn graph_key(s: &Settings) -> GraphKey {
    (cluster_key(s), s.edges.clone())
}

/// Derived columns are recomputed when their list or the fill values change.
type DerivedKey = (Vec<Derived>, Vec<f64>);

/// The rows kept are recomputed when the condition, the derived columns or the
/// missing-value rules change (nothing else changes what the condition reads).
type SubsetKey = (Option<String>, Vec<Derived>, Missing);

fn subset_key(s: &Settings) -> SubsetKey {
    (s.keep_rows.clone(), s.derived.clone(), s.missing.clone())
}

/// A table and the cached stages of the last run on it.
#[derive(Default)]
pub struct Workbench {
    /// The file's columns, then the derived columns of the last run appended in place.
    table: Option<Table>,
    /// How many of `table.columns` came from the file.
    base_columns: usize,
    derived: Option<(DerivedKey, Vec<DerivedInfo>)>,
    /// Sorted rows per numeric column for [`Workbench::explain`], made on first use.
    sorted: Option<(DerivedKey, SortedColumns)>,
    /// The rows the row condition keeps (`None` inside: no condition, every row).
    subset: Option<(SubsetKey, Option<RowSubset>)>,
    /// How many times a row condition has been evaluated (for the cache tests).
    subset_evaluations: usize,
    points: Option<(PointsKey, Points)>,
    lens: Option<(LensKey, Lenses)>,
    cover: Option<(CoverKey, Cover)>,
    clustered: Option<(ClusterKey, Clustered)>,
    last: Option<Build>,
    /// [`crate::auto::auto_settings`] of the table with its present columns, kept because the
    /// page asks for it more than once per file and it costs a k-d tree over every row.
    /// Dropped whenever the columns change.
    auto: Option<crate::auto::AutoChoice>,
    /// A graph opened from a graph file, with no table: `last` is its graph, and node
    /// statistics come from the file ([`Workbench::open_graph`]).
    opened: Option<crate::graphfile::GraphFile>,
}

/// What a caller asking for the table's rows is told while a graph file is open.
const ROWS_NOT_HERE: &str = "the member rows are not in the tab: this graph was opened from a graph file, which carries per-node statistics but not the table; open the table (and these settings) to see rows";

impl Workbench {
    pub fn new() -> Self {
        Self::default()
    }

    /// Takes a new table and drops every cached stage.
    pub fn set_table(&mut self, table: Table) {
        let base_columns = table.columns.len();
        *self = Workbench { table: Some(table), base_columns, ..Default::default() };
    }

    /// [`Workbench::set_table`] with the table's automatic settings already made by the
    /// caller (`auto` must be `crate::auto::auto_choice(&table)`), so that
    /// [`Workbench::auto_settings`] does not make them again.
    pub fn set_table_with_auto(&mut self, table: Table, auto: crate::auto::AutoChoice) {
        self.set_table(table);
        self.auto = Some(auto);
    }

    pub fn table(&self) -> Option<&Table> {
        self.table.as_ref()
    }

    pub fn last(&self) -> Option<&Build> {
        self.last.as_ref()
    }

    fn need_table(&self) -> Result<&Table> {
        self.table.as_ref().ok_or_else(|| match self.opened {
            Some(_) => Error::Data(ROWS_NOT_HERE.into()),
            None => Error::Input("no table is loaded yet: open a CSV file first".into()),
        })
    }

    /// Shows a graph read from a graph file, with no table: the graph, its layout and its
    /// statistics answer [`Workbench::last`], [`Workbench::node_values`] and
    /// [`Workbench::node_detail`]; whatever needs the rows says they are not here.
    pub fn open_graph(&mut self, file: crate::graphfile::GraphFile) {
        *self = Workbench { last: Some(file.to_build()), opened: Some(file), ..Default::default() };
    }

    /// The graph file shown, when the graph came from one.
    pub fn opened(&self) -> Option<&crate::graphfile::GraphFile> {
        self.opened.as_ref()
    }

    /// The last graph as a graph file (see [`crate::graphfile`]), with each node's member
    /// rows when `with_rows` (and when known).
    pub fn graph_file(&self, with_rows: bool) -> Result<crate::graphfile::GraphFile> {
        if let Some(f) = &self.opened {
            let mut f = f.clone();
            if !with_rows {
                f.nodes.iter_mut().for_each(|n| n.rows = None);
            }
            return Ok(f);
        }
        let (table, b) = self.table_and_build()?;
        Ok(crate::graphfile::GraphFile::of_build(b, table, with_rows))
    }

    /// Rows in each node of the last graph.
    pub fn node_sizes(&self) -> Vec<usize> {
        match (&self.opened, &self.last) {
            (Some(f), _) => f.sizes(),
            (None, Some(b)) => b.nerve.nodes.iter().map(|n| n.members.len()).collect(),
            (None, None) => Vec::new(),
        }
    }

    /// Whether the last graph's member rows are known (always, unless it came from a
    /// graph file written without them).
    pub fn members_known(&self) -> bool {
        self.opened.as_ref().map_or(true, |f| f.has_rows())
    }

    pub fn auto_settings(&mut self) -> Result<Settings> {
        let mut s = self.auto_choice()?.settings.clone();
        // Keep the derived columns already made, so the names auto may choose resolve.
        s.derived = self.derived.as_ref().map(|((d, _), _)| d.clone()).unwrap_or_default();
        Ok(s)
    }

    /// The automatic settings with the columns they left out and why (made once per set of
    /// columns, see [`Workbench::auto_settings`]).
    pub fn auto_choice(&mut self) -> Result<&crate::auto::AutoChoice> {
        if self.auto.is_none() {
            self.auto = Some(crate::auto::auto_choice(self.need_table()?)?);
        }
        Ok(self.auto.as_ref().expect("just made"))
    }

    /// What the last run's derived columns found (missing values, undefined operations).
    pub fn derived_info(&self) -> &[DerivedInfo] {
        self.derived.as_ref().map_or(&[], |(_, i)| i)
    }

    /// Makes the table's derived columns those of `s`, evaluating only when the list or
    /// the fill values changed. On error the previous derived columns stay.
    fn sync_derived(&mut self, s: &Settings) -> Result<()> {
        let key: DerivedKey = (s.derived.clone(), s.missing.fill_values.clone());
        let base = self.base_columns;
        let current = self.derived.as_ref().map(|(k, _)| k);
        let table = self.table.as_mut().ok_or_else(|| Error::Input("no table is loaded yet: open a CSV file first".into()))?;
        if current == Some(&key) || (current.is_none() && key.0.is_empty()) {
            return Ok(());
        }
        let (made, infos) = derive::derive_columns(&table.columns[..base], table.n_rows, &key.0, &key.1)?;
        table.columns.truncate(base);
        table.columns.extend(made);
        self.derived = Some((key, infos));
        self.sorted = None;
        self.auto = None;
        Ok(())
    }

    /// Runs the pipeline, re-using every stage whose part of the settings is unchanged.
    /// On error the previous build stays in place.
    pub fn run(&mut self, s: &Settings, progress: &mut dyn FnMut(&str, f64)) -> Result<Summary> {
        s.validate()?;
        self.sync_derived(s)?;
        if let Some(b) = &self.last {
            if graph_key(&b.settings) == graph_key(s) && b.summary.first_look.is_none() {
                // The stages up to the cover become this graph's again: a build cancelled
                // after `prepare_elements` (or a node count) may have moved them to others.
                self.prepare(s, progress)?;
                let b = self.last.as_mut().expect("checked");
                b.settings = s.clone();
                return Ok(b.summary.clone());
            }
        }
        self.cluster_stages(s, progress)?;
        let table = self.table.as_ref().expect("checked by cluster_stages");
        let pts = &self.points.as_ref().expect("just set").1;
        let lens = &self.lens.as_ref().expect("just set").1;
        let cov = &self.cover.as_ref().expect("just set").1;
        let clustered = &self.clustered.as_ref().expect("just set").1;
        let b = assemble(table, pts, lens, cov, clustered, s, progress);
        let summary = b.summary.clone();
        self.last = Some(b);
        Ok(summary)
    }

    /// How many nodes the graph of `s` has, computed (and cached) up to the clusters, before
    /// the edges and the layout: the page asks before drawing a graph too large to read.
    pub fn node_count(&mut self, s: &Settings, progress: &mut dyn FnMut(&str, f64)) -> Result<usize> {
        s.validate()?;
        self.sync_derived(s)?;
        self.cluster_stages(s, progress)?;
        Ok(self.clustered.as_ref().expect("just set").1.nodes.len())
    }

    /// A first look at a large table ([`crate::first_look`]): when the rows `s` keeps
    /// number more than [`crate::first_look::FROM_ROWS`], builds the graph of a seeded
    /// sample of them with the sample's settings ([`crate::first_look::sample_settings`])
    /// and makes it the last build (node statistics and details read the table's rows as
    /// for any graph), returning its summary; `None` for a smaller table. The cached
    /// stages are not touched: the full run that follows re-uses what it had (or does its
    /// work from the start), whatever the first look did. On error the previous build stays.
    pub fn first_look(&mut self, s: &Settings, progress: &mut dyn FnMut(&str, f64)) -> Result<Option<Summary>> {
        s.validate()?;
        self.sync_derived(s)?;
        self.sync_subset(s, progress)?;
        let table = self.need_table()?;
        let condition = self.subset.as_ref().and_then(|(_, r)| r.as_ref());
        let eligible: Vec<u32> = match condition {
            Some(r) => (0..table.n_rows as u32).filter(|&i| r.keep[i as usize]).collect(),
            None => (0..table.n_rows as u32).collect(),
        };
        if !crate::first_look::wanted(eligible.len()) {
            return Ok(None);
        }
        let rows = crate::first_look::sample(&eligible, s.seed);
        let of = crate::first_look::FirstLookOf { sampled: rows.len(), of: eligible.len() };
        let sample_s = crate::first_look::sample_settings(s, rows.len() as f64 / eligible.len() as f64);
        let mut keep = vec![false; table.n_rows];
        rows.iter().for_each(|&r| keep[r as usize] = true);
        let subset = RowSubset {
            condition: match condition {
                Some(r) => format!("{} (a first look at {} of its rows)", r.condition, rows.len()),
                None => format!("(a first look at {} of the rows)", rows.len()),
            },
            keep,
            kept: rows.len(),
            not_kept: condition.map_or(0, |r| r.not_kept),
            undecided: condition.map_or(0, |r| r.undecided),
        };
        progress("points", 0.0);
        let pts = points::build_points_in(table, &sample_s, Some(&subset))?;
        progress("lens", 0.0);
        let lens = lens_values(table, &pts, &sample_s)?;
        progress("cover", 0.0);
        let cov = make_cover(&lens, &sample_s);
        let clustered = cluster_elements(&pts, &cov, &sample_s.clustering, sample_s.min_cluster_share, progress);
        let mut b = assemble(table, &pts, &lens, &cov, &clustered, &sample_s, progress);
        b.summary.first_look = Some(of);
        let summary = b.summary.clone();
        self.last = Some(b);
        Ok(Some(summary))
    }

    /// Every stage up to the clusters, each re-used when its part of the settings is unchanged.
    fn cluster_stages(&mut self, s: &Settings, progress: &mut dyn FnMut(&str, f64)) -> Result<()> {
        self.prepare(s, progress)?;
        let pts = &self.points.as_ref().expect("prepared").1;
        let cov = &self.cover.as_ref().expect("prepared").1;
        let kk = cluster_key(s);
        if self.clustered.as_ref().map(|(k, _)| k) != Some(&kk) {
            self.clustered = Some((kk, cluster_elements(pts, cov, &s.clustering, s.min_cluster_share, progress)));
        }
        Ok(())
    }

    /// The rows `s`'s condition keeps, evaluated only when its key changed (derived
    /// columns synced by the caller). On error the previous rows stay.
    fn sync_subset(&mut self, s: &Settings, progress: &mut dyn FnMut(&str, f64)) -> Result<()> {
        let key = subset_key(s);
        if self.subset.as_ref().map(|(k, _)| k) == Some(&key) {
            return Ok(());
        }
        let rows = if s.keep_rows.is_some() {
            progress("rows", 0.0);
            self.subset_evaluations += 1;
            subset::select(self.need_table()?, s)?
        } else {
            None
        };
        self.subset = Some((key, rows));
        Ok(())
    }

    /// What a condition on column `name` can be written from (see
    /// [`subset::ColumnOverview`]), listing at most `max_levels` values of a text column.
    pub fn column_overview(&self, name: &str, max_levels: usize) -> Result<subset::ColumnOverview> {
        let table = self.need_table()?;
        let col = table.column(name).ok_or_else(|| Error::settings("keepRows", format!("no column named '{name}' in {}", table.name)))?;
        Ok(subset::overview(col, max_levels))
    }

    /// How many times a row condition has been evaluated since the table was set: changing
    /// anything but the condition, the derived columns or the missing-value rules (or
    /// re-colouring) evaluates nothing.
    pub fn subset_evaluations(&self) -> usize {
        self.subset_evaluations
    }

    /// The rows kept by the last build's condition (`None`: every row), from the cache
    /// when it is that build's, else evaluated again.
    fn last_subset(&self) -> Result<std::borrow::Cow<'_, Option<RowSubset>>> {
        let (table, b) = self.table_and_build()?;
        match &self.subset {
            Some((k, rows)) if *k == subset_key(&b.settings) => Ok(std::borrow::Cow::Borrowed(rows)),
            _ => Ok(std::borrow::Cow::Owned(subset::select(table, &b.settings)?)),
        }
    }

    /// Points, lens and cover for `s`, each re-used when its part of the settings is
    /// unchanged (settings validated and derived columns synced by the caller).
    fn prepare(&mut self, s: &Settings, progress: &mut dyn FnMut(&str, f64)) -> Result<()> {
        self.sync_subset(s, progress)?;
        let table = self.table.as_ref().ok_or_else(|| Error::Input("no table is loaded yet: open a CSV file first".into()))?;
        let pk = PointsKey::of(s);
        if self.points.as_ref().map(|(k, _)| k) != Some(&pk) {
            progress("points", 0.0);
            let rows = self.subset.as_ref().and_then(|(_, r)| r.as_ref());
            self.points = Some((pk, points::build_points_in(table, s, rows)?));
            self.lens = None;
        }
        let pts = &self.points.as_ref().expect("just set").1;
        let lk = lens_key(s);
        if self.lens.as_ref().map(|(k, _)| k) != Some(&lk) {
            progress("lens", 0.0);
            self.lens = Some((lk, lens_values(table, pts, s)?));
            self.cover = None;
        }
        let lens = &self.lens.as_ref().expect("just set").1;
        let ck = cover_key(s);
        if self.cover.as_ref().map(|(k, _)| k) != Some(&ck) {
            progress("cover", 0.0);
            self.cover = Some((ck, make_cover(lens, s)));
            self.clustered = None;
        }
        Ok(())
    }

    /// The first half of [`Workbench::run`] for callers that cluster the cover elements
    /// themselves (the page's pool of workers): every stage up to the cover, re-using the
    /// cache. Returns the number of cover elements to cluster, 0 when nothing needs
    /// clustering (the graph or the clusters for `s` are cached: call
    /// [`Workbench::run`], which then does no clustering). Read each element's points with
    /// [`Workbench::element_points`], then call [`Workbench::run_with_labels`].
    pub fn prepare_elements(&mut self, s: &Settings, progress: &mut dyn FnMut(&str, f64)) -> Result<usize> {
        s.validate()?;
        self.sync_derived(s)?;
        if let Some(b) = &self.last {
            if graph_key(&b.settings) == graph_key(s) && b.summary.first_look.is_none() {
                return Ok(0);
            }
        }
        self.prepare(s, progress)?;
        if self.clustered.as_ref().map(|(k, _)| k) == Some(&cluster_key(s)) {
            return Ok(0);
        }
        Ok(self.cover.as_ref().expect("prepared").1.elements.len())
    }

    /// Cover element `e`'s points after [`Workbench::prepare_elements`]: row-major, one
    /// row per member (in the element's order), [`Workbench::point_dim`] values a row.
    pub fn element_points(&self, e: usize) -> Result<Vec<f64>> {
        let (pts, cov) = match (&self.points, &self.cover) {
            (Some((_, p)), Some((_, c))) => (p, c),
            _ => return Err(Error::Data("internal: element points asked before the cover was made".into())),
        };
        let members = cov.elements.get(e).ok_or_else(|| Error::Data(format!("internal: there is no cover element {e}")))?;
        Ok(element_buffer(pts, members))
    }

    /// Number of points in each cover element of the last prepared cover.
    pub fn element_sizes(&self) -> Vec<usize> {
        self.cover.as_ref().map_or(Vec::new(), |(_, c)| c.elements.iter().map(|e| e.len()).collect())
    }

    /// Number of values in each point row (the chosen columns), after a prepare.
    pub fn point_dim(&self) -> usize {
        self.points.as_ref().map_or(0, |(_, p)| p.data.ncols())
    }

    /// The second half: takes `labels[e]`, the clustering of cover element `e`'s points (as
    /// [`crate::cluster::cluster`] returns it) made elsewhere, as the clusters of `s`; a
    /// following [`Workbench::run`] (or [`Workbench::node_count`]) then does no clustering.
    pub fn set_element_labels(&mut self, s: &Settings, labels: Vec<cluster::Labels>) -> Result<()> {
        s.validate()?;
        self.sync_derived(s)?;
        self.prepare(s, &mut |_: &str, _: f64| {})?;
        let pts = &self.points.as_ref().expect("prepared").1;
        let cov = &self.cover.as_ref().expect("prepared").1;
        if labels.len() != cov.elements.len() || labels.iter().zip(&cov.elements).any(|(l, m)| l.len() != m.len()) {
            return Err(Error::Data("internal: the clusters given do not match the cover's elements".into()));
        }
        let groups = cov.elements.iter().zip(labels).map(|(members, l)| groups_from_labels(members, &l, s.min_cluster_share)).collect();
        self.clustered = Some((cluster_key(s), clustered_from(pts, groups, &mut |_: &str, _: f64| {})));
        Ok(())
    }

    /// [`Workbench::set_element_labels`], then [`Workbench::run`]: the same result as
    /// `run` alone when the labels are the same.
    pub fn run_with_labels(&mut self, s: &Settings, labels: Vec<cluster::Labels>, progress: &mut dyn FnMut(&str, f64)) -> Result<Summary> {
        self.set_element_labels(s, labels)?;
        self.run(s, progress)
    }

    /// One value per node of the last build: for a numeric column the statistic over the
    /// node's rows that have a value (NaN if none has); for a time column the same over
    /// its seconds since 1970 UTC (fill values do not apply); for a category column the
    /// share of the node's most common value.
    /// Missing cells (the column's fill values, see [`crate::settings::Missing`]) are
    /// skipped, never replaced by a median fill: a node's statistic describes the values
    /// in the file. A category column gives the dominant share whatever `stat` is.
    pub fn node_values(&self, column: &str, stat: NodeStat) -> Result<Vec<f64>> {
        if let Some(f) = &self.opened {
            return f.column(column).ok_or_else(|| Error::settings("colour", format!("the graph file has no statistics for a column named '{column}'")))?.values(stat);
        }
        let (table, b) = self.table_and_build()?;
        let fills = b.settings.missing.fills_for(column);
        let col = table.column(column).ok_or_else(|| Error::settings("colour", format!("no column named '{column}'")))?;
        let mut buf = Vec::new();
        Ok(b.nerve
            .nodes
            .iter()
            .map(|n| match &col.data {
                ColumnData::Number(v) => {
                    buf.clear();
                    buf.extend(n.members.iter().map(|&r| v[r as usize]).filter(|x| !points::is_missing(*x, fills)));
                    stat.of(&mut buf)
                }
                ColumnData::Time(t) => {
                    buf.clear();
                    buf.extend(n.members.iter().map(|&r| t.seconds[r as usize]).filter(|x| !x.is_nan()));
                    stat.of(&mut buf)
                }
                ColumnData::Category { codes, levels } => dominant(codes, levels.len(), &n.members).map_or(f64::NAN, |(_, share)| share),
            })
            .collect())
    }

    /// Each node's mean lens value ("colour by the filter"): `axis` 0 for the first
    /// filter, 1 for the second of a product cover.
    pub fn node_lens_values(&self, axis: usize) -> Result<Vec<f64>> {
        let b = self.last.as_ref().ok_or_else(|| Error::Data("no graph has been built yet".into()))?;
        match (axis, &b.second) {
            (0, _) => Ok(b.node_lens.clone()),
            (1, Some(a)) => Ok(a.node_lens.clone()),
            (1, None) => Err(Error::settings("lens2", "the last graph has one filter; set lens2 to colour by a second one")),
            _ => Err(Error::settings("axis", format!("filter {axis} does not exist: use 0 (lens) or 1 (lens2)"))),
        }
    }

    /// The histogram of the last build's lens values (`axis` 0: `lens`, 1: `lens2`) in
    /// `bins` equal bins, with that filter's cover intervals (see [`LensHistogram`]).
    pub fn lens_histogram(&self, bins: usize, axis: usize) -> Result<LensHistogram> {
        let (_, b) = self.table_and_build()?;
        let lens = &self.lens.as_ref().filter(|(k, _)| *k == lens_key(&b.settings)).ok_or_else(|| Error::Data("the last graph's filter values are gone; run again".into()))?.1;
        match (axis, &lens.second, &b.second) {
            (0, _, _) => lens_histogram(&lens.first, bins, &b.intervals),
            (1, Some(v), Some(a)) => lens_histogram(v, bins, &a.intervals),
            (1, _, _) => Err(Error::settings("lens2", "the last graph has one filter; set lens2 to see a second histogram")),
            _ => Err(Error::settings("axis", format!("filter {axis} does not exist: use 0 (lens) or 1 (lens2)"))),
        }
    }

    /// For a category column: the code of each node's most common value (`MISSING_CODE` if none).
    pub fn node_categories(&self, column: &str) -> Result<Vec<u32>> {
        let (table, b) = self.table_and_build()?;
        match table.column(column).map(|c| &c.data) {
            Some(ColumnData::Category { codes, levels }) => {
                Ok(b.nerve.nodes.iter().map(|n| dominant(codes, levels.len(), &n.members).map_or(MISSING_CODE, |(c, _)| c)).collect())
            }
            _ => Err(Error::settings("colour", format!("'{column}' is not a category column"))),
        }
    }

    pub fn node_detail(&self, node: usize) -> Result<NodeDetail> {
        if let Some(f) = &self.opened {
            return opened_node_detail(f, self.last.as_ref().expect("an opened graph is the last"), node);
        }
        let (table, b) = self.table_and_build()?;
        let n = b.nerve.nodes.get(node).ok_or_else(|| Error::Data(format!("there is no node {node}; the graph has {}", b.nerve.nodes.len())))?;
        let columns = table
            .columns
            .iter()
            .map(|c| match &c.data {
                ColumnData::Number(v) => {
                    let fills = b.settings.missing.fills_for(&c.name);
                    let vals: Vec<f64> = n.members.iter().map(|&r| v[r as usize]).filter(|x| !points::is_missing(*x, fills)).collect();
                    let k = vals.len();
                    NodeColumn {
                        name: c.name.clone(),
                        kind: "number",
                        mean: (k > 0).then(|| vals.iter().sum::<f64>() / k as f64),
                        min: vals.iter().cloned().reduce(f64::min),
                        max: vals.iter().cloned().reduce(f64::max),
                        missing: n.members.len() - k,
                        top: None,
                        top_share: None,
                        first: None,
                        last: None,
                    }
                }
                ColumnData::Time(t) => {
                    let vals: Vec<f64> = n.members.iter().map(|&r| t.seconds[r as usize]).filter(|x| !x.is_nan()).collect();
                    let k = vals.len();
                    let (min, max) = (vals.iter().cloned().reduce(f64::min), vals.iter().cloned().reduce(f64::max));
                    NodeColumn {
                        name: c.name.clone(),
                        kind: "time",
                        mean: (k > 0).then(|| vals.iter().sum::<f64>() / k as f64),
                        min,
                        max,
                        missing: n.members.len() - k,
                        top: None,
                        top_share: None,
                        first: min.and_then(|x| t.text_of(x)),
                        last: max.and_then(|x| t.text_of(x)),
                    }
                }
                ColumnData::Category { codes, levels } => {
                    let top = dominant(codes, levels.len(), &n.members);
                    NodeColumn {
                        name: c.name.clone(),
                        kind: "category",
                        mean: None,
                        min: None,
                        max: None,
                        missing: n.members.iter().filter(|&&r| codes[r as usize] == MISSING_CODE).count(),
                        top: top.map(|(c, _)| levels[c as usize].clone()),
                        top_share: top.map(|(_, s)| s),
                        first: None,
                        last: None,
                    }
                }
            })
            .collect();
        Ok(NodeDetail {
            node,
            size: n.members.len(),
            element: n.element,
            interval: b.element_intervals(n.element).0,
            interval2: b.element_intervals(n.element).1,
            degree: b.nerve.degrees()[node],
            columns,
            rows: n.members.iter().take(200).map(|&r| r as usize + 1).collect(),
        })
    }

    /// The rows of the given nodes of the last build (the union of their members), as
    /// table row indices, increasing.
    pub fn rows_of(&self, nodes: &[usize]) -> Result<Vec<u32>> {
        let (_, b) = self.table_and_build()?;
        let mut rows = Vec::new();
        for &k in nodes {
            let n = b.nerve.nodes.get(k).ok_or_else(|| Error::Data(format!("there is no node {k}; the graph has {}", b.nerve.nodes.len())))?;
            rows.extend_from_slice(&n.members);
        }
        rows.sort_unstable();
        rows.dedup();
        Ok(rows)
    }

    /// Every column compared between the rows of `nodes` and all other rows of the table
    /// (all other rows the row condition keeps, when there is one): numeric columns and category columns in two lists, each most different first (see
    /// [`crate::explain`]).
    pub fn explain(&mut self, nodes: &[usize]) -> Result<Contrast> {
        let rows = self.rows_of(nodes)?;
        if rows.is_empty() {
            return Err(Error::Data("choose at least one node to compare with the rest".into()));
        }
        self.explain_rows(&rows)
    }

    /// As [`Workbench::explain`], for the rows where `condition` holds (a row condition, as
    /// in `keepRows`: `station == 'north' and hour(time) < 6`) among the rows the graph's
    /// settings keep, against the other rows kept. A row where the condition is unknown (a
    /// value it reads is missing) is in neither group's count of the condition: it stays
    /// with the others, as the rule of [`crate::derive::condition`] never keeps it.
    pub fn explain_where(&mut self, condition: &str) -> Result<Contrast> {
        let (table, b) = self.table_and_build()?;
        let field = "rows";
        if condition.trim().is_empty() {
            return Err(Error::settings(field, "the condition is empty; write which rows to compare with the rest, as in depth > 2"));
        }
        let e = derive::parse_condition(condition).map_err(|e| Error::settings(field, e.render(condition)))?;
        let verdicts = derive::condition::verdicts(&e, table, &b.settings.missing).map_err(|e| Error::settings(field, e.render(condition)))?;
        let subset = self.last_subset()?;
        let kept = |r: usize| subset.as_ref().as_ref().is_none_or(|s| s.keep[r]);
        let rows: Vec<u32> = (0..verdicts.len()).filter(|&r| verdicts[r] == derive::condition::YES && kept(r)).map(|r| r as u32).collect();
        let others = (0..verdicts.len()).filter(|&r| kept(r)).count() - rows.len();
        if rows.is_empty() || others == 0 {
            return Err(Error::Data(format!(
                "the condition {condition} holds for {} of the rows the graph uses: nothing to compare; write a condition that splits them",
                if rows.is_empty() { "none" } else { "all" }
            )));
        }
        self.explain_rows(&rows)
    }

    /// The contrast of table rows `rows` (sorted, distinct) with the other rows kept.
    fn explain_rows(&mut self, rows: &[u32]) -> Result<Contrast> {
        let (table, b) = self.table_and_build()?;
        let fills = b.settings.missing.fill_values.clone();
        let key: DerivedKey = (b.settings.derived.clone(), fills.clone());
        if self.sorted.as_ref().map(|(k, _)| k) != Some(&key) {
            let sorted = SortedColumns::new(table, &fills);
            self.sorted = Some((key, sorted));
        }
        let subset = self.last_subset()?;
        let among = subset.as_ref().as_ref().map(|r| &r.keep[..]);
        let table = self.table.as_ref().expect("checked");
        let mut in_group = vec![false; table.n_rows];
        for &r in rows {
            in_group[r as usize] = true;
        }
        let mut categories = explain::category_contrast_among(table, &in_group, among);
        for c in &mut categories {
            c.keep_levels(CONTRAST_LEVELS);
        }
        Ok(Contrast { columns: explain::contrast_among(table, &self.sorted.as_ref().expect("just set").1, &in_group, among), categories })
    }

    /// The values of `columns` (every column when empty) at table rows `rows`, for the
    /// page's row table; pass the first rows you want to show. Times are ISO 8601 text as
    /// written in their zone ([`crate::timecol::Times::text`]).
    pub fn row_values(&self, rows: &[u32], columns: &[String]) -> Result<RowValues> {
        let table = self.need_table()?;
        let missing = self.last.as_ref().map(|b| b.settings.missing.clone()).unwrap_or_default();
        let cols: Vec<&crate::table::Column> = if columns.is_empty() {
            table.columns.iter().collect()
        } else {
            columns.iter().map(|c| table.column(c).ok_or_else(|| Error::settings("columns", format!("no column named '{c}'")))).collect::<Result<_>>()?
        };
        if let Some(&r) = rows.iter().find(|&&r| r as usize >= table.n_rows) {
            return Err(Error::Data(format!("row index {r} is past the table's {} rows", table.n_rows)));
        }
        let cells = rows
            .iter()
            .map(|&r| {
                cols.iter()
                    .map(|c| match &c.data {
                        ColumnData::Number(v) => {
                            let x = v[r as usize];
                            if points::is_missing(x, missing.fills_for(&c.name)) { serde_json::Value::Null } else { serde_json::json!(x) }
                        }
                        ColumnData::Category { codes, levels } => match codes[r as usize] {
                            MISSING_CODE => serde_json::Value::Null,
                            k => serde_json::Value::String(levels[k as usize].clone()),
                        },
                        ColumnData::Time(t) => t.text(r as usize).map_or(serde_json::Value::Null, serde_json::Value::String),
                    })
                    .collect()
            })
            .collect();
        Ok(RowValues {
            columns: cols.iter().map(|c| c.name.clone()).collect(),
            data_rows: rows.iter().map(|&r| r as usize + 1).collect(),
            cells,
        })
    }

    /// A seeded sample of at most `limit` rows with two values each, for the page's linked
    /// scatter (see [`crate::scatter`]); the principal components are those of the points
    /// of the last build.
    pub fn scatter(&self, axes: &crate::scatter::Axes, limit: usize) -> Result<crate::scatter::ScatterData> {
        let (table, b) = self.table_and_build()?;
        match axes {
            crate::scatter::Axes::Columns(x, y) => {
                let subset = self.last_subset()?;
                let among = subset.as_ref().as_ref().map(|r| &r.keep[..]);
                let mut d = crate::scatter::column_pair(table, &b.settings.missing.fill_values, x, y, among, limit, b.settings.seed)?;
                let pts = self.points.as_ref().filter(|(k, _)| *k == PointsKey::of(&b.settings)).map(|(_, p)| p);
                if let Some(p) = pts.filter(|p| !p.set_aside.is_empty()) {
                    d.set_aside = d.rows.iter().enumerate().filter(|(_, r)| p.set_aside.binary_search(r).is_ok()).map(|(i, _)| i as u32).collect();
                }
                Ok(d)
            }
            crate::scatter::Axes::Principal => {
                let pts = self.points.as_ref().filter(|(k, _)| *k == PointsKey::of(&b.settings)).map(|(_, p)| p);
                let pts = pts.ok_or_else(|| Error::Data("the points of the last graph are gone; build the graph again".into()))?;
                crate::scatter::principal_pair(pts, limit, b.settings.seed)
            }
        }
    }

    /// Help for a graph that is mostly noise or dust (see [`ScaleHelp`]), `None` when the
    /// last graph is neither. The scale is computed on the last graph's points.
    pub fn scale_help(&self) -> Result<Option<ScaleHelp>> {
        let (_, b) = self.table_and_build()?;
        let s = &b.summary;
        let mut sizes: Vec<usize> = b.nerve.nodes.iter().map(|n| n.members.len()).collect();
        sizes.sort_unstable();
        let noise = s.rows > 0 && s.noise_rows * 2 >= s.rows;
        let dust = sizes.len() >= DUST_NODES && sizes[sizes.len() / 2] <= 2;
        if !noise && !dust {
            return Ok(None);
        }
        let pts = self.points.as_ref().filter(|(k, _)| *k == PointsKey::of(&b.settings)).map(|(_, p)| p);
        let pts = pts.ok_or_else(|| Error::Data("the points of the last graph are gone; build the graph again".into()))?;
        let lens = self.lens.as_ref().filter(|(k, _)| *k == lens_key(&b.settings)).map(|(_, l)| l.first.clone());
        let lens = lens.unwrap_or_else(|| vec![0.0; pts.rows.len()]);
        let (eps_now, min_points) = match b.settings.clustering {
            Clustering::Dbscan { eps, min_points } => (Some(eps), min_points),
            Clustering::SingleLinkage { .. } => (None, crate::auto::MIN_POINTS),
        };
        let k = min_points.max(crate::auto::SCALE_NEIGHBOURS).min(pts.rows.len().max(1));
        let scale = crate::auto::scale_of(pts.data.as_slice().expect("contiguous").to_vec(), pts.data.ncols(), &lens, k, b.settings.seed);
        let (eps, min_points, lowered) = match eps_now {
            Some(now) if scale.eps <= now => (now, crate::auto::MIN_POINTS.min(min_points), true),
            _ => (scale.eps, min_points, false),
        };
        let mut settings = b.settings.clone();
        settings.clustering = Clustering::Dbscan { eps, min_points };
        let what = if noise {
            format!(
                "{} of {} rows ({:.0} %) are in no cluster: too few neighbours at this scale.",
                s.noise_rows,
                s.rows,
                100.0 * s.noise_rows as f64 / s.rows as f64
            )
        } else {
            format!(
                "The graph has {} nodes, half of them of {} row{} or fewer: it is dust, not a shape.",
                sizes.len(),
                sizes[sizes.len() / 2],
                if sizes[sizes.len() / 2] == 1 { "" } else { "s" }
            )
        };
        let how = if lowered {
            format!(
                "The clustering scale is already wide enough (eps {eps:.4}); the minimum of {} points per cluster is what leaves rows out. \
                 DBSCAN with minimum points {min_points} keeps eps and lets most rows join a cluster.",
                match b.settings.clustering {
                    Clustering::Dbscan { min_points, .. } => min_points,
                    _ => crate::auto::MIN_POINTS,
                }
            )
        } else {
            format!(
                "At eps = {eps:.4}, computed on these points, 49 rows in 50 have {k} rows within eps{}; a few near the slabs' edges may still stay out.",
                if eps_now.is_none() { " (DBSCAN, minimum points {min_points})" } else { "" }
            )
        };
        let how = how.replace("{min_points}", &min_points.to_string());
        Ok(Some(ScaleHelp { kind: if noise { "noise" } else { "dust" }, what, how, eps, min_points, settings }))
    }

    fn table_and_build(&self) -> Result<(&Table, &Build)> {
        let t = self.need_table()?;
        let b = self.last.as_ref().ok_or_else(|| Error::Data("no graph has been built yet".into()))?;
        Ok((t, b))
    }
}

/// Nodes past which a graph whose median node holds at most 2 rows counts as dust.
pub const DUST_NODES: usize = 1000;

/// What the page says above the canvas when most rows are in no cluster (`kind` "noise":
/// at least half of the rows that took part) or the graph is dust (`kind` "dust": at
/// least [`DUST_NODES`] nodes, the median of at most 2 rows), and the clustering that
/// would make most rows part of a cluster: DBSCAN at the scale the automatic rule reads
/// off these points ([`crate::auto::scale_of`]: 2^(1/4) times the 98th percentile of the
/// distance to the k-th nearest row, k = max(minimum points, 15)), or, when eps is already
/// that wide, the same eps with fewer minimum points.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct ScaleHelp {
    pub kind: &'static str,
    /// What is wrong, in one sentence.
    pub what: String,
    /// What the proposed setting does, in one sentence.
    pub how: String,
    pub eps: f64,
    pub min_points: usize,
    /// The last graph's settings with the proposed clustering.
    pub settings: Settings,
}

/// Cells of chosen rows: `cells[i][j]` is column `j` at data row `data_rows[i]` (1-based),
/// a number, a text or null for a missing value.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct RowValues {
    pub columns: Vec<String>,
    pub data_rows: Vec<usize>,
    pub cells: Vec<Vec<serde_json::Value>>,
}

/// Runs the whole pipeline once, with no cache. With derived columns this works on a copy
/// of the table that has them appended.
pub fn build(table: &Table, s: &Settings) -> Result<Build> {
    s.validate()?;
    let owned;
    let table = if s.derived.is_empty() {
        table
    } else {
        owned = derive::with_derived(table, &s.derived, &s.missing.fill_values)?.0;
        &owned
    };
    let mut quiet = |_: &str, _: f64| {};
    let pts = points::build_points(table, s)?;
    let lens = lens_values(table, &pts, s)?;
    let cov = make_cover(&lens, s);
    let clustered = cluster_elements(&pts, &cov, &s.clustering, s.min_cluster_share, &mut quiet);
    Ok(assemble(table, &pts, &lens, &cov, &clustered, s, &mut quiet))
}

/// The points and lens values of a table, computed once, from which graphs on a multiset
/// of its points (a bootstrap resample, rows drawn with replacement) are built without
/// recomputing either. The lens stays the original's: the filter is a fixed function on
/// the data space and a resample only changes which points are seen (Carrière, Michel,
/// Oudot 2018, §4), so a resample is never re-scaled or re-projected, and its cover is
/// the original's intervals. Used by [`crate::shape`]; the page's graphs come from
/// [`Workbench`].
#[derive(Debug, Clone)]
pub struct Resampler {
    pts: Points,
    lens: Vec<f64>,
    lens2: Option<Vec<f64>>,
    /// The original's intervals, per filter.
    axis: cover::Axis,
    axis2: Option<cover::Axis>,
}

impl Resampler {
    pub fn new(table: &Table, s: &Settings) -> Result<Resampler> {
        s.validate()?;
        let pts = points::build_points(table, s)?;
        let Lenses { first, second } = lens_values(table, &pts, s)?;
        let axis = cover::axis(&first, &s.cover);
        let axis2 = second.as_ref().map(|v| cover::axis(v, second_cover(s)));
        Ok(Resampler { pts, lens: first, lens2: second, axis, axis2 })
    }

    /// Number of points (rows that took part); draws index these, `0..len()`.
    pub fn len(&self) -> usize {
        self.lens.len()
    }

    pub fn is_empty(&self) -> bool {
        self.lens.is_empty()
    }

    /// The scaled points, one row per point.
    pub fn points(&self) -> &Points {
        &self.pts
    }

    /// The lens value of each point.
    pub fn lens(&self) -> &[f64] {
        &self.lens
    }

    /// Takes the intervals of `s`'s covers over the same lens values, so a sweep can try
    /// other covers without recomputing the points or the lens.
    pub fn set_cover(&mut self, s: &Settings) {
        self.axis = cover::axis(&self.lens, &s.cover);
        self.axis2 = self.lens2.as_ref().map(|v| cover::axis(v, second_cover(s)));
    }

    /// The nerve of the points `draws` (indices into `0..len()`, repeats allowed) under the
    /// clustering of `s` and the original's intervals, and each node's mean (first) lens
    /// value. Node members are positions in `draws`, not table rows. `s` must share the
    /// points, lens and cover settings this resampler was made with; only its clustering
    /// and edge rule are read.
    pub fn graph(&self, draws: &[u32], s: &Settings) -> (Nerve, Vec<f64>) {
        let d = self.pts.data.ncols();
        let flat = self.pts.data.as_slice().expect("points are row-major and contiguous");
        let mut data = Vec::with_capacity(draws.len() * d);
        let lens: Vec<f64> = draws.iter().map(|&p| self.lens[p as usize]).collect();
        for &p in draws {
            data.extend_from_slice(&flat[p as usize * d..(p as usize + 1) * d]);
        }
        let pts = Points {
            data: ndarray::Array2::from_shape_vec((draws.len(), d), data).expect("n × d values"),
            rows: (0..draws.len() as u32).collect(),
            columns: self.pts.columns.clone(),
            left_out: 0,
            not_kept: 0,
            not_kept_undecided: 0,
            left_out_by_column: Vec::new(),
            filled_by_column: Vec::new(),
            set_aside: Vec::new(),
        };
        let lens2: Option<Vec<f64>> = self.lens2.as_ref().map(|l2| draws.iter().map(|&p| l2[p as usize]).collect());
        let second = self.axis2.as_ref().zip(lens2.as_deref());
        let cov = cover::within(&self.axis, &lens, second);
        let clustered = cluster_elements(&pts, &cov, &s.clustering, s.min_cluster_share, &mut |_: &str, _: f64| {});
        let nerve = Nerve::new(clustered.nodes, draws.len(), s.edges.min_shared);
        let node_lens = nerve.nodes.iter().map(|n| n.members.iter().map(|&r| lens[r as usize]).sum::<f64>() / n.members.len() as f64).collect();
        (nerve, node_lens)
    }
}

/// The filter values of the points under `s`, the first filter's and the second's (for a
/// product cover): the lens stage of [`Workbench::run`] on its own, for callers that
/// spread the stages over processes.
pub fn lens_stage(table: &Table, pts: &Points, s: &Settings) -> Result<(Vec<f64>, Option<Vec<f64>>)> {
    let l = lens_values(table, pts, s)?;
    Ok((l.first, l.second))
}

/// The cover of `s` over filter values (`second` for a product cover): the cover stage
/// of [`Workbench::run`] on its own.
pub fn cover_stage(first: &[f64], second: Option<&[f64]>, s: &Settings) -> Cover {
    cover::build(first, &s.cover, second.map(|v| (v, second_cover(s))))
}

/// `v` (one filter value per point of table rows `rows`), or the error naming the first
/// data row whose value is not finite; `which` names the filter.
pub fn finite_lens(v: Vec<f64>, rows: &[u32], which: &str) -> Result<Vec<f64>> {
    if let Some(i) = v.iter().position(|x| !x.is_finite()) {
        return Err(Error::Data(format!(
            "the {which} gave no finite value on data row {}; choose another filter or check that column",
            rows[i] + 1
        )));
    }
    Ok(v)
}

fn lens_values(table: &Table, pts: &Points, s: &Settings) -> Result<Lenses> {
    let finite = |v: Vec<f64>, which: &str| finite_lens(v, &pts.rows, which);
    let first = finite(filter::compute_lens(table, pts, s)?, "filter")?;
    let second = filter::compute_lens2(table, pts, s)?.map(|v| finite(v, "second filter (lens2)")).transpose()?;
    Ok(Lenses { first, second })
}

fn cluster_elements(pts: &Points, cov: &Cover, method: &Clustering, min_share: f64, progress: &mut dyn FnMut(&str, f64)) -> Clustered {
    let per_element = cluster_all(pts, cov, method, min_share, progress);
    clustered_from(pts, per_element, progress)
}

/// Nodes from every element's clusters (lists of point indices), in element order.
fn clustered_from(pts: &Points, per_element: Vec<Vec<Vec<u32>>>, progress: &mut dyn FnMut(&str, f64)) -> Clustered {
    let mut in_node = vec![false; pts.rows.len()];
    let mut nodes = Vec::new();
    for (e, groups) in per_element.into_iter().enumerate() {
        for g in groups {
            for &p in &g {
                in_node[p as usize] = true;
            }
            nodes.push(Node { element: e, members: g.into_iter().map(|p| pts.rows[p as usize]).collect() });
        }
    }
    progress("clusters", 1.0);
    Clustered { nodes, noise_rows: in_node.iter().filter(|&&b| !b).count() }
}

/// The clusters of one cover element, as lists of point indices (increasing), in the
/// clustering's label order, less those with fewer rows than `min_share` of the element's
/// ([`Settings::min_cluster_share`]). Elements are independent: the natural unit of
/// parallel work.
pub fn cluster_element(pts: &Points, members: &[u32], method: &Clustering, min_share: f64) -> Vec<Vec<u32>> {
    if members.is_empty() {
        return Vec::new();
    }
    let labels = cluster::cluster(&element_buffer(pts, members), pts.data.ncols(), method);
    groups_from_labels(members, &labels, min_share)
}

/// The points of `members`, row-major, in that order.
fn element_buffer(pts: &Points, members: &[u32]) -> Vec<f64> {
    let d = pts.data.ncols();
    let flat = pts.data.as_slice().expect("points are row-major and contiguous");
    let mut buf = Vec::with_capacity(members.len() * d);
    for &p in members {
        buf.extend_from_slice(&flat[p as usize * d..(p as usize + 1) * d]);
    }
    buf
}

/// One list of point indices per cluster (labels numbered as [`cluster::cluster`] does),
/// keeping the clusters of at least `min_share` of the element's rows.
pub fn groups_from_labels(members: &[u32], labels: &cluster::Labels, min_share: f64) -> Vec<Vec<u32>> {
    let k = labels.iter().flatten().map(|&c| c as usize + 1).max().unwrap_or(0);
    let mut groups: Vec<Vec<u32>> = vec![Vec::new(); k];
    for (&p, l) in members.iter().zip(labels) {
        if let Some(c) = l {
            groups[*c as usize].push(p);
        }
    }
    let least = ((min_share * members.len() as f64).ceil() as usize).max(1);
    groups.retain(|g| g.len() >= least);
    groups
}

/// Every element's clusters, in element order. Natively the elements are shared among
/// all cores (largest first, taken from a shared counter); results do not depend on the
/// number of threads. In wasm one worker runs them in order.
fn cluster_all(pts: &Points, cov: &Cover, method: &Clustering, min_share: f64, progress: &mut dyn FnMut(&str, f64)) -> Vec<Vec<Vec<u32>>> {
    progress("clusters", 0.0);
    let total: usize = cov.elements.iter().map(|e| e.len()).sum::<usize>().max(1);
    let threads = if cfg!(target_arch = "wasm32") { 1 } else { std::thread::available_parallelism().map_or(1, |n| n.get()) };
    if threads <= 1 || cov.elements.len() < 2 {
        let mut done = 0;
        return cov
            .elements
            .iter()
            .map(|members| {
                progress("clusters", done as f64 / total as f64);
                done += members.len();
                cluster_element(pts, members, method, min_share)
            })
            .collect();
    }
    use std::sync::atomic::{AtomicUsize, Ordering};
    use std::sync::Mutex;
    let mut order: Vec<usize> = (0..cov.elements.len()).collect();
    order.sort_by_key(|&e| std::cmp::Reverse(cov.elements[e].len()));
    let next = AtomicUsize::new(0);
    let done = AtomicUsize::new(0);
    let results: Mutex<Vec<Option<Vec<Vec<u32>>>>> = Mutex::new(vec![None; cov.elements.len()]);
    let work = || {
        let k = next.fetch_add(1, Ordering::Relaxed);
        let &e = order.get(k)?;
        let groups = cluster_element(pts, &cov.elements[e], method, min_share);
        done.fetch_add(cov.elements[e].len(), Ordering::Relaxed);
        results.lock().expect("no thread panics holding the lock")[e] = Some(groups);
        Some(())
    };
    std::thread::scope(|scope| {
        for _ in 1..threads {
            scope.spawn(|| while work().is_some() {});
        }
        // The calling thread works too, and reports progress between its elements.
        while work().is_some() {
            progress("clusters", done.load(Ordering::Relaxed) as f64 / total as f64);
        }
    });
    results.into_inner().expect("threads joined").into_iter().map(|r| r.expect("every element clustered")).collect()
}

fn assemble(table: &Table, pts: &Points, lens: &Lenses, cov: &Cover, c: &Clustered, s: &Settings, progress: &mut dyn FnMut(&str, f64)) -> Build {
    progress("graph", 0.0);
    let nerve = Nerve::new(c.nodes.clone(), table.n_rows, s.edges.min_shared);
    let (components, loops) = nerve.counts();
    // Mean lens value of each node: rows map back to points by binary search (rows increase).
    let means = |lens: &[f64]| -> Vec<f64> {
        nerve.nodes.iter().map(|n| mean_in_order(n.members.iter().map(|r| lens[pts.rows.binary_search(r).expect("member rows are points")]))).collect()
    };
    let node_lens = means(&lens.first);
    let second = match (&lens.second, &cov.second) {
        (Some(v), Some(a)) => Some(SecondAxis { lens_range: (a.lo, a.hi), intervals: a.intervals.clone(), node_lens: means(v) }),
        _ => None,
    };
    progress("layout", 0.0);
    let layout = layout::layout(&nerve, &node_lens, s.seed);
    let summary = Summary {
        rows: pts.rows.len(),
        rows_left_out: pts.left_out,
        rows_not_kept: pts.not_kept,
        rows_not_kept_missing: pts.not_kept_undecided,
        nodes: nerve.nodes.len(),
        edges: nerve.edges.len(),
        components,
        single_node_components: nerve.degrees().iter().filter(|&&d| d == 0).count(),
        loops,
        filled_loops: nerve.filled_loops(s.edges.min_shared),
        noise_rows: c.noise_rows,
        rows_set_aside: pts.set_aside.len(),
        elements: cov.elements.iter().filter(|e| !e.is_empty()).count(),
        left_out_by_column: pts.left_out_by_column.clone(),
        filled_by_column: pts.filled_by_column.clone(),
        warnings: settings_warnings(s, pts.rows.len()),
        first_look: None,
    };
    Build { settings: s.clone(), summary, nerve, layout, node_lens, lens_range: (cov.lo, cov.hi), intervals: cov.intervals.clone(), second }
}

/// The mean of `values` summed in the order given (a node's mean filter value: its
/// member rows in table order, wherever the node is made).
pub fn mean_in_order(values: impl ExactSizeIterator<Item = f64>) -> f64 {
    let k = values.len();
    values.sum::<f64>() / k as f64
}

/// Warnings about settings that are valid but unlikely to be meant. More intervals than
/// rows is allowed (the cover is still defined) but leaves most intervals empty.
pub fn settings_warnings(s: &Settings, rows: usize) -> Vec<String> {
    let mut out = Vec::new();
    if s.cover.intervals > rows {
        out.push(format!(
            "setting 'cover.intervals': {} intervals for {rows} row{} leaves most intervals empty; fewer intervals (at most {rows}) give a readable graph",
            s.cover.intervals,
            if rows == 1 { "" } else { "s" }
        ));
    }
    out
}

/// [`Workbench::node_detail`] of a graph opened from a graph file: its statistics, and the
/// first member rows when the file lists them.
fn opened_node_detail(f: &crate::graphfile::GraphFile, b: &Build, node: usize) -> Result<NodeDetail> {
    use crate::graphfile::ColumnStats;
    let rec = f.nodes.get(node).ok_or_else(|| Error::Data(format!("there is no node {node}; the graph has {}", f.nodes.len())))?;
    let time_of = |name: &str| f.table.as_ref().and_then(|t| t.columns.iter().find(|c| c.name == name)).and_then(|c| c.time.as_ref());
    let columns = f
        .statistics
        .iter()
        .map(|c| match c {
            ColumnStats::Number { name, mean, min, max, missing, .. } => {
                let time = time_of(name);
                NodeColumn {
                    name: name.clone(),
                    kind: if time.is_some() { "time" } else { "number" },
                    mean: mean[node],
                    min: min[node],
                    max: max[node],
                    missing: missing[node] as usize,
                    top: None,
                    top_share: None,
                    first: time.and_then(|t| min[node].and_then(|x| t.text_of(x))),
                    last: time.and_then(|t| max[node].and_then(|x| t.text_of(x))),
                }
            }
            ColumnStats::Category { name, levels, top, top_share, missing, .. } => NodeColumn {
                name: name.clone(),
                kind: "category",
                mean: None,
                min: None,
                max: None,
                missing: missing[node] as usize,
                top: top[node].map(|k| levels[k as usize].clone()),
                top_share: top_share[node],
                first: None,
                last: None,
            },
        })
        .collect();
    Ok(NodeDetail {
        node,
        size: rec.size,
        element: rec.element,
        interval: b.element_intervals(rec.element).0,
        interval2: b.element_intervals(rec.element).1,
        degree: b.nerve.degrees()[node],
        columns,
        rows: rec.rows.as_ref().map_or(Vec::new(), |r| r.iter().take(200).copied().collect()),
    })
}

/// The most common code among `rows` and its share, ignoring missing values.
fn dominant(codes: &[u32], n_levels: usize, rows: &[u32]) -> Option<(u32, f64)> {
    let mut counts = vec![0usize; n_levels];
    let mut total = 0;
    for &r in rows {
        let c = codes[r as usize];
        if c != MISSING_CODE {
            counts[c as usize] += 1;
            total += 1;
        }
    }
    let (best, &k) = counts.iter().enumerate().max_by_key(|&(i, k)| (*k, std::cmp::Reverse(i)))?;
    (total > 0).then(|| (best as u32, k as f64 / total as f64))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::table::Column;

    /// Denoising counts its rows apart, keeps them out of every node, and the scatter of
    /// two columns marks exactly them.
    #[test]
    fn rows_set_aside_are_counted_apart_and_marked_in_the_scatter() {
        // 0, 1, ..., 98 on a line and two far rows (1000, 2000): their 3rd-neighbour
        // distances are the two largest, above the 0.97 quantile (NumPy's rule: 2).
        let mut x: Vec<f64> = (0..99).map(f64::from).collect();
        x.extend([1000.0, 2000.0]);
        let y: Vec<f64> = x.iter().map(|v| v * 0.5).collect();
        let t = Table::from_columns("t", vec![Column::number("x", x), Column::number("y", y)]).unwrap();
        let mut s = Settings::plain(vec!["x".into(), "y".into()], Lens::Column { column: "x".into() }, CoverSettings::uniform(4, 0.3), Clustering::Dbscan { eps: 3.0, min_points: 2 });
        s.denoise = Some(crate::settings::Denoise { measure: crate::settings::DenoiseMeasure::NeighbourDistance, k: 3, quantile: 0.97 });
        let mut w = Workbench::new();
        w.set_table(t);
        let sum = w.run(&s, &mut |_, _| {}).unwrap();
        assert_eq!((sum.rows, sum.rows_set_aside, sum.rows_left_out), (99, 2, 0));
        assert!(w.last().unwrap().nerve.nodes.iter().all(|n| n.members.iter().all(|&r| r < 99)));
        let d = w.scatter(&crate::scatter::Axes::Columns("x".into(), "y".into()), 1000).unwrap();
        let marked: Vec<u32> = d.set_aside.iter().map(|&i| d.rows[i as usize]).collect();
        assert_eq!(marked, vec![99, 100]);
    }

    /// The kept automatic settings are exactly those made afresh, before and after the
    /// table's columns change (derived columns appended can be chosen by them).
    #[test]
    fn kept_automatic_settings_equal_fresh_ones() {
        let mut r = crate::rng::SplitMix64::new(3);
        let n = 400;
        let table = Table::from_columns(
            "t",
            vec![
                Column::number("x", (0..n).map(|_| r.normal()).collect()),
                Column::number("y", (0..n).map(|_| r.normal()).collect()),
            ],
        )
        .unwrap();
        let fresh = crate::auto::auto_settings(&table).unwrap();
        let mut bench = Workbench::new();
        bench.set_table_with_auto(table.clone(), crate::auto::auto_choice(&table).unwrap());
        assert_eq!(bench.auto_settings().unwrap(), fresh);
        let mut bench = Workbench::new();
        bench.set_table(table);
        assert_eq!(bench.auto_settings().unwrap(), fresh);
        assert_eq!(bench.auto_settings().unwrap(), fresh);

        let mut s = fresh.clone();
        s.derived = vec![Derived { name: "z".into(), expression: "x * y".into() }];
        bench.run(&s, &mut |_, _| {}).unwrap();
        let mut expected = crate::auto::auto_settings(bench.table().unwrap()).unwrap();
        expected.derived = s.derived.clone();
        assert!(expected.columns.contains(&"z".to_string()), "the derived column is a candidate");
        assert_eq!(bench.auto_settings().unwrap(), expected);
    }
}
