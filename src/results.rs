//! The results of the page's computations beyond the graph, as plain serialisable
//! documents with one shape for every way in: what the command-line runner writes as
//! JSON, what the Python package reads, and what the page's worker hands over for the
//! resampling test and the comparison. Each long computation runs through the same
//! step-wise object the page's worker drives ([`Bootstrap`], [`Sweeping`], [`Comparing`]),
//! one step at a time with a progress call between steps that can stop it, so the runner,
//! the package and the page compute the same values in the same order.
//!
//! What it is not: the statistics themselves ([`crate::shape`], [`crate::explain`]).

use serde::Serialize;

use crate::engine::Build;
use crate::error::{Error, Result};
use crate::settings::Settings;
use crate::shape::{self, Bootstrap, Comparing, Grid, Sweeping};
use crate::table::Table;

/// One point of a diagram with the nodes that carry it ([`shape::supports`]).
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct FeatureOut {
    pub kind: shape::Kind,
    pub birth: f64,
    pub death: f64,
    pub persistence: f64,
    pub birth_node: u32,
    pub death_node: u32,
    /// Whether the feature holds up against the resamples (resampling results only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub significant: Option<bool>,
    /// The nodes that carry it, increasing (the graph's diagram only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub nodes: Option<Vec<u32>>,
}

impl FeatureOut {
    fn new(f: &shape::Feature) -> FeatureOut {
        FeatureOut {
            kind: f.kind,
            birth: f.birth,
            death: f.death,
            persistence: f.persistence(),
            birth_node: f.birth_node,
            death_node: f.death_node,
            significant: None,
            nodes: None,
        }
    }
}

/// The extended persistence diagram of a graph, node values its nodes' mean filter
/// values: `{features: [{kind, birth, death, persistence, birthNode, deathNode, nodes}]}`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DiagramOut {
    pub features: Vec<FeatureOut>,
}

/// The diagram of `b` with each feature's nodes.
pub fn diagram(b: &Build) -> DiagramOut {
    let edges: Vec<(u32, u32)> = b.nerve.edges.iter().map(|e| (e.a, e.b)).collect();
    let d = shape::extended_persistence(&b.node_lens, &edges);
    let supports = shape::supports(&b.node_lens, &edges, &d);
    DiagramOut { features: d.features.iter().zip(supports).map(|(f, s)| FeatureOut { nodes: Some(s), ..FeatureOut::new(f) }).collect() }
}

/// A resampling test: `{alpha, draws, threshold, distances, features: [{kind, birth,
/// death, birthNode, deathNode, persistence, significant}]}`.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct ConfidenceOut {
    pub alpha: f64,
    pub draws: usize,
    pub threshold: f64,
    pub distances: Vec<f64>,
    pub features: Vec<FeatureOut>,
}

impl ConfidenceOut {
    pub fn new(c: &shape::Confidence) -> ConfidenceOut {
        ConfidenceOut {
            alpha: c.alpha,
            draws: c.distances.len(),
            threshold: c.threshold,
            distances: c.distances.clone(),
            features: c.diagram.features.iter().zip(&c.significant).map(|(f, &s)| FeatureOut { significant: Some(s), ..FeatureOut::new(f) }).collect(),
        }
    }
}

/// Two tables' shapes compared: `{distance, threshold, alpha, differ, a, b}`, `a` and `b`
/// as [`ConfidenceOut`] (each at level alpha / 2).
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct ComparisonOut {
    pub distance: f64,
    pub threshold: f64,
    pub alpha: f64,
    pub differ: bool,
    pub a: ConfidenceOut,
    pub b: ConfidenceOut,
}

impl ComparisonOut {
    pub fn new(c: &shape::Comparison) -> ComparisonOut {
        ComparisonOut { distance: c.distance, threshold: c.threshold, alpha: c.alpha, differ: c.differ, a: ConfidenceOut::new(&c.a), b: ConfidenceOut::new(&c.b) }
    }
}

/// A grid of settings: the grid asked for and one cell per combination, in the page's
/// order (eps, then interval count, then overlap).
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct GridOut {
    pub grid: Grid,
    /// Resamples per cell (0: no significance).
    pub draws: usize,
    pub alpha: f64,
    pub seed: u64,
    pub cells: Vec<shape::Cell>,
}

/// Called between steps with (steps done, steps in all); returning `false` stops the work
/// with [`Error::Cancelled`].
pub type Progress<'a> = dyn FnMut(usize, usize) -> bool + 'a;

/// Runs `step(1)` until `total` steps are done, asking `progress` before each.
fn drive(total: usize, mut step: impl FnMut(usize) -> Result<usize>, progress: &mut Progress) -> Result<()> {
    let mut done = 0;
    while done < total {
        if !progress(done, total) {
            return Err(Error::Cancelled);
        }
        done = step(1)?;
    }
    progress(total, total);
    Ok(())
}

