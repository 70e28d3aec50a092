//! The spatial index the clustering methods share, and the small geometry they run on it.
//!
//! [`Index`] is a k-d tree (leaves of [`LEAF_SIZE`], split at the median of the axis of
//! largest variance, [`Split::Variance`]) built on the points' coordinates along their
//! principal axes when they have 3 to 64 columns (the axes of an evenly spaced sample of
//! up to 4096 rows, centred), on the points as given otherwise. Box tests are made in the
//! frame; distances between two points are made on the points as given, so that every
//! answer is the one the given coordinates give. The rotation moves a coordinate by far
//! less than [`Index::margin`] = 1e-10 · d · (1 + largest |coordinate|): a box whose
//! nearest corner lies farther than r + margin holds no point within r, and one whose
//! farthest corner lies within r - margin holds only points within r. (The rounding of a
//! rotated coordinate is at most about d² · 1.1e-16 times the largest coordinate, a
//! thousand times less than the margin for d up to 64.) Why this index and not another
//! is measured in `dbscan.rs`.
//!
//! Not here: the clustering itself; other metrics.

use super::kdtree::{gather_rows, larger, KdTree, Split, LEAF_SIZE};

/// The index over one set of points (module doc).
pub(super) struct Index {
    /// The tree, over the points in the frame (`tree.point_at(pos)`).
    pub tree: KdTree,
    /// The points as given, in tree order; `None` when the frame is the points themselves.
    given: Option<Vec<f64>>,
    /// How far a box test must stretch for rounding in the frame (0 without a frame).
    pub margin: f64,
}

impl Index {
    pub fn new<D: Dim>(points: &[f64], dim: D) -> Index {
        let d = dim.n();
        match principal_frame(points, dim) {
            Some((rotated, margin)) => {
                let tree = KdTree::from_rows_split(rotated, d, LEAF_SIZE, Split::Variance);
                let given = gather_rows(points, d, (0..tree.len()).map(|pos| tree.row_at(pos)));
                Index { tree, given: Some(given), margin }
            }
            None => Index { tree: KdTree::from_rows_split(points.to_vec(), d, LEAF_SIZE, Split::Variance), given: None, margin: 0.0 },
        }
    }

    /// The points as given, in tree order, row-major.
    pub fn points(&self) -> &[f64] {
        self.given.as_deref().unwrap_or(self.tree.tree_points())
    }
}

/// The number of coordinates of a point, known at compile time ([`Fixed`]) or only at run
/// time ([`Any`]). The clustering methods are written once, generic over it, and choose
/// [`Fixed`] for the usual small dimensions, so that every distance and box loop
/// has a constant length (unrolled, no bounds checks) and the same code serves any other
/// dimension through [`Any`]. Both run the same floating-point operations in the same
/// order, so the labels do not depend on which one is used.
pub(super) trait Dim: Copy {
    fn n(self) -> usize;
}

#[derive(Clone, Copy)]
pub(super) struct Fixed<const D: usize>;

impl<const D: usize> Dim for Fixed<D> {
    #[inline(always)]
    fn n(self) -> usize {
        D
    }
}

#[derive(Clone, Copy)]
pub(super) struct Any(pub(super) usize);

impl Dim for Any {
    #[inline(always)]
    fn n(self) -> usize {
        self.0
    }
}

/// How many coordinates a bounded sum adds between two comparisons with its bound.
/// Natively all of them for the fixed dimensions up to 8: a branch-free sum (vectorised)
/// beats stopping early. In wasm (scalar) stopping after each coordinate is faster.
const CHUNK: usize = if cfg!(target_arch = "wasm32") { 1 } else { 8 };

/// Whether `sum_k term(k)` over the `n` coordinates, added in coordinate order, stays at
/// or below `r2`. Every term is non-negative (a square), so the partial sums only grow,
/// also in floating point (rounding is monotone): the sum exceeds `r2` exactly when a
/// partial sum does, which lets long sums stop after a chunk without changing any answer.
#[inline(always)]
#[allow(clippy::modulo_one)] // CHUNK is 1 in wasm: a check after every coordinate.
pub(super) fn sum_within(n: usize, r2: f64, term: impl Fn(usize) -> f64) -> bool {
    let mut s = 0.0;
    for k in 0..n {
        s += term(k);
        if ((k + 1) % CHUNK == 0 || k + 1 == n) && s > r2 {
            return false;
        }
    }
    true
}

#[inline(always)]
pub(super) fn dist2<D: Dim>(d: D, a: &[f64], b: &[f64]) -> f64 {
    let n = d.n();
    a[..n].iter().zip(&b[..n]).map(|(x, y)| (x - y) * (x - y)).sum()
}

