//! DBSCAN as defined by Ester, Kriegel, Sander, Xu (KDD 1996), on the shared k-d tree.
//!
//! Definitions kept exactly:
//! - the eps-neighbourhood N(p) of a point is every point q with dist(p, q) <= eps,
//!   **p itself included**;
//! - p is a core point when |N(p)| >= min_points;
//! - a cluster is grown from a core point by adding its neighbourhood and continuing from
//!   every core point added (density-reachability); seeds are taken in row order;
//! - a non-core point within eps of a core point is a border point; when core points of
//!   several clusters reach it, it joins the cluster grown first, i.e. the one whose
//!   lowest-numbered core point comes first (the paper leaves this choice to the order);
//! - every other point is noise (`None`).
//!
//! This matches scikit-learn's `DBSCAN(eps, min_samples=min_points, metric='euclidean')`
//! (any `algorithm`) exactly on which points are core and which are noise; border points
//! agree up to the visiting order (scikit-learn also grows clusters from seeds in row
//! order, so on the same row order the partition is expected to be the same; that last
//! point is from memory of its source, the fixtures check it). Cluster numbers here are
//! in order of each cluster's lowest row, which may differ from scikit-learn's.
//!
//! Cost: one counting query per point (stopped as soon as `min_points` is reached) and
//! one full radius query per core point; memory O(m). No m × m matrix.
//!
//! Not here: choosing eps (see the automatic settings), other metrics, weights.

use super::kdtree::KdTree;
use super::Labels;

