//! Checks the category-column comparison against SciPy and NumPy, through the fixture
//! tests/reference/fixtures/chi2.json written by tests/reference/make_fixtures.py:
//! - `scipy.stats.chi2.sf(x, dof)` on a grid of 16 degrees of freedom (1 to 20 000) and
//!   x from 0.01 dof to 5 dof, both sides of the series / continued-fraction switch, and
//!   tails down to about 1e-280: 1e-10 relative;
//! - `scipy.stats.chi2_contingency(table, correction=False)` (levels with no row dropped
//!   first, as SciPy needs) on 12 tables (2 to 200 levels, zero cells, dof 0, a p-value
//!   that underflows): statistic 1e-12 relative, dof equal, p-value 1e-10 relative (or
//!   both zero), smallest expected count 1e-12 relative;
//! - the total variation distance and the most over-represented level with NumPy:
//!   1e-14 absolute, same level;
//!
//! and the same numbers through a table (rows built from the fixture's counts, with
//! missing cells) and through the engine's `Workbench::explain` end to end, with the JSON
//! shape the page reads.

use nervure::explain::{self, category, chi2};
use nervure::settings::{Clustering, CoverSettings, Lens};
use nervure::table::{Column, MISSING_CODE};
use nervure::{Settings, Table, Workbench};
use serde_json::Value;

