//! Interval covers of the lens values: uniform, balanced, and the product of two.
//!
//! **Uniform** (Singh, Mémoli, Carlsson 2007). Over [lo, hi] with n intervals and overlap
//! fraction g in [0, 1), each interval has length L = (hi - lo) / (n - (n - 1) g) and
//! interval i is the closed [lo + i L (1 - g), lo + i L (1 - g) + L]; consecutive
//! intervals share g L.
//!
//! **Balanced** (equal numbers of rows). The same rule applied in rank space, then mapped
//! back through the quantile function: with p_i = i L (1 - g), q_i = p_i + L and
//! L = 1 / (n - (n - 1) g) (the uniform cover of [0, 1]; q_{n-1} = 1), interval i is the
//! closed [Q(p_i), Q(q_i)], where Q is the empirical quantile with linear interpolation,
//! NumPy's `numpy.quantile(values, p)` default (method "linear"): with the N values sorted
//! x_0 <= ... <= x_{N-1} and h = (N - 1) p, Q(p) = x_⌊h⌋ + (h - ⌊h⌋)(x_⌊h⌋+1 - x_⌊h⌋).
//! So interval i holds the rows of rank (N - 1) p_i to (N - 1) q_i, about L (N - 1) + 1
//! rows, and consecutive intervals share about g L (N - 1) rows; rows with equal lens
//! values always fall together, so ties can make an interval hold more, and heavy ties
//! can make several intervals the same set.
//!
//! In both, a point belongs to every interval that contains its lens value, and when the
//! bounds collapse (hi = lo, or Q(0) = Q(1)) there is one interval [lo, lo] whatever n is.
//!
//! **Product** (two filters at once). Given 1-D covers with n1 and n2 intervals of the
//! two lenses, the elements are the n1 × n2 cells I_i × J_j: the points whose first lens
//! value lies in I_i and second in J_j, each a sorted list of point ids. Cell (i, j) is
//! element i · n2 + j (first filter major), and the element index is the cell index for
//! the graph's nodes. Empty elements are kept so that element index = interval (or cell)
//! index. A caution: with overlap, up to four cells meet at a corner, so a row can lie in
//! several cells at once and their nodes form triangles, which the graph's loop count
//! E - V + C counts as loops (tests/topology_covers.rs shows a case that avoids this and
//! says why).
//!
//! This module only assigns points to elements; clustering inside them is
//! [`crate::cluster`]'s job.

use crate::settings::{CoverKind, CoverSettings};

/// The intervals of one filter.
#[derive(Debug, Clone, PartialEq)]
pub struct Axis {
    pub lo: f64,
    pub hi: f64,
    pub intervals: Vec<(f64, f64)>,
}

/// The cover's elements: element `e` holds `elements[e]`, sorted point indices. `lo`,
/// `hi` and `intervals` are the first filter's; `second` is the second filter's axis of
/// a product cover.
#[derive(Debug, Clone, PartialEq)]
pub struct Cover {
    pub lo: f64,
    pub hi: f64,
    pub intervals: Vec<(f64, f64)>,
    pub elements: Vec<Vec<u32>>,
    pub second: Option<Axis>,
}

impl Cover {
    /// The (first, second) interval indices of element `e`; second is `None` for a 1-D cover.
    pub fn cell(&self, e: usize) -> (usize, Option<usize>) {
        match &self.second {
            None => (e, None),
            Some(a) => (e / a.intervals.len(), Some(e % a.intervals.len())),
        }
    }
}

/// Interval bounds of the uniform cover as defined above. When hi = lo (a constant lens)
/// there is one interval [lo, lo] whatever `n` is: every further interval would be the same set.
pub fn intervals(lo: f64, hi: f64, n: usize, g: f64) -> Vec<(f64, f64)> {
    assert!(n >= 1 && (0.0..1.0).contains(&g) && lo <= hi);
    if hi == lo {
        return vec![(lo, lo)];
    }
    let len = (hi - lo) / (n as f64 - (n as f64 - 1.0) * g);
    let step = len * (1.0 - g);
    (0..n)
        .map(|i| {
            let a = if i == 0 { lo } else { lo + i as f64 * step };
            // The last interval ends at hi exactly, so rounding never drops the maximum.
            let b = if i == n - 1 { hi } else { a + len };
            (a, b)
        })
        .collect()
}

