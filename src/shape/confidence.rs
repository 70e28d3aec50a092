//! Bootstrap confidence for the features of a Mapper graph, and the comparison of two
//! data sets' graphs, following Carrière, Michel, Oudot 2018 (§4, confidence regions).
//!
//! [`bootstrap`]: draw the table's n rows B times with replacement (seeded SplitMix64),
//! build the graph of each draw with the same settings (the lens values and cover
//! intervals of the original, see [`crate::engine::Resampler`]; repeated rows are kept as
//! separate points), and take the bottleneck distance of each draw's extended diagram to
//! the original's. The threshold c is the empirical (1 - alpha) quantile of those B
//! distances: the smallest of them with at least (1 - alpha) B of the distances at or
//! below it. The original diagram then lies within c of the true one with probability
//! about 1 - alpha, so a feature is significant when its L-infinity distance to the
//! diagonal, |death - birth| / 2, exceeds c: no diagram within c of the original can
//! lack it.
//!
//! [`compare`]: the bottleneck distance between the diagrams of two tables built with the
//! same settings (or two subsets of one table: [`compare_pair`], settings that differ only
//! in the rows they keep), against the threshold c_A + c_B, where c_A and c_B are each table's
//! bootstrap threshold at level alpha / 2. If both tables came from the same
//! distribution, with one underlying diagram D, each lies within its threshold of D with
//! probability at least 1 - alpha/2 (by the bootstrap above), so by the union bound and
//! the triangle inequality their distance is at most c_A + c_B with probability at least
//! 1 - alpha. A distance above it says the two shapes differ at level alpha; the rule is
//! conservative (it rarely says so by chance). It is meaningful only when the lens is in
//! the same units for both tables (a column lens, say); a lens fitted to each table (a
//! principal component) may differ in scale or sign between them.
//!
//! [`Bootstrap`] and [`Comparing`] are the same computations one draw at a time, for a
//! caller that must do other work between draws (the page's worker, which has to see a
//! cancel message); given the same arguments they give exactly the one-shot results.
//!
//! Not here: the diagrams themselves ([`super::persistence`]).

use std::sync::Arc;

use serde::Serialize;

use super::bottleneck::bottleneck;
use super::persistence::{extended_persistence, Diagram, Kind};
use crate::engine::Resampler;
use crate::error::{Error, Result};
use crate::rng::SplitMix64;
use crate::settings::Settings;
use crate::table::Table;

#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Confidence {
    /// The diagram of the graph built on all rows.
    pub diagram: Diagram,
    /// Bottleneck distance of each bootstrap draw's diagram to `diagram`, in draw order.
    pub distances: Vec<f64>,
    pub alpha: f64,
    /// The (1 - alpha) quantile of `distances`.
    pub threshold: f64,
    /// For each feature of `diagram`: is its distance to the diagonal above `threshold`?
    pub significant: Vec<bool>,
}

impl Confidence {
    pub fn significant_count(&self, kind: Kind) -> usize {
        self.diagram.features.iter().zip(&self.significant).filter(|(f, &s)| s && f.kind == kind).count()
    }

    pub fn total_significant(&self) -> usize {
        self.significant.iter().filter(|&&s| s).count()
    }
}

#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Comparison {
    /// Bottleneck distance between the two tables' diagrams.
    pub distance: f64,
    /// c_A + c_B, each at level alpha / 2.
    pub threshold: f64,
    pub alpha: f64,
    /// `distance > threshold`: the shapes differ at level alpha.
    pub differ: bool,
    pub a: Confidence,
    pub b: Confidence,
}

fn check(b: usize, alpha: f64) -> Result<()> {
    if b == 0 {
        return Err(Error::settings("bootstrap draws", "need at least 1 draw (20 or more for a usable threshold)"));
    }
    if !(alpha > 0.0 && alpha < 1.0) {
        return Err(Error::settings("alpha", format!("{alpha} is outside (0, 1); 0.05 is usual")));
    }
    Ok(())
}

/// Bootstrap confidence of the graph of `table` under `settings`; see the module comment.
/// `progress` gets the fraction done and returns `false` to cancel.
pub fn bootstrap(table: &Table, settings: &Settings, b: usize, alpha: f64, seed: u64, progress: &mut dyn FnMut(f64) -> bool) -> Result<Confidence> {
    check(b, alpha)?;
    let r = Resampler::new(table, settings)?;
    bootstrap_with(&r, settings, b, alpha, seed, progress)
}

