//! The graph file: one versioned JSON document that carries a built graph, its layout,
//! the settings that made it, its summary and per-node statistics of every column of the
//! table, so a graph computed where the table fits (the command-line runner, the Python
//! package) can be opened, coloured and exported where it does not (a browser tab).
//! The format is described for readers in `docs/graph-file.md`; this module writes it
//! ([`GraphFile::of_build`], [`GraphFile::to_json`]) and reads it back with messages that
//! say what is wrong ([`GraphFile::from_json`]).
//!
//! Version 1 (the runner's `--out` before) had no layout, no table description and no
//! statistics; it is still read: the layout is made again from the settings' seed.
//!
//! What it is not: the page's other exports ([`crate::export`]) or the settings document
//! ([`crate::settings`]), which it embeds unchanged.

use serde::{Deserialize, Serialize};

use crate::engine::{Build, NodeStat, SecondAxis, Summary};
use crate::error::{Error, Result};
use crate::graph::{Edge, Nerve, Node};
use crate::points;
use crate::settings::{Missing, Settings};
use crate::table::{ColumnData, Table, MISSING_CODE};
use crate::timecol::Times;

/// The value of the `format` field.
pub const GRAPH_FORMAT: &str = "nervure-graph";
/// The version this build writes; it reads this one and every earlier one.
pub const GRAPH_FILE_VERSION: u32 = 2;
/// The most levels of one category column whose shares are listed per node (the most
/// common ones in the graph's rows; the dominant level of every node is listed too).
pub const SHARE_LEVELS: usize = 30;
/// Deepest nesting a graph file has (settings inside the document, lists inside them).
const MAX_DEPTH: usize = 24;

/// The table the graph was built from, as far as the file tells it (no values).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct TableInfo {
    pub name: String,
    pub rows: usize,
    pub columns: Vec<ColumnInfo>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct ColumnInfo {
    pub name: String,
    /// "number", "time" or "category".
    pub kind: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unit: Option<String>,
    /// For a time column: its zone and precision, first and last instants (the column
    /// list's summary); its statistics are of the instants in seconds since 1970 UTC.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub time: Option<crate::table::TimeSummary>,
}

/// Where the cover cut the filter's range: `[lo, hi]` and the intervals, per filter.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct CoverInfo {
    pub range: (f64, f64),
    pub intervals: Vec<(f64, f64)>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub range2: Option<(f64, f64)>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub intervals2: Option<Vec<(f64, f64)>>,
}

/// One node: its cover element, size, mean filter value(s), position and (unless the file
/// was written without them) its member rows, 1-based data rows of the table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct NodeRecord {
    pub id: usize,
    pub element: usize,
    pub size: usize,
    pub lens: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub lens2: Option<f64>,
    #[serde(default)]
    pub x: Option<f64>,
    #[serde(default)]
    pub y: Option<f64>,
    /// The node's disc radius in the layout's units (the layout sizes discs with the
    /// positions: [`crate::layout::Layout`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub r: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rows: Option<Vec<usize>>,
}

#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct EdgeRecord {
    pub source: u32,
    pub target: u32,
    pub shared: u32,
}

/// Per-node statistics of one column, one value per node in node order (`null` where a
/// node has no value in the column). Numbers skip missing cells (NaN and the settings'
/// fill values for the column), as the page's colouring does ([`NodeStat`]).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "camelCase", rename_all_fields = "camelCase")]
pub enum ColumnStats {
    Number {
        name: String,
        #[serde(default, skip_serializing_if = "Option::is_none")]
        unit: Option<String>,
        mean: Vec<Option<f64>>,
        /// NumPy's `median`.
        median: Vec<Option<f64>>,
        /// Standard deviation, ddof = 0.
        spread: Vec<Option<f64>>,
        min: Vec<Option<f64>>,
        max: Vec<Option<f64>>,
        /// Member rows without a value.
        missing: Vec<u32>,
    },
    Category {
        name: String,
        /// The levels listed: the [`SHARE_LEVELS`] most common in the graph's rows, then any
        /// other level that is the most common of some node.
        levels: Vec<String>,
        /// `shares[k][node]`: the share of the node's rows with a value that hold `levels[k]`.
        shares: Vec<Vec<f64>>,
        /// The node's most common level (index into `levels`), ties to the first level
        /// of the table; `null` when none of its rows has a value.
        top: Vec<Option<u32>>,
        top_share: Vec<Option<f64>>,
        missing: Vec<u32>,
    },
}

