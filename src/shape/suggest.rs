//! Settings suggested from the data by the parameter-selection rule of Carrière, Michel,
//! Oudot, "Statistical analysis and parameter selection for Mapper", JMLR 19 (2018), the
//! section on parameter selection (their §4 in the versions we recall).
//!
//! **Where the formulas come from.** The stored copies of the paper that could be reached
//! while this was written (the arXiv 1706.00204 HTML, the HAL and JMLR PDFs as indexed
//! pages) gave only the abstract and the introduction, not the section itself, so the
//! formulas below are written from memory and their equation numbers could not be
//! checked; they are marked "(from memory)". They agree with the paper's abstract: the
//! Mapper is an estimator of the Reeb graph, and the rule tunes it so that it converges.
//!
//! In the paper's notation, X_n = {X_1, ..., X_n} are the points and f the filter:
//!
//! 1. the scale (the Rips parameter δ) is estimated by subsampling (from memory):
//!    δ_n = (1/N) Σ_{k=1..N} d_H(X_n, X_n^{s(n),k}), with s(n) = n / (log n)^(1+β),
//!    β > 0, where X_n^{s(n),k} is the k-th of N subsamples of s(n) points drawn without
//!    replacement and d_H(X_n, S) = max_{x ∈ X_n} min_{y ∈ S} ‖x − y‖ (S ⊂ X_n);
//! 2. the clusters of a cover element are the connected components of the δ_n-neighbourhood
//!    graph (the 1-skeleton of the Rips complex) restricted to it;
//! 3. the gain (our overlap) g is taken in (1/3, 1/2);
//! 4. the resolution (interval length) is (from memory)
//!    r_n = max{ |f(X_i) − f(X_j)| : ‖X_i − X_j‖ ≤ δ_n } / g,
//!    so that two points within δ_n of each other always share an interval.
//!
//! **Ours, and where it differs.**
//! - β = 0.5 and N = 10 (the paper asks β > 0 and leaves N to the user); distances are
//!   those of the scaled points the graph uses; log is the natural logarithm.
//! - Step 2 is DBSCAN with eps = δ and minimum points 1: every point is then a core
//!   point, and DBSCAN's clusters are exactly the components of the δ-neighbourhood graph.
//! - g = 0.4, inside (1/3, 1/2).
//! - Our cover takes an interval count, not a length: the count is the smallest n whose
//!   length (hi − lo) / (n − (n − 1) g) is at most r_n ([`interval_count`]).
//! - **Wide data.** The rule estimates how far the rows are from the shape they sample; in
//!   d dimensions a subsample of s(n) rows covers the rows only at a distance that shrinks
//!   like (log n / n)^(1/d), so with a few thousand rows in 10 or more dimensions δ_n is a
//!   large part of the data's spread, neighbours at δ_n span most of the filter's range,
//!   and the rule's count is 1 or 2 (1 on the demo's 12 columns). That is the rule's
//!   honest answer for such a table: its guarantee needs many more rows for the
//!   dimension. A count below [`MIN_USABLE`] is therefore not used: the suggestion then
//!   takes the automatic rule's cover and clustering on the same points and filter
//!   ([`crate::auto`]: eps from the 15th-neighbour distances, intervals from the filter's
//!   movement at that scale and the row count), says so in `warnings`, and keeps the
//!   paper's numbers in `paperIntervals`, `delta` and `resolution` so they can be read.
//!
//! The paper's behaviour on a shape it treats (points on a curve, with a filter whose
//! Reeb graph is known: a circle under its height has a loop) is checked in
//! `tests/shape.rs`: the suggested graph has the Reeb graph's one component and one loop,
//! and δ_n shrinks as n grows.
//!
//! Cost: N nearest-neighbour passes over the rows and one range search per row at
//! radius δ. Not here: checking the suggested graph ([`super::confidence`], [`super::sweep`]).

use serde::Serialize;

use crate::cluster::kdtree::KdTree;
use crate::engine::Resampler;
use crate::error::{Error, Result};
use crate::rng::SplitMix64;
use crate::settings::{Clustering, Settings};
use crate::table::Table;

pub const BETA: f64 = 0.5;
pub const SUBSAMPLES: usize = 10;
pub const GAIN: f64 = 0.4;
/// Fewest intervals of the paper's rule that the suggestion uses as they are (see the
/// module comment on wide data).
pub const MIN_USABLE: usize = 3;

#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Suggestion {
    /// The input settings with cover and clustering replaced.
    pub settings: Settings,
    /// Estimated clustering scale δ (mean Hausdorff distance to the subsamples).
    pub delta: f64,
    /// The N Hausdorff distances whose mean is δ.
    pub hausdorff: Vec<f64>,
    pub subsample_size: usize,
    /// Largest lens difference over pairs of points within δ.
    pub largest_lens_jump: f64,
    pub gain: f64,
    /// Interval length r = largest_lens_jump / gain.
    pub resolution: f64,
    /// The interval count of the paper's rule; the suggested cover has it unless it is
    /// below [`MIN_USABLE`] (then `fallback` is true).
    pub paper_intervals: usize,
    /// True when the paper's count was too small to use and the automatic rule's cover
    /// and clustering were taken instead.
    pub fallback: bool,
    /// What changed, one line per setting, "field: old -> new".
    pub changes: Vec<String>,
    /// Reasons to doubt the suggestion, in words for the user.
    pub warnings: Vec<String>,
}

