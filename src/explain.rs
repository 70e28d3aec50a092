//! What sets a group of rows apart: for a node, or several selected nodes, every numeric
//! column (file and derived) is compared between the group's rows and all other rows of
//! the table, and the columns are ranked by how much they differ.
//!
//! Numeric columns (time columns among them, as seconds since 1970 UTC: a standardised
//! difference and KS do not depend on the unit), two measures per column, each over the
//! rows with a value in it:
//! - the standardised mean difference d = (mean_in - mean_out) / s_p, with s_p the pooled
//!   standard deviation sqrt(((n_in - 1) s_in² + (n_out - 1) s_out²) / (n_in + n_out - 2)),
//!   s² the sample variances (ddof 1): Cohen's d (Cohen 1988, *Statistical Power Analysis
//!   for the Behavioral Sciences*, 2nd ed., section 2.5);
//! - the two-sample Kolmogorov–Smirnov statistic and its p-value, as SciPy's
//!   `ks_2samp(method='auto')` computes them (see [`ks`]).
//!
//! Ranking: by the KS statistic, largest first, then by |d|, then by name. KS is chosen
//! because it is bounded in [0, 1], sees differences of shape as well as of the mean, and
//! is not driven by a few extreme values.
//!
//! Category (text) columns are listed apart ([`category`]): the 2 × k table of counts by
//! level, the total variation distance between the level distributions (also in [0, 1]),
//! Pearson's chi-squared test without continuity correction as SciPy's
//! `chi2_contingency(table, correction=False)` computes it ([`chi2`]), and the level most
//! over-represented in the group; ranked by the total variation distance, largest first.
//! The two lists are not merged into one ranking: KS and TV measure different things.
//!
//! A caution the page repeats: the group was picked by looking at a graph built from
//! these same columns, so the p-values are not a test of a hypothesis stated in advance;
//! read them as a ranking aid, not as evidence. They are not corrected for the number of
//! columns either.
//!
//! What it is not: a model of the group (no regression, no feature selection).

pub mod category;
pub mod chi2;
pub mod ks;

use serde::Serialize;

use crate::points::is_missing;
use crate::table::{ColumnData, Table};

pub use category::CategoryContrast;
pub use ks::{ks_2samp, KsResult, Method};

/// Everything [`crate::Workbench::explain`] tells about a group: numeric columns ranked by
/// KS (`columns`, as [`contrast`] gives them) and category columns ranked by total
/// variation distance (`categories`, as [`category_contrast`] gives them).
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Contrast {
    pub columns: Vec<ColumnContrast>,
    pub categories: Vec<CategoryContrast>,
}

/// How one column differs between the group and the rest.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct ColumnContrast {
    pub name: String,
    /// Standardised mean difference (Cohen's d); `None` when it is undefined (fewer than
    /// two values in all, or no spread at all).
    pub smd: Option<f64>,
    /// Kolmogorov–Smirnov statistic in [0, 1]; `None` when either side has no value.
    pub ks: Option<f64>,
    pub p_value: Option<f64>,
    /// How the p-value was computed: "exact" or "asymptotic".
    pub p_method: Option<Method>,
    pub mean_in: Option<f64>,
    pub mean_out: Option<f64>,
    /// Rows with a value in this column, in the group and outside it.
    pub n_in: usize,
    pub n_out: usize,
}

/// For each numeric column, the rows with a value, sorted by that value. Built once per
/// table (and fill values), 4 bytes per row and column, so each comparison is one pass.
#[derive(Debug, Clone, Default)]
pub struct SortedColumns {
    /// Indexed like `Table::columns`; `None` for category columns.
    pub orders: Vec<Option<Vec<u32>>>,
}

impl SortedColumns {
    pub fn new(table: &Table, fill_values: &[f64]) -> SortedColumns {
        let orders = table
            .columns
            .iter()
            .map(|c| match &c.data {
                ColumnData::Number(v) | ColumnData::Time(crate::timecol::Times { seconds: v, .. }) => {
                    let fill_values = if c.is_time() { &[][..] } else { fill_values };
                    let mut rows: Vec<u32> = (0..v.len() as u32).filter(|&r| !is_missing(v[r as usize], fill_values)).collect();
                    rows.sort_unstable_by(|&a, &b| v[a as usize].total_cmp(&v[b as usize]));
                    Some(rows)
                }
                ColumnData::Category { .. } => None,
            })
            .collect();
        SortedColumns { orders }
    }
}

/// Standardised mean difference and the two means, by two passes (mean, then squared
/// deviations) for accuracy.
pub fn smd(a: &[f64], b: &[f64]) -> (Option<f64>, Option<f64>, Option<f64>) {
    let mean = |v: &[f64]| (!v.is_empty()).then(|| v.iter().sum::<f64>() / v.len() as f64);
    let (ma, mb) = (mean(a), mean(b));
    let d = match (ma, mb) {
        (Some(ma), Some(mb)) if a.len() + b.len() > 2 => {
            let ss = |v: &[f64], m: f64| v.iter().map(|x| (x - m) * (x - m)).sum::<f64>();
            let pooled = ((ss(a, ma) + ss(b, mb)) / (a.len() + b.len() - 2) as f64).sqrt();
            (pooled > 0.0 && pooled.is_finite()).then(|| (ma - mb) / pooled)
        }
        _ => None,
    };
    (d, ma, mb)
}

/// Compares every numeric column of `table` between rows flagged in `in_group` and the
/// others, ranked as the module says.
pub fn contrast(table: &Table, sorted: &SortedColumns, in_group: &[bool]) -> Vec<ColumnContrast> {
    contrast_among(table, sorted, in_group, None)
}