/// NumPy's default quantile (method "linear", defined above) of `sorted` (increasing, not
/// empty) at `p` in [0, 1].
pub fn quantile(sorted: &[f64], p: f64) -> f64 {
    assert!(!sorted.is_empty());
    let (i, j, t) = quantile_ranks(sorted.len(), p);
    lerp(sorted[i], sorted[j], t)
}

/// The two order statistics (0-based ranks among `len` values) that the quantile at `p`
/// interpolates between, and the weight of the second.
pub fn quantile_ranks(len: usize, p: f64) -> (usize, usize, f64) {
    let h = (len - 1) as f64 * p;
    let f = h.floor();
    let i = (f as usize).min(len - 1);
    let j = (i + 1).min(len - 1);
    (i, j, h - f)
}

/// NumPy's lerp: a + t (b - a), written as it does for t >= 0.5 to stay exact at t = 1.
pub fn lerp(a: f64, b: f64, t: f64) -> f64 {
    if t >= 0.5 { b - (b - a) * (1.0 - t) } else { a + (b - a) * t }
}

/// Interval bounds of the balanced cover as defined above, from the sorted lens values.
pub fn balanced_intervals(sorted: &[f64], n: usize, g: f64) -> Vec<(f64, f64)> {
    balanced_intervals_by(sorted.len(), n, g, |k| sorted[k])
}

/// [`balanced_intervals`] from `len` values known through `order_stat(k)`, the value of
/// rank k (0-based, increasing): a run in parts finds just the ranks
/// [`balanced_ranks`] lists.
pub fn balanced_intervals_by(len: usize, n: usize, g: f64, mut order_stat: impl FnMut(usize) -> f64) -> Vec<(f64, f64)> {
    assert!(n >= 1 && (0.0..1.0).contains(&g));
    if len == 0 {
        return vec![(0.0, 0.0)];
    }
    let (lo, hi) = (order_stat(0), order_stat(len - 1));
    if lo == hi {
        return vec![(lo, lo)];
    }
    let mut q = |p: f64| {
        let (i, j, t) = quantile_ranks(len, p);
        lerp(order_stat(i), order_stat(j), t)
    };
    intervals(0.0, 1.0, n, g).into_iter().map(|(a, b)| (q(a), q(b))).collect()
}

/// The ranks [`balanced_intervals_by`] reads for `len` values under `n` intervals with
/// overlap `g`, increasing, each once.
pub fn balanced_ranks(len: usize, n: usize, g: f64) -> Vec<usize> {
    if len == 0 {
        return Vec::new();
    }
    let mut out = vec![0, len - 1];
    for (a, b) in intervals(0.0, 1.0, n, g) {
        for p in [a, b] {
            let (i, j, _) = quantile_ranks(len, p);
            out.extend([i, j]);
        }
    }
    out.sort_unstable();
    out.dedup();
    out
}

/// The axis of a uniform cover over a range found elsewhere (the least and greatest
/// filter value, as [`axis`] finds them).
pub fn uniform_axis(lo: f64, hi: f64, c: &CoverSettings) -> Axis {
    Axis { lo, hi, intervals: intervals(lo, hi, c.intervals, c.overlap) }
}

/// The intervals of one filter's values under `c`.
pub fn axis(values: &[f64], c: &CoverSettings) -> Axis {
    let (lo, hi) = range(values);
    let intervals = match c.kind {
        CoverKind::Uniform => intervals(lo, hi, c.intervals, c.overlap),
        CoverKind::Balanced => {
            let mut sorted = values.to_vec();
            sorted.sort_unstable_by(f64::total_cmp);
            balanced_intervals(&sorted, c.intervals, c.overlap)
        }
    };
    Axis { lo, hi, intervals }
}

fn range(values: &[f64]) -> (f64, f64) {
    if values.is_empty() {
        return (0.0, 0.0);
    }
    values.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| (a.min(v), b.max(v)))
}

/// The intervals of `ivs` (starts increasing, ends increasing up to rounding) that hold
/// `v`, as an index range: found by binary search, widened by one each side, then each
/// checked exactly (a <= v <= b), so rounding never changes membership.
fn holding(ivs: &[(f64, f64)], v: f64) -> impl Iterator<Item = usize> + '_ {
    let first = ivs.partition_point(|&(_, b)| b < v).saturating_sub(1);
    let last = (ivs.partition_point(|&(a, _)| a <= v) + 1).min(ivs.len());
    (first..last.max(first)).filter(move |&i| ivs[i].0 <= v && v <= ivs[i].1)
}

