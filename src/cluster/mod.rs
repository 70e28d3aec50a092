//! Clustering of the rows inside one cover element: the step that turns each element of
//! the cover into one or more nodes of the graph.
//!
//! Points arrive as one contiguous row-major slice (`m` rows of `dim` values, finite).
//! No method here builds an m × m distance matrix: neighbours come from the k-d tree in
//! [`kdtree`], shared by [`dbscan`] (radius queries) and [`linkage`] (a Euclidean minimum
//! spanning tree by Borůvka's algorithm).
//!
//! Not here: choosing eps or the number of bins (the automatic settings do that), the
//! cover, or the graph built from the clusters.

pub mod dbscan;
mod index;
pub mod kdtree;
pub mod linkage;
mod unionfind;

use crate::settings::Clustering;

/// Labels for `m` points: `Some(c)` for cluster `c` (numbered 0.. in order of each
/// cluster's lowest point index), `None` for noise.
pub type Labels = Vec<Option<u32>>;

/// Clusters `points` (row-major, `dim` columns) with `method`.
pub fn cluster(points: &[f64], dim: usize, method: &Clustering) -> Labels {
    let mut labels = match *method {
        Clustering::Dbscan { eps, min_points } => dbscan::dbscan(points, dim, eps, min_points),
        Clustering::SingleLinkage { gap_bins } => linkage::single_linkage(points, dim, gap_bins),
    };
    renumber(&mut labels);
    labels
}

/// Renames clusters 0, 1, ... in order of their lowest point index, keeping noise.
pub(crate) fn renumber(labels: &mut Labels) {
    let top = labels.iter().flatten().max().map_or(0, |&c| c as usize + 1);
    let mut new = vec![u32::MAX; top];
    let mut next = 0;
    for l in labels.iter_mut().flatten() {
        let n = &mut new[*l as usize];
        if *n == u32::MAX {
            *n = next;
            next += 1;
        }
        *l = *n;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;

    #[test]
    fn renumbers_by_lowest_row_and_keeps_noise() {
        let mut l = vec![Some(4), None, Some(2), Some(4), Some(0), None, Some(2)];
        renumber(&mut l);
        assert_eq!(l, vec![Some(0), None, Some(1), Some(0), Some(2), None, Some(1)]);
    }

    #[test]
    fn dispatches_both_methods() {
        // Two groups on a line, 0..4 and 100..104, plus an isolated point at 50.
        let pts: Vec<f64> = (0..5).map(|i| i as f64).chain([50.0]).chain((0..5).map(|i| 100.0 + i as f64)).collect();
        let d = cluster(&pts, 1, &Clustering::Dbscan { eps: 1.0, min_points: 2 });
        assert_eq!(d, [vec![Some(0); 5], vec![None], vec![Some(1); 5]].concat());
        // Heights [1 ×8, 46, 50]; 10 bins over [1, 50] of width 4.9: bin 0 holds the 1s,
        // bin 1 is empty (left edge 5.9), so both long edges are cut.
        let s = cluster(&pts, 1, &Clustering::SingleLinkage { gap_bins: 10 });
        assert_eq!(s, [vec![Some(0); 5], vec![Some(1)], vec![Some(2); 5]].concat());
    }

    /// Timing on 100,000 points in 6 dimensions. Run with
    /// `cargo test --release --lib cluster -- --ignored --nocapture`.
    #[test]
    #[ignore]
    fn timing_100k_6d() {
        let (m, dim) = (100_000, 6);
        let mut rng = SplitMix64::new(41);
        // Five Gaussian blobs (sd 1) with centres 8 apart along a diagonal, and 5 % uniform
        // background over the whole box.
        let mut pts = Vec::with_capacity(m * dim);
        for i in 0..m {
            let bg = i % 20 == 0;
            let c = (i % 5) as f64 * 8.0;
            for _ in 0..dim {
                pts.push(if bg { rng.next_f64() * 40.0 - 4.0 } else { c + rng.normal() });
            }
        }
        let t = std::time::Instant::now();
        let tree = kdtree::KdTree::new(&pts, dim);
        println!("k-d tree build: {:.3} s ({} nodes)", t.elapsed().as_secs_f64(), tree.node_count());

        for &(eps, min_points) in &[(0.5, 5), (1.0, 10)] {
            let t = std::time::Instant::now();
            let labels = cluster(&pts, dim, &Clustering::Dbscan { eps, min_points });
            let secs = t.elapsed().as_secs_f64();
            let k = labels.iter().flatten().max().map_or(0, |&c| c + 1);
            let noise = labels.iter().filter(|l| l.is_none()).count();
            println!("DBSCAN eps {eps}, min_points {min_points}: {secs:.3} s, {k} clusters, {noise} noise");
        }

        let t = std::time::Instant::now();
        let h = linkage::merge_heights(&pts, dim);
        println!("spanning tree (merge heights): {:.3} s, {} heights, max {:.3}", t.elapsed().as_secs_f64(), h.len(), h[h.len() - 1]);
        let t = std::time::Instant::now();
        let labels = cluster(&pts, dim, &Clustering::SingleLinkage { gap_bins: 10 });
        let k = labels.iter().flatten().max().map_or(0, |&c| c + 1);
        println!("single linkage, 10 bins: {:.3} s, {k} clusters", t.elapsed().as_secs_f64());
        assert_eq!(labels.len(), m);
    }
}
