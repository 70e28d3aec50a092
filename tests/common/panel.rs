//! Helpers shared by the automatic settings' panel (`examples/auto_panel.rs`) and the tests
//! that read real open tables (`tests/auto_panel.rs`, `tests/open_tables.rs`).

use nervure::{Build, ReadOptions, Table};

/// The table `name` from `$NERVURE_DATA` (written by `tests/data/open_tables.py`), or
/// `None`, with a line saying so, when the variable is unset.
#[allow(dead_code)]
pub fn open_table(name: &str) -> Option<Table> {
    let Ok(dir) = std::env::var("NERVURE_DATA") else {
        eprintln!("skipped: NERVURE_DATA is not set (tests/run.sh sets it); {name} not read");
        return None;
    };
    let path = std::path::Path::new(&dir).join(format!("{name}.csv"));
    let bytes = std::fs::read(&path).unwrap_or_else(|e| panic!("{}: {e} (run tests/data/open_tables.py)", path.display()));
    Some(Table::from_csv_bytes(&format!("{name}.csv"), &bytes, &ReadOptions::default()).expect("the open table reads"))
}

/// Share of the rows in nodes that the largest component (counted in rows) holds; 0 for an
/// empty graph.
#[allow(dead_code)] // tests/open_tables.rs includes this module without using it
pub fn largest_share(b: &Build) -> f64 {
    b.nerve.largest_share()
}