/// Each value assigned to every interval that contains it; values outside all fall in none.
pub fn assign(values: &[f64], ivs: &[(f64, f64)]) -> Vec<Vec<u32>> {
    let mut elements = vec![Vec::new(); ivs.len()];
    for (p, &v) in values.iter().enumerate() {
        for i in holding(ivs, v) {
            elements[i].push(p as u32);
        }
    }
    elements
}

/// The cells of the product of two axes: point p is in cell i · n2 + j when its first
/// value lies in interval i of `a1` and its second in interval j of `a2`.
pub fn product(v1: &[f64], a1: &[(f64, f64)], v2: &[f64], a2: &[(f64, f64)]) -> Vec<Vec<u32>> {
    assert_eq!(v1.len(), v2.len(), "both filters give one value per point");
    let n2 = a2.len();
    let mut elements = vec![Vec::new(); a1.len() * n2];
    let mut js = Vec::new();
    for (p, (&x, &y)) in v1.iter().zip(v2).enumerate() {
        js.clear();
        js.extend(holding(a2, y));
        for i in holding(a1, x) {
            for &j in &js {
                elements[i * n2 + j].push(p as u32);
            }
        }
    }
    elements
}

/// The cover of the points with first lens values `v1` under `c1`, or the product cover
/// when `second` gives the second lens values and their cover settings.
pub fn build(v1: &[f64], c1: &CoverSettings, second: Option<(&[f64], &CoverSettings)>) -> Cover {
    let a1 = axis(v1, c1);
    let second = second.map(|(v2, c2)| (v2, axis(v2, c2)));
    within(&a1, v1, second.as_ref().map(|(v2, a2)| (a2, *v2)))
}

/// Values assigned to given axes (for example a resample's values to the original's
/// intervals); values outside every interval fall in none.
pub fn within(a1: &Axis, v1: &[f64], second: Option<(&Axis, &[f64])>) -> Cover {
    let elements = match second {
        None => assign(v1, &a1.intervals),
        Some((a2, v2)) => product(v1, &a1.intervals, v2, &a2.intervals),
    };
    Cover { lo: a1.lo, hi: a1.hi, intervals: a1.intervals.clone(), elements, second: second.map(|(a, _)| a.clone()) }
}