impl ColumnStats {
    pub fn name(&self) -> &str {
        match self {
            ColumnStats::Number { name, .. } | ColumnStats::Category { name, .. } => name,
        }
    }

    fn len(&self) -> usize {
        match self {
            ColumnStats::Number { missing, .. } | ColumnStats::Category { missing, .. } => missing.len(),
        }
    }

    /// One value per node as the page colours by it: the statistic of a number column,
    /// the share of the most common level for a category column (as
    /// [`crate::Workbench::node_values`]). `shareAbove` needs the rows and is refused.
    pub fn values(&self, stat: NodeStat) -> Result<Vec<f64>> {
        let nan = |v: &[Option<f64>]| v.iter().map(|x| x.unwrap_or(f64::NAN)).collect();
        match (self, stat) {
            (ColumnStats::Number { mean, .. }, NodeStat::Mean) => Ok(nan(mean)),
            (ColumnStats::Number { median, .. }, NodeStat::Median) => Ok(nan(median)),
            (ColumnStats::Number { spread, .. }, NodeStat::Spread) => Ok(nan(spread)),
            (ColumnStats::Number { name, .. }, NodeStat::ShareAbove { .. }) => Err(Error::settings(
                "stat",
                format!("the graph file carries the mean, median and spread of '{name}' per node; the share above a threshold needs the table's rows, which are not in the tab: colour by another statistic, or open the table and build the graph"),
            )),
            (ColumnStats::Category { top_share, .. }, _) => Ok(nan(top_share)),
        }
    }
}

/// [`ColumnStats`] of every column of `table` over the member rows of `nodes`.
pub fn node_statistics(table: &Table, nodes: &[Node], missing: &Missing) -> Vec<ColumnStats> {
    join_statistics(vec![statistics_part(table, nodes, missing)]).expect("one part of one table joins")
}

/// Per-node statistics of every column over some of a graph's nodes, in a form that joins
/// with those of its other nodes ([`join_statistics`]): a run in parts ([`crate::parts`])
/// computes them where each cover element's nodes are made, on those rows alone.
/// A number column's statistics are the node's own; a category column's keep each node's
/// counts, because the levels listed and their order depend on the whole graph.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub enum StatsPart {
    Number(ColumnStats),
    Category {
        name: String,
        /// Every level of the table's column, in the table's order.
        levels: Vec<String>,
        /// Per node: (level, rows) for each level it holds (by level), rows with a value,
        /// rows without one.
        nodes: Vec<(Vec<(u32, usize)>, usize, u32)>,
    },
}

/// [`StatsPart`] of every column of `table` over the member rows of `nodes`.
pub fn statistics_part(table: &Table, nodes: &[Node], missing: &Missing) -> Vec<StatsPart> {
    table.columns.iter().map(|c| column_part(&c.name, c.unit.clone(), &c.data, nodes, missing)).collect()
}

fn column_part(name: &str, unit: Option<String>, data: &ColumnData, nodes: &[Node], missing: &Missing) -> StatsPart {
    let some = |x: f64| x.is_finite().then_some(x);
    match data {
        ColumnData::Number(v) | ColumnData::Time(Times { seconds: v, .. }) => {
            // A time column's statistics are of its instants; fill values are numbers'.
            let fills = if matches!(data, ColumnData::Time(_)) { &[][..] } else { missing.fills_for(name) };
            let k = nodes.len();
            let (mut mean, mut median, mut spread, mut min, mut max, mut miss) =
                (Vec::with_capacity(k), Vec::with_capacity(k), Vec::with_capacity(k), Vec::with_capacity(k), Vec::with_capacity(k), Vec::with_capacity(k));
            let mut buf = Vec::new();
            for n in nodes {
                buf.clear();
                buf.extend(n.members.iter().map(|&r| v[r as usize]).filter(|x| !points::is_missing(*x, fills)));
                miss.push((n.members.len() - buf.len()) as u32);
                min.push(buf.iter().copied().reduce(f64::min));
                max.push(buf.iter().copied().reduce(f64::max));
                mean.push(some(NodeStat::Mean.of(&mut buf)));
                spread.push(some(NodeStat::Spread.of(&mut buf)));
                median.push(some(NodeStat::Median.of(&mut buf)));
            }
            StatsPart::Number(ColumnStats::Number { name: name.to_string(), unit, mean, median, spread, min, max, missing: miss })
        }
        ColumnData::Category { codes, levels } => {
            let mut counts = vec![0usize; levels.len()];
            let mut per_node = Vec::with_capacity(nodes.len());
            for n in nodes {
                let mut total = 0;
                let mut miss = 0;
                let mut touched = Vec::new();
                for &r in &n.members {
                    let c = codes[r as usize];
                    if c == MISSING_CODE {
                        miss += 1;
                        continue;
                    }
                    if counts[c as usize] == 0 {
                        touched.push(c);
                    }
                    counts[c as usize] += 1;
                    total += 1;
                }
                let mut held: Vec<(u32, usize)> = touched.iter().map(|&c| (c, std::mem::take(&mut counts[c as usize]))).collect();
                held.sort_unstable();
                per_node.push((held, total, miss));
            }
            StatsPart::Category { name: name.to_string(), levels: levels.clone(), nodes: per_node }
        }
    }
}

