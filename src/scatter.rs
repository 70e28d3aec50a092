//! The data behind the page's linked scatter: two values per row, for a seeded sample of
//! at most `limit` rows, so the page draws a bounded number of points however large the
//! table is.
//!
//! Two kinds of axes:
//! - two columns of the table (file or derived): every row with a value in both;
//! - the first two principal components of the points the last graph was built from
//!   (the same scores as the principal-component lens, [`crate::filter::principal_scores`]).
//!
//! The sample is drawn with [`crate::rng::SplitMix64`] from the settings' seed, so the
//! same table and settings always show the same points. It is uniform over the rows that
//! have both values; `total` says how many those were, so the page can say it is a sample.
//!
//! What it is not: a drawing (the page draws), nor a density estimate.

use serde::Serialize;

use crate::error::{Error, Result};
use crate::filter::principal_scores;
use crate::points::{is_missing, Points};
use crate::rng::SplitMix64;
use crate::table::{ColumnData, Table};

/// Which two values each point of the scatter shows.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Axes {
    Columns(String, String),
    Principal,
}

/// Sampled rows and their two values; `rows` (table row indices) increase.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct ScatterData {
    pub rows: Vec<u32>,
    pub x: Vec<f64>,
    pub y: Vec<f64>,
    /// Rows that had both values, before sampling.
    pub total: usize,
    pub x_label: String,
    pub y_label: String,
    /// Positions in `rows` of the rows the last graph's denoising set aside (filled by
    /// [`crate::engine::Workbench::scatter`]; empty for principal components, whose points
    /// have none of them).
    #[serde(default)]
    pub set_aside: Vec<u32>,
}

fn numeric<'a>(table: &'a Table, name: &str, axis: &str) -> Result<&'a [f64]> {
    match table.column(name).map(|c| &c.data) {
        Some(ColumnData::Number(v)) => Ok(v),
        Some(ColumnData::Time(t)) => Ok(&t.seconds),
        Some(_) => Err(Error::settings(format!("scatter.{axis}"), format!("'{name}' is a category column; choose a numeric column"))),
        None => Err(Error::settings(format!("scatter.{axis}"), format!("no column named '{name}'"))),
    }
}

/// Keeps a seeded uniform sample of at most `limit` of the `total` candidates, in order.
fn sample(total: usize, limit: usize, seed: u64) -> Vec<usize> {
    SplitMix64::new(seed).sample_indices(total, limit)
}

/// Two columns of `table` at a sample of the rows that have both (fill values missing),
/// among the rows flagged in `among` (those a row condition keeps; every row when `None`).
pub fn column_pair(table: &Table, fill_values: &[f64], x: &str, y: &str, among: Option<&[bool]>, limit: usize, seed: u64) -> Result<ScatterData> {
    let xs = numeric(table, x, "x")?;
    let ys = numeric(table, y, "y")?;
    let both: Vec<u32> = (0..table.n_rows as u32)
        .filter(|&r| among.is_none_or(|a| a[r as usize]))
        .filter(|&r| !is_missing(xs[r as usize], fill_values) && !is_missing(ys[r as usize], fill_values))
        .collect();
    let keep = sample(both.len(), limit, seed);
    let rows: Vec<u32> = keep.iter().map(|&k| both[k]).collect();
    Ok(ScatterData {
        x: rows.iter().map(|&r| xs[r as usize]).collect(),
        y: rows.iter().map(|&r| ys[r as usize]).collect(),
        rows,
        total: both.len(),
        x_label: x.to_string(),
        y_label: y.to_string(),
        set_aside: Vec::new(),
    })
}