/// DBSCAN labels for the rows of `points` (row-major, `dim` columns).
pub fn dbscan(points: &[f64], dim: usize, eps: f64, min_points: usize) -> Labels {
    if dim == 0 || points.is_empty() {
        return Vec::new();
    }
    let m = points.len() / dim;
    let tree = KdTree::new(points, dim);
    let row = |i: usize| &points[i * dim..(i + 1) * dim];

    let core: Vec<bool> = (0..m).map(|i| tree.count_within(row(i), eps, min_points) >= min_points).collect();

    let mut labels: Labels = vec![None; m];
    let mut stack: Vec<usize> = Vec::new();
    let mut next = 0u32;
    for seed in 0..m {
        if !core[seed] || labels[seed].is_some() {
            continue;
        }
        let c = next;
        next += 1;
        labels[seed] = Some(c);
        stack.push(seed);
        while let Some(p) = stack.pop() {
            // Only core points are on the stack.
            tree.for_each_within(row(p), eps, |q| {
                if labels[q].is_none() {
                    labels[q] = Some(c);
                    if core[q] {
                        stack.push(q);
                    }
                }
            });
        }
    }
    super::renumber(&mut labels);
    labels
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;

    /// DBSCAN straight from the definitions with O(m^2) distance checks (no matrix kept):
    /// core points, clusters as connected components of core points within eps of each
    /// other, each border point given to the cluster whose lowest core row is smallest,
    /// clusters numbered by lowest row.
    fn brute_dbscan(points: &[f64], dim: usize, eps: f64, min_points: usize) -> Labels {
        let m = points.len() / dim;
        let close = |i: usize, j: usize| {
            (0..dim).map(|k| (points[i * dim + k] - points[j * dim + k]).powi(2)).sum::<f64>() <= eps * eps
        };
        let core: Vec<bool> = (0..m).map(|i| (0..m).filter(|&j| close(i, j)).count() >= min_points).collect();
        // Components of the core graph, each named by its lowest core row.
        let mut comp = vec![usize::MAX; m];
        for s in 0..m {
            if !core[s] || comp[s] != usize::MAX {
                continue;
            }
            comp[s] = s;
            let mut todo = vec![s];
            while let Some(p) = todo.pop() {
                for q in 0..m {
                    if core[q] && comp[q] == usize::MAX && close(p, q) {
                        comp[q] = s;
                        todo.push(q);
                    }
                }
            }
        }
        let mut raw: Vec<Option<usize>> = (0..m)
            .map(|i| {
                if core[i] {
                    Some(comp[i])
                } else {
                    (0..m).filter(|&j| core[j] && close(i, j)).map(|j| comp[j]).min()
                }
            })
            .collect();
        // Renumber by lowest row.
        let mut names: Vec<usize> = Vec::new();
        let labels = raw
            .iter_mut()
            .map(|l| {
                l.map(|c| match names.iter().position(|&n| n == c) {
                    Some(k) => k as u32,
                    None => {
                        names.push(c);
                        (names.len() - 1) as u32
                    }
                })
            })
            .collect();
        labels
    }

    #[test]
    fn hand_made_chain_with_borders_and_noise() {
        // 1-D, eps 1, min_points 3 (the point itself counts).
        // N(0) = {0, 1}: 2 < 3, not core; N(1) = {0, 1, 2} and N(2) = {1, 2, 3}: core;
        // N(3) = {2, 3}: border. 10, 11, 12: only 11 is core, 10 and 12 are its borders.
        // 20 is alone: noise.
        let pts = [0.0, 1.0, 2.0, 3.0, 10.0, 11.0, 12.0, 20.0];
        assert_eq!(
            dbscan(&pts, 1, 1.0, 3),
            vec![Some(0), Some(0), Some(0), Some(0), Some(1), Some(1), Some(1), None]
        );
        // min_points 4: no point has 4 neighbours, everything is noise.
        assert_eq!(dbscan(&pts, 1, 1.0, 4), vec![None; 8]);
        // min_points 1: every point is core; clusters are the eps-connected pieces.
        assert_eq!(
            dbscan(&pts, 1, 1.0, 1),
            vec![Some(0), Some(0), Some(0), Some(0), Some(1), Some(1), Some(1), Some(2)]
        );
    }

    #[test]
    fn contested_border_point_goes_to_the_cluster_grown_first() {
        // eps 1, min_points 4. Two crosses, centres (-1, 0) and (1, 0), each centre with
        // three arms at distance 1 (so |N(centre)| = 5, core); the arms have only their
        // centre (and b) near, so they are border points. b = (0, 0) is within 1 of both
        // centres but |N(b)| = 3: a border point both clusters reach.
        let b = [0.0, 0.0];
        let right = [[1.0, 0.0], [2.0, 0.0], [1.0, 1.0], [1.0, -1.0]]; // centre first
        let left = [[-1.0, 0.0], [-2.0, 0.0], [-1.0, 1.0], [-1.0, -1.0]];
        let noise = [5.0, 5.0];

        // Order 1: b, right centre and arms, left centre and arms, noise. The right
        // centre (row 1) is the first core row, so its cluster is grown first and takes b.
        let mut pts = b.to_vec();
        right.iter().chain(&left).for_each(|p| pts.extend(p));
        pts.extend(noise);
        let want1 = vec![Some(0), Some(0), Some(0), Some(0), Some(0), Some(1), Some(1), Some(1), Some(1), None];
        assert_eq!(dbscan(&pts, 2, 1.0, 4), want1);

        // Order 2: a right arm, the left centre, b, the right centre, the other arms. The
        // left centre (row 1) is now the first core row, so b goes left. Numbering is by
        // lowest row, so the right cluster (row 0) is 0 and the left one (row 1) is 1.
        let rows = [right[1], left[0], b, right[0], right[2], right[3], left[1], left[2], left[3], noise];
        let pts: Vec<f64> = rows.iter().flatten().copied().collect();
        let want2 = vec![Some(0), Some(1), Some(1), Some(0), Some(0), Some(0), Some(1), Some(1), Some(1), None];
        assert_eq!(dbscan(&pts, 2, 1.0, 4), want2);
    }

    #[test]
    fn equals_brute_force_on_random_data() {
        let mut rng = SplitMix64::new(31);
        for &dim in &[1usize, 2, 3, 7] {
            // Three blobs plus uniform background: core, border and noise all occur.
            let m = 400;
            let mut pts = Vec::with_capacity(m * dim);
            for i in 0..m {
                let centre = [0.0, 4.0, 8.0][i % 3];
                let bg = i % 7 == 0;
                for _ in 0..dim {
                    pts.push(if bg { rng.next_f64() * 14.0 - 3.0 } else { centre + 0.8 * rng.normal() });
                }
            }
            for &(eps, min_points) in &[(0.3, 3), (0.6, 5), (1.0, 10), (1.5, 4), (0.5, 1)] {
                let eps = eps * (dim as f64).sqrt();
                let got = dbscan(&pts, dim, eps, min_points);
                let want = brute_dbscan(&pts, dim, eps, min_points);
                assert_eq!(got, want, "dim {dim}, eps {eps}, min_points {min_points}");
            }
        }
    }

    #[test]
    fn empty_and_single() {
        assert_eq!(dbscan(&[], 3, 1.0, 2), Vec::<Option<u32>>::new());
        assert_eq!(dbscan(&[1.0, 2.0], 2, 1.0, 1), vec![Some(0)]);
        assert_eq!(dbscan(&[1.0, 2.0], 2, 1.0, 2), vec![None]);
    }
}