/// Suggested settings for `table`, starting from `settings` (its columns, scaling and
/// lens are kept); see the module comment.
pub fn suggest(table: &Table, settings: &Settings, seed: u64) -> Result<Suggestion> {
    let r = Resampler::new(table, settings)?;
    let pts = r.points();
    let n = pts.rows.len();
    if n < 4 {
        return Err(Error::Data(format!("{n} rows take part; the parameter rule needs at least 4 (check the chosen columns' missing values)")));
    }
    let d = pts.data.ncols();
    let flat = pts.data.as_slice().expect("points are contiguous");
    let size = ((n as f64 / (n as f64).ln().powf(1.0 + BETA)).ceil() as usize).clamp(1, n);
    let mut rng = SplitMix64::new(seed);
    let mut near = Vec::with_capacity(1);
    let mut sub = Vec::with_capacity(size * d);
    let hausdorff: Vec<f64> = (0..SUBSAMPLES)
        .map(|_| {
            sub.clear();
            for i in rng.sample_indices(n, size) {
                sub.extend_from_slice(&flat[i * d..(i + 1) * d]);
            }
            let tree = KdTree::new(&sub, d);
            (0..n)
                .map(|i| {
                    tree.nearest(&flat[i * d..(i + 1) * d], 1, &mut near);
                    near[0].dist
                })
                .fold(0.0, f64::max)
        })
        .collect();
    let delta = hausdorff.iter().sum::<f64>() / hausdorff.len() as f64;
    if !(delta > 0.0) {
        return Err(Error::Data("the rows are (nearly) all equal in the chosen columns, so no clustering scale can be estimated".into()));
    }
    let lens = r.lens();
    let mut tree = KdTree::new(flat, d);
    let ranges = tree.order_leaves_by(lens);
    let jump = (0..n).map(|i| tree.largest_gap_within(&flat[i * d..(i + 1) * d], delta, lens[i], &ranges)).fold(0.0, f64::max);
    let (lo, hi) = lens.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| (a.min(v), b.max(v)));
    let resolution = jump / GAIN;
    let intervals = interval_count(hi - lo, resolution, GAIN);
    let mut s = settings.clone();
    let fallback = intervals < MIN_USABLE;
    if fallback {
        let scale = crate::auto::scale_of(flat.to_vec(), d, lens, crate::auto::SCALE_NEIGHBOURS, seed);
        let (least, most) = crate::auto::interval_bounds(n);
        s.cover.intervals = interval_count(hi - lo, scale.jump / crate::auto::OVERLAP, crate::auto::OVERLAP).clamp(least, most);
        s.cover.overlap = crate::auto::OVERLAP;
        s.clustering = Clustering::Dbscan { eps: scale.eps, min_points: crate::auto::MIN_POINTS };
    } else {
        s.cover.intervals = intervals;
        s.cover.overlap = GAIN;
        s.clustering = Clustering::Dbscan { eps: delta, min_points: 1 };
    }
    let mut changes = Vec::new();
    if s.cover.intervals != settings.cover.intervals {
        changes.push(format!("cover.intervals: {} -> {}", settings.cover.intervals, s.cover.intervals));
    }
    if s.cover.overlap != settings.cover.overlap {
        changes.push(format!("cover.overlap: {} -> {}", settings.cover.overlap, s.cover.overlap));
    }
    if s.clustering != settings.clustering {
        match &s.clustering {
            Clustering::Dbscan { eps, min_points: 1 } => {
                changes.push(format!("clustering: {:?} -> DBSCAN eps {eps:.4} minPoints 1 (single linkage at scale δ)", settings.clustering))
            }
            c => changes.push(format!("clustering: {:?} -> {c:?} (the automatic rule's scale)", settings.clustering)),
        }
    }
    let mut warnings = Vec::new();
    if fallback {
        warnings.push(format!(
            "the paper's rule gives {intervals} interval(s): at its estimated scale δ = {delta:.3} neighbouring rows already span most of the filter's range, \
             because {n} rows are few for their {d} dimensions (a subsample then covers them only coarsely, and the rule's guarantee needs many more rows). \
             One or two intervals would draw one blob, so the suggestion takes the automatic rule's cover ({} intervals) and clustering instead; \
             fewer columns, or a sweep of settings, are other ways forward",
            s.cover.intervals
        ));
    }
    Ok(Suggestion {
        settings: s,
        delta,
        hausdorff,
        subsample_size: size,
        largest_lens_jump: jump,
        gain: GAIN,
        resolution,
        paper_intervals: intervals,
        fallback,
        changes,
        warnings,
    })
}

/// Smallest interval count n ≥ 1 whose interval length span / (n - (n - 1) g) is at
/// most `length` (at most 10000, the settings' limit).
pub fn interval_count(span: f64, length: f64, g: f64) -> usize {
    if !(span > 0.0) || !(length > 0.0) {
        return 1;
    }
    // span / (n (1 - g) + g) <= length  <=>  n >= (span / length - g) / (1 - g).
    let n = ((span / length - g) / (1.0 - g) - 1e-9).ceil();
    (n.max(1.0) as usize).min(10_000)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn interval_count_by_hand() {
        // Span 10, g = 0.4: n = 4 gives length 10 / (4 - 1.2) = 3.571; n = 3 gives 10 / 2.2 = 4.545.
        assert_eq!(interval_count(10.0, 4.0, 0.4), 4);
        assert_eq!(interval_count(10.0, 4.6, 0.4), 3);
        assert_eq!(interval_count(10.0, 100.0, 0.4), 1);
        assert_eq!(interval_count(0.0, 1.0, 0.4), 1);
        // Exactly representable boundary: span 10, length 10 / 2.2 -> n = 3, not 4.
        assert_eq!(interval_count(10.0, 10.0 / 2.2, 0.4), 3);
    }
}
