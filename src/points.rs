//! From a table to points: the chosen columns, with rows that miss a value left out
//! (and counted), scaled, as one contiguous row-major n × d matrix for distance work.
//!
//! This module decides which of the rows kept by the row condition ([`crate::subset`])
//! take part; every later stage works on point indices and maps back to table rows
//! through [`Points::rows`]. Rows the condition does not keep are not looked at at all:
//! they are not counted as missing, and scaling and median fills use the kept rows only.
//! The optional denoising stage ([`crate::settings::Denoise`], [`set_aside_far_rows`])
//! runs last here, after scaling and before any filter: the rows it sets aside are not
//! points, and are listed in [`Points::set_aside`].

use ndarray::Array2;

use crate::error::{Error, Result};
use crate::missing::ColumnValues;
use crate::settings::{Lens, Scaling, Settings};
use crate::subset::RowSubset;
use crate::table::Table;

#[derive(Debug, Clone, PartialEq)]
pub struct Points {
    /// n × d, row-major, scaled.
    pub data: Array2<f64>,
    /// Table row index of each point, increasing.
    pub rows: Vec<u32>,
    pub columns: Vec<String>,
    /// Rows kept by the row condition but left out because a chosen column (or the lens
    /// column) had no value.
    pub left_out: usize,
    /// Rows the row condition did not keep (0 without a condition).
    pub not_kept: usize,
    /// Of `not_kept`, rows where the condition was unknown for a missing value.
    pub not_kept_undecided: usize,
    /// For each column that cost rows, how many rows had no value there.
    pub left_out_by_column: Vec<(String, usize)>,
    /// For each column under the median policy, how many of the points took its median
    /// (rows left out for another column are not counted).
    pub filled_by_column: Vec<(String, usize)>,
    /// Table rows that had every value but were set aside by denoising, increasing.
    pub set_aside: Vec<u32>,
}

/// The part of the settings this stage reads; equal keys give equal points.
#[derive(Debug, Clone, PartialEq)]
pub struct PointsKey {
    columns: Vec<String>,
    scaling: Scaling,
    missing: crate::settings::Missing,
    /// Columns read by the filters (first, then second), which must have values too.
    lens_columns: Vec<String>,
    /// Derived columns change the values behind their names.
    derived: Vec<crate::settings::Derived>,
    denoise: Option<crate::settings::Denoise>,
    /// The row condition.
    keep_rows: Option<String>,
}

impl PointsKey {
    pub fn of(s: &Settings) -> Self {
        PointsKey {
            columns: s.columns.clone(),
            scaling: s.scaling,
            missing: s.missing.clone(),
            lens_columns: [Some(&s.lens), s.lens2.as_ref()]
                .into_iter()
                .flatten()
                .filter_map(|l| match l {
                    Lens::Column { column } => Some(column.clone()),
                    _ => None,
                })
                .collect(),
            derived: s.derived.clone(),
            denoise: s.denoise.clone(),
            keep_rows: s.keep_rows.clone(),
        }
    }
}

/// A value counts as missing when it is NaN, infinite or one of the declared fill values.
pub fn is_missing(x: f64, fill_values: &[f64]) -> bool {
    !x.is_finite() || fill_values.contains(&x)
}

/// The points of `s` over `table` (with the derived columns of `s` appended), the row
/// condition evaluated here; [`crate::engine::Workbench`] keeps the rows kept instead and
/// calls [`build_points_in`].
pub fn build_points(table: &Table, s: &Settings) -> Result<Points> {
    let rows = crate::subset::select(table, s)?;
    build_points_in(table, s, rows.as_ref())
}