/// The statistics of every column over all nodes from the [`StatsPart`]s of consecutive
/// groups of nodes (in node order), each part listing the same columns.
pub fn join_statistics(parts: Vec<Vec<StatsPart>>) -> Result<Vec<ColumnStats>> {
    let mut parts = parts.into_iter();
    let Some(first) = parts.next() else { return Ok(Vec::new()) };
    let mut acc: Vec<StatsPart> = first;
    for part in parts {
        if part.len() != acc.len() {
            return Err(Error::Data("internal: the statistics of two groups of nodes list different columns".into()));
        }
        for (a, b) in acc.iter_mut().zip(part) {
            match (a, b) {
                (
                    StatsPart::Number(ColumnStats::Number { name, mean, median, spread, min, max, missing, .. }),
                    StatsPart::Number(ColumnStats::Number { name: n2, mean: m2, median: d2, spread: s2, min: l2, max: h2, missing: x2, .. }),
                ) if *name == n2 => {
                    mean.extend(m2);
                    median.extend(d2);
                    spread.extend(s2);
                    min.extend(l2);
                    max.extend(h2);
                    missing.extend(x2);
                }
                (StatsPart::Category { name, levels, nodes }, StatsPart::Category { name: n2, levels: l2, nodes: x2 }) if *name == n2 && *levels == l2 => {
                    nodes.extend(x2);
                }
                (a, _) => {
                    let name = match a {
                        StatsPart::Number(c) => c.name().to_string(),
                        StatsPart::Category { name, .. } => name.clone(),
                    };
                    return Err(Error::Data(format!("internal: column '{name}' differs between two groups of nodes (kind, name or levels)")));
                }
            }
        }
    }
    Ok(acc.into_iter().map(finish_column).collect())
}

fn finish_column(part: StatsPart) -> ColumnStats {
    let (name, levels, per_node) = match part {
        StatsPart::Number(c) => return c,
        StatsPart::Category { name, levels, nodes } => (name, levels, nodes),
    };
    let mut overall = vec![0usize; levels.len()];
    for (held, _, _) in &per_node {
        for &(c, k) in held {
            overall[c as usize] += k;
        }
    }
    // The node's dominant level: most rows, ties to the lower code (as the engine's).
    let tops: Vec<Option<(u32, f64)>> = per_node
        .iter()
        .map(|(held, total, _)| held.iter().max_by_key(|&&(c, k)| (k, std::cmp::Reverse(c))).map(|&(c, k)| (c, k as f64 / *total as f64)))
        .collect();
    let mut order: Vec<u32> = (0..levels.len() as u32).filter(|&c| overall[c as usize] > 0).collect();
    order.sort_by_key(|&c| (std::cmp::Reverse(overall[c as usize]), c));
    order.truncate(SHARE_LEVELS);
    for &(c, _) in tops.iter().flatten() {
        if !order.contains(&c) {
            order.push(c);
        }
    }
    let mut index = vec![u32::MAX; levels.len()];
    for (k, &c) in order.iter().enumerate() {
        index[c as usize] = k as u32;
    }
    let mut shares = vec![vec![0.0; per_node.len()]; order.len()];
    for (i, (held, total, _)) in per_node.iter().enumerate() {
        for &(c, k) in held {
            let at = index[c as usize];
            if at != u32::MAX {
                shares[at as usize][i] = k as f64 / *total as f64;
            }
        }
    }
    ColumnStats::Category {
        name,
        levels: order.iter().map(|&c| levels[c as usize].clone()).collect(),
        shares,
        top: tops.iter().map(|t| t.map(|(c, _)| index[c as usize])).collect(),
        top_share: tops.iter().map(|t| t.map(|(_, s)| s)).collect(),
        missing: per_node.iter().map(|(_, _, m)| *m).collect(),
    }
}

