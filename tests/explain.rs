//! Checks the group-versus-rest comparison against SciPy and NumPy, through the fixture
//! tests/reference/fixtures/ks.json written by tests/reference/make_fixtures.py:
//! - `scipy.stats.ks_2samp(a, b, method='auto')`: statistic within 1e-12, p-value within
//!   1e-9 relative (measured: identical statistics, p-values within 5e-14);
//! - `scipy.stats.kstwo.sf(x, n)` (the one-sample distribution the asymptotic method uses)
//!   and `scipy.special.smirnov(n, x)`: 1e-8 relative (measured: 7e-10);
//! - Cohen's d with the pooled sd computed with NumPy: 1e-12 relative;
//!
//! and the engine's `Workbench::explain`, `rows_of` and `row_values` end to end on a small
//! table built so that one column separates a group by construction.

use nervure::explain::{self, ks, Method};
use nervure::settings::{Clustering, CoverSettings, Lens};
use nervure::table::Column;
use nervure::{Settings, Table, Workbench};
use serde_json::Value;

fn fixture(name: &str) -> Value {
    let path = format!("{}/tests/reference/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
    let v: Value = serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    assert!(v["source"].as_str().is_some_and(|s| !s.is_empty()), "{name} names no source");
    v
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array().unwrap().iter().map(|x| x.as_f64().unwrap()).collect()
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(1e-300)
}

#[test]
fn ks_2samp_matches_scipy() {
    let f = fixture("ks.json");
    let cases = f["cases"].as_array().unwrap();
    assert!(cases.len() >= 10);
    let (mut exact, mut asym) = (0, 0);
    let (mut worst_s, mut worst_p) = (0.0f64, 0.0f64);
    for c in cases {
        let label = c["label"].as_str().unwrap();
        let (a, b) = (floats(&c["a"]), floats(&c["b"]));
        let r = explain::ks_2samp(&a, &b).unwrap();
        let (ws, wp) = (c["statistic"].as_f64().unwrap(), c["pvalue"].as_f64().unwrap());
        assert!((r.statistic - ws).abs() < 1e-12, "{label}: statistic {} vs scipy {ws}", r.statistic);
        assert!(rel(r.p_value, wp) < 1e-9, "{label}: p {} vs scipy {wp} ({:?})", r.p_value, r.method);
        let want = if c["exact"].as_bool().unwrap() { Method::Exact } else { Method::Asymptotic };
        assert_eq!(r.method, want, "{label}");
        worst_s = worst_s.max((r.statistic - ws).abs());
        worst_p = worst_p.max(rel(r.p_value, wp));
        match r.method {
            Method::Exact => exact += 1,
            Method::Asymptotic => asym += 1,
        }
        // Symmetric in the two samples.
        let s = explain::ks_2samp(&b, &a).unwrap();
        assert!((s.p_value - r.p_value).abs() <= 1e-12 * r.p_value.max(1e-300), "{label}: not symmetric");
    }
    assert!(exact >= 5 && asym >= 3, "{exact} exact, {asym} asymptotic cases");
    eprintln!("ks_2samp: {exact} exact, {asym} asymptotic; worst |dD| {worst_s:e}, worst relative dp {worst_p:e}");
}

#[test]
fn kolmogorov_distribution_matches_scipy_kstwo() {
    let f = fixture("ks.json");
    let mut worst = 0.0f64;
    for g in f["kstwo_sf"].as_array().unwrap() {
        let (n, x, want) = (g["n"].as_u64().unwrap(), g["x"].as_f64().unwrap(), g["sf"].as_f64().unwrap());
        let got = ks::kolmogorov_sf(n, x);
        let tol = if want < 1e-300 { got.abs() } else { rel(got, want) };
        assert!(tol < 1e-8, "kstwo.sf({x}, {n}) = {want}, got {got}");
        worst = worst.max(tol);
    }
    eprintln!("kstwo.sf: {} points, worst relative error {worst:e}", f["kstwo_sf"].as_array().unwrap().len());
}

#[test]
fn one_sided_tail_matches_scipy_smirnov() {
    let f = fixture("ks.json");
    let mut worst = 0.0f64;
    for g in f["smirnov"].as_array().unwrap() {
        let (n, x, want) = (g["n"].as_u64().unwrap(), g["x"].as_f64().unwrap(), g["sf"].as_f64().unwrap());
        let got = ks::smirnov(n, x);
        assert!(rel(got, want) < 1e-8, "smirnov({n}, {x}) = {want}, got {got}");
        worst = worst.max(rel(got, want));
    }
    eprintln!("smirnov: worst relative error {worst:e}");
}

#[test]
fn standardised_mean_difference_matches_numpy() {
    let f = fixture("ks.json");
    for c in f["cases"].as_array().unwrap() {
        let (a, b) = (floats(&c["a"]), floats(&c["b"]));
        let (d, _, _) = explain::smd(&a, &b);
        match c["smd"].as_f64() {
            Some(w) => assert!(rel(d.unwrap(), w) < 1e-12, "{}: {d:?} vs {w}", c["label"]),
            None => assert_eq!(d, None),
        }
    }
}

/// 60 rows: x runs along a line; rows 0-19 have "marker" near 10, the others near 0;
/// "noise" is unrelated. A lens on x with 3 intervals puts rows 0-19 in the first nodes.
fn table() -> Table {
    let n = 60;
    let x: Vec<f64> = (0..n).map(|i| i as f64).collect();
    let marker: Vec<f64> = (0..n).map(|i| if i < 20 { 10.0 + (i % 3) as f64 } else { (i % 4) as f64 }).collect();
    let noise: Vec<f64> = (0..n).map(|i| ((i * 37) % 11) as f64).collect();
    let site: Vec<u32> = (0..n as u32).map(|i| i % 2).collect();
    Table::from_columns(
        "t",
        vec![
            Column::number("x", x),
            Column::number("marker", marker),
            Column::number("noise", noise),
            Column::category("site", site, vec!["north".into(), "south & co".into()]),
        ],
    )
    .unwrap()
}

fn settings() -> Settings {
    Settings::plain(vec!["x".into()], Lens::Column { column: "x".into() }, CoverSettings::uniform(3, 0.0), Clustering::Dbscan { eps: 1.5, min_points: 1 })
}

#[test]
fn explain_ranks_the_separating_column_first_for_the_first_node() {
    let mut w = Workbench::new();
    w.set_table(table());
    w.run(&settings(), &mut |_, _| {}).unwrap();
    let b = w.last().unwrap();
    // Interval 1 of 3 over [0, 59] is [0, 19.67]: rows 0-19, one cluster (gaps of 1 <= eps).
    let first = b.nerve.nodes.iter().position(|n| n.members.first() == Some(&0)).unwrap();
    assert_eq!(w.rows_of(&[first]).unwrap(), (0..20).collect::<Vec<u32>>());
    let all = w.explain(&[first]).unwrap();
    // The category column is listed apart (tests/category_contrast.rs checks its numbers).
    assert_eq!(all.categories.iter().map(|c| c.name.as_str()).collect::<Vec<_>>(), ["site"]);
    let r = &all.columns;
    let names: Vec<&str> = r.iter().map(|c| c.name.as_str()).collect();
    assert_eq!(names.len(), 3, "numeric columns only: {names:?}");
    // x and marker both separate completely (KS 1); marker has the larger |d| (its spread is small).
    assert_eq!(names[0], "marker");
    assert_eq!(r[0].ks, Some(1.0));
    assert_eq!((r[0].n_in, r[0].n_out), (20, 40));
    let marker_in: Vec<f64> = (0..20).map(|i| 10.0 + (i % 3) as f64).collect();
    let marker_out: Vec<f64> = (20..60).map(|i| (i % 4) as f64).collect();
    let k = explain::ks_2samp(&marker_in, &marker_out).unwrap();
    assert_eq!(r[0].p_value, Some(k.p_value));
    assert_eq!(r[0].smd, explain::smd(&marker_in, &marker_out).0);
    assert_eq!(names[2], "noise");
    // JSON shape for the page.
    let j = serde_json::to_value(&r[0]).unwrap();
    for key in ["name", "smd", "ks", "pValue", "pMethod", "meanIn", "meanOut", "nIn", "nOut"] {
        assert!(j.get(key).is_some(), "missing {key} in {j}");
    }
    assert_eq!(j["pMethod"], "exact");
    // A node that does not exist is named.
    assert!(w.explain(&[999]).unwrap_err().to_string().contains("no node 999"));
}

#[test]
fn row_values_give_source_rows_numbers_texts_and_nulls() {
    let mut t = table();
    if let nervure::table::ColumnData::Number(v) = &mut t.columns[2].data {
        std::sync::Arc::make_mut(v)[3] = f64::NAN;
    }
    let mut w = Workbench::new();
    w.set_table(t);
    w.run(&settings(), &mut |_, _| {}).unwrap();
    let rv = w.row_values(&[1, 3], &["noise".into(), "site".into()]).unwrap();
    assert_eq!(rv.data_rows, vec![2, 4]);
    let j = serde_json::to_value(&rv).unwrap();
    assert_eq!(j["columns"], serde_json::json!(["noise", "site"]));
    assert_eq!(j["cells"], serde_json::json!([[((37) % 11) as f64, "south & co"], [null, "south & co"]]));
    assert_eq!(w.row_values(&[0], &[]).unwrap().columns.len(), 4);
    assert!(w.row_values(&[0], &["nope".into()]).is_err());
    assert!(w.row_values(&[600], &[]).unwrap_err().to_string().contains("600"));
}