/// The resampling test of the graph of `table` under `s` (see [`shape::confidence`]).
pub fn resample(table: &Table, s: &Settings, draws: usize, alpha: f64, seed: u64, progress: &mut Progress) -> Result<ConfidenceOut> {
    let mut b = Bootstrap::new(table, s, draws, alpha, seed)?;
    drive(b.total(), |k| Ok(b.step(k)), progress)?;
    Ok(ConfidenceOut::new(&b.finish()))
}

/// Every cell of `grid` from the settings `s` (see [`shape::sweep`]).
pub fn grid(table: &Table, s: &Settings, grid: &Grid, draws: usize, alpha: f64, seed: u64, progress: &mut Progress) -> Result<GridOut> {
    let mut sw = Sweeping::new(table, s, grid, draws, alpha, seed)?;
    drive(sw.total(), |k| sw.step(k), progress)?;
    Ok(GridOut { grid: grid.clone(), draws, alpha, seed, cells: sw.finish()? })
}

/// The two tables' shapes under the same settings (see [`shape::confidence`]).
pub fn compare(a: &Table, b: &Table, s: &Settings, draws: usize, alpha: f64, seed: u64, progress: &mut Progress) -> Result<ComparisonOut> {
    let mut c = Comparing::new(a, b, s, draws, alpha, seed)?;
    drive(c.total(), |k| Ok(c.step(k)), progress)?;
    Ok(ComparisonOut::new(&c.finish()))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::settings::*;
    use crate::table::Column;

    fn circle() -> (Table, Settings) {
        let mut r = crate::rng::SplitMix64::new(5);
        let n = 300;
        let (mut x, mut y) = (Vec::new(), Vec::new());
        for i in 0..n {
            let t = i as f64 / n as f64 * std::f64::consts::TAU;
            x.push(t.cos() + 0.03 * r.normal());
            y.push(t.sin() + 0.03 * r.normal());
        }
        let t = Table::from_columns("circle", vec![Column::number("x", x), Column::number("y", y)]).unwrap();
        let s = Settings::plain(vec!["x".into(), "y".into()], Lens::Column { column: "x".into() }, CoverSettings::uniform(8, 0.4), Clustering::Dbscan { eps: 0.3, min_points: 2 });
        (t, s)
    }

    /// Driven step by step, each computation gives the one-shot result of `crate::shape`.
    #[test]
    fn step_wise_equals_one_shot() {
        let (t, s) = circle();
        let mut seen = Vec::new();
        let c = resample(&t, &s, 12, 0.1, 3, &mut |d, n| {
            seen.push((d, n));
            true
        })
        .unwrap();
        assert_eq!(seen.first(), Some(&(0, 12)));
        assert_eq!(seen.last(), Some(&(12, 12)));
        let one = shape::bootstrap(&t, &s, 12, 0.1, 3, &mut |_| true).unwrap();
        assert_eq!(c, ConfidenceOut::new(&one));
        assert_eq!(c.features.iter().filter(|f| f.kind == shape::Kind::Loop).count(), 1, "a circle has one loop");

        let g = Grid { intervals: vec![4, 8], overlaps: vec![0.2, 0.4], eps: vec![] };
        let out = grid(&t, &s, &g, 0, 0.05, 1, &mut |_, _| true).unwrap();
        let mut bench = crate::Workbench::new();
        bench.set_table(t.clone());
        assert_eq!(out.cells, shape::sweep(&mut bench, &s, &g, 0, 0.05, 1, &mut |_| true).unwrap());

        let cmp = compare(&t, &t, &s, 5, 0.1, 2, &mut |_, _| true).unwrap();
        assert_eq!(cmp, ComparisonOut::new(&shape::compare(&t, &t, &s, 5, 0.1, 2, &mut |_| true).unwrap()));
        assert_eq!(cmp.distance, 0.0);
    }

    #[test]
    fn a_progress_call_can_stop_the_work() {
        let (t, s) = circle();
        let mut calls = 0;
        let e = resample(&t, &s, 50, 0.1, 3, &mut |_, _| {
            calls += 1;
            calls < 4
        })
        .unwrap_err();
        assert_eq!(e, Error::Cancelled);
        assert_eq!(calls, 4);
    }

    #[test]
    fn the_diagram_names_each_features_nodes() {
        let (t, s) = circle();
        let b = crate::engine::build(&t, &s).unwrap();
        let d = diagram(&b);
        let lp = d.features.iter().find(|f| f.kind == shape::Kind::Loop).expect("one loop");
        assert!(lp.nodes.as_ref().unwrap().len() >= 3);
        assert_eq!(serde_json::to_value(&d).unwrap()["features"][0]["significant"], serde_json::Value::Null);
    }
}