/// The uniform cover of the values' range: each value assigned to the intervals that
/// contain it. `values` must be finite.
pub fn uniform(values: &[f64], n: usize, g: f64) -> Cover {
    build(values, &CoverSettings::uniform(n, g), None)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn worked_example_from_the_definition() {
        // lo = 0, hi = 10, n = 4, g = 0.25: L = 10 / (4 - 0.75) = 40/13, step = 30/13.
        let iv = intervals(0.0, 10.0, 4, 0.25);
        let l = 40.0 / 13.0;
        let s = 30.0 / 13.0;
        for (i, (a, b)) in iv.iter().enumerate() {
            assert!((a - i as f64 * s).abs() < 1e-12);
            assert!((b - (i as f64 * s + l)).abs() < 1e-12);
        }
        assert_eq!(iv[3].1, 10.0);
        // consecutive intervals overlap by g L
        assert!(((iv[0].1 - iv[1].0) - 0.25 * l).abs() < 1e-12);
    }

    #[test]
    fn every_value_lands_exactly_where_intervals_contain_it() {
        let mut r = crate::rng::SplitMix64::new(5);
        let values: Vec<f64> = (0..2000).map(|_| r.normal()).collect();
        for &(n, g) in &[(1, 0.0), (3, 0.0), (10, 0.3), (7, 0.5), (20, 0.75), (5, 0.9)] {
            let c = uniform(&values, n, g);
            for (p, &v) in values.iter().enumerate() {
                let mut any = false;
                for (i, &(a, b)) in c.intervals.iter().enumerate() {
                    let inside = a <= v && v <= b;
                    assert_eq!(inside, c.elements[i].binary_search(&(p as u32)).is_ok(), "n={n} g={g} v={v} i={i}");
                    any |= inside;
                }
                assert!(any, "value {v} in no interval (n={n}, g={g})");
            }
        }
    }

    #[test]
    fn zero_overlap_partitions_except_at_shared_ends() {
        let values: Vec<f64> = (0..=100).map(|i| i as f64).collect();
        let c = uniform(&values, 4, 0.0);
        assert_eq!(c.elements.iter().map(|e| e.len()).sum::<usize>(), 101 + 3);
    }

    #[test]
    fn constant_lens_gives_one_element() {
        let c = uniform(&[2.0; 5], 10, 0.3);
        assert_eq!(c.elements, vec![vec![0, 1, 2, 3, 4]]);
    }

    #[test]
    fn quantile_worked_example() {
        // numpy.quantile([1, 2, 3, 4], 0.5) = 2.5 and at 1/3 gives 2.0 (h = 3 · 1/3 = 1),
        // by hand from the linear method's definition in this module's doc comment.
        let x = [1.0, 2.0, 3.0, 4.0];
        assert_eq!(quantile(&x, 0.5), 2.5);
        assert_eq!(quantile(&x, 0.0), 1.0);
        assert_eq!(quantile(&x, 1.0), 4.0);
        assert!((quantile(&x, 1.0 / 3.0) - 2.0).abs() < 1e-15);
    }

    #[test]
    fn balanced_cover_of_ranks_by_hand() {
        // Values 0..=12 (N = 13), n = 4, g = 0.25: rank bounds p_i = i · 3/13, q_i = p_i + 4/13,
        // h = 12 p: interval i = [36 i / 13, 36 i / 13 + 48 / 13] in value (the values are
        // their ranks), the last ending at 12.
        let v: Vec<f64> = (0..13).map(|i| i as f64).collect();
        let c = build(&v, &CoverSettings { intervals: 4, overlap: 0.25, kind: CoverKind::Balanced }, None);
        for (i, &(a, b)) in c.intervals.iter().enumerate() {
            assert!((a - 36.0 * i as f64 / 13.0).abs() < 1e-12, "{i}: {a}");
            let want_b = if i == 3 { 12.0 } else { 36.0 * i as f64 / 13.0 + 48.0 / 13.0 };
            assert!((b - want_b).abs() < 1e-12, "{i}: {b}");
        }
        // [0, 3.69] holds 0..=3; [2.77, 6.46] holds 3..=6; [5.54, 9.23] 6..=9; [8.31, 12] 9..=12.
        assert_eq!(c.elements, vec![vec![0, 1, 2, 3], vec![3, 4, 5, 6], vec![6, 7, 8, 9], vec![9, 10, 11, 12]]);
        // A constant lens gives one element, as the uniform cover does.
        let k = build(&[1.0; 4], &CoverSettings { intervals: 5, overlap: 0.2, kind: CoverKind::Balanced }, None);
        assert_eq!(k.elements, vec![vec![0, 1, 2, 3]]);
    }

    #[test]
    fn product_cells_are_intersections_of_the_two_covers() {
        let mut r = crate::rng::SplitMix64::new(8);
        let v1: Vec<f64> = (0..500).map(|_| r.normal()).collect();
        let v2: Vec<f64> = (0..500).map(|_| r.normal() * 3.0).collect();
        let c1 = CoverSettings::uniform(4, 0.3);
        let c2 = CoverSettings { intervals: 3, overlap: 0.4, kind: CoverKind::Balanced };
        let p = build(&v1, &c1, Some((&v2, &c2)));
        let a = build(&v1, &c1, None);
        let b = build(&v2, &c2, None);
        assert_eq!(p.elements.len(), 12);
        for e in 0..12 {
            let (i, j) = p.cell(e);
            let j = j.unwrap();
            assert_eq!((i, j), (e / 3, e % 3));
            let want: Vec<u32> = a.elements[i].iter().copied().filter(|x| b.elements[j].binary_search(x).is_ok()).collect();
            assert_eq!(p.elements[e], want, "cell ({i}, {j})");
        }
        assert_eq!(p.second.as_ref().unwrap().intervals, b.intervals);
        // Every point is in some cell.
        let mut seen = vec![false; 500];
        p.elements.iter().flatten().for_each(|&x| seen[x as usize] = true);
        assert!(seen.iter().all(|&s| s));
    }
}