/// A graph as the file holds it. [`GraphFile::to_build`] gives it back as a [`Build`].
#[derive(Debug, Clone, PartialEq)]
pub struct GraphFile {
    /// The version the file was written in (this build writes [`GRAPH_FILE_VERSION`]).
    pub version: u32,
    pub table: Option<TableInfo>,
    pub settings: Settings,
    pub summary: Summary,
    pub cover: Option<CoverInfo>,
    pub nodes: Vec<NodeRecord>,
    pub edges: Vec<EdgeRecord>,
    pub statistics: Vec<ColumnStats>,
}

/// The fields after `format` and `version`, in the order written.
#[derive(Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
struct Body {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    table: Option<TableInfo>,
    #[serde(skip_deserializing, default)]
    settings: serde_json::Value,
    summary: Summary,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    cover: Option<CoverInfo>,
    nodes: Vec<NodeRecord>,
    edges: Vec<EdgeRecord>,
    #[serde(default)]
    statistics: Vec<ColumnStats>,
}

impl GraphFile {
    /// The file of a build: `table` is the table it was built from (with the run's derived
    /// columns), for the column list and the statistics; `with_rows` keeps each node's
    /// member rows (leave them out for a table of many millions of rows: the file then
    /// says how many rows each node holds, not which).
    pub fn of_build(b: &Build, table: &Table, with_rows: bool) -> GraphFile {
        let nodes = b
            .nerve
            .nodes
            .iter()
            .enumerate()
            .map(|(i, n)| NodeRecord {
                id: i,
                element: n.element,
                size: n.members.len(),
                lens: b.node_lens[i].is_finite().then_some(b.node_lens[i]),
                lens2: b.second.as_ref().and_then(|a| a.node_lens.get(i).copied()),
                x: Some(b.layout.positions[i][0]),
                y: Some(b.layout.positions[i][1]),
                r: Some(b.layout.radii[i]),
                rows: with_rows.then(|| n.members.iter().map(|&r| r as usize + 1).collect()),
            })
            .collect();
        GraphFile {
            version: GRAPH_FILE_VERSION,
            table: Some(GraphFile::of_table(table)),
            settings: b.settings.clone(),
            summary: b.summary.clone(),
            cover: Some(CoverInfo {
                range: b.lens_range,
                intervals: b.intervals.clone(),
                range2: b.second.as_ref().map(|a| a.lens_range),
                intervals2: b.second.as_ref().map(|a| a.intervals.clone()),
            }),
            nodes,
            edges: b.nerve.edges.iter().map(|e| EdgeRecord { source: e.a, target: e.b, shared: e.shared }).collect(),
            statistics: node_statistics(table, &b.nerve.nodes, &b.settings.missing),
        }
    }