/// The points of `s` over the rows `rows` keeps (every row when `None`); `rows` must be
/// [`crate::subset::select`]'s answer for `table` and `s`.
pub fn build_points_in(table: &Table, s: &Settings, rows: Option<&RowSubset>) -> Result<Points> {
    let key = PointsKey::of(s);
    let mut seen = std::collections::HashSet::new();
    for c in &key.columns {
        if !seen.insert(c.as_str()) {
            return Err(Error::settings("columns", format!("column '{c}' is listed twice")));
        }
    }
    let among = rows.map(|r| &r.keep[..]);
    let view = |c: &str, field: &str| -> Result<ColumnValues<'_>> { Ok(ColumnValues::among(c, table.numbers(c, field)?, &s.missing, among)) };
    let cols: Vec<ColumnValues> = key.columns.iter().map(|c| view(c, "columns")).collect::<Result<_>>()?;
    let lens_fields = if matches!(s.lens, Lens::Column { .. }) { ["lens.column", "lens2.column"] } else { ["lens2.column", "lens2.column"] };
    let lens_cols: Vec<ColumnValues> = key.lens_columns.iter().zip(lens_fields).map(|(c, f)| view(c, f)).collect::<Result<_>>()?;
    let n = rows.map_or(table.n_rows, |r| r.kept);
    let d = cols.len();

    let mut keep = rows.map_or_else(|| vec![true; table.n_rows], |r| r.keep.clone());
    let mut by_column = Vec::new();
    let mut filled_cols = Vec::new();
    for (name, col) in key.columns.iter().zip(&cols).chain(key.lens_columns.iter().zip(&lens_cols)) {
        if col.fill_with.is_some() {
            if !filled_cols.iter().any(|(c, _): &(&String, &ColumnValues)| *c == name) {
                filled_cols.push((name, col));
            }
            continue;
        }
        let mut count = 0;
        for (r, k) in keep.iter_mut().enumerate() {
            if col.is_missing(r) && (among.is_none_or(|a| a[r])) {
                *k = false;
                count += 1;
            }
        }
        if count > 0 && !by_column.iter().any(|(c, _): &(String, usize)| c == name) {
            by_column.push((name.clone(), count));
        }
    }
    let subset = rows;
    let rows: Vec<u32> = (0..table.n_rows as u32).filter(|&i| keep[i as usize]).collect();
    let kept_words = |r: &RowSubset| format!(" of the {} rows kept by the condition {}", r.kept, r.condition);
    if let Some((c, _)) = by_column.iter().find(|(_, k)| *k == n && n > 0) {
        let place = subset.map_or_else(|| " in any row".to_string(), |r| format!(" in any{}", kept_words(r)));
        return Err(Error::Data(format!(
            "column '{c}' has no value{place} (every cell is empty, a missing marker or a fill value); leave it out"
        )));
    }
    let filled_by_column: Vec<(String, usize)> = filled_cols
        .iter()
        .map(|(name, col)| ((*name).clone(), rows.iter().filter(|&&r| col.is_missing(r as usize)).count()))
        .filter(|(_, k)| *k > 0)
        .collect();
    if rows.is_empty() {
        let worst = by_column.iter().max_by_key(|(_, c)| *c).map(|(c, k)| format!(" ('{c}' is missing in {k} rows)")).unwrap_or_default();
        let place = subset.map_or_else(String::new, kept_words);
        return Err(Error::Data(format!(
            "no row{place} has a value in every chosen column{worst}; choose other columns or declare fewer fill values"
        )));
    }
    let m = rows.len();
    let mut values = Vec::with_capacity(m);
    let mut scales = Vec::with_capacity(d);
    for (j, col) in cols.iter().enumerate() {
        values.clear();
        values.extend(rows.iter().map(|&r| col.get(r as usize).expect("kept rows have a value or a fill")));
        scales.push(scaling_of(&values, s.scaling).map_err(|why| {
            let kept = subset.map_or_else(String::new, |r| format!(" (the rows used are those kept by the condition {})", r.condition));
            Error::Data(format!("column '{}' {why}{kept}; leave it out or choose scaling 'none'", key.columns[j]))
        })?);
    }
    drop(values);
    // Written row by row: one pass over the rows in memory order (a column at a time wrote
    // one value per cache line of a large table, `d` times over).
    let mut flat = Vec::with_capacity(m * d);
    for &r in &rows {
        flat.extend(cols.iter().zip(&scales).map(|(col, &(shift, scale))| {
            (col.get(r as usize).expect("kept rows have a value or a fill") - shift) / scale
        }));
    }
    let data = Array2::from_shape_vec((m, d), flat).expect("m rows of d values");
    let pts = Points {
        data,
        rows,
        columns: key.columns,
        left_out: n - m,
        not_kept: subset.map_or(0, |r| r.not_kept),
        not_kept_undecided: subset.map_or(0, |r| r.undecided),
        left_out_by_column: by_column,
        filled_by_column,
        set_aside: Vec::new(),
    };
    match &s.denoise {
        Some(dn) => set_aside_far_rows(pts, dn),
        None => Ok(pts),
    }
}

