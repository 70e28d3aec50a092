//! The first look against the full graph on one table, natively, for the benchmark: reads
//! the file, takes the automatic settings (or `--settings S.json`), builds the first look
//! ([`nervure::Workbench::first_look`]) and then the full graph, and prints one JSON line:
//! seconds of each, and how close the first look comes to the full graph: the number of
//! components, of components holding at least 1 % of the rows, of loops, and the share of
//! sampled rows whose pairs agree (two rows drawn at random from the sample's rows in
//! nodes of both graphs are in one component in both, or in different components in
//! both; 200 000 seeded pairs).
//!
//!   cargo build --release --example first_look_bench
//!   $CARGO_TARGET_DIR/release/examples/first_look_bench DATA.csv [--settings S.json]

use std::time::Instant;

use nervure::{ReadOptions, Settings, TableReader, Workbench};

/// Per table row, the component of the first node holding it (`u32::MAX`: in no node).
fn component_of_rows(b: &nervure::Build, n_rows: usize) -> Vec<u32> {
    let comp = b.nerve.component_of();
    let mut out = vec![u32::MAX; n_rows];
    for (node, c) in b.nerve.nodes.iter().zip(comp) {
        for &r in &node.members {
            if out[r as usize] == u32::MAX {
                out[r as usize] = c;
            }
        }
    }
    out
}

fn counts(b: &nervure::Build) -> serde_json::Value {
    let rows = b.nerve.component_rows();
    let total: usize = rows.iter().sum();
    let large = rows.iter().filter(|&&r| r as f64 >= 0.01 * total as f64).count();
    serde_json::json!({"nodes": b.summary.nodes, "components": b.summary.components, "componentsOver1pct": large, "loops": b.summary.loops})
}

fn main() {
    let mut args = std::env::args().skip(1);
    let data = args.next().expect("usage: first_look_bench DATA.csv [--settings S.json]");
    let settings = match (args.next().as_deref(), args.next()) {
        (Some("--settings"), Some(p)) => Some(Settings::from_json(&std::fs::read_to_string(p).expect("settings file")).expect("settings")),
        (None, _) => None,
        _ => panic!("usage: first_look_bench DATA.csv [--settings S.json]"),
    };
    let bytes = std::fs::read(&data).expect("cannot read the data file");
    let mut reader = TableReader::new(&data, ReadOptions::default());
    reader.expect_bytes(bytes.len() as u64);
    reader.push(&bytes).expect("read");
    let mut bench = Workbench::new();
    bench.set_table(reader.finish().expect("read"));
    let t = Instant::now();
    let settings = settings.unwrap_or_else(|| bench.auto_settings().expect("automatic settings"));
    let settings_s = t.elapsed().as_secs_f64();
    let t = Instant::now();
    let first = bench.first_look(&settings, &mut |_, _| {}).expect("first look");
    let first_s = t.elapsed().as_secs_f64();
    let Some(first) = first else {
        println!("{}", serde_json::json!({"rows": bench.table().unwrap().n_rows, "firstLook": null}));
        return;
    };
    let n_rows = bench.table().unwrap().n_rows;
    let look = bench.last().unwrap().clone();
    let t = Instant::now();
    bench.run(&settings, &mut |_, _| {}).expect("full run");
    let full_s = t.elapsed().as_secs_f64();
    let full = bench.last().unwrap();
    let (a, b) = (component_of_rows(&look, n_rows), component_of_rows(full, n_rows));
    let both: Vec<usize> = (0..n_rows).filter(|&r| a[r] != u32::MAX && b[r] != u32::MAX).collect();
    let mut rng = nervure::rng::SplitMix64::new(16);
    let pairs = 200_000;
    let agree = if both.len() < 2 {
        None
    } else {
        let same = (0..pairs)
            .filter(|_| {
                let (i, j) = (both[rng.below(both.len())], both[rng.below(both.len())]);
                (a[i] == a[j]) == (b[i] == b[j])
            })
            .count();
        Some(same as f64 / pairs as f64)
    };
    let line = serde_json::json!({
        "rows": n_rows,
        "sampled": first.first_look.map(|f| f.sampled),
        "settingsS": settings_s,
        "firstLookS": first_s,
        "fullS": full_s,
        "firstLookClustering": look.settings.clustering,
        "firstLook": counts(&look),
        "full": counts(full),
        "pairsAgree": agree,
    });
    println!("{line}");
}
