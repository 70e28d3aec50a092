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
    let subset = rows;
    let chosen = choose_rows(table, s, 0, None, subset.map(|r| &r.keep[..]))?;
    let (left_out_by_column, filled_by_column) = chosen.counts.finish(subset)?;
    let columns = PointsKey::of(s).columns;
    let d = columns.len();
    let mut sums = ColumnSums::new(d);
    sums.add_rows(&chosen.raw);
    let squares = (s.scaling == Scaling::Zscore).then(|| {
        let mut q = SquareSums::new(sums.means());
        q.add_rows(&chosen.raw);
        q
    });
    let scales = scales(s.scaling, &columns, &sums, squares.as_ref()).map_err(|e| match (e, subset) {
        (Error::Data(m), Some(r)) => Error::Data(m.replacen(
            "; leave it out",
            &format!(" (the rows used are those kept by the condition {}); leave it out", r.condition),
            1,
        )),
        (e, _) => e,
    })?;
    let m = chosen.rows.len();
    let data = Array2::from_shape_vec((m, d), scale_rows(chosen.raw, &scales)).expect("m rows of d values");
    let pts = Points {
        data,
        rows: chosen.rows,
        columns,
        left_out: chosen.counts.rows - m,
        not_kept: subset.map_or(0, |r| r.not_kept),
        not_kept_undecided: subset.map_or(0, |r| r.undecided),
        left_out_by_column,
        filled_by_column,
        set_aside: Vec::new(),
    };
    match &s.denoise {
        Some(dn) => set_aside_far_rows(pts, dn),
        None => Ok(pts),
    }
}

/// The rows of a table (or of one part of a table) that take part, with their values
/// before scaling. [`build_points`] is this on the whole table, then scaling; a run in
/// parts ([`crate::parts`]) calls it on each part and merges the counts.
#[derive(Debug, Clone, PartialEq)]
pub struct Chosen {
    /// Table rows of the points: `first_row` plus the row's index in the part, increasing.
    pub rows: Vec<u32>,
    /// The chosen columns' values at `rows`, row-major (`rows.len()` × d), median fills
    /// applied, not scaled.
    pub raw: Vec<f64>,
    /// The values of each filter column (`lens.column`, then `lens2.column`) at `rows`,
    /// fills applied.
    pub lens_columns: Vec<(String, Vec<f64>)>,
    pub counts: RowCounts,
}

/// What choosing the rows counted, in a form that adds up over the parts of a table.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct RowCounts {
    /// Rows looked at.
    pub rows: usize,
    /// Rows that take part.
    pub kept: usize,
    /// For each column under the leave-out rule (the chosen columns, then the filter
    /// columns, each once), the rows without a value there.
    pub missing: Vec<(String, usize)>,
    /// For each column under the median policy, the rows taking part that took its median.
    pub filled: Vec<(String, usize)>,
    /// Under a row condition: the rows it did not keep, those of them where it could not
    /// be decided, and the first row it kept (0-based table row).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub condition: Option<ConditionCounts>,
}

/// What a row condition set aside in one part (see [`RowCounts::condition`]).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ConditionCounts {
    pub not_kept: usize,
    pub undecided: usize,
    pub first_kept: Option<usize>,
}

impl RowCounts {
    /// Adds the counts of another part of the same table under the same settings.
    pub fn add(&mut self, other: &RowCounts) -> Result<()> {
        let same = |a: &[(String, usize)], b: &[(String, usize)]| a.len() == b.len() && a.iter().zip(b).all(|(x, y)| x.0 == y.0);
        if !same(&self.missing, &other.missing) || !same(&self.filled, &other.filled) {
            return Err(Error::Data("internal: the parts of the table were counted under different missing-value rules".into()));
        }
        if self.condition.is_some() != other.condition.is_some() {
            return Err(Error::Data("internal: the parts of the table were counted under different row conditions".into()));
        }
        if let (Some(a), Some(b)) = (&mut self.condition, &other.condition) {
            a.not_kept += b.not_kept;
            a.undecided += b.undecided;
            a.first_kept = match (a.first_kept, b.first_kept) {
                (Some(x), Some(y)) => Some(x.min(y)),
                (x, y) => x.or(y),
            };
        }
        self.rows += other.rows;
        self.kept += other.kept;
        self.missing.iter_mut().zip(&other.missing).for_each(|(a, b)| a.1 += b.1);
        self.filled.iter_mut().zip(&other.filled).for_each(|(a, b)| a.1 += b.1);
        Ok(())
    }

    /// The rows left out and filled per column (the columns that cost or filled rows),
    /// or the error for a column with no value in any row, or for no row taking part.
    /// `subset` is the row condition's answer the rows were chosen among (its words go
    /// into the errors).
    pub fn finish(&self, subset: Option<&RowSubset>) -> Result<(Vec<(String, usize)>, Vec<(String, usize)>)> {
        self.finish_words(subset.map(|r| (r.condition.as_str(), r.kept)))
    }

