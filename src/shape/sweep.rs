//! A parameter sweep: the graph's components, loops and (optionally) significant features
//! over a grid of interval counts × overlaps, and optionally DBSCAN scales, so a user can
//! see which features survive a range of settings rather than trust one graph
//! (the brute-force view that Carrière, Michel, Oudot 2018, §1, set their rule against;
//! both are offered).
//!
//! Graphs come from the caller's [`Workbench`], which re-uses the points and lens across
//! cells (only the cover and clustering change). Significance, when asked for (`draws` >
//! 0), is the bootstrap of [`super::confidence`] with that many draws per cell, on points
//! and lens computed once for the whole sweep; a small count (10 to 20) makes it a cheap,
//! rough guide, not a test.
//!
//! [`Sweeping`] is the same sweep one cell at a time, for a caller that must do other
//! work between cells (the page's worker, which has to see a cancel message). It builds
//! each cell's graph from points and lens computed once ([`Resampler`] on all rows, its
//! intervals re-made for each cell), so
//! it leaves any [`Workbench`] alone; its cells equal [`sweep`]'s.
//!
//! Not here: choosing one cell ([`super::suggest`] proposes settings by rule).

use serde::Serialize;

use std::sync::Arc;

use super::confidence::{bootstrap_with, Bootstrap};
use super::persistence::Kind;
use crate::engine::{Resampler, Workbench};
use crate::error::{Error, Result};
use crate::settings::{Clustering, Settings};
use crate::table::Table;

/// The values to try; every combination is one cell.
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
pub struct Grid {
    pub intervals: Vec<usize>,
    pub overlaps: Vec<f64>,
    /// DBSCAN eps values to try; empty = keep the base settings' clustering.
    #[serde(default)]
    pub eps: Vec<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Cell {
    pub intervals: usize,
    pub overlap: f64,
    pub eps: Option<f64>,
    pub nodes: usize,
    pub components: usize,
    pub loops: usize,
    /// Features above the bootstrap threshold, when significance was asked for.
    pub significant: Option<usize>,
    pub significant_loops: Option<usize>,
    pub threshold: Option<f64>,
}

/// Runs every cell of `grid` on the workbench's table, starting from `base`. The
/// workbench keeps the last cell's graph. `progress` gets the fraction done and returns
/// `false` to cancel.
pub fn sweep(bench: &mut Workbench, base: &Settings, grid: &Grid, draws: usize, alpha: f64, seed: u64, progress: &mut dyn FnMut(f64) -> bool) -> Result<Vec<Cell>> {
    check_grid(base, grid)?;
    let mut resampler = if draws > 0 {
        let table = bench.table().ok_or_else(|| Error::Input("no table is loaded yet: open a CSV file first".into()))?;
        Some(Resampler::new(table, base)?)
    } else {
        None
    };
    let eps: Vec<Option<f64>> = if grid.eps.is_empty() { vec![None] } else { grid.eps.iter().map(|&e| Some(e)).collect() };
    let total = grid.intervals.len() * grid.overlaps.len() * eps.len();
    let mut cells = Vec::with_capacity(total);
    for &e in &eps {
        for &k in &grid.intervals {
            for &g in &grid.overlaps {
                let done = cells.len() as f64 / total as f64;
                if !progress(done) {
                    return Err(Error::Cancelled);
                }
                let s = cell_settings(base, k, g, e);
                let summary = bench.run(&s, &mut |_: &str, _: f64| {})?;
                let (mut significant, mut significant_loops, mut threshold) = (None, None, None);
                if let Some(r) = &mut resampler {
                    r.set_cover(&s);
                    let step = 1.0 / total as f64;
                    let c = bootstrap_with(r, &s, draws, alpha, seed, &mut |x| progress(done + x * step))?;
                    significant = Some(c.total_significant());
                    significant_loops = Some(c.significant_count(Kind::Loop));
                    threshold = Some(c.threshold);
                }
                cells.push(Cell {
                    intervals: k,
                    overlap: g,
                    eps: e,
                    nodes: summary.nodes,
                    components: summary.components,
                    loops: summary.loops,
                    significant,
                    significant_loops,
                    threshold,
                });
            }
        }
    }
    progress(1.0);
    Ok(cells)
}

fn check_grid(base: &Settings, grid: &Grid) -> Result<()> {
    if grid.intervals.is_empty() || grid.overlaps.is_empty() {
        return Err(Error::settings("sweep grid", "give at least one interval count and one overlap"));
    }
    if !grid.eps.is_empty() && !matches!(base.clustering, Clustering::Dbscan { .. }) {
        return Err(Error::settings("sweep grid.eps", "eps values apply to DBSCAN; set the clustering to DBSCAN first"));
    }
    Ok(())
}

/// The settings of one cell: `base` with its cover (and DBSCAN eps) replaced.
pub fn cell_settings(base: &Settings, intervals: usize, overlap: f64, eps: Option<f64>) -> Settings {
    let mut s = base.clone();
    s.cover.intervals = intervals;
    s.cover.overlap = overlap;
    if let (Some(eps), Clustering::Dbscan { min_points, .. }) = (eps, &base.clustering) {
        s.clustering = Clustering::Dbscan { eps, min_points: *min_points };
    }
    s
}

/// [`sweep`] one cell at a time, in the same cell order; see the module comment.
#[derive(Debug, Clone)]
pub struct Sweeping {
    r: Arc<Resampler>,
    base: Settings,
    /// (intervals, overlap, eps) of every cell, in order.
    todo: Vec<(usize, f64, Option<f64>)>,
    draws: usize,
    alpha: f64,
    seed: u64,
    cells: Vec<Cell>,
}

impl Sweeping {
    pub fn new(table: &Table, base: &Settings, grid: &Grid, draws: usize, alpha: f64, seed: u64) -> Result<Sweeping> {
        check_grid(base, grid)?;
        cell_settings(base, grid.intervals[0], grid.overlaps[0], grid.eps.first().copied()).validate()?;
        let r = Arc::new(Resampler::new(table, base)?);
        let eps: Vec<Option<f64>> = if grid.eps.is_empty() { vec![None] } else { grid.eps.iter().map(|&e| Some(e)).collect() };
        let mut todo = Vec::new();
        for &e in &eps {
            for &k in &grid.intervals {
                for &g in &grid.overlaps {
                    todo.push((k, g, e));
                }
            }
        }
        Ok(Sweeping { r, base: base.clone(), todo, draws, alpha, seed, cells: Vec::new() })
    }

