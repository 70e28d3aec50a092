//! The uniform interval cover of the lens's range (Singh, Mémoli, Carlsson 2007).
//!
//! Over [lo, hi] with n intervals and overlap fraction g in [0, 1), each interval has
//! length L = (hi - lo) / (n - (n - 1) g) and interval i is the closed
//! [lo + i L (1 - g), lo + i L (1 - g) + L]; consecutive intervals share g L. A point
//! belongs to every interval that contains its lens value. This module only assigns
//! points to elements; clustering inside them is [`crate::cluster`]'s job.

/// The cover's elements: interval `i` holds `elements[i]`, sorted point indices. Empty
/// elements are kept so that element index = interval index.
#[derive(Debug, Clone, PartialEq)]
pub struct Cover {
    pub lo: f64,
    pub hi: f64,
    pub intervals: Vec<(f64, f64)>,
    pub elements: Vec<Vec<u32>>,
}

/// Interval bounds as defined above. When hi = lo (a constant lens) there is one interval
/// [lo, lo] whatever `n` is: every further interval would be the same set.
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

/// Assigns each value to the intervals that contain it. `values` must be finite.
pub fn uniform(values: &[f64], n: usize, g: f64) -> Cover {
    let (lo, hi) = values.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| (a.min(v), b.max(v)));
    let (lo, hi) = if values.is_empty() { (0.0, 0.0) } else { (lo, hi) };
    let ivs = intervals(lo, hi, n, g);
    let mut elements = vec![Vec::new(); ivs.len()];
    if ivs.len() == 1 {
        elements[0] = (0..values.len() as u32).collect();
    } else {
        let len = (hi - lo) / (n as f64 - (n as f64 - 1.0) * g);
        let step = len * (1.0 - g);
        for (p, &v) in values.iter().enumerate() {
            // Candidates from arithmetic, widened by one each side, then checked exactly.
            let first = (((v - lo - len) / step).floor() as isize - 1).max(0) as usize;
            let last = ((((v - lo) / step).floor() as isize) + 1).clamp(0, n as isize - 1) as usize;
            for i in first..=last {
                let (a, b) = ivs[i];
                if a <= v && v <= b {
                    elements[i].push(p as u32);
                }
            }
        }
    }
    Cover { lo, hi, intervals: ivs, elements }
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
}
