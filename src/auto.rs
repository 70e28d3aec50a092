//! Automatic first settings: concrete values chosen from the table so that a dropped
//! file gives a readable first graph with no further click. They are a starting point
//! for exploration, written out in full so they can be read, changed and reproduced.
//!
//! The rule:
//! - fill values: any of -99999, -9999, -999, 9999, 99999 that stands at least 3 times in
//!   a numeric column and lies far outside that column's other values (beyond the 1st to
//!   99th percentile range stretched five times each way) is declared a fill value (such
//!   sentinels are common practice in field data);
//! - columns: the numeric columns, in file order, that have a value in at least half the
//!   rows and are not constant, at most 12 (the first 12 such);
//! - scaling: z-score (columns in different units weigh alike; common practice);
//! - lens: the first principal component when two or more columns are chosen, else the
//!   one column;
//! - cover: round(n^(1/3) / 2) intervals clamped to [5, 12], overlap 0.35;
//! - clustering: DBSCAN with 5 minimum points and eps = the 98th percentile of the
//!   distance from a row to its 5th nearest row (itself counted, as DBSCAN counts it),
//!   over a seeded sample of up to 500 rows, so about 49 rows in 50 are core points of the
//!   full data (choosing eps from the k-distance curve follows Ester et al. 1996, §4.2; the
//!   high percentile keeps a first graph from shattering into noise, because a cover
//!   element's slab loses neighbours near its edges).

use crate::cluster::kdtree::KdTree;
use crate::error::{Error, Result};
use crate::points::{build_points, is_missing};
use crate::rng::SplitMix64;
use crate::settings::*;
use crate::table::Table;

pub const AUTO_MAX_COLUMNS: usize = 12;

/// Leaf size of the k-d tree over the whole table that finds the sample's neighbours. A
/// few hundred queries over up to millions of rows: a shallower tree is quicker to build
/// than the deeper one saves in queries (1.5 million rows × 12 columns: build and queries
/// 0.75 s with leaves of 16, 0.57 s with 256, natively). The answer is the same.
const AUTO_LEAF_SIZE: usize = 256;
const MIN_POINTS: usize = 5;

pub fn auto_settings(table: &Table) -> Result<Settings> {
    let fills = sentinel_fill_values(table);
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
    if table.n_rows < 2 {
        return Err(Error::Data(format!(
            "{} has a single data row; a graph of the data's shape needs at least two rows",
            table.name
        )));
    }
    if columns.is_empty() {
        return Err(Error::Data(format!(
            "{} has no numeric column that varies and has values in at least half of its rows (constant columns, \
             such as those of a file whose rows are all identical, are left out); check the delimiter and the missing-value markers",
            table.name
        )));
    }
    let lens = if columns.len() >= 2 { Lens::Principal { component: 1 } } else { Lens::Column { column: columns[0].clone() } };
    let mut s = Settings {
        version: SETTINGS_VERSION,
        columns,
        scaling: Scaling::Zscore,
        missing: Missing { fill_values: fills, ..Default::default() },
        lens,
        cover: CoverSettings::uniform(10, 0.35),
        clustering: Clustering::Dbscan { eps: 1.0, min_points: MIN_POINTS },
        edges: EdgeRule::default(),
        seed: 1,
        derived: Vec::new(),
        lens2: None,
        cover2: None,
    };
    let pts = build_points(table, &s)?;
    let n = pts.rows.len();
    s.cover.intervals = (((n as f64).cbrt() / 2.0).round() as usize).clamp(5, 12);
    let dim = pts.data.ncols();
    let eps = knn_distance_quantile(pts.data.into_raw_vec_and_offset().0, dim, MIN_POINTS, 0.98, 500, s.seed);
    s.clustering = Clustering::Dbscan { eps: round_sig(eps.max(1e-9), 3), min_points: MIN_POINTS };
    Ok(s)
}