/// [`contrast`] among the rows flagged in `among` only (the rows a row condition keeps;
/// every row when `None`): the others are neither in the group nor in the rest.
pub fn contrast_among(table: &Table, sorted: &SortedColumns, in_group: &[bool], among: Option<&[bool]>) -> Vec<ColumnContrast> {
    let kept_order: Vec<Vec<u32>>;
    let orders: Vec<Option<&Vec<u32>>> = match among {
        None => sorted.orders.iter().map(Option::as_ref).collect(),
        Some(keep) => {
            kept_order = sorted.orders.iter().map(|o| o.as_ref().map_or_else(Vec::new, |o| o.iter().copied().filter(|&r| keep[r as usize]).collect())).collect();
            sorted.orders.iter().zip(&kept_order).map(|(o, k)| o.as_ref().map(|_| k)).collect()
        }
    };
    let mut out: Vec<ColumnContrast> = table
        .columns
        .iter()
        .zip(orders)
        .filter_map(|(c, order)| {
            let (Some(v), Some(order)) = (c.as_numbers(), order) else { return None };
            let (mut a, mut b) = (Vec::new(), Vec::new());
            for &r in order {
                if in_group[r as usize] {
                    a.push(v[r as usize]);
                } else {
                    b.push(v[r as usize]);
                }
            }
            let (d, mean_in, mean_out) = smd(&a, &b);
            // Cumulative counts at each distinct value, walking the sorted rows.
            let mut steps = Vec::new();
            let (mut ci, mut co) = (0usize, 0usize);
            let mut i = 0;
            while i < order.len() {
                let x = v[order[i] as usize];
                while i < order.len() && v[order[i] as usize] == x {
                    if in_group[order[i] as usize] {
                        ci += 1;
                    } else {
                        co += 1;
                    }
                    i += 1;
                }
                steps.push((ci, co));
            }
            let k = ks::from_steps(a.len(), b.len(), steps);
            Some(ColumnContrast {
                name: c.name.clone(),
                smd: d,
                ks: k.map(|k| k.statistic),
                p_value: k.map(|k| k.p_value),
                p_method: k.map(|k| k.method),
                mean_in,
                mean_out,
                n_in: a.len(),
                n_out: b.len(),
            })
        })
        .collect();
    out.sort_by(|x, y| {
        let key = |c: &ColumnContrast| (c.ks.unwrap_or(-1.0), c.smd.map_or(-1.0, f64::abs));
        let (kx, ky) = (key(x), key(y));
        ky.0.total_cmp(&kx.0).then(ky.1.total_cmp(&kx.1)).then(x.name.cmp(&y.name))
    });
    out
}

/// Compares every category column of `table` between rows flagged in `in_group` and the
/// others, ranked by total variation distance (see [`category`]).
pub fn category_contrast(table: &Table, in_group: &[bool]) -> Vec<CategoryContrast> {
    category_contrast_among(table, in_group, None)
}

/// [`category_contrast`] among the rows flagged in `among` only (every row when `None`).
pub fn category_contrast_among(table: &Table, in_group: &[bool], among: Option<&[bool]>) -> Vec<CategoryContrast> {
    let mut out: Vec<CategoryContrast> = table
        .columns
        .iter()
        .filter_map(|c| match &c.data {
            ColumnData::Category { codes, levels } => Some(category::contrast_codes_among(&c.name, levels, codes, in_group, among)),
            ColumnData::Number(_) | ColumnData::Time(_) => None,
        })
        .collect();
    category::rank(&mut out);
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::table::Column;

    #[test]
    fn smd_by_hand() {
        // a = [1, 2, 3] (mean 2, ss 2), b = [4, 6] (mean 5, ss 2): s_p = sqrt(4 / 3).
        let (d, ma, mb) = smd(&[1.0, 2.0, 3.0], &[4.0, 6.0]);
        assert_eq!((ma, mb), (Some(2.0), Some(5.0)));
        assert!((d.unwrap() - (-3.0 / (4.0f64 / 3.0).sqrt())).abs() < 1e-15);
        assert_eq!(smd(&[1.0], &[1.0]).0, None);
        assert_eq!(smd(&[2.0, 2.0], &[2.0]).0, None);
    }

    #[test]
    fn ranks_the_column_that_separates_the_group_first() {
        let n = 40;
        let group: Vec<bool> = (0..n).map(|i| i < 10).collect();
        let t = Table::from_columns(
            "t",
            vec![
                Column::number("noise", (0..n).map(|i| ((i * 7919) % 13) as f64).collect()),
                Column::number("split", (0..n).map(|i| if i < 10 { 100.0 + i as f64 } else { i as f64 }).collect()),
                Column::category("c", vec![0; n], vec!["x".into()]),
            ],
        )
        .unwrap();
        let s = SortedColumns::new(&t, &[]);
        let r = contrast(&t, &s, &group);
        assert_eq!(r.len(), 2);
        assert_eq!(r[0].name, "split");
        assert_eq!(r[0].ks, Some(1.0));
        assert_eq!((r[0].n_in, r[0].n_out), (10, 30));
        // Same statistic as the sample-based function.
        let a: Vec<f64> = (0..10).map(|i| 100.0 + i as f64).collect();
        let b: Vec<f64> = (10..n).map(|i| i as f64).collect();
        assert_eq!(r[0].p_value, ks_2samp(&a, &b).map(|k| k.p_value));
    }
}
