//! The k-nearest-neighbour filters, the balanced cover, the lens histogram and the node
//! statistics checked against scikit-learn and NumPy (fixtures `neighbours.json` and
//! `quantiles.json`, written by tests/reference/make_fixtures.py with the versions pinned
//! in tests/reference/requirements.txt), and the workbench surface around them.
//!
//! Not here: the invariants of the construction (tests/invariants.rs) and shapes of known
//! topology (tests/topology.rs).

use ndarray::Array2;
use nervure::cover;
use nervure::engine::lens_histogram;
use nervure::filter::knn::{knn_lens, KnnValue};
use nervure::settings::*;
use nervure::table::{Column, Table};
use nervure::{NodeStat, Workbench};
use serde_json::Value;

fn fixture(name: &str) -> Value {
    let path = format!("{}/tests/reference/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
    let v: Value = serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    assert!(v["source"].as_str().is_some_and(|s| !s.is_empty()), "{name} names no source");
    v
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array().expect("array").iter().map(|x| x.as_f64().expect("number")).collect()
}

fn matrix(v: &Value) -> Array2<f64> {
    let rows: Vec<Vec<f64>> = v.as_array().unwrap().iter().map(floats).collect();
    let d = rows[0].len();
    Array2::from_shape_vec((rows.len(), d), rows.concat()).unwrap()
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol * b.abs().max(1.0)
}

fn settings(columns: &[&str], lens: Lens) -> Settings {
    let s = Settings {
        version: SETTINGS_VERSION,
        columns: columns.iter().map(|c| c.to_string()).collect(),
        scaling: Scaling::None,
        missing: Missing::default(),
        lens,
        cover: CoverSettings::uniform(6, 0.3),
        clustering: Clustering::Dbscan { eps: 0.5, min_points: 3 },
        edges: EdgeRule::default(),
        seed: 1,
        derived: Vec::new(),
        lens2: None,
        cover2: None,
        denoise: None,
        min_cluster_share: 0.0,
        keep_rows: None,
    };
    s.validate().unwrap();
    s
}

fn table_of(x: &Array2<f64>) -> Table {
    let cols = (0..x.ncols()).map(|j| Column::number(format!("x{j}"), x.column(j).to_vec())).collect();
    Table::from_columns("t", cols).unwrap()
}

/// Distance to a measure and k-th distance equal scikit-learn's `kneighbors` distances
/// (neighbours include the point itself), relative 1e-12 (sums of k squared distances of
/// order 1). Also through the settings' `Lens` variants, on the same points unscaled.
#[test]
fn knn_filters_match_scikit_learn_kneighbors() {
    let f = fixture("neighbours.json");
    let cases = f["cases"].as_array().unwrap();
    assert_eq!(cases.len(), 8);
    for c in cases {
        let x = matrix(&c["points"]);
        let k = c["k"].as_u64().unwrap() as usize;
        let label = c["label"].as_str().unwrap();
        for (what, key) in [(KnnValue::DistanceToMeasure, "dtm"), (KnnValue::KthDistance, "kth")] {
            let want = floats(&c[key]);
            let got = knn_lens(x.view(), k, what).unwrap();
            for (i, (a, b)) in got.iter().zip(&want).enumerate() {
                assert!(close(*a, *b, 1e-12), "{label} k={k} {key} point {i}: {a} vs {b}");
            }
        }
        // The same through compute_lens with the settings' lens kinds.
        let names: Vec<String> = (0..x.ncols()).map(|j| format!("x{j}")).collect();
        let refs: Vec<&str> = names.iter().map(|s| s.as_str()).collect();
        let t = table_of(&x);
        for (lens, key) in [(Lens::DistanceToMeasure { k }, "dtm"), (Lens::NeighbourDistance { k }, "kth")] {
            let s = settings(&refs, lens);
            let p = nervure::points::build_points(&t, &s).unwrap();
            let got = nervure::filter::compute_lens(&t, &p, &s).unwrap();
            let want = floats(&c[key]);
            assert!(got.iter().zip(&want).all(|(a, b)| close(*a, *b, 1e-12)), "{label} k={k} {key} via settings");
        }
    }
}

/// L-infinity centrality is eccentricity with p = infinity: the same values, bit for bit,
/// and both equal the fixture's largest `cdist` distance (eccentricity.json, SciPy), 1e-12.
#[test]
fn l_infinity_centrality_is_max_eccentricity() {
    let f = fixture("eccentricity.json");
    let x = matrix(&f["points"]);
    let t = table_of(&x);
    let cols = ["x0", "x1", "x2", "x3"];
    let a = settings(&cols, Lens::LInfinityCentrality);
    let b = settings(&cols, Lens::Eccentricity { norm: Spread::Max });
    let p = nervure::points::build_points(&t, &a).unwrap();
    let got = nervure::filter::compute_lens(&t, &p, &a).unwrap();
    assert_eq!(got, nervure::filter::compute_lens(&t, &p, &b).unwrap());
    let want = floats(&f["max"]);
    assert!(got.iter().zip(&want).all(|(a, b)| close(*a, *b, 1e-12)));
}

/// Balanced cover edges equal `numpy.quantile` (method 'linear') at the rank-space cover,
/// relative 1e-12; the number of values each closed interval holds is NumPy's count
/// exactly; the rank-space bounds are the same floating-point numbers.
#[test]
fn balanced_cover_matches_numpy_quantile() {
    let f = fixture("quantiles.json");
    for c in f["covers"].as_array().unwrap() {
        let label = c["label"].as_str().unwrap();
        let v = floats(&c["values"]);
        let n = c["intervals"].as_u64().unwrap() as usize;
        let g = c["overlap"].as_f64().unwrap();
        let ranks = cover::intervals(0.0, 1.0, n, g);
        assert_eq!(ranks.iter().map(|r| r.0).collect::<Vec<_>>(), floats(&c["p"]), "{label} n={n} g={g}");
        assert_eq!(ranks.iter().map(|r| r.1).collect::<Vec<_>>(), floats(&c["q"]), "{label} n={n} g={g}");
        let mut sorted = v.clone();
        sorted.sort_by(f64::total_cmp);
        let ivs = cover::balanced_intervals(&sorted, n, g);
        let (lo, hi) = (floats(&c["lo"]), floats(&c["hi"]));
        for (i, &(a, b)) in ivs.iter().enumerate() {
            assert!(close(a, lo[i], 1e-12) && close(b, hi[i], 1e-12), "{label} n={n} g={g} interval {i}: ({a}, {b}) vs ({}, {})", lo[i], hi[i]);
        }
        let c2 = cover::build(&v, &CoverSettings { intervals: n, overlap: g, kind: CoverKind::Balanced }, None);
        let rows: Vec<usize> = c["rows"].as_array().unwrap().iter().map(|x| x.as_u64().unwrap() as usize).collect();
        assert_eq!(c2.elements.iter().map(|e| e.len()).collect::<Vec<_>>(), rows, "{label} n={n} g={g}");
    }
}

/// On distinct values the balanced intervals hold equal numbers of rows: 501 lognormal
/// values, 5 intervals, no overlap, so interval i spans ranks 100 i to 100 (i + 1), 101
/// values; by hand from the definition in src/cover.rs. In floating point p_i = i · 0.2
/// can land a hair above the whole rank (3 · 0.2 = 0.6000000000000001), and then, as in
/// NumPy, that end rank falls outside: 100 values.
#[test]
fn balanced_intervals_hold_equal_counts() {
    let f = fixture("quantiles.json");
    let c = f["covers"].as_array().unwrap().iter().find(|c| c["label"].as_str().unwrap().contains("lognormal") && c["intervals"] == 5).unwrap();
    let v = floats(&c["values"]);
    let cov = cover::build(&v, &CoverSettings { intervals: 5, overlap: 0.0, kind: CoverKind::Balanced }, None);
    let sizes: Vec<usize> = cov.elements.iter().map(|e| e.len()).collect();
    assert!(sizes.iter().all(|&k| k == 100 || k == 101), "{sizes:?}");
    // The uniform cover of the same skewed values is far from balanced.
    let u = cover::uniform(&v, 5, 0.0);
    assert!(u.elements[0].len() > 300, "{:?}", u.elements.iter().map(|e| e.len()).collect::<Vec<_>>());
}

/// Histogram counts equal `numpy.histogram(values, bins)` exactly, edges relative 1e-12,
/// including a constant lens (NumPy's range v ± 0.5).
#[test]
fn lens_histogram_matches_numpy_histogram() {
    let f = fixture("quantiles.json");
    for h in f["histograms"].as_array().unwrap() {
        let label = h["label"].as_str().unwrap();
        let v = floats(&h["values"]);
        let bins = h["bins"].as_u64().unwrap() as usize;
        let got = lens_histogram(&v, bins, &[(v[0], v[0])]).unwrap();
        let counts: Vec<usize> = h["counts"].as_array().unwrap().iter().map(|x| x.as_u64().unwrap() as usize).collect();
        assert_eq!(got.counts, counts, "{label} bins={bins}");
        let edges = floats(&h["edges"]);
        assert!(got.edges.iter().zip(&edges).all(|(a, b)| close(*a, *b, 1e-12)), "{label} bins={bins}: {:?} vs {edges:?}", got.edges);
        // The one interval [v0, v0] holds the values equal to v0 (counted by hand from the data).
        assert_eq!(got.intervals[0].2, v.iter().filter(|&&x| x == v[0]).count());
    }
    assert!(lens_histogram(&[1.0], 0, &[]).unwrap_err().to_string().contains("bins"));
}

/// Mean, median, spread (ddof 0) and share above a threshold equal NumPy's on iris
/// columns per species; relative 1e-12.
#[test]
fn node_statistics_match_numpy() {
    let f = fixture("quantiles.json");
    for c in f["stats"].as_array().unwrap() {
        let v = floats(&c["values"]);
        let t = c["threshold"].as_f64().unwrap();
        for (stat, key) in [
            (NodeStat::Mean, "mean"),
            (NodeStat::Median, "median"),
            (NodeStat::Spread, "spread"),
            (NodeStat::ShareAbove { threshold: t }, "shareAbove"),
        ] {
            let got = stat.of(&mut v.clone());
            let want = c[key].as_f64().unwrap();
            assert!(close(got, want, 1e-12), "{} {key}: {got} vs {want}", c["label"]);
        }
    }
    assert!(NodeStat::Median.of(&mut []).is_nan());
}

#[test]
fn node_stat_json_takes_strings_and_objects() {
    let j = |s: &str| NodeStat::from_json(&serde_json::from_str(s).unwrap());
    assert_eq!(j(r#""mean""#).unwrap(), NodeStat::Mean);
    assert_eq!(j(r#""spread""#).unwrap(), NodeStat::Spread);
    assert_eq!(j(r#"{"kind":"median"}"#).unwrap(), NodeStat::Median);
    assert_eq!(j(r#"{"kind":"shareAbove","threshold":2.5}"#).unwrap(), NodeStat::ShareAbove { threshold: 2.5 });
    assert_eq!(serde_json::to_string(&NodeStat::ShareAbove { threshold: 1.0 }).unwrap(), r#"{"kind":"shareAbove","threshold":1.0}"#);
    for bad in [r#""mode""#, r#"{"kind":"shareAbove"}"#, r#"{"kind":"shareAbove","threshold":"a"}"#, "3"] {
        assert!(j(bad).unwrap_err().to_string().contains("setting 'stat'"), "{bad}");
    }
}

/// Two arcs along x (an invented small table): the workbench's surface for the new parts.
fn bench(rows: usize) -> (Workbench, Table) {
    let x: Vec<f64> = (0..rows).map(|i| i as f64 * 0.1).collect();
    let y: Vec<f64> = x.iter().map(|v| (v * 0.7).sin()).collect();
    let mut z: Vec<f64> = x.iter().map(|v| v * 2.0).collect();
    z[3] = -9999.0;
    z[10] = f64::NAN;
    let t = Table::from_columns("t", vec![Column::number("x", x), Column::number("y", y), Column::number("z", z)]).unwrap();
    let mut w = Workbench::new();
    w.set_table(t.clone());
    (w, t)
}

#[test]
fn median_fill_is_counted_in_the_summary() {
    let (mut w, _) = bench(60);
    let mut s = settings(&["x", "z"], Lens::Column { column: "x".into() });
    s.missing.fill_values = vec![-9999.0];
    let left = w.run(&s, &mut |_, _| {}).unwrap();
    assert_eq!((left.rows, left.rows_left_out), (58, 2));
    assert!(left.filled_by_column.is_empty());
    s.missing.per_column.insert("z".into(), ColumnMissing { fill_values: None, policy: MissingPolicy::Median });
    let filled = w.run(&s, &mut |_, _| {}).unwrap();
    assert_eq!((filled.rows, filled.rows_left_out), (60, 0));
    assert_eq!(filled.filled_by_column, vec![("z".to_string(), 2)]);
    // Node statistics skip the missing cells instead of using the fill: each node's z mean
    // is the mean of its rows' z other than rows 3 and 10 (z = 0.2 × row elsewhere).
    let means = w.node_values("z", NodeStat::Mean).unwrap();
    let b = w.last().unwrap();
    for (k, n) in b.nerve.nodes.iter().enumerate() {
        let want: Vec<f64> = n.members.iter().filter(|&&r| r != 3 && r != 10).map(|&r| r as f64 * 0.2).collect();
        let want = if want.is_empty() { f64::NAN } else { want.iter().sum::<f64>() / want.len() as f64 };
        assert!(close(means[k], want, 1e-12) || (means[k].is_nan() && want.is_nan()), "node {k}");
    }
}

#[test]
fn lens_values_and_histogram_of_a_product_cover() {
    let (mut w, t) = bench(200);
    let mut s = settings(&["x", "y"], Lens::Column { column: "x".into() });
    s.lens2 = Some(Lens::Column { column: "y".into() });
    s.cover2 = Some(CoverSettings { intervals: 3, overlap: 0.2, kind: CoverKind::Balanced });
    w.run(&s, &mut |_, _| {}).unwrap();
    let b = w.last().unwrap();
    let second = b.second.as_ref().expect("a product cover");
    assert_eq!(second.intervals.len(), 3);
    let y = t.numbers("y", "y").unwrap();
    let x = t.numbers("x", "x").unwrap();
    // Mean lens values per node are the means of the member rows' x and y.
    let l1 = w.node_lens_values(0).unwrap();
    let l2 = w.node_lens_values(1).unwrap();
    for (k, n) in b.nerve.nodes.iter().enumerate() {
        let m = n.members.len() as f64;
        assert!(close(l1[k], n.members.iter().map(|&r| x[r as usize]).sum::<f64>() / m, 1e-12));
        assert!(close(l2[k], n.members.iter().map(|&r| y[r as usize]).sum::<f64>() / m, 1e-12));
        // Every member lies in its cell's two intervals.
        let (i, j) = b.cell(n.element);
        let (a, c) = b.intervals[i];
        let (a2, c2) = second.intervals[j.unwrap()];
        assert!(n.members.iter().all(|&r| a <= x[r as usize] && x[r as usize] <= c && a2 <= y[r as usize] && y[r as usize] <= c2));
        let d = w.node_detail(k).unwrap();
        assert_eq!((d.interval, d.interval2), ((a, c), Some((a2, c2))));
    }
    let h = w.lens_histogram(10, 1).unwrap();
    assert_eq!(h.counts.iter().sum::<usize>(), 200);
    assert_eq!(h.intervals.len(), 3);
    for &(a, c, rows) in &h.intervals {
        assert_eq!(rows, y.iter().filter(|&&v| a <= v && v <= c).count());
    }
    let h0 = w.lens_histogram(8, 0).unwrap();
    assert_eq!(h0.intervals.len(), 6);
    assert!(w.lens_histogram(8, 2).unwrap_err().to_string().contains("axis"));
    // Back to one filter: asking for the second is refused, naming lens2.
    s.lens2 = None;
    s.cover2 = None;
    w.run(&s, &mut |_, _| {}).unwrap();
    assert!(w.node_lens_values(1).unwrap_err().to_string().contains("lens2"));
    assert!(w.lens_histogram(8, 1).unwrap_err().to_string().contains("lens2"));
}
