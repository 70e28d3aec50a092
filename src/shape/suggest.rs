//! Settings suggested from the data by the parameter-selection rule of Carrière, Michel,
//! Oudot 2018 (§3, "parameter selection"; the rule as we recall it, written out here so
//! it can be checked against the paper):
//!
//! 1. the clustering scale δ is estimated by subsampling: draw N subsamples S_1..S_N of
//!    size s(n) = ceil(n / (ln n)^(1 + β)) without replacement and take the mean of the
//!    Hausdorff distances d_H(X_n, S_k) = max over x in X_n of the distance from x to S_k;
//! 2. the clustering is single linkage cut at δ, i.e. the connected components of the
//!    δ-neighbourhood graph; here DBSCAN with eps = δ and min points 1 (every point is a
//!    core point, so DBSCAN's clusters are exactly those components);
//! 3. the gain g is taken in (1/3, 1/2): here g = 0.4, the overlap of our cover;
//! 4. the resolution (interval length) is r = max{|f(X_i) - f(X_j)| : |X_i - X_j| ≤ δ} / g,
//!    the largest jump of the lens along a neighbour pair at scale δ, divided by the gain;
//!    our cover takes an interval count, so the count is the smallest n whose interval
//!    length (hi - lo) / (n - (n - 1) g) is at most r.
//!
//! Choices the paper leaves open, ours: β = 0.5 and N = 10 (the paper asks only β > 0).
//! Distances are those of the scaled points the graph uses. Cost: N nearest-neighbour
//! passes over the rows and one range search per row at radius δ.
//!
//! Not here: checking the suggested graph ([`super::confidence`], [`super::sweep`]).

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
    let tree = KdTree::new(flat, d);
    let mut jump: f64 = 0.0;
    for i in 0..n {
        let fi = lens[i];
        tree.for_each_within(&flat[i * d..(i + 1) * d], delta, |j| jump = jump.max((lens[j] - fi).abs()));
    }
    let (lo, hi) = lens.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| (a.min(v), b.max(v)));
    let resolution = jump / GAIN;
    let intervals = interval_count(hi - lo, resolution, GAIN);
    let mut s = settings.clone();
    s.cover.intervals = intervals;
    s.cover.overlap = GAIN;
    s.clustering = Clustering::Dbscan { eps: delta, min_points: 1 };
    let mut changes = Vec::new();
    if s.cover.intervals != settings.cover.intervals {
        changes.push(format!("cover.intervals: {} -> {}", settings.cover.intervals, s.cover.intervals));
    }
    if s.cover.overlap != settings.cover.overlap {
        changes.push(format!("cover.overlap: {} -> {}", settings.cover.overlap, s.cover.overlap));
    }
    if s.clustering != settings.clustering {
        changes.push(format!("clustering: {:?} -> DBSCAN eps {delta:.4} minPoints 1 (single linkage at scale δ)", settings.clustering));
    }
    let mut warnings = Vec::new();
    if intervals < 3 {
        warnings.push(format!(
            "the rule gives {intervals} interval(s): at the estimated scale δ = {delta:.3} neighbouring rows already span most of the filter's range, \
             so the graph would show one blob. This happens when the rows are few for their {d} dimensions (a subsample then covers them only coarsely); \
             try fewer columns, or keep your own cover and use a sweep instead"
        ));
    }
    Ok(Suggestion { settings: s, delta, hausdorff, subsample_size: size, largest_lens_jump: jump, gain: GAIN, resolution, changes, warnings })
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