/// The denoising stage: each point's value under `dn.measure` with `dn.k` neighbours
/// ([`crate::filter::knn`], the point itself counted first), and the points whose value
/// lies strictly above the `dn.quantile` quantile of all values (NumPy's default,
/// linear interpolation) moved to [`Points::set_aside`]. Checked against scikit-learn's
/// `NearestNeighbors` in `tests/reference.rs`.
pub fn set_aside_far_rows(mut pts: Points, dn: &crate::settings::Denoise) -> Result<Points> {
    let n = pts.rows.len();
    if dn.k > n {
        return Err(Error::settings("denoise.k", format!("{} neighbours asked for but only {n} rows take part; choose k at most {n}", dn.k)));
    }
    let what = match dn.measure {
        crate::settings::DenoiseMeasure::DistanceToMeasure => crate::filter::knn::KnnValue::DistanceToMeasure,
        crate::settings::DenoiseMeasure::NeighbourDistance => crate::filter::knn::KnnValue::KthDistance,
    };
    let values = crate::filter::knn::knn_lens(pts.data.view(), dn.k, what).map_err(|e| match e {
        Error::Settings { message, .. } => Error::settings("denoise.k", message),
        e => e,
    })?;
    let cut = quantile(&values, dn.quantile);
    let keep: Vec<usize> = (0..n).filter(|&i| values[i] <= cut).collect();
    if keep.len() == n {
        return Ok(pts);
    }
    let d = pts.data.ncols();
    let flat = pts.data.as_slice().expect("points are contiguous");
    let mut data = Vec::with_capacity(keep.len() * d);
    for &i in &keep {
        data.extend_from_slice(&flat[i * d..(i + 1) * d]);
    }
    pts.set_aside = (0..n).filter(|&i| values[i] > cut).map(|i| pts.rows[i]).collect();
    pts.rows = keep.iter().map(|&i| pts.rows[i]).collect();
    pts.data = Array2::from_shape_vec((keep.len(), d), data).expect("kept rows of d values");
    Ok(pts)
}

/// The `q` quantile of `values` with NumPy's default rule: the sorted values at position
/// (n - 1) q, interpolated linearly between the two neighbouring order statistics.
pub fn quantile(values: &[f64], q: f64) -> f64 {
    let mut v = values.to_vec();
    v.sort_unstable_by(f64::total_cmp);
    if v.is_empty() {
        return f64::NAN;
    }
    let pos = (v.len() - 1) as f64 * q;
    let lo = pos.floor() as usize;
    let hi = (lo + 1).min(v.len() - 1);
    v[lo] + (pos - lo as f64) * (v[hi] - v[lo])
}

