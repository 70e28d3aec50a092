//! How a category (text) column differs between a group of rows and the rest: the 2 × k
//! table of counts by level, the total variation distance between the two level
//! distributions, Pearson's chi-squared test of independence (see [`super::chi2`]) and
//! the level most over-represented in the group.
//!
//! - Cells without a value are left out of the table and counted apart (`missingIn`,
//!   `missingOut`); the shares below are of the rows with a value.
//! - Levels that no row has, on either side, are left out of the table (SciPy's
//!   `chi2_contingency` refuses a zero expected count), so `levels` lists only levels seen.
//! - Total variation distance: TV = ½ Σ_j |p_in(j) − p_out(j)| in [0, 1], p the level
//!   shares on each side (the definition, e.g. Levin, Peres and Wilmer, *Markov Chains and
//!   Mixing Times*, 2nd ed., Proposition 4.2: it equals the largest difference in
//!   probability any set of levels can show).
//! - Most over-represented level: the largest p_in − p_out (the first in table order on
//!   a tie); none when no level has a larger share in the group. A difference of shares
//!   rather than a ratio, so a rare level seen once in the group does not win.
//!
//! What it is not: evidence (the group was chosen by looking at the data, see
//! [`crate::explain`]), or a check of the χ² approximation: `minExpected` is given so a
//! reader can see when expected counts are small (below 5 is the usual warning, Cochran
//! 1954).

use serde::Serialize;

use super::chi2;
use crate::table::MISSING_CODE;

/// How one category column differs between the group and the rest.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct CategoryContrast {
    pub name: String,
    /// Levels with at least one row (either side), in the column's level order.
    pub levels: Vec<String>,
    /// Rows of each level in the group and outside it (the 2 × k table).
    pub counts_in: Vec<u64>,
    pub counts_out: Vec<u64>,
    /// Rows with a value in this column, in the group and outside it.
    pub n_in: usize,
    pub n_out: usize,
    /// Rows without a value, in the group and outside it (not in the table).
    pub missing_in: usize,
    pub missing_out: usize,
    /// Total variation distance in [0, 1]; `None` when either side has no value.
    pub tv: Option<f64>,
    /// Pearson's chi-squared statistic, no continuity correction.
    pub chi2: Option<f64>,
    pub dof: Option<usize>,
    pub p_value: Option<f64>,
    /// The smallest expected count of the table's cells.
    pub min_expected: Option<f64>,
    /// The level most over-represented in the group, its share in the group and outside.
    pub top_level: Option<String>,
    pub top_share_in: Option<f64>,
    pub top_share_out: Option<f64>,
    /// Levels left out of `levels` and the counts by [`CategoryContrast::keep_levels`]
    /// (all the statistics above still count them).
    pub levels_left_out: usize,
}

impl CategoryContrast {
    /// Keeps the `max` levels whose shares differ most between the group and the rest
    /// (|share in − share out|, ties in level order), in level order, so a column with very
    /// many values (an identifier) does not send all of them with every selection.
    pub fn keep_levels(&mut self, max: usize) {
        let k = self.levels.len();
        if k <= max {
            return;
        }
        let (fi, fo) = (self.n_in.max(1) as f64, self.n_out.max(1) as f64);
        let gap = |j: usize| (self.counts_in[j] as f64 / fi - self.counts_out[j] as f64 / fo).abs();
        let mut order: Vec<usize> = (0..k).collect();
        order.sort_by(|&a, &b| gap(b).total_cmp(&gap(a)).then(a.cmp(&b)));
        let mut keep = order[..max].to_vec();
        keep.sort_unstable();
        self.levels = keep.iter().map(|&j| std::mem::take(&mut self.levels[j])).collect();
        self.counts_in = keep.iter().map(|&j| self.counts_in[j]).collect();
        self.counts_out = keep.iter().map(|&j| self.counts_out[j]).collect();
        self.levels_left_out += k - max;
    }
}

/// The contrast of a column whose rows have level codes `codes` (`MISSING_CODE` for
/// no value) into `levels`, group rows flagged by `in_group`.
pub fn contrast_codes(name: &str, levels: &[String], codes: &[u32], in_group: &[bool]) -> CategoryContrast {
    contrast_codes_among(name, levels, codes, in_group, None)
}

/// [`contrast_codes`] over the rows flagged in `among` only (every row when `None`).
pub fn contrast_codes_among(name: &str, levels: &[String], codes: &[u32], in_group: &[bool], among: Option<&[bool]>) -> CategoryContrast {
    let k = levels.len();
    let (mut ci, mut co) = (vec![0u64; k], vec![0u64; k]);
    let (mut mi, mut mo) = (0usize, 0usize);
    for (r, (&c, &g)) in codes.iter().zip(in_group).enumerate() {
        if among.is_some_and(|a| !a[r]) {
            continue;
        }
        match (c, g) {
            (MISSING_CODE, true) => mi += 1,
            (MISSING_CODE, false) => mo += 1,
            (c, true) => ci[c as usize] += 1,
            (c, false) => co[c as usize] += 1,
        }
    }
    from_counts(name, levels, &ci, &co, mi, mo)
}