/// [`bootstrap`] on points and lens already computed (a sweep re-uses them across cells).
pub fn bootstrap_with(r: &Resampler, settings: &Settings, b: usize, alpha: f64, seed: u64, progress: &mut dyn FnMut(f64) -> bool) -> Result<Confidence> {
    check(b, alpha)?;
    settings.validate()?;
    let n = r.len();
    if n == 0 {
        return Err(Error::Data("no row has a value in every chosen column, so there is nothing to resample".into()));
    }
    let diagram = diagram_of(r, &(0..n as u32).collect::<Vec<_>>(), settings);
    let mut rng = SplitMix64::new(seed);
    let mut distances = Vec::with_capacity(b);
    let mut draws = vec![0u32; n];
    for i in 0..b {
        if !progress(i as f64 / b as f64) {
            return Err(Error::Cancelled);
        }
        distances.push(one_draw(r, settings, &diagram, &mut rng, &mut draws));
    }
    progress(1.0);
    Ok(conclude(diagram, distances, alpha))
}

/// One bootstrap draw: n rows with replacement, the distance of their diagram to `diagram`.
fn one_draw(r: &Resampler, settings: &Settings, diagram: &Diagram, rng: &mut SplitMix64, draws: &mut [u32]) -> f64 {
    let n = r.len();
    draws.iter_mut().for_each(|d| *d = rng.below(n) as u32);
    draws.sort_unstable();
    bottleneck(&diagram_of(r, draws, settings), diagram)
}

fn conclude(diagram: Diagram, distances: Vec<f64>, alpha: f64) -> Confidence {
    let threshold = upper_quantile(&distances, alpha);
    let significant = diagram.features.iter().map(|f| f.to_diagonal() > threshold).collect();
    Confidence { diagram, distances, alpha, threshold, significant }
}

/// [`bootstrap`] one draw at a time: [`Bootstrap::step`] runs a few draws and returns;
/// [`Bootstrap::finish`] gives the [`Confidence`], equal to [`bootstrap`]'s for the same
/// arguments. Dropping it cancels.
#[derive(Debug, Clone)]
pub struct Bootstrap {
    r: Arc<Resampler>,
    settings: Settings,
    total: usize,
    alpha: f64,
    diagram: Diagram,
    rng: SplitMix64,
    distances: Vec<f64>,
    draws: Vec<u32>,
}

impl Bootstrap {
    pub fn new(table: &Table, settings: &Settings, b: usize, alpha: f64, seed: u64) -> Result<Bootstrap> {
        check(b, alpha)?;
        Bootstrap::with_resampler(Arc::new(Resampler::new(table, settings)?), settings, b, alpha, seed)
    }

    /// On points and lens already computed (shared, not copied).
    pub fn with_resampler(r: Arc<Resampler>, settings: &Settings, b: usize, alpha: f64, seed: u64) -> Result<Bootstrap> {
        check(b, alpha)?;
        settings.validate()?;
        let n = r.len();
        if n == 0 {
            return Err(Error::Data("no row has a value in every chosen column, so there is nothing to resample".into()));
        }
        let diagram = diagram_of(&r, &(0..n as u32).collect::<Vec<_>>(), settings);
        Ok(Bootstrap { settings: settings.clone(), total: b, alpha, diagram, rng: SplitMix64::new(seed), distances: Vec::with_capacity(b), draws: vec![0; n], r })
    }

    /// Runs up to `k` more draws; returns how many are done in all.
    pub fn step(&mut self, k: usize) -> usize {
        for _ in 0..k.min(self.total - self.distances.len()) {
            let d = one_draw(&self.r, &self.settings, &self.diagram, &mut self.rng, &mut self.draws);
            self.distances.push(d);
        }
        self.distances.len()
    }

    pub fn done(&self) -> usize {
        self.distances.len()
    }

    pub fn total(&self) -> usize {
        self.total
    }

    pub fn is_finished(&self) -> bool {
        self.distances.len() == self.total
    }

    /// The diagram of the graph on all rows (known before any draw).
    pub fn diagram(&self) -> &Diagram {
        &self.diagram
    }

    /// Runs the draws still to do, then concludes.
    pub fn finish(mut self) -> Confidence {
        self.step(self.total);
        conclude(self.diagram, self.distances, self.alpha)
    }
}

/// Seed of the second table's bootstrap in a comparison, from the first's.
fn second_seed(seed: u64) -> u64 {
    seed ^ 0x5DEE_CE66_D1CE_F00D
}

/// [`compare`] one draw at a time: first table A's draws, then B's. Equal to [`compare`]'s
/// result for the same arguments.
#[derive(Debug, Clone)]
pub struct Comparing {
    a: Bootstrap,
    b: Bootstrap,
    alpha: f64,
}

impl Comparing {
    pub fn new(table_a: &Table, table_b: &Table, settings: &Settings, b: usize, alpha: f64, seed: u64) -> Result<Comparing> {
        Comparing::new_pair((table_a, settings), (table_b, settings), b, alpha, seed)
    }