/// (shift, scale) so that (x - shift) / scale is the scaled value, from the used values.
fn scaling_of(values: &[f64], scaling: Scaling) -> std::result::Result<(f64, f64), &'static str> {
    let m = values.len() as f64;
    match scaling {
        Scaling::None => Ok((0.0, 1.0)),
        Scaling::Zscore => {
            let mean = values.iter().sum::<f64>() / m;
            let var = values.iter().map(|&x| (x - mean).powi(2)).sum::<f64>() / m;
            let sd = var.sqrt();
            if !(sd > 0.0) || !sd.is_finite() {
                return Err("has the same value in every used row, so z-score cannot scale it");
            }
            Ok((mean, sd))
        }
        Scaling::MinMax => {
            let (lo, hi) = values.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &x| (lo.min(x), hi.max(x)));
            if !(hi > lo) || !(hi - lo).is_finite() {
                return Err("has the same value in every used row, so min-max cannot scale it");
            }
            Ok((lo, hi - lo))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::settings::*;
    use crate::table::Column;

    fn settings(cols: &[&str], scaling: Scaling) -> Settings {
        Settings {
            version: SETTINGS_VERSION,
            columns: cols.iter().map(|s| s.to_string()).collect(),
            scaling,
            missing: Missing { fill_values: vec![-9999.0], ..Default::default() },
            lens: Lens::Principal { component: 1 },
            cover: CoverSettings::uniform(4, 0.25),
            clustering: Clustering::Dbscan { eps: 1.0, min_points: 2 },
            edges: EdgeRule::default(),
            seed: 1,
            derived: Vec::new(),
            lens2: None,
            cover2: None,
            denoise: None,
            min_cluster_share: 0.0,
            keep_rows: None,
        }
    }

    fn table() -> Table {
        Table::from_columns(
            "t",
            vec![
                Column::number("a", vec![1.0, 2.0, f64::NAN, 4.0, 5.0]),
                Column::number("b", vec![10.0, -9999.0, 30.0, 40.0, 50.0]),
                Column::number("k", vec![7.0; 5]),
                Column::category("s", vec![0, 1, 0, 1, 0], vec!["x".into(), "y".into()]),
            ],
        )
        .unwrap()
    }

    #[test]
    fn quantile_is_numpys_linear_rule() {
        // numpy.quantile([1, 2, 4, 8], q): 0.5 -> 3.0, 0.9 -> 6.8, 1.0 -> 8 (by hand from
        // the definition: position 3 q between the order statistics).
        assert_eq!(quantile(&[8.0, 1.0, 4.0, 2.0], 0.5), 3.0);
        assert!((quantile(&[8.0, 1.0, 4.0, 2.0], 0.9) - 6.8).abs() < 1e-12);
        assert_eq!(quantile(&[8.0, 1.0, 4.0, 2.0], 1.0), 8.0);
    }

    #[test]
    fn denoising_sets_aside_the_far_rows_and_lists_them() {
        // Points 0..=9 on a line and one at 100: its 2nd-neighbour distance (91) is the
        // only one above the 0.9 quantile (neighbours at distance 1 elsewhere).
        let mut v: Vec<f64> = (0..10).map(f64::from).collect();
        v.push(100.0);
        let t = Table::from_columns("t", vec![Column::number("a", v)]).unwrap();
        let mut s = settings(&["a"], Scaling::None);
        s.denoise = Some(Denoise { measure: DenoiseMeasure::NeighbourDistance, k: 2, quantile: 0.9 });
        let p = build_points(&t, &s).unwrap();
        assert_eq!(p.set_aside, vec![10]);
        assert_eq!(p.rows, (0..10).collect::<Vec<u32>>());
        assert_eq!(p.data.nrows(), 10);
        s.denoise = Some(Denoise { measure: DenoiseMeasure::DistanceToMeasure, k: 20, quantile: 0.9 });
        assert!(build_points(&t, &s).unwrap_err().to_string().contains("denoise.k"));
    }

    #[test]
    fn leaves_out_and_counts_rows_with_missing_or_fill_values() {
        let p = build_points(&table(), &settings(&["a", "b"], Scaling::None)).unwrap();
        assert_eq!(p.rows, vec![0, 3, 4]);
        assert_eq!(p.left_out, 2);
        assert_eq!(p.left_out_by_column, vec![("a".to_string(), 1), ("b".to_string(), 1)]);
        assert_eq!(p.data.row(1).to_vec(), vec![4.0, 40.0]);
    }

    #[test]
    fn zscore_uses_population_sd() {
        // numpy: (x - x.mean()) / x.std() with ddof = 0 (NumPy's default; scikit-learn's StandardScaler).
        let p = build_points(&table(), &settings(&["a"], Scaling::Zscore)).unwrap();
        let x = [1.0, 2.0, 4.0, 5.0];
        let mean = 3.0;
        let sd = (x.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / 4.0).sqrt();
        for (i, v) in x.iter().enumerate() {
            assert!((p.data[[i, 0]] - (v - mean) / sd).abs() < 1e-12);
        }
    }

    #[test]
    fn constant_column_is_refused_by_name() {
        let e = build_points(&table(), &settings(&["a", "k"], Scaling::Zscore)).unwrap_err().to_string();
        assert!(e.contains("'k'") && e.contains("same value"), "{e}");
        assert!(build_points(&table(), &settings(&["a", "k"], Scaling::None)).is_ok());
    }

    #[test]
    fn category_and_unknown_columns_are_refused_by_name() {
        let e = build_points(&table(), &settings(&["s"], Scaling::None)).unwrap_err().to_string();
        assert!(e.contains("'s'") && e.contains("categories"), "{e}");
        let e = build_points(&table(), &settings(&["zz"], Scaling::None)).unwrap_err().to_string();
        assert!(e.contains("'zz'"), "{e}");
    }

    #[test]
    fn lens_column_missing_rows_are_left_out_too() {
        let mut s = settings(&["b"], Scaling::None);
        s.lens = Lens::Column { column: "a".into() };
        let p = build_points(&table(), &s).unwrap();
        assert_eq!(p.rows, vec![0, 3, 4]);
    }

    #[test]
    fn median_policy_fills_and_counts_per_column() {
        // Column a (NaN at row 2) filled with the median of 1, 2, 4, 5 = 3 (NumPy's median,
        // by hand); column b keeps the global rule, so row 1 (-9999) is still left out.
        let mut s = settings(&["a", "b"], Scaling::None);
        s.missing.per_column.insert("a".into(), ColumnMissing { fill_values: None, policy: MissingPolicy::Median });
        let p = build_points(&table(), &s).unwrap();
        assert_eq!(p.rows, vec![0, 2, 3, 4]);
        assert_eq!(p.data[[1, 0]], 3.0);
        assert_eq!(p.filled_by_column, vec![("a".to_string(), 1)]);
        assert_eq!(p.left_out_by_column, vec![("b".to_string(), 1)]);
        // A per-column fill list replaces the global one: for b, -9999 becomes a value.
        s.missing.per_column.insert("b".into(), ColumnMissing { fill_values: Some(vec![50.0]), policy: MissingPolicy::LeaveOut });
        let p = build_points(&table(), &s).unwrap();
        assert_eq!(p.rows, vec![0, 1, 2, 3]);
        assert_eq!(p.data[[1, 1]], -9999.0);
    }
}