    /// [`RowCounts::finish`] with the condition's text and the rows it kept given apart (a
    /// run in parts has no [`RowSubset`] of the whole table).
    pub fn finish_words(&self, subset: Option<(&str, usize)>) -> Result<(Vec<(String, usize)>, Vec<(String, usize)>)> {
        let n = self.rows;
        let kept_words = |r: (&str, usize)| format!(" of the {} rows kept by the condition {}", r.1, r.0);
        if let Some((c, _)) = self.missing.iter().find(|(_, k)| *k == n && n > 0) {
            let place = subset.map_or_else(|| " in any row".to_string(), |r| format!(" in any{}", kept_words(r)));
            return Err(Error::Data(format!(
                "column '{c}' has no value{place} (every cell is empty, a missing marker or a fill value); leave it out"
            )));
        }
        let by_column: Vec<(String, usize)> = self.missing.iter().filter(|(_, k)| *k > 0).cloned().collect();
        if self.kept == 0 {
            let worst = by_column.iter().max_by_key(|(_, c)| *c).map(|(c, k)| format!(" ('{c}' is missing in {k} rows)")).unwrap_or_default();
            let place = subset.map_or_else(String::new, kept_words);
            return Err(Error::Data(format!(
                "no row{place} has a value in every chosen column{worst}; choose other columns or declare fewer fill values"
            )));
        }
        Ok((by_column, self.filled.iter().filter(|(_, k)| *k > 0).cloned().collect()))
    }
}

/// The columns under the median policy among the chosen and filter columns, each once:
/// the medians a run in parts computes over the whole table and hands to [`choose_rows`].
pub fn median_columns(s: &Settings) -> Vec<String> {
    let key = PointsKey::of(s);
    let mut out: Vec<String> = Vec::new();
    for c in key.columns.iter().chain(&key.lens_columns) {
        if s.missing.policy_for(c) == crate::settings::MissingPolicy::Median && !out.contains(c) {
            out.push(c.clone());
        }
    }
    out
}

/// The rows of `table` that take part under `s` and their values (see [`Chosen`]).
/// `first_row` is the table row of the part's first row (0 for a whole table). `medians`
/// gives the median of each of [`median_columns`] over the whole table (`None` where no
/// row has a value); when `medians` is `None` they are taken from `table` itself (over the
/// rows `among` flags). `among` flags the rows the row condition keeps (every row when
/// `None`): the others are not looked at, nor counted.
pub fn choose_rows(table: &Table, s: &Settings, first_row: u32, medians: Option<&[(String, Option<f64>)]>, among: Option<&[bool]>) -> Result<Chosen> {
    let key = PointsKey::of(s);
    let mut seen = std::collections::HashSet::new();
    for c in &key.columns {
        if !seen.insert(c.as_str()) {
            return Err(Error::settings("columns", format!("column '{c}' is listed twice")));
        }
    }
    let view = |c: &str, field: &str| -> Result<ColumnValues<'_>> {
        let raw = table.numbers(c, field)?;
        Ok(match medians {
            None => ColumnValues::among(c, raw, &s.missing, among),
            Some(m) => ColumnValues::with_median(c, raw, &s.missing, m.iter().find(|(k, _)| k == c).and_then(|(_, v)| *v)),
        })
    };
    let cols: Vec<ColumnValues> = key.columns.iter().map(|c| view(c, "columns")).collect::<Result<_>>()?;
    let lens_fields = if matches!(s.lens, Lens::Column { .. }) { ["lens.column", "lens2.column"] } else { ["lens2.column", "lens2.column"] };
    let lens_cols: Vec<ColumnValues> = key.lens_columns.iter().zip(lens_fields).map(|(c, f)| view(c, f)).collect::<Result<_>>()?;
    let n = table.n_rows;
    let looked_at = among.map_or(n, |a| a.iter().filter(|&&k| k).count());
    let d = cols.len();

    let mut keep = among.map_or_else(|| vec![true; n], |a| a.to_vec());
    let mut missing = Vec::new();
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
        if !missing.iter().any(|(c, _): &(String, usize)| c == name) {
            missing.push((name.clone(), count));
        }
    }
    let local: Vec<u32> = (0..n as u32).filter(|&i| keep[i as usize]).collect();
    let filled: Vec<(String, usize)> =
        filled_cols.iter().map(|(name, col)| ((*name).clone(), local.iter().filter(|&&r| col.is_missing(r as usize)).count())).collect();
    // Written row by row: one pass over the rows in memory order (a column at a time wrote
    // one value per cache line of a large table, `d` times over).
    let mut raw = Vec::with_capacity(local.len() * d);
    for &r in &local {
        raw.extend(cols.iter().map(|col| col.get(r as usize).expect("kept rows have a value or a fill")));
    }
    let lens_columns = key
        .lens_columns
        .iter()
        .zip(&lens_cols)
        .map(|(name, col)| (name.clone(), local.iter().map(|&r| col.get(r as usize).expect("kept rows have a filter value")).collect()))
        .collect();
    // What the condition set aside is counted by its caller ([`crate::parts::choose`]).
    let counts = RowCounts { rows: looked_at, kept: local.len(), missing, filled, condition: None };
    Ok(Chosen { rows: local.into_iter().map(|r| first_row + r).collect(), raw, lens_columns, counts })
}