    /// As [`Comparing::new`], each table with its own settings; they must differ only in
    /// which rows they keep (`keepRows`), so that two subsets of one table (one station
    /// against another, day against night) are compared with the same graph settings.
    pub fn new_pair(a: (&Table, &Settings), b: (&Table, &Settings), draws: usize, alpha: f64, seed: u64) -> Result<Comparing> {
        check(draws, alpha)?;
        same_but_rows(a.1, b.1)?;
        let ca = Bootstrap::new(a.0, a.1, draws, alpha / 2.0, seed)?;
        let cb = Bootstrap::new(b.0, b.1, draws, alpha / 2.0, second_seed(seed))?;
        Ok(Comparing { a: ca, b: cb, alpha })
    }

    /// Runs up to `k` more draws (of A, then of B); returns how many are done in all.
    pub fn step(&mut self, k: usize) -> usize {
        let before = self.a.done();
        self.a.step(k);
        let left = k - (self.a.done() - before);
        self.b.step(left);
        self.done()
    }

    pub fn done(&self) -> usize {
        self.a.done() + self.b.done()
    }

    /// Draws in all: B for each table.
    pub fn total(&self) -> usize {
        self.a.total() + self.b.total()
    }

    pub fn finish(self) -> Comparison {
        let (ca, cb) = (self.a.finish(), self.b.finish());
        conclude_comparison(ca, cb, self.alpha)
    }
}

/// Refuses two settings that differ in anything but the rows they keep: the comparison's
/// threshold is meaningful for one set of graph settings only.
fn same_but_rows(a: &Settings, b: &Settings) -> Result<()> {
    let strip = |s: &Settings| Settings { keep_rows: None, ..s.clone() };
    if strip(a) != strip(b) {
        return Err(Error::settings("keepRows", "the two tables of a comparison are built with the same settings; only the rows kept may differ"));
    }
    Ok(())
}

fn conclude_comparison(ca: Confidence, cb: Confidence, alpha: f64) -> Comparison {
    let distance = bottleneck(&ca.diagram, &cb.diagram);
    let threshold = ca.threshold + cb.threshold;
    Comparison { distance, threshold, alpha, differ: distance > threshold, a: ca, b: cb }
}

/// The diagram of the graph on the points `draws`.
pub fn diagram_of(r: &Resampler, draws: &[u32], settings: &Settings) -> Diagram {
    let (nerve, node_lens) = r.graph(draws, settings);
    let edges: Vec<(u32, u32)> = nerve.edges.iter().map(|e| (e.a, e.b)).collect();
    extended_persistence(&node_lens, &edges)
}

/// The smallest value v of `xs` with at least (1 - alpha) of the values at or below v.
pub fn upper_quantile(xs: &[f64], alpha: f64) -> f64 {
    let mut s = xs.to_vec();
    s.sort_by(f64::total_cmp);
    let k = ((1.0 - alpha) * s.len() as f64 - 1e-9).ceil().max(1.0) as usize;
    s[k.min(s.len()) - 1]
}

/// Compares the shapes of two tables under the same settings; see the module comment.
#[allow(clippy::too_many_arguments)]
pub fn compare(
    table_a: &Table,
    table_b: &Table,
    settings: &Settings,
    b: usize,
    alpha: f64,
    seed: u64,
    progress: &mut dyn FnMut(f64) -> bool,
) -> Result<Comparison> {
    compare_pair((table_a, settings), (table_b, settings), b, alpha, seed, progress)
}

/// [`compare`] with each table under its own settings, which may differ only in the rows
/// they keep: two subsets of one table (`keepRows` of each) are two tables here.
pub fn compare_pair(
    a: (&Table, &Settings),
    b: (&Table, &Settings),
    draws: usize,
    alpha: f64,
    seed: u64,
    progress: &mut dyn FnMut(f64) -> bool,
) -> Result<Comparison> {
    check(draws, alpha)?;
    same_but_rows(a.1, b.1)?;
    let ca = bootstrap(a.0, a.1, draws, alpha / 2.0, seed, &mut |x| progress(x / 2.0))?;
    let cb = bootstrap(b.0, b.1, draws, alpha / 2.0, second_seed(seed), &mut |x| progress(0.5 + x / 2.0))?;
    Ok(conclude_comparison(ca, cb, alpha))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn upper_quantile_by_hand() {
        // Ten values 1..10: the 0.95 quantile needs 9.5 values at or below: 10. The 0.9
        // quantile needs 9: value 9. The 0.5 quantile: 5.
        let xs: Vec<f64> = (1..=10).rev().map(|i| i as f64).collect();
        assert_eq!(upper_quantile(&xs, 0.05), 10.0);
        assert_eq!(upper_quantile(&xs, 0.1), 9.0);
        assert_eq!(upper_quantile(&xs, 0.5), 5.0);
        assert_eq!(upper_quantile(&[3.0], 0.05), 3.0);
    }

    #[test]
    fn refuses_bad_alpha_and_zero_draws() {
        assert!(check(0, 0.05).unwrap_err().to_string().contains("draw"));
        assert!(check(10, 1.0).unwrap_err().to_string().contains("alpha"));
    }
}
