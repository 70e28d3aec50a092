//! The first look: for a table of more than [`FROM_ROWS`] rows, a graph of a seeded sample
//! of [`SAMPLE_ROWS`] of them, drawn while the full graph is being built (the page says so
//! and replaces it; the runner and the benchmark use it to measure how close it comes).
//!
//! Which rows: [`SAMPLE_ROWS`] rows drawn uniformly without replacement, seeded by the
//! settings' seed, among the rows the settings' row condition keeps (every row without
//! one). Rows then left out for a missing value are left out as in the full run.
//!
//! The rule for the sample's settings ([`sample_settings`]), with `f` the sample's share of
//! the rows (sample / rows the condition keeps):
//! - **distances unchanged**: the scaling is recomputed on the sample (its means and
//!   spreads estimate the full ones), and the DBSCAN radius, the filter, the cover's
//!   intervals and overlap and the gap rule's bins stay as they are: all are read in the
//!   units of the points or of the filter, which sampling does not change;
//! - **counts of rows scale with `f`**: a uniform sample of share `f` holds, within any
//!   region, on average `f` times the rows the full table holds there (the mean of a
//!   binomial draw; common practice). A DBSCAN core point needs `min_points - 1` other
//!   rows within the radius, so the sample asks for `(min_points - 1) · f` others,
//!   rounded up: `min_points' = 1 + ceil((min_points - 1) · f)`. This keeps the density
//!   a core point stands for (rows per unit of volume, as a share of the table): the
//!   radius holds the same share of the rows in both. The same holds for the other counts
//!   of rows: the neighbour count `k` of the filters and of denoising becomes
//!   `max(2, round(k · f))` (`k` counts the point itself, so 2 is the least that measures
//!   anything), and the rows two nodes must share for an edge
//!   `max(1, ceil(min_shared · f))`;
//! - **shares unchanged**: `minClusterShare` is a share of a cover element already.
//!
//! What this does not promise: the same graph. Thin parts of the data (a bridge of few
//! rows, a sparse flare) can break apart or vanish in a sample; the benchmark prints how
//! many components and loops the first look and the full graph have on its tables.

use crate::rng::SplitMix64;
use crate::settings::{Clustering, Lens, Settings};

/// Tables with more rows than this (after the row condition) get a first look.
pub const FROM_ROWS: usize = 200_000;

/// Rows in a first look.
pub const SAMPLE_ROWS: usize = 50_000;

/// What a graph built as a first look says about itself.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct FirstLookOf {
    /// Rows drawn for the sample.
    pub sampled: usize,
    /// Rows it was drawn from (those the row condition keeps).
    pub of: usize,
}

/// Whether a table whose row condition keeps `rows` rows gets a first look.
pub fn wanted(rows: usize) -> bool {
    rows > FROM_ROWS
}

/// The sample: `min(SAMPLE_ROWS, eligible.len())` of the `eligible` rows (ascending),
/// drawn uniformly without replacement with `seed`; ascending.
pub fn sample(eligible: &[u32], seed: u64) -> Vec<u32> {
    // A stream of its own, so the sample differs from other draws made with the same seed.
    let mut rng = SplitMix64::new(seed ^ 0x6669_7273_746c_6f6b);
    rng.sample_indices(eligible.len(), SAMPLE_ROWS).into_iter().map(|i| eligible[i]).collect()
}

/// The settings of a sample holding the share `f` (in (0, 1]) of the rows, from those of
/// the full run (module doc: distances and shares unchanged, counts of rows times `f`).
pub fn sample_settings(s: &Settings, f: f64) -> Settings {
    let f = f.clamp(0.0, 1.0);
    let k = |k: usize| ((k as f64 * f).round() as usize).max(2).min(k);
    let mut out = s.clone();
    if let Clustering::Dbscan { min_points, .. } = &mut out.clustering {
        *min_points = 1 + ((min_points.saturating_sub(1)) as f64 * f).ceil() as usize;
    }
    for lens in std::iter::once(&mut out.lens).chain(out.lens2.as_mut()) {
        match lens {
            Lens::DistanceToMeasure { k: kk } | Lens::NeighbourDistance { k: kk } => *kk = k(*kk),
            _ => {}
        }
    }
    if let Some(d) = &mut out.denoise {
        d.k = k(d.k);
    }
    out.edges.min_shared = ((out.edges.min_shared as f64 * f).ceil() as usize).max(1);
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::settings::{CoverKind, CoverSettings, EdgeRule};

    fn dbscan(eps: f64, min_points: usize) -> Settings {
        let mut s = Settings::plain(vec!["a".into()], Lens::Principal { component: 1 }, CoverSettings { intervals: 10, overlap: 0.3, kind: CoverKind::Uniform }, Clustering::Dbscan { eps, min_points });
        s.edges = EdgeRule { min_shared: 3 };
        s
    }

    #[test]
    fn counts_scale_with_the_share_and_distances_stay() {
        let s = dbscan(0.4, 5);
        // 50 000 of 1 500 000: 4 other rows become 4/30 of a row, rounded up to one.
        let t = sample_settings(&s, 50_000.0 / 1_500_000.0);
        assert_eq!(t.clustering, Clustering::Dbscan { eps: 0.4, min_points: 2 });
        assert_eq!(t.edges.min_shared, 1);
        assert_eq!(t.cover, s.cover);
        // Half the rows: 40 other rows become 20.
        let t = sample_settings(&dbscan(0.4, 41), 0.5);
        assert_eq!(t.clustering, Clustering::Dbscan { eps: 0.4, min_points: 21 });
        assert_eq!(t.edges.min_shared, 2);
        // The whole table: nothing changes.
        assert_eq!(sample_settings(&s, 1.0), s);
        // Neighbour counts of the filter: never below 2.
        let mut s = dbscan(0.4, 5);
        s.lens = Lens::DistanceToMeasure { k: 15 };
        assert_eq!(sample_settings(&s, 0.2).lens, Lens::DistanceToMeasure { k: 3 });
        assert_eq!(sample_settings(&s, 0.01).lens, Lens::DistanceToMeasure { k: 2 });
        // Single linkage's gap rule has no count of rows.
        let mut s = dbscan(0.4, 5);
        s.clustering = Clustering::SingleLinkage { gap_bins: 10 };
        assert_eq!(sample_settings(&s, 0.1).clustering, s.clustering);
    }

    #[test]
    fn the_sample_is_seeded_distinct_and_drawn_from_the_eligible_rows() {
        let eligible: Vec<u32> = (0..300_000u32).filter(|r| r % 3 != 1).collect();
        let a = sample(&eligible, 7);
        assert_eq!(a.len(), SAMPLE_ROWS);
        assert!(a.windows(2).all(|w| w[0] < w[1]), "ascending and distinct");
        assert!(a.iter().all(|r| r % 3 != 1), "only eligible rows");
        assert_eq!(a, sample(&eligible, 7));
        assert_ne!(a, sample(&eligible, 8));
        // Uniform: each third of the eligible rows holds about a third of the sample
        // (binomial spread about 105 rows; 5 of them allowed).
        for part in 0..3 {
            let lo = eligible[part * eligible.len() / 3];
            let hi = eligible.get((part + 1) * eligible.len() / 3).copied().unwrap_or(u32::MAX);
            let n = a.iter().filter(|&&r| r >= lo && r < hi).count() as f64;
            assert!((n - SAMPLE_ROWS as f64 / 3.0).abs() < 530.0, "part {part}: {n}");
        }
        // Fewer eligible rows than the sample size: all of them.
        assert_eq!(sample(&eligible[..10], 1), eligible[..10].to_vec());
    }
}