/// Running sums, least and greatest value of each of d columns over rows added in table
/// order: the one order in which the engine and a run in parts ([`crate::parts`], part
/// after part) add, so both get the same bits.
#[derive(Debug, Clone, PartialEq)]
pub struct ColumnSums {
    pub count: usize,
    pub sum: Vec<f64>,
    pub lo: Vec<f64>,
    pub hi: Vec<f64>,
}

impl ColumnSums {
    pub fn new(d: usize) -> Self {
        ColumnSums { count: 0, sum: vec![0.0; d], lo: vec![f64::INFINITY; d], hi: vec![f64::NEG_INFINITY; d] }
    }

    /// Adds rows given row-major, d values each, in order.
    pub fn add_rows(&mut self, rows: &[f64]) {
        let d = self.sum.len();
        if d == 0 {
            return;
        }
        for row in rows.chunks_exact(d) {
            for (j, &x) in row.iter().enumerate() {
                self.sum[j] += x;
                self.lo[j] = self.lo[j].min(x);
                self.hi[j] = self.hi[j].max(x);
            }
        }
        self.count += rows.len() / d;
    }

    /// Each column's mean (sum / count).
    pub fn means(&self) -> Vec<f64> {
        let m = self.count as f64;
        self.sum.iter().map(|s| s / m).collect()
    }
}

/// Running sums of squared deviations from given means, rows added in table order (the
/// second pass of the z-score).
#[derive(Debug, Clone, PartialEq)]
pub struct SquareSums {
    pub means: Vec<f64>,
    pub sq: Vec<f64>,
}

impl SquareSums {
    pub fn new(means: Vec<f64>) -> Self {
        let d = means.len();
        SquareSums { means, sq: vec![0.0; d] }
    }

    pub fn add_rows(&mut self, rows: &[f64]) {
        let d = self.means.len();
        if d == 0 {
            return;
        }
        for row in rows.chunks_exact(d) {
            for (j, &x) in row.iter().enumerate() {
                self.sq[j] += (x - self.means[j]).powi(2);
            }
        }
    }
}

/// (shift, scale) of each column so that (x - shift) / scale is its scaled value: from
/// the sums over the rows taking part (and, for the z-score, the squared deviations from
/// their means); the error names the first column that cannot be scaled.
pub fn scales(scaling: Scaling, columns: &[String], sums: &ColumnSums, squares: Option<&SquareSums>) -> Result<Vec<(f64, f64)>> {
    let m = sums.count as f64;
    (0..columns.len())
        .map(|j| {
            let r = match scaling {
                Scaling::None => Ok((0.0, 1.0)),
                Scaling::Zscore => {
                    let mean = sums.sum[j] / m;
                    let sq = squares.expect("the z-score needs its second pass").sq[j];
                    let sd = (sq / m).sqrt();
                    if !(sd > 0.0) || !sd.is_finite() {
                        Err("has the same value in every used row, so z-score cannot scale it")
                    } else {
                        Ok((mean, sd))
                    }
                }
                Scaling::MinMax => {
                    let (lo, hi) = (sums.lo[j], sums.hi[j]);
                    if !(hi > lo) || !(hi - lo).is_finite() {
                        Err("has the same value in every used row, so min-max cannot scale it")
                    } else {
                        Ok((lo, hi - lo))
                    }
                }
            };
            r.map_err(|why| Error::Data(format!("column '{}' {why}; leave it out or choose scaling 'none'", columns[j])))
        })
        .collect()
}

/// Rows (row-major, one (shift, scale) per column) scaled in place: (x - shift) / scale.
pub fn scale_rows(mut raw: Vec<f64>, scales: &[(f64, f64)]) -> Vec<f64> {
    let d = scales.len();
    if d > 0 {
        for row in raw.chunks_exact_mut(d) {
            for (x, &(shift, scale)) in row.iter_mut().zip(scales) {
                *x = (*x - shift) / scale;
            }
        }
    }
    raw
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
