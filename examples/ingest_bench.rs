//! The native runner of `tests/bench/ingest.mjs`: the calls the page's worker makes to
//! load a file, made natively on the same 4 MiB slices (read from disk before the clock
//! starts), timed per phase as that script times them in wasm. Prints one JSON line.
//!
//!   cargo build --release --example ingest_bench && $CARGO_TARGET_DIR/release/examples/ingest_bench DATA.csv

use std::time::Instant;

use nervure::campaign::Campaign;
use nervure::table::ingest::Ingest;
use nervure::{ReadOptions, Workbench};

const SLICE_BYTES: usize = 4 << 20;

fn main() {
    let path = std::env::args().nth(1).expect("usage: ingest_bench DATA.csv");
    let bytes = std::fs::read(&path).expect("cannot read the data file");
    let t0 = Instant::now();
    // begin_table_with, expect_bytes, push_chunk per slice.
    let mut ingest = Ingest::new("bench.csv", ReadOptions::default());
    ingest.expect_bytes(bytes.len() as u64);
    for slice in bytes.chunks(SLICE_BYTES) {
        ingest.push(slice).expect("read");
    }
    let t1 = Instant::now();
    // finish_table: the automatic settings' check, the campaign, the table info.
    let part = ingest.finish(None).expect("read");
    let auto = nervure::auto::auto_choice(&part.table).expect("automatic settings");
    let mut campaign = Campaign::new();
    campaign.add(part);
    let mut bench = Workbench::new();
    bench.set_table_with_auto(campaign.assemble().expect("assemble"), auto);
    std::hint::black_box(bench.table().expect("table set").summaries(&[]));
    let t2 = Instant::now();
    // The worker's table message: auto_settings, column_summaries.
    let settings = bench.auto_settings().expect("automatic settings");
    let table = bench.table().expect("table set");
    std::hint::black_box(table.summaries(&settings.missing.fill_values));
    let t3 = Instant::now();
    let s = |a: Instant, b: Instant| (b - a).as_secs_f64();
    println!(
        "{{\"readS\":0,\"pushS\":{},\"finishS\":{},\"tableMessageS\":{},\"totalS\":{},\"rows\":{}}}",
        s(t0, t1),
        s(t1, t2),
        s(t2, t3),
        s(t0, t3),
        table.n_rows
    );
}