fn fixture(name: &str) -> Value {
    let path = format!("{}/tests/reference/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
    let v: Value = serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    assert!(v["source"].as_str().is_some_and(|s| !s.is_empty()), "{name} names no source");
    v
}

fn rel(a: f64, b: f64) -> f64 {
    if a == b {
        return 0.0;
    }
    (a - b).abs() / b.abs().max(1e-300)
}

fn counts(v: &Value) -> Vec<u64> {
    v.as_array().unwrap().iter().map(|x| x.as_u64().unwrap()).collect()
}

fn level_names(k: usize) -> Vec<String> {
    (0..k).map(|j| format!("L{j}")).collect()
}

#[test]
fn chi2_tail_matches_scipy() {
    // Source: scipy.stats.chi2.sf (SciPy 1.17.1), fixture chi2.json "sf".
    let f = fixture("chi2.json");
    let grid = f["sf"].as_array().unwrap();
    assert!(grid.len() >= 150);
    let (mut worst, mut tiny) = (0.0f64, 0usize);
    for g in grid {
        let (x, dof, want) = (g["x"].as_f64().unwrap(), g["dof"].as_f64().unwrap(), g["sf"].as_f64().unwrap());
        let got = chi2::chi2_sf(x, dof);
        let e = rel(got, want);
        assert!(e < 1e-10, "chi2.sf({x}, {dof}) = {want:e}, got {got:e} (relative error {e:e})");
        worst = worst.max(e);
        if want < 1e-100 {
            tiny += 1;
        }
    }
    assert!(tiny >= 5, "the grid reaches tiny p-values ({tiny} below 1e-100)");
    eprintln!("chi2.sf: {} points ({tiny} below 1e-100), worst relative error {worst:e}", grid.len());
}

#[test]
fn contingency_test_matches_scipy_chi2_contingency() {
    // Source: scipy.stats.chi2_contingency(correction=False) (SciPy 1.17.1) and NumPy 2.4
    // for TV and the top level, fixture chi2.json "cases".
    let f = fixture("chi2.json");
    let cases = f["cases"].as_array().unwrap();
    assert!(cases.len() >= 10);
    let (mut worst_s, mut worst_p) = (0.0f64, 0.0f64);
    for c in cases {
        let label = c["label"].as_str().unwrap();
        let (a, b) = (counts(&c["in"]), counts(&c["out"]));
        let names = level_names(a.len());
        let r = category::from_counts("col", &names, &a, &b, 0, 0);
        let (ws, wp) = (c["statistic"].as_f64().unwrap(), c["pvalue"].as_f64().unwrap());
        let (s, p) = (r.chi2.unwrap(), r.p_value.unwrap());
        assert!(rel(s, ws) < 1e-12 || (s - ws).abs() < 1e-12, "{label}: statistic {s} vs scipy {ws}");
        assert!(rel(p, wp) < 1e-10, "{label}: p {p:e} vs scipy {wp:e}");
        assert_eq!(r.dof, Some(c["dof"].as_u64().unwrap() as usize), "{label}: dof");
        assert!(rel(r.min_expected.unwrap(), c["min_expected"].as_f64().unwrap()) < 1e-12, "{label}: min expected");
        assert!((r.tv.unwrap() - c["tv"].as_f64().unwrap()).abs() < 1e-14, "{label}: tv {:?} vs {}", r.tv, c["tv"]);
        match c["top"].as_u64() {
            Some(j) => {
                assert_eq!(r.top_level.as_deref(), Some(names[j as usize].as_str()), "{label}: top level");
                assert!((r.top_share_in.unwrap() - c["top_share_in"].as_f64().unwrap()).abs() < 1e-15, "{label}");
                assert!((r.top_share_out.unwrap() - c["top_share_out"].as_f64().unwrap()).abs() < 1e-15, "{label}");
            }
            None => assert_eq!(r.top_level, None, "{label}: no level is larger in the group"),
        }
        // Levels with no row are not in the table; the rest keep their order.
        let kept: Vec<String> = (0..a.len()).filter(|&j| a[j] + b[j] > 0).map(|j| names[j].clone()).collect();
        assert_eq!(r.levels, kept, "{label}");
        worst_s = worst_s.max(rel(s, ws));
        worst_p = worst_p.max(rel(p, wp));
    }
    eprintln!("chi2_contingency: {} tables, worst relative error statistic {worst_s:e}, p-value {worst_p:e}", cases.len());
}

/// A table whose rows spell out the fixture's counts: group rows first (level j repeated
/// in[j] times), then the rest, with `missing_in` / `missing_out` missing cells mixed in,
/// and a numeric column beside it.
fn table_from_counts(a: &[u64], b: &[u64], missing_in: usize, missing_out: usize) -> (Table, Vec<bool>) {
    let mut codes = Vec::new();
    let mut group = Vec::new();
    for (side, row, missing) in [(true, a, missing_in), (false, b, missing_out)] {
        for (j, &n) in row.iter().enumerate() {
            codes.extend(std::iter::repeat(j as u32).take(n as usize));
            group.extend(std::iter::repeat(side).take(n as usize));
        }
        codes.extend(std::iter::repeat(MISSING_CODE).take(missing));
        group.extend(std::iter::repeat(side).take(missing));
    }
    // Interleave so group and rest rows are not in two blocks (a fixed permutation).
    let n = codes.len();
    let step = (1..n).rev().find(|s| gcd(*s, n) == 1 && *s > n / 3).unwrap_or(1);
    let order: Vec<usize> = (0..n).map(|i| (i * step) % n).collect();
    let codes: Vec<u32> = order.iter().map(|&i| codes[i]).collect();
    let group: Vec<bool> = order.iter().map(|&i| group[i]).collect();
    let t = Table::from_columns(
        "t",
        vec![Column::number("x", (0..n).map(|i| i as f64).collect()), Column::category("cat", codes, level_names(a.len()))],
    )
    .unwrap();
    (t, group)
}

fn gcd(a: usize, b: usize) -> usize {
    if b == 0 {
        a
    } else {
        gcd(b, a % b)
    }
}

#[test]
fn contrast_through_a_table_counts_missing_cells_apart() {
    // Source: as above (chi2.json cases); missing cells must not change any number.
    let f = fixture("chi2.json");
    for c in f["cases"].as_array().unwrap().iter().take(6) {
        let label = c["label"].as_str().unwrap();
        let (a, b) = (counts(&c["in"]), counts(&c["out"]));
        let (t, group) = table_from_counts(&a, &b, 3, 5);
        let r = explain::category_contrast(&t, &group);
        assert_eq!(r.len(), 1, "{label}: one category column");
        let r = &r[0];
        assert_eq!((r.missing_in, r.missing_out), (3, 5), "{label}");
        assert_eq!(r.n_in as u64, a.iter().sum::<u64>(), "{label}");
        assert_eq!(r.n_out as u64, b.iter().sum::<u64>(), "{label}");
        assert!(rel(r.chi2.unwrap(), c["statistic"].as_f64().unwrap()) < 1e-12 || c["statistic"].as_f64().unwrap().abs() < 1e-12, "{label}");
        assert!(rel(r.p_value.unwrap(), c["pvalue"].as_f64().unwrap()) < 1e-10, "{label}");
        assert!((r.tv.unwrap() - c["tv"].as_f64().unwrap()).abs() < 1e-14, "{label}");
    }
}

#[test]
fn a_group_with_no_value_or_the_whole_table_has_no_test() {
    // Common practice (nothing to compare): every measure None, the counts still given.
    let (t, _) = table_from_counts(&[0, 0], &[4, 6], 3, 0);
    let group: Vec<bool> = match &t.columns[1].data {
        nervure::table::ColumnData::Category { codes, .. } => codes.iter().map(|&c| c == MISSING_CODE).collect(),
        _ => unreachable!(),
    };
    let r = &explain::category_contrast(&t, &group)[0];
    assert_eq!((r.n_in, r.missing_in, r.n_out), (0, 3, 10));
    assert_eq!((r.tv, r.chi2, r.p_value, r.top_level.clone()), (None, None, None, None));
    let everyone = vec![true; t.n_rows];
    let r = &explain::category_contrast(&t, &everyone)[0];
    assert_eq!((r.n_out, r.tv), (0, None));
}

/// 90 rows on a line x = 0 … 89; "zone" is 'north' for x < 30 (and a few other rows),
/// 'south' for most of the rest, missing on every tenth row; "mixed" is unrelated to x.
fn zone_table() -> Table {
    let n = 90u32;
    let zone: Vec<u32> = (0..n).map(|i| if i % 10 == 9 { MISSING_CODE } else if i < 30 || i % 7 == 0 { 0 } else { 1 }).collect();
    let mixed: Vec<u32> = (0..n).map(|i| i % 3).collect();
    Table::from_columns(
        "t",
        vec![
            Column::number("x", (0..n).map(|i| i as f64).collect()),
            Column::category("zone", zone, vec!["north".into(), "south".into(), "never".into()]),
            Column::category("mixed", mixed, vec!["p".into(), "q".into(), "r".into()]),
        ],
    )
    .unwrap()
}

fn settings() -> Settings {
    Settings::plain(vec!["x".into()], Lens::Column { column: "x".into() }, CoverSettings::uniform(3, 0.0), Clustering::Dbscan { eps: 1.5, min_points: 1 })
}

#[test]
fn explain_lists_category_columns_apart_ranked_by_distance() {
    let mut w = Workbench::new();
    w.set_table(zone_table());
    w.run(&settings(), &mut |_, _| {}).unwrap();
    let b = w.last().unwrap();
    // Interval 1 of 3 over [0, 89] is [0, 29.67]: rows 0-29 in one node (gaps of 1 <= eps).
    let first = b.nerve.nodes.iter().position(|n| n.members.first() == Some(&0)).unwrap();
    assert_eq!(w.rows_of(&[first]).unwrap(), (0..30).collect::<Vec<u32>>());
    let r = w.explain(&[first]).unwrap();
    assert_eq!(r.columns.iter().map(|c| c.name.as_str()).collect::<Vec<_>>(), ["x"]);
    let names: Vec<&str> = r.categories.iter().map(|c| c.name.as_str()).collect();
    assert_eq!(names, ["zone", "mixed"], "ranked by total variation distance");
    let z = &r.categories[0];
    // Group rows 0-29: 27 'north' and 3 missing (9, 19, 29). Rest rows 30-89: 6 missing;
    // 'north' where i % 7 == 0 and not missing: 35, 42, 56, 63, 70, 77, 84 (49 is missing).
    assert_eq!(z.levels, ["north", "south"], "the unused level is left out");
    assert_eq!((z.counts_in.clone(), z.counts_out.clone()), (vec![27, 0], vec![7, 47]));
    assert_eq!((z.missing_in, z.missing_out), (3, 6));
    assert_eq!(z.top_level.as_deref(), Some("north"));
    assert_eq!((z.top_share_in, z.top_share_out), (Some(1.0), Some(7.0 / 54.0)));
    assert!((z.tv.unwrap() - 47.0 / 54.0).abs() < 1e-15);
    // Same numbers as the test on the bare counts (checked against SciPy above).
    let want = chi2::pearson_2xk(&[27, 0], &[7, 47]).unwrap();
    assert_eq!((z.chi2, z.dof, z.p_value), (Some(want.statistic), Some(1), Some(want.p_value)));
    assert!(z.p_value.unwrap() < 1e-10);
    // JSON shape for the page: {columns: [...], categories: [...]}, camelCase.
    let j = serde_json::to_value(&r).unwrap();
    assert!(j["columns"].is_array() && j["categories"].is_array(), "{j}");
    let c = &j["categories"][0];
    for key in [
        "name", "levels", "countsIn", "countsOut", "nIn", "nOut", "missingIn", "missingOut", "tv", "chi2", "dof", "pValue",
        "minExpected", "topLevel", "topShareIn", "topShareOut",
    ] {
        assert!(c.get(key).is_some(), "missing {key} in {c}");
    }
    assert_eq!(c["topLevel"], "north");
}
