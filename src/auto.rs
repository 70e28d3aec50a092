//! Automatic first settings: concrete values chosen from the table so that a dropped
//! file gives a readable first graph with no further click. They are a starting point
//! for exploration, written out in full so they can be read, changed and reproduced.
//!
//! The rule:
//! - columns: the numeric columns, in file order, that have a value in at least half the
//!   rows and are not constant, at most 12 (the first 12 such);
//! - scaling: z-score (columns in different units weigh alike; common practice);
//! - lens: the first principal component when two or more columns are chosen, else the
//!   one column;
//! - cover: round(n^(1/3)) intervals clamped to [4, 15], overlap 0.35;
//! - clustering: DBSCAN with 5 minimum points and eps = the 90th percentile of the
//!   distance from a row to its 5th nearest row (itself counted, as DBSCAN counts it),
//!   over a seeded sample of up to 500 rows, so about nine rows in ten are core points
//!   of the full data (common practice for choosing eps from the k-distance curve,
//!   Ester et al. 1996, §4.2).

use crate::cluster::kdtree::KdTree;
use crate::error::{Error, Result};
use crate::points::{build_points, is_missing};
use crate::rng::SplitMix64;
use crate::settings::*;
use crate::table::Table;

pub const AUTO_MAX_COLUMNS: usize = 12;
const MIN_POINTS: usize = 5;

pub fn auto_settings(table: &Table) -> Result<Settings> {
    let fills: Vec<f64> = Vec::new();
    let columns: Vec<String> = table
        .columns
        .iter()
        .filter_map(|c| {
            let v = c.as_numbers()?;
            let present: Vec<f64> = v.iter().copied().filter(|x| !is_missing(*x, &fills)).collect();
            let varied = present.iter().any(|&x| x != present[0]);
            (present.len() * 2 >= v.len() && !present.is_empty() && varied).then(|| c.name.clone())
        })
        .take(AUTO_MAX_COLUMNS)
        .collect();
    if columns.is_empty() {
        return Err(Error::Data(format!(
            "{} has no numeric column with values in at least half of its rows; check the delimiter and the missing-value markers",
            table.name
        )));
    }
    let lens = if columns.len() >= 2 { Lens::Principal { component: 1 } } else { Lens::Column { column: columns[0].clone() } };
    let mut s = Settings {
        version: SETTINGS_VERSION,
        columns,
        scaling: Scaling::Zscore,
        missing: Missing::default(),
        lens,
        cover: CoverSettings { intervals: 10, overlap: 0.35 },
        clustering: Clustering::Dbscan { eps: 1.0, min_points: MIN_POINTS },
        edges: EdgeRule::default(),
        seed: 1,
    };
    let pts = build_points(table, &s)?;
    let n = pts.rows.len();
    s.cover.intervals = ((n as f64).cbrt().round() as usize).clamp(4, 15);
    let eps = knn_distance_quantile(pts.data.as_slice().expect("contiguous"), pts.data.ncols(), MIN_POINTS, 0.9, 500, s.seed);
    s.clustering = Clustering::Dbscan { eps: round_sig(eps.max(1e-9), 3), min_points: MIN_POINTS };
    Ok(s)
}

/// The `q` quantile, over a seeded sample of up to `sample` rows, of the distance from a
/// row to its `k`-th nearest row (the row itself counted first, at distance 0).
pub fn knn_distance_quantile(points: &[f64], dim: usize, k: usize, q: f64, sample: usize, seed: u64) -> f64 {
    let n = points.len() / dim.max(1);
    if n == 0 {
        return 1.0;
    }
    let chosen = SplitMix64::new(seed).sample_indices(n, sample);
    let k = k.min(n);
    let tree = KdTree::new(points, dim);
    let mut near = Vec::with_capacity(k);
    let mut kth: Vec<f64> = chosen
        .iter()
        .map(|&i| {
            tree.nearest(&points[i * dim..(i + 1) * dim], k, &mut near);
            near.last().map_or(0.0, |nb| nb.dist)
        })
        .collect();
    kth.sort_by(|a, b| a.partial_cmp(b).unwrap());
    let pos = ((kth.len() - 1) as f64 * q).round() as usize;
    kth[pos]
}

fn round_sig(x: f64, digits: i32) -> f64 {
    let mag = 10f64.powi(digits - 1 - x.abs().log10().floor() as i32);
    (x * mag).round() / mag
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::table::Column;

    #[test]
    fn picks_varied_numeric_columns_and_a_data_driven_eps() {
        let mut r = SplitMix64::new(1);
        let n = 300;
        let t = Table::from_columns(
            "t",
            vec![
                Column::number("x", (0..n).map(|_| r.normal()).collect()),
                Column::number("flat", vec![3.0; n]),
                Column::number("gappy", (0..n).map(|i| if i % 3 == 0 { 1.0 } else { f64::NAN }).collect()),
                Column::number("y", (0..n).map(|_| r.normal()).collect()),
                Column::category("site", vec![0; n], vec!["a".into()]),
            ],
        )
        .unwrap();
        let s = auto_settings(&t).unwrap();
        assert_eq!(s.columns, vec!["x", "y"]);
        assert_eq!(s.lens, Lens::Principal { component: 1 });
        assert_eq!(s.cover.intervals, 7); // round(300^(1/3)) = round(6.69)
        match s.clustering {
            Clustering::Dbscan { eps, min_points } => {
                assert_eq!(min_points, 5);
                assert!(eps > 0.05 && eps < 1.5, "eps {eps}");
            }
            _ => panic!("expected DBSCAN"),
        }
        s.validate().unwrap();
    }

    #[test]
    fn kth_distance_counts_the_row_itself() {
        // Points 0, 1, 3, 6 on a line: the 2nd nearest (self first) of 0 is at 1, of 6 is at 3.
        let p = [0.0, 1.0, 3.0, 6.0];
        assert_eq!(knn_distance_quantile(&p, 1, 2, 0.0, 10, 1), 1.0);
        assert_eq!(knn_distance_quantile(&p, 1, 2, 1.0, 10, 1), 3.0);
    }

    #[test]
    fn refuses_a_table_without_numbers() {
        let t = Table::from_columns("words.csv", vec![Column::category("a", vec![0, 0], vec!["x".into()])]).unwrap();
        assert!(auto_settings(&t).unwrap_err().to_string().contains("words.csv"));
    }
}