/// The contrast from the counts by level (levels with no row on either side are dropped
/// here) and the missing counts.
pub fn from_counts(name: &str, levels: &[String], counts_in: &[u64], counts_out: &[u64], missing_in: usize, missing_out: usize) -> CategoryContrast {
    let keep: Vec<usize> = (0..levels.len()).filter(|&j| counts_in[j] + counts_out[j] > 0).collect();
    let ci: Vec<u64> = keep.iter().map(|&j| counts_in[j]).collect();
    let co: Vec<u64> = keep.iter().map(|&j| counts_out[j]).collect();
    let (n_in, n_out) = (ci.iter().sum::<u64>() as usize, co.iter().sum::<u64>() as usize);
    let mut out = CategoryContrast {
        name: name.to_string(),
        levels: keep.iter().map(|&j| levels[j].clone()).collect(),
        counts_in: ci,
        counts_out: co,
        n_in,
        n_out,
        missing_in,
        missing_out,
        tv: None,
        chi2: None,
        dof: None,
        p_value: None,
        min_expected: None,
        top_level: None,
        top_share_in: None,
        top_share_out: None,
        levels_left_out: 0,
    };
    if n_in == 0 || n_out == 0 {
        return out;
    }
    let (fi, fo) = (n_in as f64, n_out as f64);
    let mut tv = 0.0;
    let mut best: Option<(usize, f64)> = None;
    for j in 0..out.levels.len() {
        let diff = out.counts_in[j] as f64 / fi - out.counts_out[j] as f64 / fo;
        tv += diff.abs();
        if diff > 0.0 && best.map_or(true, |(_, b)| diff > b) {
            best = Some((j, diff));
        }
    }
    out.tv = Some((0.5 * tv).clamp(0.0, 1.0));
    if let Some((j, _)) = best {
        out.top_level = Some(out.levels[j].clone());
        out.top_share_in = Some(out.counts_in[j] as f64 / fi);
        out.top_share_out = Some(out.counts_out[j] as f64 / fo);
    }
    if let Some(r) = chi2::pearson_2xk(&out.counts_in, &out.counts_out) {
        out.chi2 = Some(r.statistic);
        out.dof = Some(r.dof);
        out.p_value = Some(r.p_value);
        out.min_expected = Some(r.min_expected);
    }
    out
}

/// Ranking of category columns: total variation distance, largest first (none last), then
/// the smaller p-value, then the name.
pub fn rank(list: &mut [CategoryContrast]) {
    list.sort_by(|x, y| {
        let tv = |c: &CategoryContrast| c.tv.unwrap_or(-1.0);
        let p = |c: &CategoryContrast| c.p_value.unwrap_or(2.0);
        tv(y).total_cmp(&tv(x)).then(p(x).total_cmp(&p(y))).then(x.name.cmp(&y.name))
    });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keeping_levels_keeps_the_statistics_and_the_largest_gaps() {
        // Level 0 is all in the group, level 2 all outside, levels 1 and 3 even: the two
        // kept are 0 and 2, the statistics those of the whole table.
        let levels: Vec<String> = ["a", "b", "c", "d"].iter().map(|s| s.to_string()).collect();
        let mut c = from_counts("x", &levels, &[10, 5, 0, 5], &[0, 5, 10, 5], 0, 0);
        let whole = c.clone();
        c.keep_levels(2);
        assert_eq!(c.levels, vec!["a".to_string(), "c".to_string()]);
        assert_eq!((c.counts_in.clone(), c.counts_out.clone()), (vec![10, 0], vec![0, 10]));
        assert_eq!(c.levels_left_out, 2);
        assert_eq!((c.tv, c.chi2, c.p_value, c.top_level.clone()), (whole.tv, whole.chi2, whole.p_value, whole.top_level.clone()));
        let mut same = whole.clone();
        same.keep_levels(4);
        assert_eq!(same, whole);
    }

    fn names(v: &[&str]) -> Vec<String> {
        v.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn counts_missing_and_unused_levels() {
        // Levels a, b, c (c unused); group rows 0-3: a a b -; rest: b b a - -.
        let codes = [0, 0, 1, MISSING_CODE, 1, 1, 0, MISSING_CODE, MISSING_CODE];
        let group = [true, true, true, true, false, false, false, false, false];
        let c = contrast_codes("site", &names(&["a", "b", "c"]), &codes, &group);
        assert_eq!(c.levels, names(&["a", "b"]));
        assert_eq!((c.counts_in.clone(), c.counts_out.clone()), (vec![2, 1], vec![1, 2]));
        assert_eq!((c.n_in, c.n_out, c.missing_in, c.missing_out), (3, 3, 1, 2));
        // p_in = (2/3, 1/3), p_out = (1/3, 2/3): TV = ½ (1/3 + 1/3) = 1/3.
        assert!((c.tv.unwrap() - 1.0 / 3.0).abs() < 1e-15);
        assert_eq!(c.top_level.as_deref(), Some("a"));
        assert_eq!((c.top_share_in, c.top_share_out), (Some(2.0 / 3.0), Some(1.0 / 3.0)));
        assert_eq!(c.dof, Some(1));
    }

    #[test]
    fn same_shares_have_no_over_represented_level() {
        let c = from_counts("x", &names(&["p", "q"]), &[2, 4], &[3, 6], 0, 0);
        assert_eq!(c.tv, Some(0.0));
        assert_eq!(c.top_level, None);
        assert!(c.chi2.unwrap().abs() < 1e-15);
        let empty = from_counts("x", &names(&["p"]), &[0], &[3], 2, 0);
        assert_eq!((empty.tv, empty.p_value), (None, None));
    }

    #[test]
    fn ranks_by_distance() {
        let mut v = vec![
            from_counts("near", &names(&["p", "q"]), &[5, 5], &[6, 4], 0, 0),
            from_counts("far", &names(&["p", "q"]), &[10, 0], &[0, 10], 0, 0),
            from_counts("none", &names(&["p"]), &[0], &[4], 0, 0),
        ];
        rank(&mut v);
        let order: Vec<&str> = v.iter().map(|c| c.name.as_str()).collect();
        assert_eq!(order, ["far", "near", "none"]);
    }
}
