//! Bad files and bad settings, end to end through the reader, the automatic settings and
//! the pipeline: each gives a clear message naming what is wrong and where, or a sound
//! result (never a panic, never NaN in the output). The messages asserted here are this
//! project's wording (no outside source); the facts behind them are stated beside each.

use nervure::auto::auto_settings;
use nervure::settings::*;
use nervure::{build, ReadOptions, Settings, Table, Workbench};

fn read(text: &str) -> Table {
    Table::from_csv_bytes("t.csv", text.as_bytes(), &ReadOptions::default()).unwrap_or_else(|e| panic!("{e}"))
}

fn err(text: &str) -> String {
    Table::from_csv_bytes("t.csv", text.as_bytes(), &ReadOptions::default()).unwrap_err().to_string()
}

/// Twelve rows in two columns that vary, a constant column and an all-missing one.
fn awkward() -> String {
    let mut s = String::from("a,b,flat,empty\n");
    for i in 0..12 {
        s.push_str(&format!("{},{},7,\n", i, (i * i) % 5));
    }
    s
}

fn base(columns: &[&str]) -> Settings {
    Settings {
        version: SETTINGS_VERSION,
        columns: columns.iter().map(|c| c.to_string()).collect(),
        scaling: Scaling::Zscore,
        missing: Missing::default(),
        lens: Lens::Principal { component: 1 },
        cover: CoverSettings::uniform(4, 0.3),
        clustering: Clustering::Dbscan { eps: 1.0, min_points: 1 },
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

fn no_nan(b: &nervure::Build) {
    assert!(b.layout.positions.iter().all(|p| p[0].is_finite() && p[1].is_finite()), "layout has NaN: {:?}", b.layout);
    assert!(b.node_lens.iter().all(|v| v.is_finite()), "node lens values have NaN");
}

#[test]
fn empty_header_only_ragged_and_quotes_name_the_place() {
    assert_eq!(err(""), "t.csv: the file is empty; choose a CSV file with a header row and at least one data row");
    assert_eq!(err("a,b\n"), "t.csv: the file has a header row (columns a, b) but no data rows; add rows below the header");
    assert!(err("a,b\n1,2\n3\n").starts_with("t.csv: data row 2 has 1 field but the header has 2 (columns a, b)"));
    assert!(err("a,b\n1,2\n3,4,5\n").starts_with("t.csv: data row 2 has 3 fields but the header has 2"));
    assert!(err("a,b\n1,2\n\"3,4\n").contains("a quoted field that starts on data row 2 never ends"));
    assert_eq!(
        err("a,b,a\n1,2,3\n"),
        "t.csv: columns 1 and 3 are both named 'a'; give each column its own name in the header row"
    );
}

#[test]
fn constant_column_under_zscore_is_named() {
    let t = read(&awkward());
    let e = build(&t, &base(&["a", "flat"])).unwrap_err().to_string();
    assert!(e.contains("column 'flat'") && e.contains("scaling 'none'"), "{e}");
}

#[test]
fn all_missing_column_is_skipped_by_auto_and_named_when_chosen() {
    let t = read(&awkward());
    let auto = auto_settings(&t).unwrap();
    assert_eq!(auto.columns, ["a", "b"], "auto leaves out the constant and the empty column");
    let e = build(&t, &base(&["a", "empty"])).unwrap_err().to_string();
    assert!(e.contains("column 'empty' has no value in any row"), "{e}");
}

#[test]
fn a_single_row_gives_one_node() {
    let t = read("a,b\n1,2\n");
    // Under z-score a single row has zero spread: the message says so.
    assert!(build(&t, &base(&["a", "b"])).unwrap_err().to_string().contains("column 'a'"));
    let mut s = base(&["a", "b"]);
    s.scaling = Scaling::None;
    // A principal component needs a spread (two rows at least).
    assert_eq!(build(&t, &s).unwrap_err().to_string(), "principal components need at least 2 rows");
    s.lens = Lens::Column { column: "a".into() };
    let b = build(&t, &s).unwrap();
    assert_eq!((b.summary.nodes, b.summary.edges, b.summary.components), (1, 0, 1));
    no_nan(&b);
    // The automatic settings (and so the page) refuse it with a clear message.
    assert_eq!(
        auto_settings(&t).unwrap_err().to_string(),
        "t.csv has a single data row; a graph of the data's shape needs at least two rows"
    );
}

#[test]
fn identical_rows_give_one_node_without_nan() {
    let t = read(&"a,b\n".chars().chain("3,4\n".repeat(50).chars()).collect::<String>());
    let mut s = base(&["a", "b"]);
    s.scaling = Scaling::None;
    // A Gaussian density needs an invertible covariance (SciPy's gaussian_kde refuses a
    // singular one too): the message says so.
    s.lens = Lens::Density { bandwidth: None };
    assert!(build(&t, &s).unwrap_err().to_string().contains("constant or perfectly correlated"));
    assert!(auto_settings(&t).unwrap_err().to_string().contains("no numeric column that varies"));
    for lens in [Lens::Principal { component: 1 }, Lens::Column { column: "a".into() }, Lens::Eccentricity { norm: Spread::Rms }] {
        s.lens = lens.clone();
        match build(&t, &s) {
            Ok(b) => {
                assert_eq!(b.summary.nodes, 1, "{lens:?}: 50 equal rows are one cluster");
                assert_eq!(b.summary.rows, 50);
                no_nan(&b);
            }
            Err(e) => panic!("{lens:?}: {e}"),
        }
    }
}

#[test]
fn ten_thousand_columns_read_and_auto_takes_twelve() {
    let n_cols = 10_000;
    let mut text: String = (0..n_cols).map(|j| format!("c{j}")).collect::<Vec<_>>().join(",");
    text.push('\n');
    for i in 0..30 {
        let row: Vec<String> = (0..n_cols).map(|j| ((i * 31 + j * 7) % 13).to_string()).collect();
        text.push_str(&row.join(","));
        text.push('\n');
    }
    let t = read(&text);
    assert_eq!((t.columns.len(), t.n_rows), (n_cols, 30));
    let s = auto_settings(&t).unwrap();
    assert_eq!(s.columns.len(), nervure::auto::AUTO_MAX_COLUMNS);
    assert_eq!(s.columns[..3], ["c0", "c1", "c2"]);
    no_nan(&build(&t, &s).unwrap());
}

#[test]
fn more_intervals_than_rows_is_built_with_a_warning() {
    let t = read(&awkward());
    let mut s = base(&["a", "b"]);
    s.cover.intervals = 40;
    let mut w = Workbench::new();
    w.set_table(t);
    let summary = w.run(&s, &mut |_, _| {}).unwrap();
    assert_eq!(summary.rows, 12);
    assert_eq!(
        summary.warnings,
        ["setting 'cover.intervals': 40 intervals for 12 rows leaves most intervals empty; fewer intervals (at most 12) give a readable graph"]
    );
    s.cover.intervals = 4;
    assert!(w.run(&s, &mut |_, _| {}).unwrap().warnings.is_empty());
}

#[test]
fn derived_expression_naming_a_missing_column_is_refused_with_its_field() {
    let t = read(&awkward());
    let mut s = base(&["a", "b"]);
    s.derived = vec![Derived { name: "r".into(), expression: "a / nosuch".into() }];
    let e = build(&t, &s).unwrap_err().to_string();
    assert!(e.starts_with("setting 'derived[0].expression'") && e.contains("nosuch"), "{e}");
}

fn doc() -> serde_json::Value {
    serde_json::from_str(&base(&["a", "b"]).to_json()).unwrap()
}

fn refused(mutate: impl FnOnce(&mut serde_json::Value)) -> String {
    let mut v = doc();
    mutate(&mut v);
    Settings::from_value(v).unwrap_err().to_string()
}

#[test]
fn bad_settings_documents_name_the_field() {
    use serde_json::json;
    assert_eq!(refused(|v| v["cover"]["intervals"] = json!(0)), "setting 'cover.intervals': must be at least 1");
    assert_eq!(
        refused(|v| v["cover"]["intervals"] = json!(-3)),
        "setting 'cover.intervals': -3 is not allowed; use a whole number of at least 1"
    );
    assert_eq!(
        refused(|v| v["cover"]["intervals"] = json!(2.5)),
        "setting 'cover.intervals': 2.5 is not allowed; use a whole number of at least 1"
    );
    assert_eq!(refused(|v| v["cover"]["overlap"] = json!(-0.1)), "setting 'cover.overlap': -0.1 is outside [0, 1)");
    assert_eq!(refused(|v| v["cover"]["overlap"] = json!(1)), "setting 'cover.overlap': 1 is outside [0, 1)");
    assert_eq!(
        refused(|v| v["cover"]["overlap"] = json!("half")),
        "setting 'cover.overlap': \"half\" is not a number"
    );
    assert_eq!(refused(|v| v["clustering"]["eps"] = json!(0)), "setting 'clustering.eps': 0 must be a positive number");
    assert_eq!(refused(|v| v["clustering"]["eps"] = json!(-1)), "setting 'clustering.eps': -1 must be a positive number");
    assert_eq!(
        refused(|v| v["lens"] = json!({"kind": "density", "bandwidth": 0})),
        "setting 'lens.bandwidth': 0 must be a positive number"
    );
    assert_eq!(
        refused(|v| v["version"] = json!(7)),
        "setting 'version': the file is version 7, written by a newer Nervure; this build reads versions 1 to 3"
    );
    assert_eq!(
        refused(|v| v["colour"] = json!("red")),
        "setting 'colour': unknown field; this build does not read it (fields: version, columns, scaling, missing, lens, cover, clustering, edges, seed, derived, lens2, cover2, denoise, minClusterShare, keepRows)"
    );
    assert_eq!(
        refused(|v| v["cover"]["width"] = json!(1)),
        "setting 'cover.width': unknown field; this build does not read it (fields: intervals, overlap, kind)"
    );
    // Fields inside a kind are refused by the settings reader, which names them.
    let e = refused(|v| v["clustering"]["radius"] = json!(1));
    assert!(e.contains("radius"), "{e}");
}

#[test]
fn node_count_before_layout_matches_the_built_graph() {
    let t = read(&awkward());
    let mut w = Workbench::new();
    w.set_table(t);
    let mut s = base(&["a", "b"]);
    for intervals in [1, 3, 8] {
        s.cover.intervals = intervals;
        let n = w.node_count(&s, &mut |_, _| {}).unwrap();
        assert_eq!(w.run(&s, &mut |_, _| {}).unwrap().nodes, n, "{intervals} intervals");
    }
}