/// Scores on principal components 1 and 2 of `points`, at a sample of its rows.
pub fn principal_pair(points: &Points, limit: usize, seed: u64) -> Result<ScatterData> {
    if points.data.ncols() < 2 {
        return Err(Error::settings("scatter.axes", "principal components 1 and 2 need at least two point columns; tick another column or choose two columns"));
    }
    let a = principal_scores(points.data.view(), 1)?;
    let b = principal_scores(points.data.view(), 2)?;
    let keep = sample(points.rows.len(), limit, seed);
    Ok(ScatterData {
        rows: keep.iter().map(|&k| points.rows[k]).collect(),
        x: keep.iter().map(|&k| a[k]).collect(),
        y: keep.iter().map(|&k| b[k]).collect(),
        total: points.rows.len(),
        x_label: "principal component 1".into(),
        y_label: "principal component 2".into(),
        set_aside: Vec::new(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::settings::*;
    use crate::table::Column;

    fn table() -> Table {
        let x: Vec<f64> = (0..100).map(|i| if i % 10 == 3 { -9999.0 } else { i as f64 }).collect();
        let y: Vec<f64> = (0..100).map(|i| if i % 7 == 0 { f64::NAN } else { (i * 2) as f64 }).collect();
        Table::from_columns("t", vec![Column::number("x", x), Column::number("y", y)]).unwrap()
    }

    #[test]
    fn column_pair_keeps_rows_with_both_values_and_their_values() {
        let t = table();
        let s = column_pair(&t, &[-9999.0], "x", "y", None, 1000, 1).unwrap();
        // By construction: rows with i % 10 == 3 (10 rows) or i % 7 == 0 (15 rows) lack a
        // value; only 63 is in both sets, so 100 - 10 - 15 + 1 = 76 rows have both.
        assert_eq!(s.total, 76);
        assert_eq!(s.rows.len(), 76);
        for (k, &r) in s.rows.iter().enumerate() {
            assert_eq!(s.x[k], r as f64);
            assert_eq!(s.y[k], (r * 2) as f64);
        }
        assert!(s.rows.windows(2).all(|w| w[0] < w[1]));
    }

    #[test]
    fn sample_is_bounded_seeded_and_a_subset() {
        let t = table();
        let a = column_pair(&t, &[-9999.0], "x", "y", None, 20, 7).unwrap();
        let b = column_pair(&t, &[-9999.0], "x", "y", None, 20, 7).unwrap();
        let c = column_pair(&t, &[-9999.0], "x", "y", None, 20, 8).unwrap();
        assert_eq!(a.rows.len(), 20);
        assert_eq!(a.total, 76);
        assert_eq!(a, b, "same seed, same sample");
        assert_ne!(a.rows, c.rows, "another seed, another sample");
        let all = column_pair(&t, &[-9999.0], "x", "y", None, 1000, 7).unwrap();
        assert!(a.rows.iter().all(|r| all.rows.contains(r)));
    }

    #[test]
    fn category_or_unknown_columns_are_refused_by_name() {
        let t = Table::from_columns("t", vec![Column::number("x", vec![1.0, 2.0])]).unwrap();
        let e = column_pair(&t, &[], "x", "nope", None, 10, 1).unwrap_err().to_string();
        assert!(e.contains("scatter.y") && e.contains("nope"), "{e}");
    }

    #[test]
    fn principal_pair_matches_the_lens_scores() {
        let x: Vec<f64> = (0..50).map(|i| (i as f64 * 0.37).sin() * 3.0).collect();
        let y: Vec<f64> = (0..50).map(|i| (i as f64 * 0.11).cos()).collect();
        let t = Table::from_columns("t", vec![Column::number("x", x), Column::number("y", y)]).unwrap();
        let s = Settings {
            version: SETTINGS_VERSION,
            columns: vec!["x".into(), "y".into()],
            scaling: Scaling::Zscore,
            missing: Missing::default(),
            lens: Lens::Principal { component: 1 },
            cover: CoverSettings::uniform(4, 0.2),
            lens2: None,
            cover2: None,
            denoise: None,
            min_cluster_share: 0.0,
            keep_rows: None,
            clustering: Clustering::Dbscan { eps: 0.5, min_points: 2 },
            edges: EdgeRule::default(),
            seed: 1,
            derived: Vec::new(),
        };
        let pts = crate::points::build_points(&t, &s).unwrap();
        let p = principal_pair(&pts, 1000, 1).unwrap();
        assert_eq!(p.x, principal_scores(pts.data.view(), 1).unwrap());
        assert_eq!(p.y, principal_scores(pts.data.view(), 2).unwrap());
        // Principal component scores are uncorrelated (Pearson 1901).
        let cov: f64 = p.x.iter().zip(&p.y).map(|(a, b)| a * b).sum::<f64>() / 49.0;
        assert!(cov.abs() < 1e-9, "{cov}");
    }
}
