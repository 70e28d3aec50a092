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
//! same settings, against the threshold c_A + c_B, where c_A and c_B are each table's
//! bootstrap threshold at level alpha / 2. If both tables came from the same
//! distribution, with one underlying diagram D, each lies within its threshold of D with
//! probability at least 1 - alpha/2 (by the bootstrap above), so by the union bound and
//! the triangle inequality their distance is at most c_A + c_B with probability at least
//! 1 - alpha. A distance above it says the two shapes differ at level alpha; the rule is
//! conservative (it rarely says so by chance). It is meaningful only when the lens is in
//! the same units for both tables (a column lens, say); a lens fitted to each table (a
//! principal component) may differ in scale or sign between them.
//!
//! Not here: the diagrams themselves ([`super::persistence`]).

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
        draws.iter_mut().for_each(|d| *d = rng.below(n) as u32);
        draws.sort_unstable();
        distances.push(bottleneck(&diagram_of(r, &draws, settings), &diagram));
    }
    progress(1.0);
    let threshold = upper_quantile(&distances, alpha);
    let significant = diagram.features.iter().map(|f| f.to_diagonal() > threshold).collect();
    Ok(Confidence { diagram, distances, alpha, threshold, significant })
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
    check(b, alpha)?;
    let ca = bootstrap(table_a, settings, b, alpha / 2.0, seed, &mut |x| progress(x / 2.0))?;
    let cb = bootstrap(table_b, settings, b, alpha / 2.0, seed ^ 0x5DEE_CE66_D1CE_F00D, &mut |x| progress(0.5 + x / 2.0))?;
    let distance = bottleneck(&ca.diagram, &cb.diagram);
    let threshold = ca.threshold + cb.threshold;
    Ok(Comparison { distance, threshold, alpha, differ: distance > threshold, a: ca, b: cb })
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