    /// Runs up to `k` more cells; returns how many are done in all.
    pub fn step(&mut self, k: usize) -> Result<usize> {
        for _ in 0..k {
            let Some(&(intervals, overlap, eps)) = self.todo.get(self.cells.len()) else { break };
            let s = cell_settings(&self.base, intervals, overlap, eps);
            s.validate()?;
            // The resampler is shared only with this cell's bootstrap, gone by now: no copy.
            Arc::make_mut(&mut self.r).set_cover(&s);
            let all: Vec<u32> = (0..self.r.len() as u32).collect();
            let (nerve, _) = self.r.graph(&all, &s);
            let (components, loops) = nerve.counts();
            let (mut significant, mut significant_loops, mut threshold) = (None, None, None);
            if self.draws > 0 {
                let c = Bootstrap::with_resampler(self.r.clone(), &s, self.draws, self.alpha, self.seed)?.finish();
                significant = Some(c.total_significant());
                significant_loops = Some(c.significant_count(Kind::Loop));
                threshold = Some(c.threshold);
            }
            self.cells.push(Cell { intervals, overlap, eps, nodes: nerve.nodes.len(), components, loops, significant, significant_loops, threshold });
        }
        Ok(self.cells.len())
    }

    pub fn done(&self) -> usize {
        self.cells.len()
    }

    pub fn total(&self) -> usize {
        self.todo.len()
    }

    /// The cells done so far, in order.
    pub fn cells(&self) -> &[Cell] {
        &self.cells
    }

    /// Runs the cells still to do and returns them all.
    pub fn finish(mut self) -> Result<Vec<Cell>> {
        self.step(self.todo.len())?;
        Ok(self.cells)
    }
}