/// Sentinels that the table's numeric columns use as "no value"; see the module comment.
pub fn sentinel_fill_values(table: &Table) -> Vec<f64> {
    const CANDIDATES: [f64; 5] = [-99999.0, -9999.0, -999.0, 9999.0, 99999.0];
    let mut found = Vec::new();
    for col in table.columns.iter().filter_map(|c| c.as_numbers()) {
        for &v in &CANDIDATES {
            if found.contains(&v) {
                continue;
            }
            let hits = col.iter().filter(|&&x| x == v).count();
            if hits < 3 {
                continue;
            }
            let mut rest: Vec<f64> = col.iter().copied().filter(|x| x.is_finite() && !CANDIDATES.contains(x)).collect();
            if rest.len() < 10 {
                continue;
            }
            rest.sort_by(|a, b| a.partial_cmp(b).unwrap());
            let q = |f: f64| rest[((rest.len() - 1) as f64 * f).round() as usize];
            let (lo, hi) = (q(0.01), q(0.99));
            let span = (hi - lo).max(f64::MIN_POSITIVE);
            if v < lo - 5.0 * span || v > hi + 5.0 * span {
                found.push(v);
            }
        }
    }
    found.sort_by(|a, b| a.partial_cmp(b).unwrap());
    found
}

/// The `q` quantile, over a seeded sample of up to `sample` rows, of the distance from a
/// row to its `k`-th nearest row (the row itself counted first, at distance 0).
/// The tree is built over `points` in place (no second copy of a whole table's points).
pub fn knn_distance_quantile(points: Vec<f64>, dim: usize, k: usize, q: f64, sample: usize, seed: u64) -> f64 {
    let n = points.len() / dim.max(1);
    if n == 0 {
        return 1.0;
    }
    let chosen = SplitMix64::new(seed).sample_indices(n, sample);
    let queries: Vec<f64> = chosen.iter().flat_map(|&i| points[i * dim..(i + 1) * dim].iter().copied()).collect();
    let k = k.min(n);
    let tree = KdTree::from_rows(points, dim, AUTO_LEAF_SIZE);
    let mut near = Vec::with_capacity(k);
    let mut kth: Vec<f64> = queries
        .chunks_exact(dim)
        .map(|q| {
            tree.nearest(q, k, &mut near);
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
        assert_eq!(s.cover.intervals, 5); // round(300^(1/3) / 2) = round(3.35), raised to 5
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
    fn detects_far_sentinels_but_not_plausible_values() {
        let mut r = SplitMix64::new(2);
        let mut a: Vec<f64> = (0..200).map(|_| 20.0 + r.normal()).collect();
        a[3] = -9999.0;
        a[50] = -9999.0;
        a[90] = -9999.0;
        // -999 here is inside the column's own spread, so it is data, not a sentinel.
        let b: Vec<f64> = (0..200).map(|i| if i % 50 == 0 { -999.0 } else { -1000.0 + i as f64 * 10.0 }).collect();
        let t = Table::from_columns("t", vec![Column::number("a", a), Column::number("b", b)]).unwrap();
        assert_eq!(sentinel_fill_values(&t), vec![-9999.0]);
        let s = auto_settings(&t).unwrap();
        assert_eq!(s.missing.fill_values, vec![-9999.0]);
    }

    #[test]
    fn kth_distance_counts_the_row_itself() {
        // Points 0, 1, 3, 6 on a line: the 2nd nearest (self first) of 0 is at 1, of 6 is at 3.
        let p = [0.0, 1.0, 3.0, 6.0];
        assert_eq!(knn_distance_quantile(p.to_vec(), 1, 2, 0.0, 10, 1), 1.0);
        assert_eq!(knn_distance_quantile(p.to_vec(), 1, 2, 1.0, 10, 1), 3.0);
    }

    #[test]
    fn refuses_a_table_without_numbers() {
        let t = Table::from_columns("words.csv", vec![Column::category("a", vec![0, 0], vec!["x".into()])]).unwrap();
        assert!(auto_settings(&t).unwrap_err().to_string().contains("words.csv"));
    }
}
