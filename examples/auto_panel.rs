//! The automatic settings' measured panel: runs `nervure::auto::auto_settings` and then
//! the whole pipeline on real open tables (from `$NERVURE_DATA`, written by
//! `tests/data/open_tables.py` from the pinned packages of `tests/data/requirements.txt`)
//! and on shapes of known topology (`tests/common/shapes.rs`), and prints one Markdown
//! table: rows, columns chosen, nodes, components, share of the rows in nodes that the
//! largest component holds, loops, rows in no cluster, seconds (automatic settings and
//! graph, natively, one thread of work per core), and whether the target is met.
//!
//! Run it with `bash tests/bench/auto-panel.sh` (which writes the open tables first);
//! `--before REV` runs this same file against the library of commit REV.
//!
//! Targets (issue 15): no graph is empty; a circle gives 1 loop, two and three rings in a
//! chain and the figure eight give 2, 3 and 2; on a real table the largest component holds
//! at least 80 % of the rows in nodes and there are at most 10 components.

#[path = "../tests/common/shapes.rs"]
mod shapes;
#[path = "../tests/common/panel.rs"]
mod panel;

use std::time::Instant;

use nervure::{ReadOptions, Table};

/// Real tables of the panel, in the order printed (names of `tests/data/open_tables.py`).
const REAL: [&str; 12] = [
    "weather-hourly",
    "seattle-weather",
    "seattle-temps",
    "airquality",
    "penguins",
    "penguins-raw",
    "quakes",
    "wine",
    "breast-cancer",
    "tissue-genes",
    "nci60",
    "flights",
];

struct Row {
    name: String,
    source: String,
    rows: usize,
    columns: usize,
    nodes: usize,
    components: usize,
    largest: f64,
    loops: usize,
    noise: usize,
    seconds: f64,
    verdict: String,
}

fn measure(name: &str, source: &str, table: &Table, want_loops: Option<usize>) -> Row {
    let t0 = Instant::now();
    let result = nervure::auto::auto_settings(table).and_then(|s| nervure::build(table, &s));
    let seconds = t0.elapsed().as_secs_f64();
    let b = match result {
        Ok(b) => b,
        Err(e) => {
            return Row {
                name: name.into(),
                source: source.into(),
                rows: table.n_rows,
                columns: 0,
                nodes: 0,
                components: 0,
                largest: 0.0,
                loops: 0,
                noise: 0,
                seconds,
                verdict: format!("error: {e}"),
            }
        }
    };
    let s = &b.summary;
    let share = panel::largest_share(&b);
    let mut misses = Vec::new();
    if s.nodes == 0 {
        misses.push("empty".to_string());
    }
    match want_loops {
        Some(l) => {
            if s.loops != l {
                misses.push(format!("{} loops, want {l}", s.loops));
            }
        }
        None => {
            if share < 0.8 {
                misses.push(format!("largest {:.0} % < 80 %", share * 100.0));
            }
            if s.components > 10 {
                misses.push(format!("{} components > 10", s.components));
            }
        }
    }
    Row {
        name: name.into(),
        source: source.into(),
        rows: s.rows,
        columns: b.settings.columns.len(),
        nodes: s.nodes,
        components: s.components,
        largest: share,
        loops: s.loops,
        noise: s.noise_rows,
        seconds,
        verdict: if misses.is_empty() { "met".into() } else { format!("**missed**: {}", misses.join(", ")) },
    }
}

fn main() {
    let mut out = Vec::new();
    match std::env::var("NERVURE_DATA") {
        Ok(dir) => {
            let dir = std::path::PathBuf::from(dir);
            let listing: serde_json::Value = std::fs::read_to_string(dir.join("tables.json"))
                .ok()
                .and_then(|t| serde_json::from_str(&t).ok())
                .unwrap_or(serde_json::Value::Null);
            for name in REAL {
                let path = dir.join(format!("{name}.csv"));
                let Ok(bytes) = std::fs::read(&path) else {
                    eprintln!("{}: not found (run tests/data/open_tables.py); left out", path.display());
                    continue;
                };
                let source = listing
                    .as_array()
                    .and_then(|a| a.iter().find(|t| t["name"] == name))
                    .and_then(|t| t["source"].as_str())
                    .unwrap_or("?")
                    .to_string();
                let table = Table::from_csv_bytes(&format!("{name}.csv"), &bytes, &ReadOptions::default()).expect("the open table reads");
                eprintln!("{name} ...");
                out.push(measure(name, &source, &table, None));
            }
        }
        Err(_) => eprintln!("NERVURE_DATA is not set: the real tables are left out (tests/bench/auto-panel.sh sets it)"),
    }
    for k in shapes::panel(false) {
        eprintln!("{} ...", k.name);
        out.push(measure(&k.name, "known shape", &k.table, Some(k.loops)));
    }
    println!("| table | source | rows | columns chosen | nodes | components | largest component | loops | rows in no cluster | seconds | target |");
    println!("| --- | --- | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | --- |");
    for r in &out {
        println!(
            "| {} | {} | {} | {} | {} | {} | {:.1} % | {} | {} | {:.2} | {} |",
            r.name, r.source, r.rows, r.columns, r.nodes, r.components, r.largest * 100.0, r.loops, r.noise, r.seconds, r.verdict
        );
    }
    let met = out.iter().filter(|r| r.verdict == "met").count();
    println!("\n{met} of {} targets met.", out.len());
}