    /// The description of `table` (its name, rows and columns) a graph file carries.
    pub fn of_table(table: &Table) -> TableInfo {
        TableInfo {
            name: table.name.clone(),
            rows: table.n_rows,
            columns: table
                .columns
                .iter()
                .map(|c| ColumnInfo {
                    name: c.name.clone(),
                    kind: match c.data {
                        ColumnData::Number(_) => "number",
                        ColumnData::Time(_) => "time",
                        ColumnData::Category { .. } => "category",
                    }
                    .into(),
                    unit: c.unit.clone(),
                    time: c.as_times().map(|t| {
                        let (lo, hi) = t.seconds.iter().filter(|x| !x.is_nan()).fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &x| (lo.min(x), hi.max(x)));
                        crate::table::TimeSummary::new(t, lo.is_finite().then_some(lo), hi.is_finite().then_some(hi))
                    }),
                })
                .collect(),
        }
    }

    /// Whether every node lists its member rows.
    pub fn has_rows(&self) -> bool {
        self.nodes.iter().all(|n| n.rows.is_some())
    }

    /// The statistics of one column, if the file carries them.
    pub fn column(&self, name: &str) -> Option<&ColumnStats> {
        self.statistics.iter().find(|c| c.name() == name)
    }

    /// The document, in the current version, as compact JSON.
    pub fn to_json(&self) -> String {
        let body = Body {
            table: self.table.clone(),
            settings: serde_json::to_value(&self.settings).expect("settings serialise"),
            summary: self.summary.clone(),
            cover: self.cover.clone(),
            nodes: self.nodes.clone(),
            edges: self.edges.clone(),
            statistics: self.statistics.clone(),
        };
        // `format` and `version` first, then the fields in the order of `Body`.
        let fields = serde_json::to_string(&body).expect("graph serialises");
        format!("{{\"format\":\"{GRAPH_FORMAT}\",\"version\":{GRAPH_FILE_VERSION},{}", &fields[1..])
    }

    /// Reads a graph file; `name` (the file's name) starts every message.
    pub fn from_json(text: &str, name: &str) -> Result<GraphFile> {
        let bad = |m: String| Error::Input(format!("{name}: {m}"));
        let depth = json_depth(text);
        if depth > MAX_DEPTH {
            return Err(bad(format!("this file nests {depth} levels deep, more than a graph file does ({MAX_DEPTH}); it is not a Nervure graph file")));
        }
        let value: serde_json::Value = serde_json::from_str(text).map_err(|e| bad(format!("not a Nervure graph file: it is not valid JSON ({e})")))?;
        let obj = value.as_object().ok_or_else(|| bad("not a Nervure graph file: it is JSON, but not an object with \"format\": \"nervure-graph\"".into()))?;
        match obj.get("format").and_then(|f| f.as_str()) {
            Some(GRAPH_FORMAT) => {}
            Some(other) => return Err(bad(format!("not a Nervure graph file: its \"format\" is \"{other}\", not \"{GRAPH_FORMAT}\""))),
            None if obj.contains_key("columns") && obj.contains_key("lens") => {
                return Err(bad("this is a settings document, not a graph: open it with Open settings… (after the table)".into()))
            }
            None => return Err(bad(format!("not a Nervure graph file: it has no \"format\": \"{GRAPH_FORMAT}\" field"))),
        }
        let version = match obj.get("version").and_then(|v| v.as_u64()) {
            Some(v) if v >= 1 && v <= GRAPH_FILE_VERSION as u64 => v as u32,
            Some(v) if v > GRAPH_FILE_VERSION as u64 => {
                return Err(bad(format!("the file is graph format version {v}, written by a newer Nervure; this build reads versions 1 to {GRAPH_FILE_VERSION}")))
            }
            _ => return Err(bad(format!("the \"version\" field is missing or not a whole number from 1 to {GRAPH_FILE_VERSION}"))),
        };
        let settings = Settings::from_value(obj.get("settings").cloned().unwrap_or(serde_json::Value::Null))
            .map_err(|e| bad(format!("its settings cannot be read: {e}")))?;
        let body: Body = serde_json::from_value(value).map_err(|e| bad(format!("not a readable graph file ({e})")))?;
        let file = GraphFile {
            version,
            table: body.table,
            settings,
            summary: body.summary,
            cover: body.cover,
            nodes: body.nodes,
            edges: body.edges,
            statistics: body.statistics,
        };
        file.check().map_err(bad)?;
        Ok(file)
    }

    /// Consistency of the parts (what a hand-edited or truncated file gets wrong).
    fn check(&self) -> std::result::Result<(), String> {
        let n = self.nodes.len();
        if let Some((i, node)) = self.nodes.iter().enumerate().find(|(i, node)| node.id != *i) {
            return Err(format!("node {i} has id {}; nodes are listed in id order from 0", node.id));
        }
        for node in &self.nodes {
            if let Some(rows) = &node.rows {
                if rows.len() != node.size {
                    return Err(format!("node {} has size {} but lists {} rows", node.id, node.size, rows.len()));
                }
                if rows.windows(2).any(|w| w[0] >= w[1]) || rows.first() == Some(&0) {
                    return Err(format!("node {}'s rows are not increasing data rows counted from 1", node.id));
                }
                if let Some(t) = &self.table {
                    if rows.last().is_some_and(|&r| r > t.rows) {
                        return Err(format!("node {} lists row {} but the table has {} rows", node.id, rows.last().unwrap(), t.rows));
                    }
                }
            }
        }
        if let Some(e) = self.edges.iter().find(|e| e.source as usize >= n || e.target as usize >= n || e.source >= e.target) {
            return Err(format!("edge {}–{} does not join two of the {n} nodes (source below target)", e.source, e.target));
        }
        if self.summary.nodes != n || self.summary.edges != self.edges.len() {
            return Err(format!(
                "the summary says {} nodes and {} edges but the file lists {n} and {}",
                self.summary.nodes,
                self.summary.edges,
                self.edges.len()
            ));
        }
        for c in &self.statistics {
            if c.len() != n {
                return Err(format!("the statistics of column '{}' have {} values for {n} nodes", c.name(), c.len()));
            }
            if let ColumnStats::Category { levels, shares, top, top_share, .. } = c {
                if shares.len() != levels.len() || shares.iter().any(|s| s.len() != n) || top_share.len() != n || top.len() != n {
                    return Err(format!("the shares of column '{}' do not have one value per level and node", c.name()));
                }
                if top.iter().flatten().any(|&k| k as usize >= levels.len()) {
                    return Err(format!("column '{}' names a level that is not in its list", c.name()));
                }
            }
            if let ColumnStats::Number { mean, median, spread, min, max, .. } = c {
                if [mean, median, spread, min, max].iter().any(|v| v.len() != n) {
                    return Err(format!("the statistics of column '{}' have one value per node in some lists but not in others", c.name()));
                }
            }
        }
        Ok(())
    }

    /// The graph as a [`Build`]: the layout of the file (made again from the settings'
    /// seed for a file that lacks a node's position or disc radius, as a version 1 file does). Nodes of a file written without rows have no members:
    /// their sizes are [`GraphFile::sizes`].
    pub fn to_build(&self) -> Build {
        let nodes: Vec<Node> = self
            .nodes
            .iter()
            .map(|n| Node { element: n.element, members: n.rows.as_ref().map_or(Vec::new(), |r| r.iter().map(|&x| (x - 1) as u32).collect()) })
            .collect();
        let nerve = Nerve { nodes, edges: self.edges.iter().map(|e| Edge { a: e.source, b: e.target, shared: e.shared }).collect() };
        let node_lens: Vec<f64> = self.nodes.iter().map(|n| n.lens.unwrap_or(f64::NAN)).collect();
        let layout = if self.nodes.iter().all(|n| n.x.is_some() && n.y.is_some() && n.r.is_some()) {
            crate::layout::Layout {
                positions: self.nodes.iter().map(|n| [n.x.unwrap_or(0.0), n.y.unwrap_or(0.0)]).collect(),
                radii: self.nodes.iter().map(|n| n.r.unwrap_or(0.0)).collect(),
            }
        } else {
            crate::layout::layout(&nerve, &node_lens, self.settings.seed)
        };
        let range = |v: &[f64]| v.iter().filter(|x| x.is_finite()).fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| (a.min(x), b.max(x)));
        let (lens_range, intervals) = match &self.cover {
            Some(c) => (c.range, c.intervals.clone()),
            None => (range(&node_lens), Vec::new()),
        };
        // The second axis needs its intervals (a cell number is read through them); a version 1
        // file does not have them, and then shows the first filter only.
        let intervals2 = self.cover.as_ref().and_then(|c| c.intervals2.clone()).filter(|v| !v.is_empty());
        let second = self.settings.lens2.as_ref().zip(intervals2).map(|(_, intervals)| {
            let node_lens: Vec<f64> = self.nodes.iter().map(|n| n.lens2.unwrap_or(f64::NAN)).collect();
            SecondAxis { lens_range: self.cover.as_ref().and_then(|c| c.range2).unwrap_or_else(|| range(&node_lens)), intervals, node_lens }
        });
        Build { settings: self.settings.clone(), summary: self.summary.clone(), nerve, layout, node_lens, lens_range, intervals, second }
    }

    /// Rows in each node.
    pub fn sizes(&self) -> Vec<usize> {
        self.nodes.iter().map(|n| n.size).collect()
    }
}

