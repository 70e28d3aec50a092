//! One column's values as the missing-value settings see them: which cells are missing
//! (NaN, infinite, or one of the column's fill values) and, under the median policy,
//! what a missing cell becomes. See [`crate::settings::Missing`] for the document.
//!
//! A view, not a copy: the table's column is read as it is. Not here: deciding which
//! rows take part (that is [`crate::points`]), the global sentinel guess ([`crate::auto`]).

use crate::points::is_missing;
use crate::settings::{Missing, MissingPolicy};

/// A numeric column under its missing-value rule.
#[derive(Debug, Clone, Copy)]
pub struct ColumnValues<'a> {
    pub raw: &'a [f64],
    pub fills: &'a [f64],
    /// The value a missing cell takes (the median policy), or `None` (leave the row out).
    pub fill_with: Option<f64>,
}

impl<'a> ColumnValues<'a> {
    /// `raw` is the column named `name`; its rule comes from `m`. With the median policy
    /// and no value at all in the column, `fill_with` stays `None`: there is nothing to
    /// take a median of, so rows are left out as usual.
    pub fn new(name: &str, raw: &'a [f64], m: &'a Missing) -> Self {
        Self::among(name, raw, m, None)
    }

    /// As [`ColumnValues::new`], the median taken over the rows flagged in `among` only
    /// (the rows a row condition keeps; every row when `None`).
    pub fn among(name: &str, raw: &'a [f64], m: &'a Missing, among: Option<&[bool]>) -> Self {
        let fills = m.fills_for(name);
        let fill_with = match (m.policy_for(name), among) {
            (MissingPolicy::LeaveOut, _) => None,
            (MissingPolicy::Median, None) => median_of_present(raw, fills),
            (MissingPolicy::Median, Some(keep)) => {
                let mut v: Vec<f64> = raw.iter().zip(keep).filter(|(&x, &k)| k && !is_missing(x, fills)).map(|(&x, _)| x).collect();
                median_in_place(&mut v)
            }
        };
        ColumnValues { raw, fills, fill_with }
    }

    /// [`ColumnValues::new`] with the median given (taken over the whole table by a run
    /// in parts, [`crate::parts`]) instead of computed from `raw`.
    pub fn with_median(name: &str, raw: &'a [f64], m: &'a Missing, median: Option<f64>) -> Self {
        let fill_with = match m.policy_for(name) {
            MissingPolicy::LeaveOut => None,
            MissingPolicy::Median => median,
        };
        ColumnValues { raw, fills: m.fills_for(name), fill_with }
    }

    pub fn is_missing(&self, row: usize) -> bool {
        is_missing(self.raw[row], self.fills)
    }

    /// The value at `row` after the rule: the cell, its fill, or `None`.
    pub fn get(&self, row: usize) -> Option<f64> {
        let x = self.raw[row];
        if is_missing(x, self.fills) { self.fill_with } else { Some(x) }
    }
}

/// NumPy's `median` of the cells that are not missing (the mean of the two middle values
/// for an even count), or `None` when every cell is missing. O(n) by selection.
pub fn median_of_present(raw: &[f64], fills: &[f64]) -> Option<f64> {
    let mut v: Vec<f64> = raw.iter().copied().filter(|&x| !is_missing(x, fills)).collect();
    median_in_place(&mut v)
}

/// The median of `v` (reordered), `None` when empty.
pub fn median_in_place(v: &mut [f64]) -> Option<f64> {
    let n = v.len();
    if n == 0 {
        return None;
    }
    let (_, &mut upper, _) = v.select_nth_unstable_by(n / 2, f64::total_cmp);
    if n % 2 == 1 {
        return Some(upper);
    }
    let lower = v[..n / 2].iter().copied().fold(f64::NEG_INFINITY, f64::max);
    Some(middle_of(lower, upper))
}

/// The median of an even count from its two middle values (NumPy's: their mean).
pub fn middle_of(lower: f64, upper: f64) -> f64 {
    (lower + upper) / 2.0
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::settings::ColumnMissing;

    #[test]
    fn median_like_numpy() {
        // numpy.median([3, 1, 2]) = 2.0; numpy.median([4, 1, 3, 2]) = 2.5 (by hand from
        // NumPy's definition: the mean of the two middle values).
        assert_eq!(median_in_place(&mut [3.0, 1.0, 2.0]), Some(2.0));
        assert_eq!(median_in_place(&mut [4.0, 1.0, 3.0, 2.0]), Some(2.5));
        assert_eq!(median_in_place(&mut []), None);
    }

    #[test]
    fn per_column_rule_overrides_the_global_list() {
        let mut m = Missing { fill_values: vec![-9999.0], ..Default::default() };
        m.per_column.insert("d".into(), ColumnMissing { fill_values: Some(vec![0.0]), policy: MissingPolicy::Median });
        let raw = [0.0, 5.0, -9999.0, 1.0, f64::NAN, 3.0];
        let c = ColumnValues::new("d", &raw, &m);
        // For "d", 0 and NaN are missing and -9999 is a value: median of [5, -9999, 1, 3] = 2.
        assert_eq!(c.fill_with, Some(2.0));
        assert_eq!((0..6).map(|r| c.get(r)).collect::<Vec<_>>(), vec![Some(2.0), Some(5.0), Some(-9999.0), Some(1.0), Some(2.0), Some(3.0)]);
        let other = ColumnValues::new("e", &raw, &m);
        assert_eq!(other.fill_with, None);
        assert_eq!(other.get(2), None);
        assert_eq!(other.get(0), Some(0.0));
    }
}