/// The sum over the coordinates of `max(u[k] - v[k], w[k] - z[k], floor)²`, the squares
/// added in coordinate order, or some partial sum above `stop` as soon as one passes it
/// (exact, as in [`sum_within`]). Every box test below is such a sum.
///
/// With wasm SIMD, two coordinates at a time by `f64x2.pmax`, one instruction: the scalar
/// maximum branches there (a scalar select is slower still), and the box tests of the
/// clustering spent about three times their native time on it. The same values, added
/// one by one in the same order, so the same answers.
#[inline(always)]
#[allow(clippy::modulo_one)] // CHUNK is 1 in wasm: a check after every coordinate.
fn larger_squares(n: usize, (u, v, w, z): (&[f64], &[f64], &[f64], &[f64]), floor: f64, stop: f64) -> f64 {
    let (u, v, w, z) = (&u[..n], &v[..n], &w[..n], &z[..n]);
    let mut s = 0.0;
    let mut k = 0;
    #[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
    {
        use core::arch::wasm32::{f64x2, f64x2_extract_lane, f64x2_mul, f64x2_pmax, f64x2_splat, f64x2_sub};
        while k + 2 <= n {
            let lanes = |x: &[f64]| f64x2(x[k], x[k + 1]);
            let t = f64x2_pmax(f64x2_pmax(f64x2_sub(lanes(u), lanes(v)), f64x2_sub(lanes(w), lanes(z))), f64x2_splat(floor));
            let t2 = f64x2_mul(t, t);
            s += f64x2_extract_lane::<0>(t2);
            s += f64x2_extract_lane::<1>(t2);
            if s > stop {
                return s;
            }
            k += 2;
        }
    }
    while k < n {
        let t = largest(u[k] - v[k], w[k] - z[k], floor);
        s += t * t;
        k += 1;
        if (k % CHUNK == 0 || k == n) && s > stop {
            return s;
        }
    }
    s
}

/// The largest of three values, none of them NaN; with wasm SIMD by `f64x2.pmax` on one
/// lane (see [`larger_squares`]), otherwise by [`larger`]. The same value either way.
#[inline(always)]
fn largest(a: f64, b: f64, c: f64) -> f64 {
    #[cfg(all(target_arch = "wasm32", target_feature = "simd128"))]
    {
        use core::arch::wasm32::{f64x2_extract_lane, f64x2_pmax, f64x2_splat};
        f64x2_extract_lane::<0>(f64x2_pmax(f64x2_pmax(f64x2_splat(a), f64x2_splat(b)), f64x2_splat(c)))
    }
    #[cfg(not(all(target_arch = "wasm32", target_feature = "simd128")))]
    {
        larger(larger(a, b), c)
    }
}

/// The squared distance between the nearest corners of two boxes (0 when they meet; a point
/// is a box whose bounds are equal), or some value above `stop` when it is larger.
#[inline(always)]
pub(super) fn gap2<D: Dim>(d: D, a: Bounds, b: Bounds, stop: f64) -> f64 {
    // Per coordinate the positive one of `blo - ahi`, `alo - bhi` (at most one is, as
    // `alo <= ahi` and `blo <= bhi`), otherwise 0.
    larger_squares(d.n(), (b.0, a.1, a.0, b.1), 0.0, stop)
}

/// A box as `n` lower and `n` upper bounds.
pub(super) type Bounds<'a> = (&'a [f64], &'a [f64]);

/// Squared distance between the farthest corners of a box and itself: its diagonal.
#[inline(always)]
pub(super) fn diagonal2<D: Dim>(d: D, a: Bounds) -> f64 {
    let n = d.n();
    let (lo, hi) = (&a.0[..n], &a.1[..n]);
    let mut far = 0.0;
    for k in 0..n {
        let f = hi[k] - lo[k];
        far += f * f;
    }
    far
}

/// Whether the farthest corners of two boxes are within squared distance `r2` (so every
/// pair of their points is).
#[inline(always)]
pub(super) fn box_far_within<D: Dim>(d: D, a: Bounds, b: Bounds, r2: f64) -> bool {
    // Per coordinate the larger of `bhi - alo`, `ahi - blo`.
    larger_squares(d.n(), (b.1, a.0, a.1, b.0), f64::NEG_INFINITY, r2) <= r2
}

/// Whether a point is within squared distance `r2` of a box (nearest corner).
#[inline(always)]
pub(super) fn point_box_near<D: Dim>(d: D, q: &[f64], b: Bounds, r2: f64) -> bool {
    gap2(d, (q, q), b, r2) <= r2
}

/// Whether the farthest corner of a box is within squared distance `r2` of a point (so
/// every point of the box is).
#[inline(always)]
pub(super) fn point_box_far_within<D: Dim>(d: D, q: &[f64], b: Bounds, r2: f64) -> bool {
    box_far_within(d, (q, q), b, r2)
}

