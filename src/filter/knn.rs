//! Filters made from each point's k nearest neighbours among the points: the distance to
//! a measure and the k-th neighbour distance. Both read the scaled points through the
//! shared k-d tree ([`crate::cluster::kdtree::KdTree::nearest`]), exact at any size,
//! O(n k log n) on well-spread data, never an n × n matrix.
//!
//! Neighbours include the point itself: the query point is a data point, so its first
//! neighbour is itself at distance 0. This is the convention of scikit-learn's
//! `NearestNeighbors.kneighbors(X)` when given the fitted data, and of the empirical
//! measure in Chazal, Cohen-Steiner, Mérigot 2011, whose mass at x includes x.
//!
//! Not here: approximate search, other metrics, the farthest-point filter (that is
//! eccentricity with p = infinity, in [`super::eccentricity_estimate`]).

use ndarray::ArrayView2;

use crate::cluster::kdtree::{KdTree, Neighbour};
use crate::error::{Error, Result};

/// Which value of the k nearest distances d_1 <= ... <= d_k (d_1 = 0, the point itself)
/// becomes the lens.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum KnnValue {
    /// Distance to the empirical measure with mass parameter m = k / n (Chazal,
    /// Cohen-Steiner, Mérigot 2011, "Geometric inference for probability measures",
    /// Found. Comput. Math. 11, §3 and §4.2): d(x) = sqrt( (1/k) Σ_{i=1..k} d_i² ).
    DistanceToMeasure,
    /// d_k, the distance to the k-th nearest point (itself counted first, so k = 1 gives 0).
    KthDistance,
}

/// The chosen k-nearest-neighbour value at every point of `x` (n × d, row-major).
/// `k` must be in 1..=n; the error names `lens.k`.
pub fn knn_lens(x: ArrayView2<f64>, k: usize, what: KnnValue) -> Result<Vec<f64>> {
    let (n, d) = x.dim();
    if k == 0 {
        return Err(Error::settings("lens.k", "must be at least 1"));
    }
    if k > n {
        return Err(Error::settings(
            "lens.k",
            format!("{k} neighbours asked for but only {n} rows take part; choose k at most {n}"),
        ));
    }
    let flat = x.as_standard_layout();
    let flat = flat.as_slice().expect("standard layout");
    let tree = KdTree::new(flat, d);
    let value = |i: usize, buf: &mut Vec<Neighbour>| -> f64 {
        tree.nearest(&flat[i * d..(i + 1) * d], k, buf);
        match what {
            KnnValue::DistanceToMeasure => (buf.iter().map(|nb| nb.dist * nb.dist).sum::<f64>() / k as f64).sqrt(),
            KnnValue::KthDistance => buf.last().map_or(0.0, |nb| nb.dist),
        }
    };
    let threads = if cfg!(target_arch = "wasm32") { 1 } else { std::thread::available_parallelism().map_or(1, |t| t.get()) };
    let mut out = vec![0.0; n];
    if threads <= 1 || n < 2048 {
        let mut buf = Vec::with_capacity(k + 1);
        for (i, o) in out.iter_mut().enumerate() {
            *o = value(i, &mut buf);
        }
        return Ok(out);
    }
    // Contiguous chunks, one per thread: each value depends on its point alone, so the
    // result does not depend on the number of threads.
    let chunk = n.div_ceil(threads);
    std::thread::scope(|scope| {
        for (c, part) in out.chunks_mut(chunk).enumerate() {
            let value = &value;
            scope.spawn(move || {
                let mut buf = Vec::with_capacity(k + 1);
                for (j, o) in part.iter_mut().enumerate() {
                    *o = value(c * chunk + j, &mut buf);
                }
            });
        }
    });
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use ndarray::Array2;

    #[test]
    fn worked_example_on_a_line() {
        // Points 0, 1, 3, 7 on a line (by hand). Sorted distances from 0: 0, 1, 3, 7;
        // from 3: 0, 2, 3, 4.
        let x = Array2::from_shape_vec((4, 1), vec![0.0, 1.0, 3.0, 7.0]).unwrap();
        let kth = knn_lens(x.view(), 3, KnnValue::KthDistance).unwrap();
        assert_eq!(kth, vec![3.0, 2.0, 3.0, 6.0]);
        let dtm = knn_lens(x.view(), 2, KnnValue::DistanceToMeasure).unwrap();
        // k = 2: sqrt((0 + d_2²) / 2) = d_2 / sqrt(2); d_2 = 1, 1, 2, 4.
        let want: Vec<f64> = [1.0f64, 1.0, 2.0, 4.0].iter().map(|v| v / 2f64.sqrt()).collect();
        for (a, b) in dtm.iter().zip(&want) {
            assert!((a - b).abs() < 1e-15);
        }
        // k = 1: the point itself only, so both values are 0.
        assert!(knn_lens(x.view(), 1, KnnValue::DistanceToMeasure).unwrap().iter().all(|&v| v == 0.0));
    }

    #[test]
    fn refuses_k_out_of_range_naming_the_field() {
        let x = Array2::from_shape_vec((3, 1), vec![0.0, 1.0, 2.0]).unwrap();
        let e = knn_lens(x.view(), 4, KnnValue::KthDistance).unwrap_err().to_string();
        assert!(e.contains("lens.k") && e.contains("at most 3"), "{e}");
        assert!(knn_lens(x.view(), 0, KnnValue::KthDistance).unwrap_err().to_string().contains("lens.k"));
    }

    #[test]
    fn threaded_and_brute_force_agree() {
        // Brute force over all pairs (common practice as a check) on 3000 points, which
        // takes the threaded path.
        let mut r = crate::rng::SplitMix64::new(3);
        let n = 3000;
        let x = Array2::from_shape_fn((n, 3), |_| r.normal());
        let got = knn_lens(x.view(), 7, KnnValue::DistanceToMeasure).unwrap();
        for i in [0, 1234, 2999] {
            let mut d2: Vec<f64> = (0..n).map(|j| (&x.row(i) - &x.row(j)).mapv(|v| v * v).sum()).collect();
            d2.sort_by(f64::total_cmp);
            let want = (d2[..7].iter().sum::<f64>() / 7.0).sqrt();
            assert!((got[i] - want).abs() < 1e-12, "point {i}: {} vs {want}", got[i]);
        }
    }
}