/// The deepest nesting of arrays and objects in a JSON text (strings skipped), read
/// before parsing so that a hostile file cannot exhaust the stack of whoever reads it.
pub fn json_depth(text: &str) -> usize {
    let (mut depth, mut deepest, mut in_string, mut escaped) = (0usize, 0usize, false, false);
    for &b in text.as_bytes() {
        if in_string {
            match (escaped, b) {
                (true, _) => escaped = false,
                (false, b'\\') => escaped = true,
                (false, b'"') => in_string = false,
                _ => {}
            }
            continue;
        }
        match b {
            b'"' => in_string = true,
            b'[' | b'{' => {
                depth += 1;
                deepest = deepest.max(depth);
            }
            b']' | b'}' => depth = depth.saturating_sub(1),
            _ => {}
        }
    }
    deepest
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::settings::*;
    use crate::table::Column;

    fn small() -> (Table, Build) {
        let x: Vec<f64> = (0..60).map(|i| if i < 30 { i as f64 * 0.1 } else { 10.0 + (i - 30) as f64 * 0.1 }).collect();
        let mut y: Vec<f64> = x.iter().map(|v| v * 0.5).collect();
        y[3] = -9999.0;
        let kind: Vec<u32> = (0..60).map(|i| if i % 3 == 0 { MISSING_CODE } else { (i % 2) as u32 }).collect();
        let t = Table::from_columns(
            "arcs.csv",
            vec![Column::number("x", x), Column::number("y", y), Column::category("kind", kind, vec!["odd".into(), "even".into()])],
        )
        .unwrap();
        let mut s = Settings::plain(vec!["x".into()], Lens::Column { column: "x".into() }, CoverSettings::uniform(6, 0.3), Clustering::Dbscan { eps: 0.3, min_points: 1 });
        s.missing.fill_values = vec![-9999.0];
        let b = crate::engine::build(&t, &s).unwrap();
        (t, b)
    }

    #[test]
    fn round_trips_and_rebuilds_the_same_graph() {
        let (t, b) = small();
        let f = GraphFile::of_build(&b, &t, true);
        let back = GraphFile::from_json(&f.to_json(), "g.json").unwrap();
        assert_eq!(back, f);
        assert_eq!(back.to_build(), b);
        let no_rows = GraphFile::of_build(&b, &t, false);
        let back = GraphFile::from_json(&no_rows.to_json(), "g.json").unwrap();
        assert!(!back.has_rows());
        assert_eq!(back.sizes(), b.nerve.nodes.iter().map(|n| n.members.len()).collect::<Vec<_>>());
        // A product cover (two filters) keeps its second axis.
        let mut s2 = b.settings.clone();
        s2.columns = vec!["x".into(), "y".into()];
        s2.lens2 = Some(Lens::Column { column: "y".into() });
        s2.cover2 = Some(CoverSettings::uniform(3, 0.2));
        let b2 = crate::engine::build(&t, &s2).unwrap();
        assert!(b2.second.is_some());
        let f2 = GraphFile::of_build(&b2, &t, false);
        let back = GraphFile::from_json(&f2.to_json(), "g.json").unwrap().to_build();
        assert_eq!((back.second, back.layout, back.node_lens), (b2.second.clone(), b2.layout.clone(), b2.node_lens.clone()));
    }

    /// The statistics are exactly the values the engine colours by, with the table.
    #[test]
    fn statistics_equal_the_engines_node_values() {
        let (t, b) = small();
        let f = GraphFile::of_build(&b, &t, true);
        let mut bench = crate::Workbench::new();
        bench.set_table(t);
        bench.run(&b.settings, &mut |_, _| {}).unwrap();
        for stat in [NodeStat::Mean, NodeStat::Median, NodeStat::Spread] {
            for c in ["x", "y", "kind"] {
                let want = bench.node_values(c, stat).unwrap();
                let got = f.column(c).unwrap().values(stat).unwrap();
                assert_eq!(want.len(), got.len());
                for (a, g) in want.iter().zip(&got) {
                    assert!(a == g || (a.is_nan() && g.is_nan()), "{c} {stat:?}: {a} vs {g}");
                }
            }
        }
        // The fill value -9999 is not a value of y: its node counts it as missing.
        let ColumnStats::Number { missing, min, .. } = f.column("y").unwrap() else { panic!("y is a number column") };
        assert_eq!(missing.iter().sum::<u32>() as usize, b.nerve.nodes.iter().filter(|n| n.members.contains(&3)).count());
        assert!(min.iter().flatten().all(|&m| m > -1.0));
        // Category shares of each node add up to 1 over the levels listed (all of them here).
        let ColumnStats::Category { shares, top, .. } = f.column("kind").unwrap() else { panic!("kind is a category column") };
        for i in 0..b.nerve.nodes.len() {
            let total: f64 = shares.iter().map(|s| s[i]).sum();
            assert!((total - 1.0).abs() < 1e-12 || top[i].is_none(), "node {i}: {total}");
        }
        assert!(f.column("kind").unwrap().values(NodeStat::ShareAbove { threshold: 1.0 }).is_ok());
        assert!(f.column("x").unwrap().values(NodeStat::ShareAbove { threshold: 1.0 }).unwrap_err().to_string().contains("not in the tab"));
    }

    /// A time column's statistics are its instants; the graph file opened with no table
    /// gives each node the same first and last instants, as text, as the table did.
    #[test]
    fn a_time_column_keeps_its_instants_and_zone() {
        let (t, b) = small();
        let when: Vec<f64> = (0..60).map(|i| 1_700_000_000.0 + 3600.0 * i as f64).collect();
        let mut columns = t.columns.clone();
        columns.push(Column::of("when", ColumnData::times(when, crate::timecol::Zone::Offset(7200))));
        let t = Table::from_columns("arcs.csv", columns).unwrap();
        let f = GraphFile::of_build(&b, &t, true);
        let info = f.table.as_ref().unwrap().columns.iter().find(|c| c.name == "when").unwrap();
        assert_eq!((info.kind.as_str(), info.time.as_ref().map(|z| z.offset)), ("time", Some(Some(7200))));
        let mut live = crate::Workbench::new();
        live.set_table(t);
        live.run(&b.settings, &mut |_, _| {}).unwrap();
        let mut opened = crate::Workbench::new();
        opened.open_graph(GraphFile::from_json(&f.to_json(), "g.json").unwrap());
        for node in 0..b.nerve.nodes.len() {
            let pick = |w: &crate::Workbench| {
                let d = w.node_detail(node).unwrap();
                let c = d.columns.into_iter().find(|c| c.name == "when").unwrap();
                (c.kind, c.min, c.max, c.first, c.last)
            };
            let (kind, min, _, first, last) = pick(&live);
            assert_eq!(kind, "time");
            assert!(first.as_deref().unwrap().ends_with("+02:00") && last.is_some(), "{first:?}");
            assert_eq!(min, Some(1_700_000_000.0 + 3600.0 * b.nerve.nodes[node].members[0] as f64));
            assert_eq!(pick(&live), pick(&opened), "node {node}");
        }
    }

    #[test]
    fn reads_version_1_and_lays_it_out() {
        let (_, b) = small();
        // The version 1 document as the runner's --out wrote it.
        let nodes: Vec<_> = b.nerve.nodes.iter().enumerate().map(|(i, n)| serde_json::json!({
            "id": i, "element": n.element, "size": n.members.len(), "lens": b.node_lens[i],
            "rows": n.members.iter().map(|&r| r as usize + 1).collect::<Vec<_>>(),
        })).collect();
        let edges: Vec<_> = b.nerve.edges.iter().map(|e| serde_json::json!({"source": e.a, "target": e.b, "shared": e.shared})).collect();
        let v1 = serde_json::json!({"format": "nervure-graph", "version": 1, "settings": b.settings, "summary": b.summary, "nodes": nodes, "edges": edges}).to_string();
        let f = GraphFile::from_json(&v1, "old.json").unwrap();
        assert_eq!(f.version, 1);
        let back = f.to_build();
        assert_eq!(back.nerve, b.nerve);
        assert_eq!(back.layout, b.layout, "the layout is made again from the same seed");
        assert!(f.statistics.is_empty());
    }

    #[test]
    fn bad_and_foreign_files_get_a_clear_message() {
        let (t, b) = small();
        let good = GraphFile::of_build(&b, &t, true).to_json();
        let err = |text: &str| GraphFile::from_json(text, "g.json").unwrap_err().to_string();
        assert!(err("x,y\n1,2\n").contains("not valid JSON"), "{}", err("x,y\n1,2\n"));
        assert!(err("[1, 2]").contains("not an object"));
        assert!(err(r#"{"format": "other-tool", "nodes": []}"#).contains("\"other-tool\""));
        assert!(err(&good.replace("\"version\":2", "\"version\":9")).contains("newer Nervure"));
        let settings = b.settings.to_json();
        assert!(err(&settings).contains("settings document"), "{}", err(&settings));
        let deep = "[".repeat(100_000) + &"]".repeat(100_000);
        assert!(err(&deep).contains("nests 100000 levels"), "{}", err(&deep));
        let mut v: serde_json::Value = serde_json::from_str(&good).unwrap();
        v["edges"][0]["target"] = serde_json::json!(10_000);
        assert!(err(&v.to_string()).contains("does not join"), "{}", err(&v.to_string()));
        let mut v: serde_json::Value = serde_json::from_str(&good).unwrap();
        v["summary"]["nodes"] = serde_json::json!(1);
        assert!(err(&v.to_string()).contains("summary says"), "{}", err(&v.to_string()));
        let mut v: serde_json::Value = serde_json::from_str(&good).unwrap();
        v["settings"]["cover"]["overlap"] = serde_json::json!(3);
        assert!(err(&v.to_string()).contains("cover.overlap"), "{}", err(&v.to_string()));
        let mut v: serde_json::Value = serde_json::from_str(&good).unwrap();
        v["statistics"][0]["mean"].as_array_mut().unwrap().pop();
        assert!(err(&v.to_string()).contains("column 'x'"), "{}", err(&v.to_string()));
    }

    #[test]
    fn depth_skips_strings() {
        assert_eq!(json_depth(r#"{"a": "[[[[", "b": [1, {"c": "\"]"}]}"#), 3);
        assert_eq!(json_depth("1"), 0);
    }
}