/// The fewest and the most columns for which the index is built in the points' principal
/// axes (module doc): below, a rotation gains nothing; above, its d × d algebra would cost
/// more than it saves.
const FRAME_DIMS: std::ops::RangeInclusive<usize> = 3..=64;

/// Most rows the principal axes are computed from.
const FRAME_SAMPLE: usize = 4096;

/// The points' coordinates along their principal axes (centred), row-major, with the
/// margin that box tests in those coordinates leave for rounding (module doc); `None`
/// when the index is better built on the points as they are.
pub(super) fn principal_frame<D: Dim>(points: &[f64], d: D) -> Option<(Vec<f64>, f64)> {
    let dim = d.n();
    let m = points.len() / dim;
    if !FRAME_DIMS.contains(&dim) || m < 2 {
        return None;
    }
    // The axes from an evenly spaced sample of the rows: they only steer the index.
    let step = m.div_ceil(FRAME_SAMPLE);
    let sample: Vec<f64> = points.chunks_exact(dim).step_by(step).flatten().copied().collect();
    let x = ndarray::ArrayView2::from_shape((sample.len() / dim, dim), &sample).expect("rows of dim values");
    let mean = crate::filter::linalg::column_means(x).to_vec();
    let (_, axes) = crate::filter::linalg::symmetric_eigen(&crate::filter::linalg::covariance(x, 0));
    // Component k of every axis, contiguous: `by_k[k * dim + j]` is axis j's component k.
    let by_k: Vec<f64> = (0..dim).flat_map(|k| (0..dim).map(move |j| (j, k))).map(|(j, k)| axes[[k, j]]).collect();
    let mut out = vec![0.0; points.len()];
    let mut largest = 0.0f64;
    for (row, o) in points.chunks_exact(dim).zip(out.chunks_exact_mut(dim)) {
        let (row, o) = (&row[..dim], &mut o[..dim]);
        // Every coordinate's sum grows by one term per k, in the order k = 0, 1, ... (so
        // each is the dot product added in coordinate order); the coordinates are
        // independent of each other, so this inner loop runs several at once.
        for k in 0..dim {
            largest = larger(largest, row[k].abs());
            let c = row[k] - mean[k];
            for (v, &a) in o.iter_mut().zip(&by_k[k * dim..(k + 1) * dim]) {
                *v += c * a;
            }
        }
    }
    Some((out, 1e-10 * dim as f64 * (1.0 + largest)))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::rng::SplitMix64;

    /// The box tests against their definitions, coordinate by coordinate, on random boxes
    /// and points (some touching, some overlapping, some apart), in 1 to 13 columns: the
    /// same sums exactly when within `stop`, and above `stop` whenever the full sum is.
    #[test]
    fn box_tests_are_their_definitions() {
        let mut rng = SplitMix64::new(7);
        for trial in 0..4000 {
            let n = 1 + trial % 13;
            let mut corner = |spread: f64| -> (Vec<f64>, Vec<f64>) {
                let lo: Vec<f64> = (0..n).map(|_| (rng.next_f64() - 0.5) * 4.0).collect();
                let hi = lo.iter().map(|&l| if rng.next_f64() < 0.2 { l } else { l + rng.next_f64() * spread }).collect();
                (lo, hi)
            };
            let (a, b) = (corner(2.0), corner(2.0));
            let (a, b): (Bounds, Bounds) = ((&a.0, &a.1), (&b.0, &b.1));
            let mut near = 0.0;
            let mut far = 0.0;
            for k in 0..n {
                let g = if b.0[k] > a.1[k] { b.0[k] - a.1[k] } else if a.0[k] > b.1[k] { a.0[k] - b.1[k] } else { 0.0 };
                near += g * g;
                let f = (b.1[k] - a.0[k]).max(a.1[k] - b.0[k]);
                far += f * f;
            }
            let stop = rng.next_f64() * 2.0 * near.max(far);
            assert_eq!(gap2(Any(n), a, b, f64::INFINITY), near, "trial {trial}");
            let bounded = gap2(Any(n), a, b, stop);
            assert!(if near <= stop { bounded == near } else { bounded > stop }, "trial {trial}: {bounded} for {near} against {stop}");
            assert_eq!(box_far_within(Any(n), a, b, stop), far <= stop, "trial {trial}");
            let q = a.0;
            let mut point_near = 0.0;
            let mut point_far = 0.0;
            for k in 0..n {
                let g = if b.0[k] > q[k] { b.0[k] - q[k] } else if q[k] > b.1[k] { q[k] - b.1[k] } else { 0.0 };
                point_near += g * g;
                let f = (q[k] - b.0[k]).max(b.1[k] - q[k]);
                point_far += f * f;
            }
            assert_eq!(point_box_near(Any(n), q, b, stop), point_near <= stop, "trial {trial}");
            assert_eq!(point_box_far_within(Any(n), q, b, stop), point_far <= stop, "trial {trial}");
        }
    }
}
